"""Minimal separators and adjustment sets via the moralised ancestral graph.

For a set Z inside An(X ∪ Y), Z d-separates X and Y in a DAG iff Z
separates them in the moral graph of the subgraph induced by An(X ∪ Y)
(Lauritzen, Dawid, Larsen & Leimer 1990, "Independence properties of
directed Markov fields", Networks 20:491-505).  Minimal d-separators lie
inside An(X ∪ Y), and a separator drawn from a restriction set R exists iff
An(X ∪ Y) ∩ R is one (van der Zander, Liskiewicz & Textor 2019, "Separators
and adjustment sets in causal graphs: complete criteria and an algorithmic
framework", Artificial Intelligence 270:1-40).  So minimal valid adjustment
sets are the inclusion-minimal vertex separators of X and Y in that moral
graph (built from the proper back-door graph) that use only removable
vertices R = measured minus X, Y and forbidden.

Vertices outside R can never be cut; the closure below absorbs them into
the side they touch.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator

import networkx as nx

from .adjustment import _roles, forbidden, proper_backdoor_skip, proper_causal_nodes
from .dsep import ArrowCut, SkipEdge, arrow_between, d_separated_cut
from .graph import _as_set

Adjacency = dict[str, set[str]]


def moral_ancestral_graph(G: nx.DiGraph, nodes: set[str], skip_edge: SkipEdge = None) -> Adjacency:
    """Undirected adjacency of the moral graph of G[An(nodes)] (arrows in skip_edge removed)."""
    pred = G._pred
    anc = set(nodes)
    stack = list(anc)
    while stack:
        v = stack.pop()
        for p in pred[v]:
            if p not in anc and not (skip_edge and skip_edge(p, v)):
                anc.add(p)
                stack.append(p)
    adj: Adjacency = {v: set() for v in anc}
    for v in anc:
        parents = [p for p in pred[v] if not (skip_edge and skip_edge(p, v))]
        for i, p in enumerate(parents):
            adj[v].add(p)
            adj[p].add(v)
            for q in parents[i + 1 :]:  # marry co-parents
                adj[p].add(q)
                adj[q].add(p)
    return adj


def _closure(adj: Adjacency, seed: Iterable[str], removable: set[str]) -> tuple[set[str], set[str]]:
    """The side grown from ``seed`` through non-removable vertices, and its removable border."""
    side = set(seed)
    stack = list(side)
    border: set[str] = set()
    while stack:
        v = stack.pop()
        for u in adj[v]:
            if u in side:
                continue
            if u in removable:
                border.add(u)
            else:
                side.add(u)
                stack.append(u)
    return side, border - side


def _reach(adj: Adjacency, start: Iterable[str], blocked: set[str]) -> set[str]:
    seen = set(start)
    stack = list(seen)
    while stack:
        v = stack.pop()
        for u in adj[v]:
            if u not in seen and u not in blocked:
                seen.add(u)
                stack.append(u)
    return seen


def _close_to(adj: Adjacency, seed: Iterable[str], targets: set[str], removable: set[str]) -> frozenset[str] | None:
    """The minimal separator between ``seed``'s side and ``targets`` closest to the seed.

    The border of the closure separates; keeping only the border vertices
    adjacent to the target side leaves a separator each of whose vertices
    touches both sides, which is the characterisation of a minimal one.
    None when the targets cannot be separated from the seed.
    """
    side, border = _closure(adj, seed, removable)
    if side & targets:
        return None
    target_side = _reach(adj, targets, border)
    return frozenset(b for b in border if adj[b] & target_side)


def _separator_search(
    adj: Adjacency, xs: set[str], ys: set[str], removable: set[str]
) -> Iterator[frozenset[str] | None]:
    """The backtracking search behind :func:`enumerate_minimal_separators`.

    Yields each minimal separator once, and ``None`` after each linear-time
    step (one closure of the x side and one search of the y side) that
    produced none, so tests can measure the delay in steps.
    """
    stack: list[tuple[set[str], tuple[str, ...]]] = [(set(xs), ())]
    while stack:
        seed, forced = stack.pop()
        while True:
            side, border = _closure(adj, seed, removable)
            if side & ys:  # the x side touches the y side: nothing separates
                break
            y_side = _reach(adj, ys, border)
            touching = {b for b in border if not y_side.isdisjoint(adj[b])}
            if touching == border or not all(f in touching for f in forced):
                break
            yield None
            seed = side | border.difference(touching)  # these lie on the x side of every answer
        if side & ys or not all(f in touching for f in forced):
            yield None  # no minimal separator in this branch
            continue
        # border = N(D) is a minimal separator containing every forced vertex.
        yield frozenset(border)
        undecided = sorted(border.difference(forced))
        for i, v in enumerate(undecided):  # the branches where v joins the x side
            stack.append((side | {v}, forced + tuple(undecided[:i])))


def enumerate_minimal_separators(
    adj: Adjacency, xs: set[str], ys: set[str], removable: set[str]
) -> Iterator[frozenset[str]]:
    """All inclusion-minimal xs-ys separators using removable vertices only, with polynomial delay.

    Backtracking over the vertices bordering the x side, in the manner of
    Takata (2010, "Space-optimal, backtracking algorithms to list the
    minimal vertex separators of a graph", Discrete Applied Mathematics
    158:1660-1667), the scheme van der Zander, Liskiewicz & Textor (2019)
    use to list minimal adjustment sets (both from memory; the argument
    below is ours).

    A branch is a connected x side S, closed under non-removable vertices,
    and a set F of vertices forced into the separator.  Let D be the y side
    of N(S), i.e. the component of ys once N(S) is removed.  Any minimal
    separator Z with S on its x side and F inside it has its y side inside
    D, and each vertex of a minimal separator touches both of its sides; so
    such a Z exists iff S avoids ys and every vertex of F touches D, and
    then N(D) is one.  Vertices of N(S) that do not touch D lie on the x
    side of every such Z, so they join S until N(S) = N(D); that separator
    is output.  The other separators of the branch are split by the first
    undecided vertex v_i of N(S) - F (in sorted order) that lies on their x
    side: branch i is S + v_i with F + {v_1, ..., v_(i-1)}.  Branches are
    disjoint, so no separator is listed twice.

    Delay: a branch that fails does so at its first step; one that passes
    outputs after at most |R| steps (R the removable vertices); the stack
    holds at most one branch per value of |S ∩ R| + |F| <= |R|.  So at most
    2|R| + 1 linear-time steps separate two outputs: O(|R| (|V| + |E|))
    delay.  Iterative (explicit stack), no recursion.
    """
    for sep in _separator_search(adj, xs, ys, removable):
        if sep is not None:
            yield sep


def _adjustment_problem(G: nx.DiGraph, X, Y, measured) -> tuple[Adjacency, set[str], set[str], set[str]]:
    X, Y = _roles(G, X, Y)
    cn = proper_causal_nodes(G, X, Y)
    forb = forbidden(G, X, Y)
    adj = moral_ancestral_graph(G, X | Y, proper_backdoor_skip(X, cn))
    removable = (set(measured) & adj.keys()) - X - Y - forb
    return adj, X, Y, removable


def minimal_adjustment_sets(
    G: nx.DiGraph,
    X: Iterable[str],
    Y: Iterable[str],
    measured: Iterable[str],
    max_sets: int | None = None,
) -> Iterator[frozenset[str]]:
    """Lazily yield every inclusion-minimal valid adjustment set of measured variables.

    Valid sets are the separators of X and Y in the proper back-door graph
    that avoid forb(X, Y) (van der Zander et al. 2019); the minimal ones are
    the minimal vertex separators of the moralised ancestral proper back-door
    graph restricted to removable vertices (see module docstring).  Stops
    after ``max_sets`` sets when given.
    """
    adj, X, Y, removable = _adjustment_problem(G, X, Y, measured)
    count = 0
    for sep in enumerate_minimal_separators(adj, X, Y, removable):
        if max_sets is not None and count >= max_sets:
            return
        count += 1
        yield sep


def _min_vertex_cut(adj: Adjacency, xs: set[str], ys: set[str], removable: set[str]) -> frozenset[str] | None:
    """Minimum xs-ys vertex cut with unit cost on removable vertices, infinite elsewhere."""
    if _close_to(adj, xs, ys, removable) is None:
        return None
    flow = nx.DiGraph()
    for v in adj:
        if v in removable:
            flow.add_edge((v, 0), (v, 1), capacity=1)
        else:
            flow.add_edge((v, 0), (v, 1))  # no capacity attribute = infinite
        for u in adj[v]:
            flow.add_edge((v, 1), (u, 0))
    for x in xs:
        flow.add_edge("source", (x, 0))
    for y in ys:
        flow.add_edge((y, 1), "sink")
    _, (source_side, _) = nx.minimum_cut(flow, "source", "sink")
    return frozenset(v for v in removable if (v, 0) in source_side and (v, 1) not in source_side)


def smallest_adjustment_set(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], measured: Iterable[str]
) -> frozenset[str] | None:
    """A valid adjustment set of minimum size: a minimum vertex cut of the moralised
    ancestral proper back-door graph (van der Zander et al. 2019); None if none exists."""
    adj, X, Y, removable = _adjustment_problem(G, X, Y, measured)
    return _min_vertex_cut(adj, X, Y, removable)


def minimal_separator(G: nx.DiGraph, a: str, b: str, measured: Iterable[str]) -> frozenset[str] | None:
    """An inclusion-minimal d-separating set of measured variables for non-adjacent a, b.

    Takes the separator closest to ``a`` in the moral graph of An({a, b});
    None when a and b are adjacent or no measured set separates them.
    """
    _as_set(G, {a, b})
    if a == b or arrow_between(G, a, b):
        return None
    adj = moral_ancestral_graph(G, {a, b})
    removable = (set(measured) & adj.keys()) - {a, b}
    return _close_to(adj, {a}, {b}, removable)


def implied_independencies(G: nx.DiGraph, measured: Iterable[str]) -> list[tuple[str, str, frozenset[str]]]:
    """One (a, b, separator) per non-adjacent measured pair a < b that some measured set separates."""
    names = sorted(set(measured))
    out = []
    for i, a in enumerate(names):
        for b in names[i + 1 :]:
            if arrow_between(G, a, b):
                continue
            sep = minimal_separator(G, a, b, names)
            if sep is not None:
                out.append((a, b, sep))
    return out


def _front_door_holds(G: nx.DiGraph, x: str, y: str, M: set[str], causal: set[str]) -> bool:
    """Pearl's three front-door conditions for the set M."""
    succ = G._succ
    # (i) M intercepts every directed path from x to y.
    seen = {x}
    stack = [x]
    while stack:
        v = stack.pop()
        for c in succ[v]:
            if c == y:
                return False
            if c not in seen and c not in M:
                seen.add(c)
                stack.append(c)
    # (ii) no back-door path from x to M is open given the empty set.
    if not d_separated_cut(G, {x}, M, set(), ArrowCut({x}), proper=False):
        return False
    # (iii) every back-door path from M to y is blocked by x.
    return d_separated_cut(G, M, {y}, {x}, ArrowCut(M), proper=False)


def front_door_set(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], measured: Iterable[str]
) -> frozenset[str] | None:
    """A measured set meeting Pearl's front-door criterion for one exposure and one outcome.

    Pearl 1995, "Causal diagrams for empirical research", Biometrika
    82:669-688.  Sound search, not complete: it tries (1) all measured
    mediators, (2) the measured mediators with no open back-door path from
    the exposure, and (3) the measured children of the exposure on causal
    paths; it returns the first candidate that meets all three conditions.
    None for several exposures or outcomes, or when there is no causal path.
    """
    X, Y = _roles(G, X, Y)
    if len(X) != 1 or len(Y) != 1:
        return None
    (x,), (y,) = X, Y
    measured = set(measured)
    causal = proper_causal_nodes(G, X, Y)
    if not causal:
        return None
    med = (causal - Y) & measured
    candidates = [med]
    candidates.append(
        {m for m in med if d_separated_cut(G, {x}, {m}, set(), ArrowCut({x}), proper=False)}
    )
    candidates.append({c for c in G._succ[x] if c in med})
    tried: list[set[str]] = []
    for cand in candidates:
        if not cand or cand in tried:
            continue
        tried.append(cand)
        if _front_door_holds(G, x, y, cand, causal):
            return frozenset(cand)
    return None


__all__ = [
    "enumerate_minimal_separators",
    "front_door_set",
    "implied_independencies",
    "minimal_adjustment_sets",
    "minimal_separator",
    "moral_ancestral_graph",
    "smallest_adjustment_set",
]
