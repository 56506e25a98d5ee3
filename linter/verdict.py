"""One verdict per analysis: the only place in dagward that judges an adjustment set.

`check`'s rules, `adjustment`, `paths`, `diff`, `render`, the language server and
the Python API all read a :class:`Verdict`; none of them decides validity on its
own. A verdict answers, as structured data:

* is the declared set valid, and if not, *why*: a tuple of :class:`Problem`
  records (which rule, which variable, which path, which collider);
* does any valid set exist among the measured variables (``identifiable``), the
  minimal valid sets, the smallest one, and when none exists the best
  achievable set and the path it leaves open;
* whether the front-door criterion holds;
* notes that do not bear on validity (an instrument-like adjusted variable, no
  causal path at all).

The verdict also knows which question the analysis asks (``question``: the
total effect, a controlled direct effect, a natural direct or indirect effect)
and how its sample was drawn (``restricted``). Each question is a kind of
verdict, not a side path:

* a restricted sample: the declared set Z is judged together with the
  restriction R (conditioning on Z and R); failures caused by R are
  ``selection-bias`` problems, failures caused by Z stay with the usual rules
  (Hernan, Hernandez-Diaz & Robins 2004). A restriction on an outcome itself
  (case-control sampling on the outcome) is the design, not a bias of the
  adjustment, and is left out of the conditioning set (only the odds ratio can
  be estimated, which ``adjustment`` says);
* ``controlled-direct``: Z judged for the joint exposure X and the mediators;
* ``natural-direct`` / ``natural-indirect``: three part verdicts
  (exposure-outcome, exposure-mediator, mediator-outcome given the exposure;
  VanderWeele & Vansteelandt 2009), whose problems carry ``part``, plus
  ``exposure-induced-confounder`` (Avin, Shpitser & Pearl 2005);
* several exposures with no single valid set but the sequential back-door
  criterion holding (Pearl & Robins 1995): ``needs-g-methods`` instead of
  ``unmeasured-confounding``.

A plain total-effect analysis computes nothing of this.

Wording is built from these records in :mod:`dagward.wording`; nothing here
writes a sentence. Everything is computed lazily, so ``check`` on a valid
analysis pays for one linear validity test and no more.

Definitions (adjustment criterion; Shpitser, VanderWeele & Robins 2010;
Perkovic et al. 2018) are those of :mod:`dagward.causal.adjustment`.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Iterator
from dataclasses import dataclass
from functools import cached_property

from .causal import (
    adjustment_exists,
    canonical_adjustment,
    collider_bias_paths,
    fixable_confounding_path,
    front_door_set,
    instrument_conditions,
    instrument_like,
    is_hidden,
    is_valid_adjustment,
    minimal_adjustment_sets,
    open_noncausal_path,
    open_path_witnesses,
    smallest_adjustment_set,
)
from .causal.adjustment import _cn_cached, _forbidden_cached, _roles
from .causal.indexed import NodeSet, indexed
from .causal.questions import (
    EXPOSURE_MEDIATOR,
    EXPOSURE_OUTCOME,
    MEDIATOR_OUTCOME,
    implied_stages,
    minimal_adjustment_sets_given,
    natural_effect_verdict,
    selection_verdict,
    sequential_verdict,
    stages_from_periods,
)
from .model import Analysis, Diagram
from .rules import CAUSAL_RULES, VALIDITY_RULES

# Above this many measured variables the (quadratic) instrument search is skipped.
INSTRUMENT_SEARCH_LIMIT = 2000
# How many minimal sets to look at when suggesting the ones closest to the declared
# set: each costs a linear pass, so fewer on very large diagrams.
SUGGESTION_POOL = 20
SUGGESTION_POOL_LARGE = 3
LARGE_DIAGRAM = 5_000  # variables
# Rounds of the sound (not complete) search for a confounding path with a
# fixable variable on diagrams too large for the exact listing.
FIXABLE_ROUNDS = 10


@dataclass(frozen=True)
class Problem:
    """One reason a declared set is not valid, or one note about it.

    ``path`` lists graph nodes from an exposure to an outcome (hidden `<->`
    parents included; :mod:`dagward.wording` spells them).
    """

    rule: str
    variable: str | None = None  # the adjusted variable concerned; None: the analysis
    path: tuple[str, ...] | None = None
    collider: str | None = None  # collider-adjusted: the collider on `path`
    source: str | None = None  # adjusted-descendant: the outcome or mediator above it
    source_kind: str | None = None  # "outcome" | "mediator"
    fixable: tuple[str, ...] = ()  # open-biasing-path: adjustable variables on `path`
    given: tuple[str, ...] = ()  # instrument-adjusted: adjusted variables the claim needs
    # natural effects: which of the three confounding questions (EXPOSURE_OUTCOME,
    # EXPOSURE_MEDIATOR, MEDIATOR_OUTCOME) the problem concerns; None: the analysis
    part: str | None = None
    # exposure-induced-confounder: the paths from the exposure, to the mediator and
    # to the outcome; selection-bias: unused
    paths: tuple[tuple[str, ...], ...] = ()

    def to_dict(self, graph=None) -> dict:
        """JSON: paths as `json_path` writes them when the graph is given."""
        out: dict = {"rule": self.rule}
        for key in ("variable", "collider", "source", "source_kind", "part"):
            value = getattr(self, key)
            if value is not None:
                out[key] = value
        if self.path is not None:
            out["path"] = list(self.path if graph is None else json_path(graph, self.path))
        if self.fixable:
            out["fixable"] = list(self.fixable)
        if self.given:
            out["given"] = list(self.given)
        if self.paths:
            out["paths"] = [list(q if graph is None else json_path(graph, q)) for q in self.paths]
        return out


def _measured(diagram: Diagram, graph) -> frozenset[str]:
    """The measured variables: on the compact graph `check` reads, as marks over
    its index (a frozenset of 100,000 names costs 4 MB); else the diagram's set."""
    from .causal.compact import CompactGraph

    if type(graph) is not CompactGraph:
        return diagram.measured
    ix = indexed(graph)
    marks = bytearray(b"\x01") * graph.hidden_from + bytes(ix.n - graph.hidden_from)
    index = ix.index
    for v in diagram.unmeasured:
        marks[index[v]] = 0
    return NodeSet(ix, marks)  # type: ignore[return-value]


def _sorted_sets(sets) -> tuple[tuple[str, ...], ...]:
    return tuple(sorted((tuple(sorted(s)) for s in sets), key=lambda s: (len(s), s)))


class Verdict:
    """The judgement of one analysis of one diagram (see the module docstring)."""

    def __init__(
        self,
        diagram: Diagram,
        analysis: Analysis,
        *,
        graph=None,
        _part: str | None = None,
        _roles: tuple | None = None,
    ):
        self.diagram = diagram
        self.analysis = analysis
        self.name = analysis.name
        # `check` passes `diagram.compact_graph` (same answers, no networkx graph)
        self.graph = diagram.graph if graph is None else graph
        self.measured = _measured(diagram, self.graph)
        self.part = _part
        question = analysis.effect
        self.question: str = question
        self.listed_mediators: frozenset[str] = (
            frozenset(analysis.mediator_set) if question != "total" else frozenset()
        )
        self.restricted_all: frozenset[str] = frozenset(analysis.restricted_set)
        declared = analysis.adjust_set
        if _roles is not None:  # a part of a natural-effect verdict
            exposure, outcome, declared, extra = _roles
        else:
            exposure = frozenset(analysis.exposure_set)
            outcome = frozenset(analysis.outcome_set)
            extra = frozenset()
            if question == "controlled-direct":
                # the joint exposure: X and the mediators held fixed
                exposure = exposure | self.listed_mediators
            if question != "total" and declared is not None:
                declared = declared - self.listed_mediators
        self.exposure = frozenset(exposure)
        self.outcome = frozenset(outcome)
        # the restriction that is conditioned on (a restriction on an exposure or an
        # outcome of this question is the design itself, not a conditioning variable)
        self.restricted: frozenset[str] = self.restricted_all - self.exposure - self.outcome
        if declared is not None:
            declared = declared - self.restricted
        self.declared: frozenset[str] | None = declared
        # conditioned on besides the declared set: the restriction, and for the
        # mediator-outcome part of natural effects the exposure
        self.extra: frozenset[str] = frozenset(extra) - self.exposure - self.outcome
        self.forced: frozenset[str] = self.restricted | self.extra

    # -- the structure of the question ------------------------------------------
    @cached_property
    def causal_nodes(self) -> frozenset[str]:
        # the set kept for the graph (on a large diagram, marks rather than names)
        return _cn_cached(self.graph, *_roles(self.graph, self.exposure, self.outcome))

    @cached_property
    def mediators(self) -> frozenset[str]:
        return self.causal_nodes - self.outcome

    @cached_property
    def forbidden(self) -> frozenset[str]:
        return _forbidden_cached(self.graph, *_roles(self.graph, self.exposure, self.outcome))

    @cached_property
    def has_causal_path(self) -> bool:
        return bool(self.causal_nodes & self.outcome)

    @cached_property
    def fixable(self) -> frozenset[str]:
        """Variables an adjustment set may hold: measured, not forbidden, not X or Y."""
        return self.measured - self.forbidden - self.exposure - self.outcome - self.forced

    # -- is there a valid set at all ---------------------------------------------
    @cached_property
    def identifiable(self) -> bool:
        """A valid adjustment set exists among the measured variables (with the
        restriction, and any other forced variable, in it)."""
        if self.natural is not None:
            return all(v.identifiable for v in self.parts.values()) and not self.natural.induced
        if self.forced:
            return self._first_given is not None
        return adjustment_exists(self.graph, self.exposure, self.outcome, self.measured)

    @cached_property
    def _first_given(self) -> frozenset[str] | None:
        for s in minimal_adjustment_sets_given(
            self.graph, self.exposure, self.outcome, self.measured, self.forced, 1
        ):
            return s
        return None

    @cached_property
    def minimal_sets(self) -> tuple[tuple[str, ...], ...]:
        """Up to SUGGESTION_POOL minimal valid sets (smallest first)."""
        pool = SUGGESTION_POOL if len(self.graph) < LARGE_DIAGRAM else SUGGESTION_POOL_LARGE
        return self.list_minimal_sets(pool)[0]

    def list_minimal_sets(self, limit: int) -> tuple[tuple[tuple[str, ...], ...], bool]:
        """At most ``limit`` minimal valid sets, sorted, and whether the list was cut.

        One listing per verdict, continued where the last call stopped: `check`
        lists a few sets for its suggestions, and `adjustment` after it lists up
        to its `--max` without finding the first ones again. The listing's order
        is fixed, so the sets returned for a limit are those a fresh listing
        would give."""
        if not self.identifiable:
            return (), False
        if self.natural is not None:
            covariates = self.natural.covariates
            return ((tuple(sorted(covariates)),) if covariates is not None else ()), False
        found, listing = self._listing
        while listing is not None and len(found) <= limit:
            s = next(listing, None)
            if s is None:
                listing = None
                self._listing = (found, None)
            else:
                found.append(s)
        return _sorted_sets(found[:limit]), len(found) > limit

    @cached_property
    def _listing(self) -> tuple[list[frozenset[str]], Iterator[frozenset[str]] | None]:
        """The minimal sets found so far, and the listing that finds the rest."""
        listing = (
            minimal_adjustment_sets_given(
                self.graph, self.exposure, self.outcome, self.measured, self.forced
            )
            if self.forced
            else minimal_adjustment_sets(self.graph, self.exposure, self.outcome, self.measured)
        )
        return [], listing

    @cached_property
    def smallest(self) -> tuple[str, ...] | None:
        if not self.identifiable:
            return None
        if self.forced or self.natural is not None:
            # the smallest of those listed (the listing is sorted by size)
            return self.minimal_sets[0] if self.minimal_sets else None
        s = smallest_adjustment_set(self.graph, self.exposure, self.outcome, self.measured)
        return None if s is None else tuple(sorted(s))

    def suggestions(self, limit: int = 3) -> tuple[tuple[str, ...], ...]:
        """Minimal valid sets, the ones closest to the declared set first."""
        declared = set(self.declared or ())
        ranked = sorted(self.minimal_sets, key=lambda s: (len(set(s) ^ declared), len(s), s))
        return tuple(ranked[:limit])

    @cached_property
    def best_achievable(self) -> tuple[str, ...] | None:
        """When no valid set exists: the measured, non-forbidden ancestors of the
        exposures and outcomes (the canonical set; van der Zander, Liskiewicz &
        Textor 2019). It closes every confounding path that any set of measured
        variables can close. None when a valid set exists."""
        if self.identifiable or self.natural is not None:
            return None
        canonical = canonical_adjustment(self.graph, self.exposure, self.outcome, self.measured)
        return tuple(sorted(set(canonical) - self.forced))

    @cached_property
    def unblockable_path(self) -> tuple[str, ...] | None:
        """A path that the best achievable set (so every measured set) leaves open."""
        if self.identifiable or self.natural is not None:
            return None
        canonical = canonical_adjustment(self.graph, self.exposure, self.outcome, self.measured)
        canonical = (set(canonical) | self.forced) - self.forbidden
        path = open_noncausal_path(self.graph, self.exposure, self.outcome, canonical)
        return None if path is None else tuple(path)

    @cached_property
    def identification(self):
        """How the total effect is identified from the measured variables at all
        (`dagward.causal.identify_effect`: the identification algorithm of Tian &
        Pearl 2002 and Shpitser & Pearl 2006, complete), or None when it is not
        asked: another question, a restriction, or an unmeasured exposure or
        outcome. Computed only when no valid adjustment set exists (when one does,
        the route is adjustment)."""
        if self.question != "total" or self.forced or self.identifiable:
            return None
        from .causal import identify_effect

        try:
            return identify_effect(self.graph, self.exposure, self.outcome, self.measured)
        except ValueError:
            return None

    @cached_property
    def route(self) -> str | None:
        """'adjustment', 'front-door', 'general' or 'not-identified' (None: not asked)."""
        if self.question == "total" and not self.forced and self.identifiable:
            return "adjustment"
        ident = self.identification
        return None if ident is None else ident.route

    @cached_property
    def instruments(self) -> tuple:
        """Instruments and conditional instruments of each exposure (van der Zander,
        Textor & Liskiewicz 2015), for the total effect when no valid set exists;
        the search grows with the square of the diagram, so it is skipped above
        INSTRUMENT_SEARCH_LIMIT measured variables (empty then)."""
        if self.identification is None or len(self.measured) > INSTRUMENT_SEARCH_LIMIT:
            return ()
        from .causal import instruments

        return tuple(instruments(self.graph, self.exposure, self.outcome, self.measured))

    @cached_property
    def front_door(self) -> tuple[str, ...] | None:
        """A measured set for which the front-door criterion holds (Pearl 1995), or None
        (asked for the plain total effect only)."""
        if self.question != "total" or self.forced:
            return None
        found = front_door_set(self.graph, self.exposure, self.outcome, self.measured)
        return None if found is None else tuple(sorted(found))

    # -- the declared set ---------------------------------------------------------
    @cached_property
    def declared_valid(self) -> bool | None:
        if self.declared is None:
            return None
        if self.natural is not None:
            return all(v.declared_valid for v in self.parts.values()) and not self.natural.induced
        return self.declared <= self.measured and is_valid_adjustment(
            self.graph, self.exposure, self.outcome, self.declared | self.forced
        )

    @cached_property
    def problems(self) -> tuple[Problem, ...]:
        """Why the declared set is not valid for the question (empty when it is, or
        when none is declared, except for the problems of the analysis as a whole:
        `unmeasured-confounding`, `needs-g-methods`, `selection-bias` of a
        restriction no set repairs, `exposure-induced-confounder`). In catalogue
        order, then by the variable's name."""
        if self.natural is not None:
            return self._natural_problems()
        out: list[Problem] = []
        if self.declared is not None and not self.declared_valid:
            out.extend(self._declared_problems())
            out.extend(self._restriction_problems())
        if not self.identifiable:
            if self.restricted and self._restriction_to_blame:
                if not any(p.rule == "selection-bias" for p in out):
                    out.extend(self._restriction_problems(always=True))
            elif self.sequential is not None and self.sequential.needs_g_methods:
                out.append(Problem("needs-g-methods"))
            else:
                out.append(Problem("unmeasured-confounding", path=self.unblockable_path))
        if self.declared_valid is False and not any(p.rule in VALIDITY_RULES for p in out):
            out.extend(self._last_resort())
        if self.declared_valid is False and not out:  # pragma: no cover - a bug guard
            raise AssertionError(f"analysis {self.name}: invalid set with no reason found")
        out.sort(key=self._order)
        return tuple(out)

    @staticmethod
    def _order(p: Problem):
        return (_RULE_ORDER[p.rule], _PART_ORDER.index(p.part), p.variable or "")

    def _last_resort(self) -> list[Problem]:
        """An open non-causal path that the declared set and the forced variables
        leave open while no named rule explained it (the forced variables are to
        blame: the restriction, or the exposure in the mediator-outcome part)."""
        S = (self.declared or frozenset()) | self.forced
        path = open_noncausal_path(self.graph, self.exposure, self.outcome, S)
        if self.restricted:
            return [
                Problem(
                    "selection-bias",
                    variable=sorted(self.restricted)[0],
                    path=None if path is None else tuple(path),
                )
            ]
        fix = () if path is None else tuple(sorted(v for v in path[1:-1] if v in self.fixable))
        shown = None if path is None else tuple(path)
        return [Problem("open-biasing-path", path=shown, fixable=fix)]

    # -- the questions beyond the total effect --------------------------------------
    @cached_property
    def selection(self):
        """The restricted-sample verdict (dagward.causal.questions.SelectionVerdict),
        or None without a restriction."""
        if not self.restricted:
            return None
        Z = None if self.declared is None else self.declared | self.extra
        return selection_verdict(
            self.graph, self.exposure, self.outcome, Z, self.restricted, self.measured
        )

    @cached_property
    def plain_identifiable(self) -> bool:
        """A valid set exists for the question when the restriction is ignored."""
        extra = self.extra
        if not extra:
            return adjustment_exists(self.graph, self.exposure, self.outcome, self.measured)
        for _ in minimal_adjustment_sets_given(
            self.graph, self.exposure, self.outcome, self.measured, extra, 1
        ):
            return True
        return False

    @cached_property
    def _restriction_to_blame(self) -> bool:
        """No valid set exists with the restriction, and the restriction is why: it is
        forbidden, or a valid set exists without it."""
        sel = self.selection
        return bool(sel is not None and (sel.forbidden or self.plain_identifiable))

    def _restriction_problems(self, always: bool = False) -> list[Problem]:
        """`selection-bias`: a forbidden restriction, or one that opens a path."""
        sel = self.selection
        if sel is None:
            return []
        out: dict[str, Problem] = {}
        for f in sel.forbidden:
            out[f.variable] = Problem(
                "selection-bias",
                variable=f.variable,
                path=f.path,
                source=f.via,
                source_kind=f.kind,
                part=self.part,
            )
        for o in sel.opened:
            if o.variable in out:  # forbidden and opening a path too: show both
                from dataclasses import replace

                out[o.variable] = replace(out[o.variable], paths=(o.path,), collider=o.collider)
            else:
                out[o.variable] = Problem(
                    "selection-bias",
                    variable=o.variable,
                    path=o.path,
                    collider=o.collider,
                    part=self.part,
                )
        if always and not out:
            out[sorted(self.restricted)[0]] = Problem(
                "selection-bias",
                variable=sorted(self.restricted)[0],
                path=self.unblockable_path,
                part=self.part,
            )
        return list(out.values())

    @cached_property
    def stages(self) -> tuple[tuple[str, ...], ...] | None:
        """The stages of a joint exposure, earliest first: by period when every
        exposure has one, else the order the diagram implies; for a controlled
        direct effect the exposures, then the mediators. None with one exposure."""
        if len(self.exposure) < 2 or self.natural is not None or self.part is not None:
            return None
        G = self.graph
        if self.question == "controlled-direct":
            X = self.exposure - self.listed_mediators
            return (tuple(sorted(X)), *implied_stages(G, self.listed_mediators))
        period_of = {
            text: i for i, (_, members) in enumerate(self.diagram.periods) for text in members.texts
        }
        return stages_from_periods(G, self.exposure, period_of)

    @cached_property
    def sequential(self):
        """The sequential back-door verdict (SequentialVerdict) when a joint exposure
        has no single valid set and no restriction; None otherwise."""
        if self.stages is None or len(self.stages) < 2 or self.forced:
            return None
        if adjustment_exists(self.graph, self.exposure, self.outcome, self.measured):
            return None
        return sequential_verdict(self.graph, self.stages, self.outcome, self.measured)

    @cached_property
    def natural(self):
        """The natural-effect verdict (NaturalEffectVerdict) for `natural-direct` and
        `natural-indirect`; None for the other questions."""
        if self.part is not None or not self.question.startswith("natural"):
            return None
        if not self.listed_mediators:
            return None
        return natural_effect_verdict(
            self.graph, self.exposure, self.listed_mediators, self.outcome, None, self.measured
        )

    @cached_property
    def parts(self) -> dict[str, Verdict]:
        """The three confounding questions of natural effects as verdicts of their
        own (VanderWeele & Vansteelandt 2009): the declared set for exposure ->
        outcome and exposure -> mediator, and with the exposure for mediator ->
        outcome. Empty for the other questions."""
        if self.natural is None:
            return {}
        X, M, Y, Z = self.exposure, self.listed_mediators, self.outcome, self.declared
        roles = {
            EXPOSURE_OUTCOME: (X, Y, Z, frozenset()),
            EXPOSURE_MEDIATOR: (X, M, Z, frozenset()),
            MEDIATOR_OUTCOME: (M, Y, Z, X),
        }
        return {
            part: Verdict(self.diagram, self.analysis, graph=self.graph, _part=part, _roles=r)
            for part, r in roles.items()
        }

    def verdict_of(self, problem: Problem) -> Verdict:
        """The verdict a problem was found by (its part's, for natural effects)."""
        if problem.part is not None and problem.part in self.parts:
            return self.parts[problem.part]
        return self

    def _natural_problems(self) -> tuple[Problem, ...]:
        out: list[Problem] = []
        for part, v in self.parts.items():
            for p in v.problems:
                out.append(p if p.part == part else _with_part(p, part))
        for ic in self.natural.induced:
            mediator = ic.to_mediator[-1]
            out.append(
                Problem(
                    "exposure-induced-confounder",
                    variable=ic.variable,
                    source=mediator,
                    paths=(ic.from_exposure, ic.to_mediator, ic.to_outcome),
                )
            )
        out.sort(key=self._order)
        return tuple(out)

    def problems_of(self, rule: str) -> list[Problem]:
        return [p for p in self.problems + self.notes if p.rule == rule]

    def _declared_problems(self) -> list[Problem]:
        Z = self.declared or frozenset()
        out: list[Problem] = []
        for z in sorted(Z - self.measured):
            out.append(Problem("adjusted-unmeasured", variable=z))
        for z in sorted(Z & self.mediators):
            out.append(Problem("adjusted-mediator", variable=z, path=self._causal_path_through(z)))
        for z in sorted((Z & self.forbidden) - self.mediators):
            path, source, kind = self._source_of(z)
            out.append(
                Problem(
                    "adjusted-descendant", variable=z, path=path, source=source, source_kind=kind
                )
            )
        S = Z | self.forced
        colliders, confounding = self._open_path_witnesses(S)
        for z in sorted(set(colliders) & Z):
            path, c = colliders[z]
            out.append(Problem("collider-adjusted", variable=z, path=path, collider=c))
        if confounding is not None:
            fix = tuple(sorted(v for v in confounding[1:-1] if v in self.fixable))
            out.append(Problem("open-biasing-path", path=confounding, fixable=fix))
        if not out and self.identifiable:
            out.extend(self._fallback_problems(Z))
        if self.part is not None:
            out = [_with_part(p, self.part) for p in out]
        return out

    def _open_path_witnesses(self, Z: frozenset[str]):
        """(collider witnesses by adjusted variable, a confounding path with a fixable
        variable): exact on small diagrams, by sound linear searches above."""
        G, X, Y = self.graph, self.exposure, self.outcome
        exact = open_path_witnesses(G, X, Y, Z, self.fixable)
        if exact is not None:
            return exact.colliders, exact.confounding
        found = collider_bias_paths(G, X, Y, Z, sorted(Z))
        colliders = {z: (tuple(p), c) for z, v in found.items() if v is not None for p, c in [v]}
        return colliders, self._confounding_with_fixable(Z)

    def _confounding_with_fixable(self, Z: frozenset[str]) -> tuple[str, ...] | None:
        """A collider-free open path with a fixable variable (sound; large diagrams)."""
        path = fixable_confounding_path(
            self.graph, self.exposure, self.outcome, Z, self.fixable, FIXABLE_ROUNDS
        )
        return None if path is None else tuple(path)

    def _fallback_problems(self, Z: frozenset[str]) -> list[Problem]:
        """The exact open-path witness, when the searches above named nothing.

        Exact when Z holds no forbidden variable; then the path either has a
        collider above an adjusted variable (collider-adjusted) or none (a
        confounding path, fixable or else an unmeasured-confounding case).
        """
        G = self.graph
        if Z & self.forbidden or not Z <= self.measured or self.forced & self.forbidden:
            return []
        path = open_noncausal_path(G, self.exposure, self.outcome, Z | self.forced)
        if path is None:
            return []
        succ = G.succ
        for i in range(1, len(path) - 1):
            c = path[i]
            if c in succ[path[i - 1]] and c in succ[path[i + 1]]:
                from .causal import descendants

                below = sorted((descendants(G, {c}) | {c}) & Z)
                if not below:  # the collider is conditioned on through a forced variable
                    return []
                return [
                    Problem("collider-adjusted", variable=z, path=tuple(path), collider=c)
                    for z in below[:1]
                ]
        fix = tuple(sorted(v for v in path[1:-1] if v in self.fixable))
        if fix:
            return [Problem("open-biasing-path", path=tuple(path), fixable=fix)]
        return []

    # -- notes that do not bear on validity ----------------------------------------
    @cached_property
    def notes(self) -> tuple[Problem, ...]:
        out: list[Problem] = []
        if self.declared is not None:
            Z = self.declared
            G, X, Y = self.graph, self.exposure, self.outcome
            for z in sorted(Z & self.measured - self.forbidden):
                if instrument_like(G, X, Y, Z, z):
                    given = instrument_conditions(G, X, Y, Z, z)
                    out.append(Problem("instrument-adjusted", variable=z, given=given))
        if not self.has_causal_path:
            out.append(Problem("no-causal-path"))
        return tuple(out)

    # -- witness paths for the problems ---------------------------------------------
    def _bfs(self, sources, targets, avoid) -> tuple[str, ...] | None:
        """A shortest directed path from a source to a target, never entering `avoid`."""
        succ = self.graph.succ
        parent: dict[str, str | None] = {s: None for s in sorted(sources)}
        queue = deque(parent)
        while queue:
            node = queue.popleft()
            if node in targets:
                path = [node]
                while parent[path[-1]] is not None:
                    path.append(parent[path[-1]])  # type: ignore[arg-type]
                return tuple(reversed(path))
            for nxt in sorted(succ[node]):
                if nxt not in parent and nxt not in avoid:
                    parent[nxt] = node
                    queue.append(nxt)
        return None

    def _causal_path_through(self, m: str) -> tuple[str, ...] | None:
        """A proper causal path (only its first variable an exposure) through m."""
        first = self._bfs(self.exposure, {m}, self.exposure)
        rest = self._bfs({m}, self.outcome, self.exposure)
        if first is None or rest is None:
            return None
        return first + rest[1:]

    def _source_of(self, z: str) -> tuple[tuple[str, ...], str, str]:
        """Whose effect a forbidden, non-mediator z is: an outcome first, else a mediator."""
        path = self._bfs(self.outcome, {z}, frozenset())
        if path is not None:
            return path, path[0], "outcome"
        path = self._bfs(self.mediators, {z}, frozenset()) or (z,)
        return path, path[0], "mediator"

    # -- one structured answer for reports ------------------------------------------
    def to_dict(self, max_sets: int = 20) -> dict:
        """The documented `adjustment` JSON shape (interfaces.md), plus the why."""
        minimal, truncated = self.list_minimal_sets(max_sets)
        declared = self.declared
        return {
            "name": self.name,
            "exposure": sorted(self.exposure),
            "outcome": sorted(self.outcome),
            "declared": None if declared is None else sorted(declared),
            "declared_valid": self.declared_valid,
            "identifiable": self.identifiable,
            "minimal_sets": [list(s) for s in minimal],
            "smallest": None if self.smallest is None else list(self.smallest),
            "truncated": truncated,
            "best_achievable": None if self.best_achievable is None else list(self.best_achievable),
            "front_door": None if self.front_door is None else list(self.front_door),
            "route": self.route,
            "problems": [p.to_dict(self.graph) for p in self.problems],
            "notes": [p.to_dict(self.graph) for p in self.notes],
            "question": self.question_dict(),
        }

    def question_dict(self) -> dict:
        """The question asked and what is particular to it (interfaces.md,
        `adjustment` JSON, key `question`): the effect, the mediators, the
        restriction; the minimal sets above are given the restriction (each is
        valid with it forced in), and `stages`, `natural` and `selection` carry
        the sequential plan, the three confounding questions and the restriction's
        findings when they apply."""
        out: dict = {
            "effect": self.question,
            "mediators": sorted(self.listed_mediators),
            "restricted": sorted(self.restricted_all),
        }
        sel = self.selection
        if sel is not None:
            out["selection"] = {
                "valid": sel.valid,
                "recoverable": sel.recoverable,
                "recovery_set": None if sel.recovery_set is None else sorted(sel.recovery_set),
                "outcome_only": sel.outcome_only,
                "odds_ratio_survives": sel.odds_ratio.survives,
                "odds_ratio_set": None
                if sel.odds_ratio.adjusted is None
                else sorted(sel.odds_ratio.adjusted),
            }
        if self.restricted_all & self.outcome:
            out["odds_ratio_only"] = True  # restricted on an outcome: case-control design
        seq = self.sequential
        if seq is not None:
            out["stages"] = [
                {
                    "exposures": list(st.exposures),
                    "covariates": sorted(st.covariates),
                    "holds": st.holds,
                }
                for st in seq.stages
            ]
            out["sequential"] = seq.sequential
            out["feedback"] = [f.variable for f in seq.feedback]
        if self.natural is not None:
            out["natural"] = {
                part: {
                    "exposure": sorted(v.exposure),
                    "outcome": sorted(v.outcome),
                    "declared_valid": v.declared_valid,
                    "identifiable": v.identifiable,
                }
                for part, v in self.parts.items()
            }
            out["exposure_induced_confounders"] = [i.variable for i in self.natural.induced]
        return out


_RULE_ORDER = {rule.name: i for i, rule in enumerate(CAUSAL_RULES)}
_PART_ORDER = (None, EXPOSURE_OUTCOME, EXPOSURE_MEDIATOR, MEDIATOR_OUTCOME)


def _with_part(p: Problem, part: str) -> Problem:
    from dataclasses import replace

    return replace(p, part=part)


def json_path(graph, path) -> tuple[str, ...]:
    """A path as JSON lists it: a hidden `<->` parent written `<->`."""
    return tuple("<->" if is_hidden(graph, n) else n for n in path)


def verdict_of(diagram: Diagram, analysis: Analysis, *, compact: bool = False) -> Verdict:
    """The one verdict on an analysis of a diagram, judged once per diagram.

    `check`'s rules ask with ``compact=True``: that verdict reads
    `diagram.compact_graph` (the same answers, without building networkx's
    graph). The commands that report (`adjustment`, `paths`, `render`, `diff`,
    the language server's hover, the API) ask without, and share one verdict on
    `diagram.graph`, so the answers it has worked out (its problems, its
    minimal sets) are not worked out again. Kept on the diagram, so it lives as
    long as the diagram and no longer; a diagram is never edited after parsing
    (a changed diagram is a new `Diagram`, which gets verdicts of its own).
    """
    memo = diagram.__dict__.setdefault("_verdicts", {})
    key = (id(analysis), compact)
    kept = memo.get(key)
    if kept is None or kept.analysis is not analysis:
        graph = diagram.compact_graph if compact else None
        kept = memo[key] = Verdict(diagram, analysis, graph=graph)
    return kept


def verdicts(diagram: Diagram) -> dict[str, Verdict]:
    """A verdict for every analysis of a diagram, by analysis name."""
    return {a.name: verdict_of(diagram, a) for a in diagram.analyses}
