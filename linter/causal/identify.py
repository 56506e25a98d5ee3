"""Identification of causal effects in diagrams with unmeasured variables.

Is P(y | do(x)) a function of the distribution of the measured variables,
and by what formula?  The answer is the identification algorithm of Tian &
Pearl (2002, "A general identification condition for causal effects",
AAAI) in the form of Shpitser & Pearl (2006, "Identification of joint
interventional distributions in recursive semi-Markovian causal models",
AAAI), the algorithm they call ID.  It is complete: when it fails, the
effect is not identified, and the failure exhibits a *hedge*, two
c-forests F' inside F, that proves it (Shpitser & Pearl 2006, Theorem 4).

**Latent projection.**  ID runs on a semi-Markovian diagram over the
measured variables: directed arrows, and bidirected arcs for hidden common
causes.  Every unmeasured variable, and every hidden parent that stands for
``A <-> B`` (dagward.causal.graph), is projected out (Verma & Pearl 1990,
"Equivalence and synthesis of causal models", UAI; used for identification
by Tian & Pearl 2002, who show the projection has the same identifiable
effects):

* ``a -> b`` when G has a directed path from a to b whose inner variables
  are all unmeasured (so chains of unmeasured variables ``a -> u1 -> u2 -> b``
  become one arrow);
* ``a <-> b`` when some unmeasured h has directed paths to a and to b whose
  inner variables are all unmeasured.  Only unmeasured variables with no
  unmeasured parent need be tried as h: every other one's reach is inside
  its unmeasured parent's.  (An unmeasured collider ``u1 -> u3 <- u2`` joins
  nothing, since h must be a common *cause*.)

**Formula.**  Where ID takes a conditional ``P(v | all earlier variables)``
of the observed distribution over an ancestral set, the conditioning set is
cut to v's district among them and the parents of that district (Tian &
Pearl 2002, Lemma 1; from memory), an equality that holds in every model of
the diagram.  Other conditionals of intermediate kernels are built as
ratios of sums and simplified (dagward.causal.estimand).  The recursion runs
on an explicit stack.

When the effect is also identified by covariate adjustment or by the
front-door criterion, :func:`identify_effect` reports that formula, which
is equal to ID's (both are the interventional distribution).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Literal

from .estimand import (
    Expr,
    Product,
    Ratio,
    Sum,
    adjustment_formula,
    free_variables,
    front_door_formula,
    prob,
    product,
    simplify,
)
from .graph import _as_set, is_hidden

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx

Route = Literal["adjustment", "front-door", "general", "not-identified"]


@dataclass(frozen=True)
class Projection:
    """A semi-Markovian diagram over the measured variables.

    ``order`` is a topological order of the arrows; ``parents`` and
    ``bidirected`` map each variable to its neighbours; ``sources`` maps each
    bidirected pair (a frozenset of two names) to the named unmeasured
    variables behind it (empty when only ``<->`` arcs make it).
    """

    order: tuple[str, ...]
    parents: dict[str, frozenset[str]] = field(hash=False)
    bidirected: dict[str, frozenset[str]] = field(hash=False)
    sources: dict[frozenset[str], frozenset[str]] = field(hash=False)

    def arrows(self, within: Iterable[str]) -> list[tuple[str, str]]:
        inside = set(within)
        return sorted((p, v) for v in inside for p in self.parents[v] if p in inside)

    def arcs(self, within: Iterable[str]) -> list[tuple[str, str]]:
        inside = set(within)
        return sorted((a, b) for a in inside for b in self.bidirected[a] if b in inside and a < b)


def latent_projection(G: nx.DiGraph, measured: Iterable[str]) -> Projection:
    """Project every unmeasured variable out of G (see the module docstring). Iterative."""
    succ, pred = G._succ, G._pred
    obs = {v for v in measured if v in succ and not is_hidden(G, v)}
    parents: dict[str, set[str]] = {v: set() for v in obs}
    for a in obs:
        # directed reach through unmeasured variables only
        seen: set[str] = set()
        stack = list(succ[a])
        while stack:
            v = stack.pop()
            if v in seen:
                continue
            seen.add(v)
            if v in obs:
                parents[v].add(a)
            else:
                stack.extend(succ[v])
    bidirected: dict[str, set[str]] = {v: set() for v in obs}
    sources: dict[frozenset[str], set[str]] = {}
    for h in succ:
        if h in obs or any(p not in obs for p in pred[h]):
            continue  # observed, or not a root of the unmeasured part
        reach: set[str] = set()
        seen = {h}
        stack = list(succ[h])
        while stack:
            v = stack.pop()
            if v in seen:
                continue
            seen.add(v)
            if v in obs:
                reach.add(v)
            else:
                stack.extend(succ[v])
        names = sorted(reach)
        named = set() if is_hidden(G, h) else {h}
        for i, a in enumerate(names):
            for b in names[i + 1 :]:
                bidirected[a].add(b)
                bidirected[b].add(a)
                sources.setdefault(frozenset((a, b)), set()).update(named)
    import networkx as nx

    D = nx.DiGraph()
    D.add_nodes_from(obs)
    D.add_edges_from((p, v) for v in obs for p in parents[v])
    order = tuple(nx.lexicographical_topological_sort(D))
    return Projection(
        order,
        {v: frozenset(s) for v, s in parents.items()},
        {v: frozenset(s) for v, s in bidirected.items()},
        {k: frozenset(s) for k, s in sources.items()},
    )


@dataclass(frozen=True)
class Hedge:
    """Why an effect is not identified: the two sets where ID stops, ``inner``
    inside ``outer``, which contain a hedge (Shpitser & Pearl 2006, line 5 of
    ID and their Theorem on its failure; from memory).

    ``outer`` (F) is one c-component of ancestors of the outcomes that
    contains intervened variables (``intervened``: exposures, or variables
    the algorithm added to them because intervening on them cannot change
    the outcome); ``inner`` (F') is F without them, also one c-component.
    The effect of ``intervened`` on F' differs between two models that agree
    on the observed distribution, and that carries over to the effect asked
    about.  ``arcs`` are the
    bidirected pairs inside F (measured names, sorted), ``arrows`` its
    arrows, ``unmeasured`` the named unmeasured variables behind the arcs.
    The structure is meant for messages and for drawing.
    """

    outer: frozenset[str]
    inner: frozenset[str]
    intervened: frozenset[str]
    arrows: tuple[tuple[str, str], ...]
    arcs: tuple[tuple[str, str], ...]
    unmeasured: frozenset[str]

    def to_json(self) -> dict:
        return {
            "variables": sorted(self.outer),
            "without_intervened": sorted(self.inner),
            "intervened": sorted(self.intervened),
            "arrows": [list(a) for a in self.arrows],
            "bidirected": [list(a) for a in self.arcs],
            "unmeasured": sorted(self.unmeasured),
        }


@dataclass(frozen=True)
class Identification:
    """The answer of :func:`identify_effect`.

    ``estimand`` is the formula reported for the route (the adjustment
    formula with ``adjustment_set``, the front-door formula with
    ``front_door_set``, or the algorithm's own); ``general`` is the
    algorithm's formula whatever the route (equal in value).  ``any_value_of``
    are variables that occur free in ``estimand`` besides the exposures and
    outcomes: the formula gives the same number for any of their values
    (the algorithm found that intervening on them does not change the
    outcome).  ``hedge`` is set when the effect is not identified.
    """

    exposures: frozenset[str]
    outcomes: frozenset[str]
    identified: bool
    route: Route
    estimand: Expr | None = None
    general: Expr | None = None
    adjustment_set: frozenset[str] | None = None
    front_door_set: frozenset[str] | None = None
    hedge: Hedge | None = None
    any_value_of: frozenset[str] = frozenset()


class _Graph:
    """The projection's adjacency with the topological rank of each variable."""

    def __init__(self, proj: Projection):
        self.proj = proj
        self.rank = {v: i for i, v in enumerate(proj.order)}
        self.pa = proj.parents
        self.bi = proj.bidirected

    def ancestors(
        self, ys: Iterable[str], V: frozenset[str], cut_into: frozenset[str] = frozenset()
    ) -> frozenset[str]:
        """An(ys) in G[V], with the arrows into ``cut_into`` removed."""
        pa = self.pa
        seen = set(ys)
        stack = list(seen)
        while stack:
            v = stack.pop()
            if v in cut_into:
                continue
            for p in pa[v]:
                if p in V and p not in seen:
                    seen.add(p)
                    stack.append(p)
        return frozenset(seen)

    def districts(self, V: Iterable[str]) -> list[frozenset[str]]:
        """The c-components of G[V] (bidirected-connected sets), in a fixed order."""
        V = set(V)
        bi = self.bi
        out = []
        rank = self.rank
        for s in sorted(V, key=rank.__getitem__):
            if s not in V:
                continue
            comp = {s}
            V.discard(s)
            stack = [s]
            while stack:
                v = stack.pop()
                for u in bi[v]:
                    if u in V:
                        V.discard(u)
                        comp.add(u)
                        stack.append(u)
            out.append(frozenset(comp))
        return out

    def sorted(self, S: Iterable[str]) -> list[str]:
        return sorted(S, key=self.rank.__getitem__)

    def conditional(self, P: Expr | None, v: str, V: frozenset[str]) -> Expr:
        """P(v | the variables of V before v) from the current distribution P over V
        (None: the observed one, and V is then ancestral)."""
        r = self.rank[v]
        if P is None:
            # Tian & Pearl 2002, Lemma 1: v's district among {u in V: u <= v}
            # and that district's parents.
            bi, rank = self.bi, self.rank
            dist = {v}
            stack = [v]
            while stack:
                u = stack.pop()
                for w in bi[u]:
                    if w not in dist and w in V and rank[w] < r:
                        dist.add(w)
                        stack.append(w)
            given = set(dist)
            for u in dist:
                given.update(self.pa[u])
            given.discard(v)
            return prob({v}, given)
        prefix = frozenset(u for u in V if self.rank[u] < r)
        num = Sum(V - prefix - {v}, P)
        den = Sum(V - prefix, P)
        return simplify(Ratio(num, den))


def _id(proj: Projection, X: frozenset[str], Y: frozenset[str]) -> Expr | Hedge:
    """Shpitser & Pearl's ID(y, x, P, G) on the projection, with an explicit stack.

    Line numbers refer to their Figure 3 (from memory).  Returns the
    simplified formula, or the hedge met at line 5.
    """
    g = _Graph(proj)
    V0 = frozenset(proj.order)
    results: list[Expr | None] = [None]
    # ("call", slot, y, x, P, V) or ("join", slot, kid slots, summed variables)
    stack: list[tuple] = [("call", 0, Y, X, None, V0)]
    while stack:
        item = stack.pop()
        if item[0] == "join":
            _, slot, kids, over = item
            results[slot] = simplify(Sum(over, product(results[k] for k in kids)))  # type: ignore[misc]
            continue
        _, slot, y, x, P, V = item
        while True:
            if not x:  # line 1: sum over V minus y of P
                results[slot] = prob(y) if P is None else simplify(Sum(V - y, P))
                break
            an = g.ancestors(y, V)
            if an != V:  # line 2: drop what is not an ancestor of y
                if P is not None:
                    P = simplify(Sum(V - an, P))
                x, V = x & an, an
                continue
            w = V - x - g.ancestors(y, V, cut_into=x)
            if w:  # line 3: intervening on w changes nothing
                x = x | w
                continue
            comps = g.districts(V - x)
            if len(comps) > 1:  # line 4: one factor per c-component of G[V - x]
                # With the observed distribution over an ancestral V, a
                # component that is also a c-component of G[V] needs no call:
                # its factor is Q[c], the product of its variables'
                # conditionals (Tian & Pearl 2002, Lemma 1), which is what the
                # call would return, and skipping it saves an ancestor search
                # over V per component on large diagrams.
                whole_set = set(g.districts(V)) if P is None else set()
                kids = []
                calls = []
                for c in comps:
                    results.append(None)
                    k = len(results) - 1
                    kids.append(k)
                    if c in whole_set:
                        results[k] = product(g.conditional(None, v, V) for v in g.sorted(c))
                    else:
                        calls.append(("call", k, c, V - c, P, V))
                stack.append(("join", slot, kids, V - (y | x)))
                stack.extend(calls)
                break
            (S,) = comps
            whole = g.districts(V)
            if len(whole) == 1:  # line 5: a hedge
                return Hedge(
                    outer=V,
                    inner=S,
                    intervened=V - S,
                    arrows=tuple(proj.arrows(V)),
                    arcs=tuple(proj.arcs(V)),
                    unmeasured=frozenset().union(
                        *(proj.sources.get(frozenset(a), frozenset()) for a in proj.arcs(V))
                    ),
                )
            if S in whole:  # line 6
                factors = [g.conditional(P, v, V) for v in g.sorted(S)]
                results[slot] = simplify(Sum(S - y, product(factors)))
                break
            # line 7: S lies inside a larger c-component S' of G[V]
            (big,) = [c for c in whole if S <= c]
            P = simplify(Product(tuple(g.conditional(P, v, V) for v in g.sorted(big))))
            x, V = x & big, big
    out = results[0]
    assert out is not None
    return out


def general_identification(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], measured: Iterable[str]
) -> Expr | Hedge:
    """ID over the latent projection onto ``measured``: the formula, or the hedge."""
    X, Y, measured = _check(G, X, Y, measured)
    return _id(latent_projection(G, measured), frozenset(X), frozenset(Y))


def _check(G, X, Y, measured) -> tuple[set[str], set[str], frozenset[str]]:
    X, Y = _as_set(G, X), _as_set(G, Y)
    if not X or not Y:
        raise ValueError("an effect needs at least one exposure and one outcome")
    if X & Y:
        raise ValueError(f"exposures and outcomes overlap: {sorted(X & Y)}")
    measured = frozenset(measured)
    missing = sorted((X | Y) - measured)
    if missing:
        raise ValueError(f"exposures and outcomes must be measured: {missing}")
    return X, Y, measured


def identify_effect(
    G: nx.DiGraph, exposures: Iterable[str], outcomes: Iterable[str], measured: Iterable[str]
) -> Identification:
    """Whether P(outcomes | do(exposures)) is identified from the measured variables, and how.

    Routes, in this order: covariate adjustment with the smallest valid set
    (the adjustment formula), the front-door criterion (Pearl 1995; one
    exposure and one outcome), the general formula of ID; otherwise not
    identified, with the hedge.  ``ValueError`` when exposures or outcomes
    are unmeasured, overlap or are empty.
    """
    from .adjustment import adjustment_exists
    from .separators import front_door_set, smallest_adjustment_set

    X, Y, measured = _check(G, exposures, outcomes, measured)
    found = _id(latent_projection(G, measured), frozenset(X), frozenset(Y))
    X, Y = frozenset(X), frozenset(Y)
    general = None if isinstance(found, Hedge) else found
    if adjustment_exists(G, X, Y, measured):
        Z = smallest_adjustment_set(G, X, Y, measured)
        assert Z is not None
        return _answer(X, Y, "adjustment", adjustment_formula(X, Y, Z), general, adjustment_set=Z)
    M = front_door_set(G, X, Y, measured)
    if M is not None:
        (x,), (y,) = X, Y
        return _answer(X, Y, "front-door", front_door_formula(x, y, M), general, front_door_set=M)
    if general is not None:
        return _answer(X, Y, "general", general, general)
    assert isinstance(found, Hedge)
    return Identification(X, Y, False, "not-identified", hedge=found)


def _answer(X, Y, route: Route, estimand: Expr, general: Expr | None, **kw) -> Identification:
    extra = free_variables(estimand) - X - Y
    return Identification(X, Y, True, route, estimand, general, any_value_of=extra, **kw)


__all__ = [
    "Hedge",
    "Identification",
    "Projection",
    "general_identification",
    "identify_effect",
    "latent_projection",
]
