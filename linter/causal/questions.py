"""Questions beyond the total effect: restricted samples, direct and indirect
effects, sequential (time-varying) exposures.

Pure functions over the diagram's ``networkx.DiGraph`` (hidden ``<->``
parents included, see dagward.causal.graph); no I/O and no findings.  Each
question returns a frozen dataclass that says which condition fails, for
which variable and along which path, so that messages can be built from data.
Every search is iterative and runs over the integer index of
dagward.causal.indexed; the costs are stated per function (V variables, E
arrows, k the number of stages or of restriction variables).

Notation as in dagward.causal.adjustment: X exposures, Y outcomes, Z the
declared adjustment set, cn(X, Y) the proper causal nodes, forb(X, Y) their
descendants, "valid" the adjustment criterion (Shpitser, VanderWeele &
Robins 2010; Perkovic et al. 2018).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from itertools import compress
from typing import TYPE_CHECKING

from .adjustment import (
    _cn_cached,
    _descendants_cached,
    _forbidden_cached,
    _roles,
    adjustment_exists,
    collider_bias_paths,
    is_valid_adjustment,
    open_noncausal_path,
    proper_backdoor_skip,
)
from .dsep import kept_rows, two_stack_reach
from .graph import HIDDEN_PREFIX, _as_set, descendants, is_hidden
from .indexed import Indexed, closure_rows, combine, graph_cache, indexed
from .separators import _close_to, _separator_search, minimal_adjustment_sets

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx

Rows = Callable[[int], Sequence[int]]

# ---------------------------------------------------------------- shared helpers


def _connected(children: Rows, parents: Rows, n: int, xs: Iterable[int], isy, inz, anc) -> bool:
    """Bayes-ball reachability (Shachter 1998) along the given rows: True when some
    variable marked in ``isy`` is d-connected to ``xs`` given the variables marked
    in ``inz`` (``anc`` = their ancestors in the same rows).  The two-stack loop of
    dagward.causal.dsep.two_stack_reach, with rows passed in so that graphs with
    arrows cut into some variables (the sequential criterion) need no copy."""
    seen_up = bytearray(n)
    seen_down = bytearray(n)
    up_stack = []
    for x in xs:
        if isy[x]:
            return True
        if not seen_up[x]:
            seen_up[x] = seen_down[x] = 1
            up_stack.append(x)
    return two_stack_reach(children, parents, up_stack, seen_up, seen_down, isy, inz, anc)


def _moral(
    parents: Rows, anc: bytearray, n: int, gone: bytes | bytearray | None = None
) -> list[list[int]]:
    """Moral graph of the subgraph induced by the variables marked in ``anc``
    (Lauritzen et al. 1990), as neighbour lists over the index numbers, with the
    variables marked in ``gone`` deleted afterwards (they are conditioned on):
    marriages through a deleted child are kept, edges at a deleted vertex not."""
    nbrs: list[list[int]] = [[] for _ in range(n)]
    for v in compress(range(n), anc):
        ps = parents(v)
        if gone is not None:
            if gone[v]:
                ps = [p for p in ps if not gone[p]]
                for i, p in enumerate(ps):  # only the marriages survive
                    for q in ps[i + 1 :]:
                        nbrs[p].append(q)
                        nbrs[q].append(p)
                continue
            ps = [p for p in ps if not gone[p]]
        for i, p in enumerate(ps):
            nbrs[v].append(p)
            nbrs[p].append(v)
            for q in ps[i + 1 :]:
                nbrs[p].append(q)
                nbrs[q].append(p)
    return nbrs


def _directed_path(
    ix: Indexed, starts: Iterable[int], goal, walls, forward: bool = True
) -> list[str] | None:
    """A shortest directed path (names, in arrow order) from one of ``starts`` to a
    variable marked in ``goal``, never entering a variable marked in ``walls``;
    ``forward`` False walks against the arrows (the path is still returned in
    arrow order, from the goal to the start).  Breadth-first, linear."""
    step = ix.succ if forward else ix.pred
    parent: dict[int, int] = {}
    frontier = []
    for s in starts:
        if s not in parent:
            parent[s] = -1
            frontier.append(s)
    found = next((s for s in frontier if goal[s]), None)
    while found is None and frontier:
        nxt = []
        for v in frontier:
            for w in step[v]:
                if w in parent or walls[w]:
                    continue
                parent[w] = v
                if goal[w]:
                    found = w
                    break
                nxt.append(w)
            if found is not None:
                break
        frontier = nxt
    if found is None:
        return None
    out = [found]
    while parent[out[-1]] != -1:
        out.append(parent[out[-1]])
    names = [ix.names[i] for i in out]
    return list(reversed(names)) if forward else names


def _sorted(nodes: Iterable[str]) -> tuple[str, ...]:
    return tuple(sorted(nodes))


# ---------------------------------------------------------------- selection


@dataclass(frozen=True)
class ForbiddenRestriction:
    """A restriction variable that lies on or after a causal path from X to Y.

    ``kind`` is ``"mediator"`` (on a causal path), ``"outcome-descendant"``
    (an effect of an outcome) or ``"mediator-descendant"`` (an effect of a
    mediator); ``via`` is that outcome or mediator (the variable itself for a
    mediator); ``path`` is a causal path exposure -> ... -> variable -> ...
    -> outcome for a mediator, else the directed path from ``via`` to it.
    """

    variable: str
    kind: str
    via: str
    path: tuple[str, ...]


@dataclass(frozen=True)
class OpenedByRestriction:
    """A proper non-causal path from X to Y, open given Z and R together, through
    a collider that is the restriction variable or one of its causes."""

    variable: str
    path: tuple[str, ...]
    collider: str


@dataclass(frozen=True)
class OddsRatio:
    """Whether the odds ratio given ``adjusted`` survives the restriction.

    ``survives``: ``adjusted`` is a valid adjustment set for the whole
    population and X is d-separated from R given Y and ``adjusted``, so the
    restriction depends on the exposure only through the outcome (and the
    adjusted covariates): the exposure-outcome odds ratio within levels of the
    covariates is the same in the restricted data as in the whole population
    (Bareinboim & Pearl 2012, "Controlling selection bias in causal
    inference", AISTATS, the odds-ratio recoverability condition, from memory).
    ``adjusted`` is the set it was shown for (None when none was found).
    """

    survives: bool
    adjusted: frozenset[str] | None


@dataclass(frozen=True)
class SelectionVerdict:
    """The restricted-sample question: Z judged together with the restriction R.

    * ``valid``: Z ∪ R is a valid adjustment set for (X, Y): the estimate from
      the restricted data, adjusted for Z, is a causal effect within the
      restricted population (no selection bias in the sense of Hernan,
      Hernandez-Diaz & Robins 2004).  None when no Z was declared.
    * ``forbidden``: members of R on or after a causal path (each makes every
      set invalid).
    * ``opened``: members of R with a path they open (given Z ∪ R), forbidden
      members included (sound; a path is searched as for rule
      ``collider-adjusted``).  Failures
      of members of Z are not listed here: they stay with the usual rules,
      evaluated with Z ∪ R as the conditioning set.
    * ``recoverable``: there is a measured set W, disjoint from R, that is a
      valid adjustment set for (X, Y) in the whole population with Y
      d-separated from R given X ∪ W.  Then the effect in the whole population
      the sample was drawn from is recovered from the restricted data as
      sum_w P(y | x, w, R) P(w), P(w) taken from the whole population unless W
      is empty (Bareinboim, Tian & Pearl 2014, "Recovering from selection bias
      in causal and statistical inference", AAAI, the selection-backdoor
      criterion, from memory).  ``recovery_set`` is one such W, inclusion-minimal.
    * ``fixable``: some measured W (disjoint from R) makes W ∪ R valid;
      ``sets`` lists up to ``max_sets`` minimal such W (R must be added to
      each when adjusting; see :func:`minimal_adjustment_sets_given`).
    * ``outcome_only``: every member of R is an effect of an outcome (the
      restriction is on the outcome, as in case-control sampling).
    * ``odds_ratio``: see :class:`OddsRatio`.
    """

    restricted: tuple[str, ...]
    valid: bool | None
    forbidden: tuple[ForbiddenRestriction, ...]
    opened: tuple[OpenedByRestriction, ...]
    recoverable: bool
    recovery_set: frozenset[str] | None
    fixable: bool
    sets: tuple[frozenset[str], ...]
    outcome_only: bool
    odds_ratio: OddsRatio

    @property
    def case_control(self) -> bool:
        """Restriction on the outcome alone: every member of R is an effect of an
        outcome and the odds ratio survives (the case-control situation)."""
        return self.outcome_only and self.odds_ratio.survives

    @property
    def caused_by_restriction(self) -> bool:
        """The restriction itself makes the estimate biased (rule ``selection-bias``)."""
        return bool(self.forbidden or self.opened)


def _check_restriction(G, X, Y, R) -> tuple[set[str], set[str], set[str]]:
    X, Y = _roles(G, X, Y)
    R = _as_set(G, R)
    if R & (X | Y):
        raise ValueError(f"restriction overlaps exposures or outcomes: {sorted(R & (X | Y))}")
    return X, Y, R


def forbidden_restrictions(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], R: Iterable[str]
) -> tuple[ForbiddenRestriction, ...]:
    """The members of R that are forbidden for (X, Y), each with its kind and a
    path (see :class:`ForbiddenRestriction`), in name order.  O(|R| (V + E))."""
    X, Y, R = _check_restriction(G, X, Y, R)
    forb = _forbidden_cached(G, X, Y)
    bad = sorted(r for r in R if r in forb)
    if not bad:
        return ()
    cn = _cn_cached(G, X, Y)
    ix = indexed(G)
    out = []
    de_y = _descendants_cached(G, Y)
    for r in bad:
        ri = ix.index[r]
        goal = bytearray(ix.n)
        goal[ri] = 1
        if r in cn:
            # x -> ... -> r -> ... -> y, every variable after x inside cn: two
            # directed pieces that join into a simple proper causal path.
            outside = bytearray(1 - b for b in ix.mask(cn))
            head = _directed_path(ix, ix.ids(sorted(X)), goal, outside)
            tail = _directed_path(ix, [ri], ix.mask(Y), outside)
            assert head is not None and tail is not None  # r is in cn
            path = tuple(head[:-1] + tail)
            out.append(ForbiddenRestriction(r, "mediator", r, path))
            continue
        if r in de_y:
            kind, sources = "outcome-descendant", sorted(Y)
        else:
            kind, sources = "mediator-descendant", sorted(cn - Y)
        walk = _directed_path(ix, [ix.index[s] for s in sources], goal, bytes(ix.n))
        assert walk is not None  # r is a descendant of one of them
        out.append(ForbiddenRestriction(r, kind, walk[0], tuple(walk)))
    return tuple(out)


def minimal_adjustment_sets_given(
    G: nx.DiGraph,
    X: Iterable[str],
    Y: Iterable[str],
    measured: Iterable[str],
    forced: Iterable[str],
    max_sets: int | None = None,
) -> Iterator[frozenset[str]]:
    """Every inclusion-minimal measured W, disjoint from ``forced``, such that
    W ∪ forced is a valid adjustment set for (X, Y); lazily, at most ``max_sets``.

    None exists when a forced variable is forbidden.  Otherwise the question is
    a separation in the proper back-door graph with ``forced`` conditioned on:
    minimal such W lie in An(X ∪ Y ∪ forced) (van der Zander, Liskiewicz &
    Textor 2019, separators containing a given set), and there they are the
    minimal vertex separators of the moral graph of that ancestral set with
    the forced vertices deleted (Lauritzen et al. 1990).  Listed with
    polynomial delay by the separator search of dagward.causal.separators.
    Ancestors of ``forced`` are the same in G and in the proper back-door
    graph because a forced variable is not forbidden.
    """
    X, Y, F = _check_restriction(G, X, Y, forced)
    forb = _forbidden_cached(G, X, Y)
    if F & forb:
        return
    cn = _cn_cached(G, X, Y)
    ix = indexed(G)
    children, parents = kept_rows(ix, proper_backdoor_skip(X, cn))
    anc = closure_rows(parents, ix.ids(X | Y | F), bytearray(ix.n))
    nbrs = _moral(parents, anc, ix.n, ix.mask(F))
    measured = set(measured)
    excluded = X | Y | F | forb
    removable = bytearray(ix.n)
    for v in compress(range(ix.n), anc):
        name = ix.names[v]
        if name in measured and name not in excluded:
            removable[v] = 1
    count = 0
    for sep in _separator_search(nbrs, ix.ids(X), ix.ids(Y), removable):
        if sep is None:
            continue
        if max_sets is not None and count >= max_sets:
            return
        count += 1
        yield frozenset(ix.names[i] for i in sep)


def recovery_set(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], R: Iterable[str], measured: Iterable[str]
) -> frozenset[str] | None:
    """An inclusion-minimal measured W (outside X, Y, R) that is a valid adjustment
    set for (X, Y) with Y d-separated from R given X ∪ W; None when there is none.

    The two conditions together are the same as: W holds no forbidden variable
    and separates X ∪ R from Y in the proper back-door graph.  (Forward: the
    contraction property of d-separation.  Back: removing X's first causal
    arrows can only separate more, and a path from R to Y through such an
    arrow passes the conditioned x as a non-collider, while ancestors of X ∪ W
    are the same in both graphs when W holds no forbidden variable.)  So by
    the construction of van der Zander et al. (2019) a W exists iff the
    measured, non-forbidden part of An(X ∪ Y ∪ R) separates, and then the
    separator closest to X ∪ R in the moral graph of that ancestral set is a
    minimal one.  Linear time.
    """
    X, Y, R = _check_restriction(G, X, Y, R)
    ix = indexed(G)
    cn = _cn_cached(G, X, Y)
    forb = _forbidden_cached(G, X, Y)
    _, parents = kept_rows(ix, proper_backdoor_skip(X, cn))
    anc = closure_rows(parents, ix.ids(X | Y | R), bytearray(ix.n))
    nbrs = _moral(parents, anc, ix.n)
    measured = set(measured)
    excluded = X | Y | R | forb
    removable = bytearray(ix.n)
    for v in compress(range(ix.n), anc):
        name = ix.names[v]
        if name in measured and name not in excluded:
            removable[v] = 1
    sep = _close_to(nbrs, ix.ids(X | R), ix.ids(Y), removable)
    return None if sep is None else frozenset(ix.names[i] for i in sep)


def odds_ratio_survives(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], R: Iterable[str], W: Iterable[str]
) -> bool:
    """W is a valid adjustment set for (X, Y) and X is d-separated from R given
    Y ∪ W (see :class:`OddsRatio`).  Linear time."""
    X, Y, R = _check_restriction(G, X, Y, R)
    W = _as_set(G, W)
    if W & R or not is_valid_adjustment(G, X, Y, W):
        return False
    return _x_separated_from_r(indexed(G), X, Y, R, W)


def _x_separated_from_r(ix: Indexed, X, Y, R, W) -> bool:
    children, parents = ix.rows()
    inz = ix.mask(Y | W)
    anc = closure_rows(parents, ix.ids(Y | W), bytearray(ix.n))
    return not _connected(children, parents, ix.n, ix.ids(X), ix.mask(R), inz, anc)


# How many minimal valid sets to try, after the declared one, when looking for a
# set under which the odds ratio survives (each try is one linear search).
ODDS_RATIO_TRIES = 5


def selection_verdict(
    G: nx.DiGraph,
    X: Iterable[str],
    Y: Iterable[str],
    Z: Iterable[str] | None,
    R: Iterable[str],
    measured: Iterable[str],
    max_sets: int = 3,
) -> SelectionVerdict:
    """Judge a restricted sample (see :class:`SelectionVerdict`).

    Cost: linear for validity, recoverability and the listing's first set,
    plus |R| linear searches for the paths (shared work as in
    :func:`collider_bias_paths`), plus up to ``ODDS_RATIO_TRIES`` linear checks
    for the odds ratio when the declared set does not already show it.
    The odds-ratio search is sound (a set it names does satisfy the
    condition) but tries only Z and a few minimal valid sets.
    """
    X, Y, R = _check_restriction(G, X, Y, R)
    measured = frozenset(measured)
    Zs = None if Z is None else _as_set(G, Z) - R
    forb_r = forbidden_restrictions(G, X, Y, R)
    opened: list[OpenedByRestriction] = []
    valid = None
    if Zs is not None:
        S = Zs | R
        valid = is_valid_adjustment(G, X, Y, S)
        if not valid:
            # Forbidden members are asked too: a restriction on a mediator can
            # also open a path at a collider (the birth-weight paradox), and the
            # message should show both.
            rest = sorted(R)
            if rest:
                for r, hit in collider_bias_paths(G, X, Y, S, rest).items():
                    if hit is not None:
                        opened.append(OpenedByRestriction(r, tuple(hit[0]), hit[1]))
            if not opened and not forb_r and not Zs & _forbidden_cached(G, X, Y):
                # Z ∪ R is free of forbidden variables and invalid: an open
                # non-causal path exists; when it turns at a collider above a
                # member of R it is that member's.
                path = open_noncausal_path(G, X, Y, S)
                if path is not None:
                    hit = _collider_above(G, path, R)
                    if hit is not None:
                        opened.append(OpenedByRestriction(hit[0], tuple(path), hit[1]))
            opened.sort(key=lambda o: o.variable)
    sets = () if forb_r else tuple(minimal_adjustment_sets_given(G, X, Y, measured, R, max_sets))
    rec = recovery_set(G, X, Y, R, measured)
    de_y = _descendants_cached(G, Y)
    outcome_only = bool(R) and all(r in de_y for r in R)
    odds = _odds_ratio_search(G, X, Y, R, Zs, measured)
    return SelectionVerdict(
        restricted=_sorted(R),
        valid=valid,
        forbidden=forb_r,
        opened=tuple(opened),
        recoverable=rec is not None,
        recovery_set=rec,
        fixable=bool(sets),
        sets=sets,
        outcome_only=outcome_only,
        odds_ratio=odds,
    )


def _collider_above(G: nx.DiGraph, path: list[str], R: set[str]) -> tuple[str, str] | None:
    """(r, collider): the first collider on ``path`` that is in R or a cause of a member r."""
    succ = G._succ
    for i in range(1, len(path) - 1):
        c = path[i]
        if c in succ[path[i - 1]] and c in succ[path[i + 1]]:
            below = descendants(G, c) & R
            if below:
                return min(below), c
    return None


def _odds_ratio_search(G, X, Y, R, Z, measured) -> OddsRatio:
    """Z first (when valid), then up to ``ODDS_RATIO_TRIES`` minimal valid sets
    (valid by construction, so only the separation is tested)."""
    ix = indexed(G)
    if Z is not None and odds_ratio_survives(G, X, Y, R, Z):
        return OddsRatio(True, frozenset(Z))
    for W in minimal_adjustment_sets(G, X, Y, measured - R, max_sets=ODDS_RATIO_TRIES):
        if W != Z and _x_separated_from_r(ix, X, Y, R, W):
            return OddsRatio(True, W)
    return OddsRatio(False, None)


# ---------------------------------------------------------------- natural effects

EXPOSURE_OUTCOME = "exposure-outcome"
EXPOSURE_MEDIATOR = "exposure-mediator"
MEDIATOR_OUTCOME = "mediator-outcome"
JOINT_EXPOSURE = "joint-exposure"  # the controlled direct effect's one question


@dataclass(frozen=True)
class ConfoundingCondition:
    """One of the three no-confounding conditions of natural effects, asked as an
    adjustment question: is ``adjusted`` a valid adjustment set for the effect of
    ``exposures`` on ``outcomes``?  ``forbidden`` lists members of ``adjusted``
    that are forbidden for that question; ``path`` is a proper non-causal path
    left open (exact whenever ``forbidden`` is empty; see
    :func:`open_noncausal_path`).  The usual rules, run on (exposures,
    outcomes, adjusted), give the full report; ``name`` says which condition
    it is."""

    name: str
    exposures: frozenset[str]
    outcomes: frozenset[str]
    adjusted: frozenset[str]
    valid: bool
    forbidden: tuple[str, ...]
    path: tuple[str, ...] | None


@dataclass(frozen=True)
class InducedConfounder:
    """A mediator-outcome confounder that the exposure affects (recanting witness).

    ``from_exposure``: a directed path exposure -> ... -> variable that avoids
    the mediators.  ``to_mediator``: a path from the variable to a mediator
    that reaches the outcome (directed, or ``variable <-> w`` followed by a
    directed path from w).  ``to_outcome``: a path from the variable to an
    outcome avoiding the mediators (directed, or through ``<->`` likewise).
    Paths are in G: a ``<->`` appears as its hidden parent.
    """

    variable: str
    from_exposure: tuple[str, ...]
    to_mediator: tuple[str, ...]
    to_outcome: tuple[str, ...]


@dataclass(frozen=True)
class NaturalEffectVerdict:
    """Natural direct and indirect effects with respect to the mediators M.

    ``conditions``: exposure-outcome (Z for X -> Y), exposure-mediator (Z for
    X -> M) and mediator-outcome (Z ∪ X for M -> Y), in that order
    (VanderWeele & Vansteelandt 2009, "Conceptual issues concerning mediation,
    interventions and composition", Statistics and Its Interface 2:457-468).
    ``induced``: exposure-induced mediator-outcome confounders, in name order;
    any one makes natural effects unidentified whatever is adjusted (Avin,
    Shpitser & Pearl 2005, "Identifiability of path-specific effects",
    IJCAI).  ``not_mediators``: listed mediators that lie on no causal path
    from X to Y.  ``covariates``: a set of measured pre-exposure covariates
    meeting all three conditions (see :func:`natural_effect_covariates`), or
    None when there is none.  ``conditions`` is empty when no Z was declared.
    """

    mediators: tuple[str, ...]
    conditions: tuple[ConfoundingCondition, ...]
    induced: tuple[InducedConfounder, ...]
    not_mediators: tuple[str, ...]
    covariates: frozenset[str] | None

    @property
    def identified(self) -> bool | None:
        """The declared set meets the three conditions and nothing is induced
        (None when no set was declared)."""
        if not self.conditions:
            return None
        return all(c.valid for c in self.conditions) and not self.induced

    @property
    def identifiable(self) -> bool:
        """Some measured pre-exposure set would do, and nothing is induced."""
        return self.covariates is not None and not self.induced


def confounding_condition(
    G: nx.DiGraph, name: str, X: Iterable[str], Y: Iterable[str], Z: Iterable[str]
) -> ConfoundingCondition:
    """Judge Z as an adjustment set for (X, Y) and say why it fails.  Linear time."""
    X, Y = _roles(G, X, Y)
    Z = _as_set(G, Z)
    valid = is_valid_adjustment(G, X, Y, Z)
    forb: tuple[str, ...] = ()
    path = None
    if not valid:
        forb = _sorted(Z & _forbidden_cached(G, X, Y))
        clash = Z & (X | Y)
        if not clash:
            p = open_noncausal_path(G, X, Y, Z)
            path = None if p is None else tuple(p)
    return ConfoundingCondition(name, frozenset(X), frozenset(Y), frozenset(Z), valid, forb, path)


def _or(*marks: bytes | bytearray) -> bytearray:
    """Marks set in any of ``marks`` (0/1 marks, combined as whole integers)."""
    value = 0
    for m in marks:
        value |= int.from_bytes(m, "little")
    return bytearray(value.to_bytes(len(marks[0]), "little"))


def _hidden_ids(G: nx.DiGraph, ix: Indexed) -> list[int]:
    """The hidden ``<->`` parents, as index numbers (kept with the graph's index)."""
    cache = graph_cache(G)
    kept = None if cache is None else cache.get("hidden_ids")
    if kept is not None and kept[0] is ix:
        return kept[1]
    found = [
        i
        for i, name in enumerate(ix.names)
        if name.startswith(HIDDEN_PREFIX) and is_hidden(G, name)
    ]
    if cache is not None:
        cache["hidden_ids"] = (ix, found)
    return found


NOT = bytes(1 if i == 0 else 0 for i in range(256))  # bytes.translate: 0/1 marks flipped


def _induced_masks(ix: Indexed, X, M, Y, G) -> tuple[bytearray, dict]:
    """Marks of the exposure-induced mediator-outcome confounders, and the masks
    the path searches reuse.  Linear time.

    A candidate L lies in A, the variables reached from X along arrows without
    entering X or M.  Its directed routes into a mediator and to the outcome
    stay inside De(X), so when no hidden ``<->`` parent touches A the routes
    are searched inside De(X) only (usually a small part of a large diagram);
    otherwise a hidden sibling w of L may lie anywhere, and the closures run
    over the whole diagram.
    """
    n = ix.n
    succ, pred = ix.rows()
    x_mask, m_mask, y_mask = ix.mask(X), ix.mask(M), ix.mask(Y)
    xm = _or(x_mask, m_mask)
    # A: reached from X along arrows without entering X or M (pre-marked walls)
    a_mark = combine(
        closure_rows(succ, [c for x in ix.ids(X) for c in ix.succ[x] if not xm[c]], bytearray(xm)),
        xm,
    )
    hidden = [h for h in _hidden_ids(G, ix) if any(a_mark[c] for c in ix.succ[h])]
    if hidden:
        outside = bytes(n)  # whole diagram
    else:
        outside = closure_rows(succ, ix.ids(X), bytearray(n)).translate(NOT)  # not in De(X)
    # mediators that reach an outcome; their ancestors with X a wall (a hidden
    # sibling's route into M must not pass an exposure)
    ys = [y for y in ix.ids(Y) if not outside[y]]
    anc_y = closure_rows(pred, ys, bytearray(outside))
    m_y = [i for i in ix.ids(M) if anc_y[i] and not outside[i]]
    x_walls = _or(x_mask, outside)
    to_m = combine(closure_rows(pred, m_y, bytearray(x_walls)), x_walls)
    # reaches Y along arrows avoiding M and X
    walls = _or(xm, outside)
    to_y = combine(closure_rows(pred, ys, bytearray(walls)), walls)
    hid_m = bytearray(n)
    hid_y = bytearray(n)
    for h in hidden:
        kids = ix.succ[h]
        for a in kids:
            for b in kids:
                if a != b:
                    if to_m[b]:
                        hid_m[a] = 1
                    if to_y[b]:
                        hid_y[a] = 1
    bad = bytearray(n)
    for v in compress(range(n), a_mark):
        if y_mask[v]:
            continue
        if (to_m[v] and (to_y[v] or hid_y[v])) or (hid_m[v] and to_y[v]):
            bad[v] = 1
    return bad, {"x": x_mask, "m": m_mask, "y": y_mask, "xm": xm, "m_y": m_y}


def exposure_induced_confounders(
    G: nx.DiGraph, X: Iterable[str], M: Iterable[str], Y: Iterable[str]
) -> tuple[str, ...]:
    """Variables L (not X, M or Y) such that (a) a directed path from X reaches L
    without passing a mediator, and (b) L confounds a mediator and the outcome:
    L has a directed path into a mediator that reaches Y and a directed path to
    Y avoiding the mediators, or one of the two routes is replaced by a ``<->``
    between L and a variable w with that directed route from w (w outside X).

    With directed routes only this is the recanting witness of Avin, Shpitser
    & Pearl (2005) for the paths through M; the ``<->`` clause is our
    extension for an unmeasured common cause of L and the outcome (or of L
    and the mediator), under which the cross-world independence fails for
    the same reason.  Linear time.  Sorted by name.
    """
    X, Y = _roles(G, X, Y)
    M = _as_set(G, M)
    if M & (X | Y):
        raise ValueError("mediators overlap exposures or outcomes")
    ix = indexed(G)
    bad, _ = _induced_masks(ix, X, M, Y, G)
    return _sorted(compress(ix.names, bad))


def _route(ix: Indexed, G, v: int, target_mark, walls, hidden_ok: bool) -> list[str] | None:
    """A directed path from v to a marked variable avoiding walls, or v <-> w then
    a directed path from w (through the hidden parent)."""
    p = _directed_path(ix, [v], target_mark, walls)
    if p is not None or not hidden_ok:
        return p
    for h in ix.pred[v]:
        if not is_hidden(G, ix.names[h]):
            continue
        for w in ix.succ[h]:
            if w == v or walls[w]:
                continue
            q = _directed_path(ix, [w], target_mark, walls)
            if q is not None:
                return [ix.names[v], ix.names[h], *q]
    return None


def induced_confounder_paths(
    G: nx.DiGraph, X: Iterable[str], M: Iterable[str], Y: Iterable[str], L: str
) -> InducedConfounder:
    """The paths that make L an exposure-induced confounder (see
    :func:`exposure_induced_confounders`).  ``ValueError`` when L is not one.
    Linear time."""
    X, Y = _roles(G, X, Y)
    M = _as_set(G, M)
    ix = indexed(G)
    bad, k = _induced_masks(ix, X, M, Y, G)
    if not bad[ix.index[L]]:
        raise ValueError(f"{L!r} is not an exposure-induced mediator-outcome confounder")
    return _induced_paths(G, ix, X, k, L)


def _induced_paths(G, ix: Indexed, X, k: dict, L: str) -> InducedConfounder:
    li = ix.index[L]
    goal = bytearray(ix.n)
    goal[li] = 1
    head = _directed_path(ix, ix.ids(X), goal, bytearray(k["xm"]), forward=True)
    # directed route into a mediator that reaches Y (walls: X)
    m_goal = ix.mask(ix.names[i] for i in k["m_y"])
    to_m = _route(ix, G, li, m_goal, k["x"], hidden_ok=False)
    to_y = _route(ix, G, li, k["y"], k["xm"], hidden_ok=False)
    if to_m is None:
        to_m = _route(ix, G, li, m_goal, k["x"], hidden_ok=True)
    elif to_y is None:
        to_y = _route(ix, G, li, k["y"], k["xm"], hidden_ok=True)
    assert head is not None and to_m is not None and to_y is not None
    return InducedConfounder(L, tuple(head), tuple(to_m), tuple(to_y))


def natural_effect_covariates(
    G: nx.DiGraph, X: Iterable[str], M: Iterable[str], Y: Iterable[str], measured: Iterable[str]
) -> frozenset[str] | None:
    """A set C of measured pre-exposure covariates meeting the three conditions
    (C valid for X -> Y, C valid for X -> M, C ∪ X valid for M -> Y), or None.

    The pool: measured variables that are not descendants of X (VanderWeele &
    Vansteelandt 2009 take C unaffected by the exposure), outside X, M, Y and
    forb(M, Y).  Over that pool the answer is exact: the three conditions are
    separations whose canonical sets (van der Zander, Liskiewicz & Textor
    2019) are all An(X ∪ M ∪ Y) ∩ pool, because the arrows the criteria cut
    leave exposures or mediators, and ancestors through them are ancestors of
    X ∪ M already; so some C in the pool works iff that one set does.  It is
    returned as is (not minimal).  Four linear searches.
    """
    X, Y = _roles(G, X, Y)
    M = _as_set(G, M)
    if not M or M & (X | Y):
        raise ValueError("mediators must be non-empty and apart from exposures and outcomes")
    ix = indexed(G)
    de_x = _descendants_cached(G, X)
    forb_my = _forbidden_cached(G, M, Y)
    measured = frozenset(measured)
    anc = closure_rows(ix.rows()[1], ix.ids(X | M | Y), bytearray(ix.n))
    excluded = X | M | Y
    C = frozenset(
        name
        for name in compress(ix.names, anc)
        if name in measured and name not in de_x and name not in excluded and name not in forb_my
    )
    ok = (
        is_valid_adjustment(G, X, Y, C)
        and is_valid_adjustment(G, X, M, C)
        and is_valid_adjustment(G, M, Y, C | X)
    )
    return C if ok else None


def natural_effect_verdict(
    G: nx.DiGraph,
    X: Iterable[str],
    M: Iterable[str],
    Y: Iterable[str],
    Z: Iterable[str] | None,
    measured: Iterable[str] | None = None,
) -> NaturalEffectVerdict:
    """The three confounding conditions and the exposure-induced confounders for
    natural direct and indirect effects (see :class:`NaturalEffectVerdict`).

    Z minus the mediators is the covariate set (a mediator listed in both is
    the mediator, not a covariate); with Z None only the induced confounders
    (and, given ``measured``, the covariates) are reported.  Linear time plus
    one linear search per induced confounder for its paths.
    """
    X, Y = _roles(G, X, Y)
    M = _as_set(G, M)
    if not M:
        raise ValueError("natural effects need at least one mediator")
    if M & (X | Y):
        raise ValueError("mediators overlap exposures or outcomes")
    conditions: tuple[ConfoundingCondition, ...] = ()
    if Z is not None:
        C = _as_set(G, Z) - M
        conditions = (
            confounding_condition(G, EXPOSURE_OUTCOME, X, Y, C),
            confounding_condition(G, EXPOSURE_MEDIATOR, X, M, C),
            confounding_condition(G, MEDIATOR_OUTCOME, M, Y, C | X),
        )
    ix = indexed(G)
    bad, k = _induced_masks(ix, X, M, Y, G)
    induced = tuple(_induced_paths(G, ix, X, k, L) for L in sorted(compress(ix.names, bad)))
    cn = _cn_cached(G, X, Y)
    covariates = None if measured is None else natural_effect_covariates(G, X, M, Y, measured)
    return NaturalEffectVerdict(_sorted(M), conditions, induced, _sorted(M - cn), covariates)


# ---------------------------------------------------------------- sequential exposures


@dataclass(frozen=True)
class Feedback:
    """Treatment-confounder feedback (Robins 1986): ``variable`` is affected by an
    earlier exposure (``affected_path``, directed, from ``earlier``) and is a
    covariate of the stage of ``later``.  Adjusting for it in one regression
    either blocks part of the earlier exposure's effect or opens a path
    through it (it is then a collider between the earlier exposure and a
    cause of the outcome), while leaving it out leaves the later exposure
    confounded.  ``confounds_path``: a directed path from it to the later
    exposure, or None when it enters the stage for another reason."""

    variable: str
    earlier: str
    later: str
    affected_path: tuple[str, ...]
    confounds_path: tuple[str, ...] | None


@dataclass(frozen=True)
class Stage:
    """One stage of a sequential plan: its exposures, the covariates newly adjusted
    at this stage (inclusion-minimal given the earlier stages' ones), and whether
    the stage's condition holds; when it fails, ``covariates`` is empty."""

    exposures: tuple[str, ...]
    covariates: frozenset[str]
    holds: bool


@dataclass(frozen=True)
class SequentialVerdict:
    """The joint effect of several exposures taken in stages.

    ``single_set_exists``: some measured set is a valid adjustment set for the
    joint exposure (ordinary regression adjustment can work).  ``sequential``:
    the sequential back-door criterion (Pearl & Robins 1995) holds with
    measured covariates for every stage.  ``stages``: the stages in order,
    with covariates.  ``feedback``: treatment-confounder feedback variables
    among the covariates.  ``needs_g_methods``: no single set, but the
    sequential criterion holds (rule ``needs-g-methods``).
    """

    stages: tuple[Stage, ...]
    single_set_exists: bool
    sequential: bool
    feedback: tuple[Feedback, ...]

    @property
    def needs_g_methods(self) -> bool:
        return self.sequential and not self.single_set_exists


def implied_stages(G: nx.DiGraph, X: Iterable[str]) -> tuple[tuple[str, ...], ...]:
    """Group exposures into stages by the order the diagram implies.

    An exposure's stage is one more than the largest stage of the exposures
    that are its ancestors (so exposures in one stage do not affect each
    other).  O(|X| (V + E)).
    """
    X = _as_set(G, X)
    ix = indexed(G)
    x_mask = ix.mask(X)
    above: dict[str, list[str]] = {}
    for x in X:
        anc = closure_rows(ix.rows()[1], [ix.index[x]], bytearray(ix.n))
        above[x] = [
            ix.names[i] for i in compress(range(ix.n), anc) if x_mask[i] and ix.names[i] != x
        ]
    level: dict[str, int] = {}
    # Iterative longest-path levels over the exposures' ancestry (a DAG).
    pending = sorted(X, key=lambda x: len(above[x]))
    while pending:
        rest = []
        for x in pending:
            if all(a in level for a in above[x]):
                level[x] = 1 + max((level[a] for a in above[x]), default=-1)
            else:
                rest.append(x)
        if len(rest) == len(pending):
            raise ValueError("exposures lie on a cycle")
        pending = rest
    groups: dict[int, list[str]] = {}
    for x, k in level.items():
        groups.setdefault(k, []).append(x)
    return tuple(tuple(sorted(groups[k])) for k in sorted(groups))


def stages_from_periods(
    G: nx.DiGraph, X: Iterable[str], period_of: Mapping[str, int]
) -> tuple[tuple[str, ...], ...]:
    """Stages by period (``period_of`` maps a variable to its period's position);
    when some exposure has no period, the diagram's implied order is used."""
    X = _as_set(G, X)
    if not all(x in period_of for x in X):
        return implied_stages(G, X)
    groups: dict[int, list[str]] = {}
    for x in X:
        groups.setdefault(period_of[x], []).append(x)
    return tuple(tuple(sorted(groups[k])) for k in sorted(groups))


def _stage_rows(ix: Indexed, out_of, into):
    """Rows of G without the arrows out of ``out_of`` and into ``into`` (marks)."""
    children, parents = ix.rows()
    succ, pred = ix.succ, ix.pred
    touched = bytearray(ix.n)
    for v in compress(range(ix.n), out_of):
        touched[v] = 1
        for c in succ[v]:
            touched[c] = 1
    for v in compress(range(ix.n), into):
        touched[v] = 1
        for p in pred[v]:
            touched[p] = 1

    def kids(v: int):
        if not touched[v]:
            return children(v)
        if out_of[v]:
            return ()
        return [c for c in succ[v] if not into[c]]

    def pars(v: int):
        if not touched[v]:
            return parents(v)
        if into[v]:
            return ()
        return [p for p in pred[v] if not out_of[p]]

    return kids, pars


def sequential_verdict(
    G: nx.DiGraph,
    stages: Sequence[Iterable[str]],
    Y: Iterable[str],
    measured: Iterable[str],
) -> SequentialVerdict:
    """The sequential back-door criterion of Pearl & Robins (1995, "Probabilistic
    evaluation of sequential plans from causal models with hidden variables",
    UAI; Pearl 2009, Causality, 2nd ed., section 4.4, from memory).

    Stages X_1, ..., X_n (earliest first).  N_k: measured variables that are
    not descendants of any exposure of stages k..n.  The criterion holds when
    there are covariates Z_k ⊆ N_k with, for every k,
    Y ⊥ X_k | X_1..X_(k-1), Z_1..Z_k in G with the arrows out of X_k and the
    arrows into X_(k+1)..X_n removed; then P(y | do(x_1..x_n)) is given by the
    g-formula over the Z_k (Robins 1986).

    Deciding it: the condition at stage k involves only C_k = Z_1 ∪ .. ∪ Z_k.
    By the construction of van der Zander, Liskiewicz & Textor (2019) a C_k
    containing a given set I exists iff An_k(X_k ∪ Y ∪ I) ∩ N_k (with I) is one
    (An_k: ancestors in stage k's graph).  The sets
    C_k* = An_k(X_1..X_k ∪ Y) ∩ N_k grow with k (an ancestor in stage k-1's
    graph is one in stage k's, and N_(k-1) ⊆ N_k), so the criterion holds iff
    every C_k* passes its stage.  The covariates reported are minimal per
    stage given the earlier ones: the separator closest to X_k in the moral
    graph of stage k's ancestral set with X_1..X_(k-1) and the earlier
    covariates deleted, which exists whenever C_k* passes (the earlier
    covariates lie inside C_k*).  Cost O(n (V + E)).
    """
    stage_sets = [_as_set(G, s) for s in stages]
    X: set[str] = set().union(*stage_sets)
    Y = _as_set(G, Y)
    if X & Y:
        raise ValueError("exposures and outcomes overlap")
    if sum(map(len, stage_sets)) != len(X):
        raise ValueError("an exposure is in two stages")
    measured = frozenset(measured)
    ix = indexed(G)
    n = ix.n
    single = adjustment_exists(G, X, Y, measured)
    meas = ix.mask(
        measured if ix.index.keys() >= measured else (v for v in measured if v in ix.index)
    )
    y_mask = ix.mask(Y)
    x_all = ix.mask(X)
    out: list[Stage] = []
    chosen: set[int] = set()
    earlier: set[int] = set()
    ok_all = True
    for k, Xk in enumerate(stage_sets):
        later = set().union(*stage_sets[k + 1 :]) if k + 1 < len(stage_sets) else set()
        xk = ix.ids(Xk)
        de_later = closure_rows(ix.rows()[0], ix.ids(Xk | later), bytearray(n))
        kids, pars = _stage_rows(ix, ix.mask(Xk), ix.mask(later))
        anc = closure_rows(pars, [*ix.ids(X - later), *ix.ids(Y)], bytearray(n))
        # candidates: measured, outside X and Y, not descendants of stages k..n
        allowed = bytearray(n)
        for v in compress(range(n), anc):
            if meas[v] and not de_later[v] and not x_all[v] and not y_mask[v]:
                allowed[v] = 1
        cond = bytearray(allowed)
        for v in earlier:
            cond[v] = 1
        cond_anc = closure_rows(pars, compress(range(n), cond), bytearray(n))
        if _connected(kids, pars, n, xk, y_mask, cond, cond_anc):
            ok_all = False
            out.append(Stage(_sorted(Xk), frozenset(), False))
            earlier |= set(xk)
            continue
        forced = bytearray(n)
        for v in earlier | chosen:
            forced[v] = 1
        nbrs = _moral(pars, anc, n, forced)
        removable = bytearray(a & (1 - f) for a, f in zip(allowed, forced, strict=True))
        sep = _close_to(nbrs, xk, ix.ids(Y), removable)
        assert sep is not None  # C_k* passes, and it holds the forced variables
        new = frozenset(ix.names[i] for i in sep)
        chosen |= set(sep)
        earlier |= set(xk)
        out.append(Stage(_sorted(Xk), new, True))
    feedback = _feedback(G, ix, stage_sets, out, Y) if ok_all else ()
    return SequentialVerdict(tuple(out), single, ok_all, feedback)


def _feedback(G, ix: Indexed, stage_sets, stages: list[Stage], Y) -> tuple[Feedback, ...]:
    found = []
    for k, st in enumerate(stages):
        if k == 0:
            continue
        before = set().union(*stage_sets[:k])
        for v in sorted(st.covariates):
            goal = ix.mask([v])
            head = _directed_path(ix, ix.ids(sorted(before)), goal, bytes(ix.n))
            if head is None:
                continue
            later = ix.mask(stage_sets[k])
            tail = _directed_path(ix, [ix.index[v]], later, bytes(ix.n))
            found.append(
                Feedback(
                    v,
                    head[0],
                    tail[-1] if tail else sorted(stage_sets[k])[0],
                    tuple(head),
                    None if tail is None else tuple(tail),
                )
            )
    return tuple(found)


@dataclass(frozen=True)
class ControlledDirectVerdict:
    """The controlled direct effect: Z (minus the mediators) judged as an
    adjustment set for the joint exposure X ∪ M (Robins & Greenland 1992;
    Pearl 2001).  ``condition`` is that adjustment question (None when no Z
    was declared);
    ``sequential`` the sequential criterion over the stages X, then M (None
    when a single valid set exists, so it is not needed)."""

    mediators: tuple[str, ...]
    condition: ConfoundingCondition | None
    sequential: SequentialVerdict | None


def controlled_direct_verdict(
    G: nx.DiGraph,
    X: Iterable[str],
    M: Iterable[str],
    Y: Iterable[str],
    Z: Iterable[str] | None,
    measured: Iterable[str],
) -> ControlledDirectVerdict:
    """Judge a controlled direct effect (see :class:`ControlledDirectVerdict`).

    The stages are the exposures, then the mediators grouped by the order the
    diagram implies among them.  Linear time per stage.
    """
    X, Y = _roles(G, X, Y)
    M = _as_set(G, M)
    if not M:
        raise ValueError("a controlled direct effect needs at least one mediator")
    if M & (X | Y):
        raise ValueError("mediators overlap exposures or outcomes")
    measured = frozenset(measured)
    joint = X | M
    cond = (
        None if Z is None else confounding_condition(G, JOINT_EXPOSURE, joint, Y, _as_set(G, Z) - M)
    )
    seq = None
    if not adjustment_exists(G, joint, Y, measured):
        stages = [tuple(sorted(X)), *implied_stages(G, M)]
        seq = sequential_verdict(G, stages, Y, measured)
    return ControlledDirectVerdict(_sorted(M), cond, seq)


__all__ = [
    "EXPOSURE_MEDIATOR",
    "EXPOSURE_OUTCOME",
    "JOINT_EXPOSURE",
    "MEDIATOR_OUTCOME",
    "ConfoundingCondition",
    "ControlledDirectVerdict",
    "Feedback",
    "ForbiddenRestriction",
    "InducedConfounder",
    "NaturalEffectVerdict",
    "OddsRatio",
    "OpenedByRestriction",
    "SelectionVerdict",
    "SequentialVerdict",
    "Stage",
    "confounding_condition",
    "controlled_direct_verdict",
    "exposure_induced_confounders",
    "forbidden_restrictions",
    "implied_stages",
    "induced_confounder_paths",
    "minimal_adjustment_sets_given",
    "natural_effect_covariates",
    "natural_effect_verdict",
    "odds_ratio_survives",
    "recovery_set",
    "selection_verdict",
    "sequential_verdict",
    "stages_from_periods",
]
