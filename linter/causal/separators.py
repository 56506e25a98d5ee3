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

from array import array
from collections.abc import Callable, Hashable, Iterable, Iterator, Mapping
from itertools import chain, compress
from typing import TYPE_CHECKING

from .adjustment import (
    _cn_cached,
    _forbidden_cached,
    _roles,
    proper_backdoor_skip,
    proper_causal_nodes,
)
from .dsep import ArrowCut, SkipEdge, ancestor_mask, arrow_between, d_separated_cut, kept_rows
from .graph import _as_set
from .indexed import AS_WALLS, Indexed, both, closure, combine, distances, graph_cache, indexed

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx

Adjacency = Mapping[Hashable, Iterable[Hashable]]
# Undirected adjacency over vertices 0..N-1 (the graph's index numbers).
Neighbours = (
    list  # one row of neighbour numbers per vertex: an array('i'), a list, or NO_NEIGHBOURS
)
NO_NEIGHBOURS: tuple[int, ...] = ()


def _moral_ids(
    ix: Indexed, seeds: Iterable[str], cut: SkipEdge = None
) -> tuple[Neighbours, list[int]]:
    """The moral graph of G[An(seeds)] (arrows of ``cut`` removed) over G's index
    numbers, with each family's clique replaced by a hub, and its vertices.

    Moralising marries all parents of a variable, so a variable with k
    parents adds k(k-1)/2 edges (3,000 parents: 4.5 million).  Instead,
    vertex n + v (the hub of v's family) is joined to v and to each parent
    of v: one edge per arrow, so the graph is linear in the diagram.  Hubs
    are never removable, so two members of a family stay joined through the
    hub unless one of them is removed, exactly as they would through their
    clique edge: the vertex separators made of real variables are the same
    as in the moral graph.  (Separating on the original arrows, with the
    families as vertices that cannot be cut, is the device van der Zander,
    Liskiewicz & Textor 2019 use to avoid the moral graph; from memory.)
    Lists have 2n entries; the hubs of variables outside An(seeds) stay
    empty.  Neighbour lists may repeat a vertex.
    """
    anc = ancestor_mask(ix, seeds, cut)
    parents_of = kept_rows(ix, cut)[1]
    n = ix.n
    vertices = list(compress(range(n), anc))
    # Rows are arrays of 4-byte numbers (a list would hold a pointer and an int
    # object for each), made when first written; rows never written share one
    # empty tuple.
    nbrs: Neighbours = [NO_NEIGHBOURS] * (2 * n)
    for v in vertices:
        parents = parents_of(v)
        if not parents:
            continue
        hub = n + v
        family = nbrs[hub] = array("i", (v,))
        family.extend(parents)
        for u in chain((v,), parents):
            row = nbrs[u]
            if row is NO_NEIGHBOURS:
                row = nbrs[u] = array("i")
            row.append(hub)
    return nbrs, vertices


def _padded(marks: bytes | bytearray, length: int) -> bytearray:
    """``marks`` extended with zeros to ``length`` (the hubs are never removable)."""
    out = bytearray(length)
    out[: len(marks)] = marks
    return out


def _closure(nbrs: Neighbours, seed: Iterable[int], removable: bytes | bytearray):
    """The side grown from ``seed`` through non-removable vertices, and its removable border.

    Returns (side marks, side vertices, border marks, border vertices).
    """
    side = bytearray(len(nbrs))
    members = []
    for s in seed:
        if not side[s]:
            side[s] = 1
            members.append(s)
    stack = list(members)
    border_mark = bytearray(len(nbrs))
    border = []
    while stack:
        v = stack.pop()
        for u in nbrs[v]:
            if side[u] or border_mark[u]:
                continue
            if removable[u]:
                border_mark[u] = 1
                border.append(u)
            else:
                side[u] = 1
                stack.append(u)
                members.append(u)
    return side, members, border_mark, border


def _reach(nbrs: Neighbours, start: Iterable[int], walls: bytes | bytearray) -> bytearray:
    """Marks: 2 on everything reachable from ``start`` without entering a wall
    (``walls`` marks them with 1), 3 on the walls, 0 elsewhere."""
    seen = bytearray(walls.translate(AS_WALLS))
    closure(nbrs, start, seen, 2)  # type: ignore[arg-type]
    return seen


def _close_to(
    nbrs: Neighbours, seed: Iterable[int], targets: list[int], removable
) -> list[int] | None:
    """The minimal separator between ``seed``'s side and ``targets`` closest to the seed.

    The border of the closure separates; keeping only the border vertices
    adjacent to the target side leaves a separator each of whose vertices
    touches both sides, which is the characterisation of a minimal one.
    None when the targets cannot be separated from the seed.
    """
    side, _, border_mark, border = _closure(nbrs, seed, removable)
    if any(side[t] for t in targets):
        return None
    reached = _reach(nbrs, targets, border_mark)
    return [b for b in border if any(reached[u] == 2 for u in nbrs[b])]


def _touching_y_side(
    nbrs: Neighbours,
    dist: array,
    ys: list[int],
    side: bytearray,
    border_mark: bytearray,
    border: list[int],
) -> set[int]:
    """The border vertices with a neighbour in D, the part of the graph outside the
    x side and its border that holds the y side.

    The same answer as a search of all of D from ``ys``, without walking D: from
    each border vertex's outside neighbours a depth-first search goes on from
    the neighbour nearest to Y (``dist``: breadth-first distances from Y) until it
    meets Y or a vertex already known to be in D; a search that runs out has
    found a pocket enclosed by the border. Each vertex is settled once per call
    (in D, or in a pocket), so a call is linear at worst; when D is large and
    near, it costs about the routes to Y.
    """
    state = bytearray(len(nbrs))  # 1: in D; 2: in a pocket; 3: on the current search
    for y in ys:
        state[y] = 1
    touching = set()
    for b in border:
        for u in nbrs[b]:
            if side[u] or border_mark[u] or state[u] == 2:
                continue
            if state[u] == 0:
                state[u] = 3
                visited, stack, found = [u], [u], False
                while stack and not found:
                    v = stack.pop()
                    nearest, nearest_at = len(nbrs), -1
                    for w in nbrs[v]:
                        if side[w] or border_mark[w]:
                            continue
                        if state[w] == 1:
                            found = True
                            break
                        if state[w] == 0:
                            state[w] = 3
                            visited.append(w)
                            stack.append(w)
                            if dist[w] < nearest:
                                nearest, nearest_at = dist[w], len(stack) - 1
                    if nearest_at >= 0:  # the neighbour nearest to Y is searched next
                        stack[nearest_at], stack[-1] = stack[-1], stack[nearest_at]
                mark = 1 if found else 2
                for v in visited:
                    state[v] = mark
            if state[u] == 1:
                touching.add(b)
                break
    return touching


def _separator_search(
    nbrs: Neighbours, xs: list[int], ys: list[int], removable: bytes | bytearray
) -> Iterator[list[int] | None]:
    """The backtracking search behind :func:`enumerate_minimal_separators`.

    Yields each minimal separator once, and ``None`` after each linear-time
    step (one closure of the x side and one search of the y side) that
    produced none, so tests can measure the delay in steps.
    """
    # A vertex next to an outcome cannot join the x side (the sides would meet),
    # so branches that would put one there are not even started: with an
    # outcome of many parents they would be many steps that each fail.
    near_y = bytearray(len(nbrs))
    for y in ys:
        for u in nbrs[y]:
            near_y[u] = 1
    dist = distances(len(nbrs), nbrs.__getitem__, ys)  # to lead the searches toward Y
    stack: list[tuple[list[int], tuple[int, ...]]] = [(list(xs), ())]
    while stack:
        seed, forced = stack.pop()
        while True:
            side, members, border_mark, border = _closure(nbrs, seed, removable)
            if any(side[y] for y in ys):  # the x side touches the y side: nothing separates
                ok = False
                break
            touching = _touching_y_side(nbrs, dist, ys, side, border_mark, border)
            ok = all(f in touching for f in forced)
            if not ok or len(touching) == len(border):
                break
            yield None
            # Border vertices that miss the y side lie on the x side of every answer.
            seed = members + [b for b in border if b not in touching]
        if not ok:
            yield None  # no minimal separator in this branch
            continue
        # border = N(D) is a minimal separator containing every forced vertex.
        yield border
        undecided = sorted(set(border).difference(forced))
        for i, v in enumerate(undecided):  # the branches where v joins the x side
            if not near_y[v]:
                stack.append((members + [v], forced + tuple(undecided[:i])))


def enumerate_minimal_separators(
    adj: Adjacency, xs: Iterable[Hashable], ys: Iterable[Hashable], removable: Iterable[Hashable]
) -> Iterator[frozenset]:
    """All inclusion-minimal xs-ys separators using removable vertices only, with polynomial delay.

    ``adj`` maps each vertex to its neighbours (undirected, symmetric).

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
    nbrs, number, vertices = _numbered(adj)
    removable_mask = bytearray(len(vertices))
    for r in removable:
        removable_mask[number[r]] = 1
    xs_ids = [number[x] for x in xs]
    ys_ids = [number[y] for y in ys]
    for sep in _separator_search(nbrs, xs_ids, ys_ids, removable_mask):
        if sep is not None:
            yield frozenset(vertices[i] for i in sep)


def _numbered(adj: Adjacency) -> tuple[Neighbours, dict, list]:
    """Number the vertices of a mapping adjacency 0..N-1."""
    vertices = list(adj)
    number = {v: i for i, v in enumerate(vertices)}
    nbrs = [[number[u] for u in adj[v]] for v in vertices]
    return nbrs, number, vertices


KEPT_PROBLEMS = 4


def _adjustment_problem(G: nx.DiGraph, X, Y, measured):
    """The moral graph of the ancestral proper back-door graph, contracted
    (:func:`_contracted`), with the exposures, outcomes and removable marks
    on the contracted graph.

    Returns (index, neighbours, original vertex of each contracted vertex,
    xs, ys, removable marks).  The last ``KEPT_PROBLEMS`` built are kept in
    the graph's cache (about 100 bytes a variable each), since `check` lists
    minimal sets of each analysis and `adjustment` then asks for the
    smallest set of the same analyses: a file of a few analyses builds each
    problem once.
    """
    X, Y = _roles(G, X, Y)
    ix = indexed(G)
    cache = graph_cache(G)
    key = (frozenset(X), frozenset(Y))
    if cache is not None:
        kept = cache.setdefault("adjustment_problem", {}).get(key)
        if kept is not None and kept[0] is measured:
            return kept[1]
    cn = _cn_cached(G, X, Y)
    forb = _forbidden_cached(G, X, Y)
    cut = proper_backdoor_skip(X, cn)
    anc = ancestor_mask(ix, X | Y, cut)
    n = ix.n
    # measured, in the ancestral set, not X, Y or forbidden (hubs, from n on, never)
    removable = _padded(combine(both(anc, ix.mask(measured)), ix.mask(X | Y), ix.mask(forb)), 2 * n)
    row, family = _moral_row(ix, anc, cut)
    problem = (ix, *_contracted(row, family, 2 * n, anc, removable, ix.ids(X), ix.ids(Y)))
    if cache is not None:
        kept_problems = cache["adjustment_problem"]
        kept_problems.pop(key, None)
        while len(kept_problems) >= KEPT_PROBLEMS:  # the oldest goes first
            del kept_problems[next(iter(kept_problems))]
        kept_problems[key] = (measured, problem)
    return problem


def _moral_row(ix: Indexed, anc: bytes | bytearray, cut: SkipEdge):
    """The neighbours of a vertex in :func:`_moral_ids`'s graph, worked out when
    asked rather than kept (a row each for 2n vertices would cost about 150
    bytes a variable): variable u (in An) is joined to its own family's hub
    n + u when it has parents and to the hub of each child's family in An;
    hub n + v to v and v's parents."""
    children, parents = kept_rows(ix, cut)
    n = ix.n
    family = bytearray(n)  # the variables of An with parents (their hub has members)
    for v in compress(range(n), anc):
        if parents(v):
            family[v] = 1

    def row(v: int) -> Iterable[int]:
        if v >= n:
            u = v - n
            return chain((u,), parents(u))
        out = [n + c for c in children(v) if anc[c]]
        if family[v]:
            out.append(n + v)
        return out

    return row, family


def _contracted(
    row: Callable[[int], Iterable[int]],
    family: bytes | bytearray,
    n2: int,
    anc: bytes | bytearray,
    removable,
    xs: list[int],
    ys: list[int],
):
    """The graph with each connected group of non-removable vertices merged into one vertex.

    No separator contains a non-removable vertex, so merging a connected
    group of them changes no separator made of removable ones (a path
    through the group becomes a path through the merged vertex).  The
    ancestral graph of a large diagram mostly consists of such groups (the
    exposure's many forbidden descendants, the hubs of the families): once
    merged, each step of the listing and of the minimum cut runs over the
    removable variables and their neighbourhood instead of the whole
    ancestral graph.  Removable vertices come first, in increasing original
    number, so the listing order is the same as on the full graph.

    ``row(v)`` gives the neighbours of vertex v of the moral graph with hubs
    (:func:`_moral_row`): ``n2`` vertices, the variables of An marked in
    ``anc``, those whose hub has members besides themselves in ``family``.

    Returns (neighbours, original, xs, ys, removable) on the contracted
    graph; ``original[i]`` is the index number of removable vertex i, -1 for
    a merged group.
    """
    n = n2 // 2
    comp = array("i", [-1]) * n2
    original = array("i")
    for v in compress(range(n), removable):
        comp[v] = len(original)
        original.append(v)
    n_removable = len(original)

    def active() -> Iterator[int]:  # the variables of An, then their families' hubs
        yield from compress(range(n), anc)
        yield from (n + v for v in compress(range(n), family))

    single = bytearray()  # per merged group: 1 when it has one member
    for s in chain(xs, ys, active()):
        if comp[s] >= 0:
            continue
        group = comp[s] = len(original)
        original.append(-1)
        stack, members = [s], 1
        while stack:
            for w in row(stack.pop()):
                if comp[w] < 0 and not removable[w]:
                    comp[w] = group
                    stack.append(w)
                    members += 1
        single.append(members == 1)
    # Each row sorted and without repeats, as an array: a removable vertex, or
    # a group of one, has its row made at once; a larger merged group's row
    # collects from all its members first.
    new_nbrs: Neighbours = [NO_NEIGHBOURS] * len(original)
    merged: dict[int, set[int]] = {}
    for v in active():
        a = comp[v]
        if a < 0:
            continue
        if a < n_removable or single[a - n_removable]:
            new_nbrs[a] = array("i", sorted({b for w in row(v) if (b := comp[w]) != a}))
            continue
        found = merged.get(a)
        if found is None:
            found = merged[a] = set()
        for w in row(v):
            b = comp[w]
            if b != a:
                found.add(b)
    for a, found in merged.items():
        new_nbrs[a] = array("i", sorted(found))
    marks = bytearray(len(original))
    marks[:n_removable] = b"\x01" * n_removable
    return new_nbrs, original, sorted({comp[x] for x in xs}), sorted({comp[y] for y in ys}), marks


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
    graph restricted to removable vertices (see module docstring), listed
    with polynomial delay (:func:`enumerate_minimal_separators`).  Stops
    after ``max_sets`` sets when given.
    """
    ix, nbrs, original, xs, ys, removable = _adjustment_problem(G, X, Y, measured)
    names = ix.names
    count = 0
    for sep in _separator_search(nbrs, xs, ys, removable):
        if sep is None:
            continue
        if max_sets is not None and count >= max_sets:
            return
        count += 1
        yield frozenset(names[original[i]] for i in sep)


def _min_vertex_cut(
    nbrs: Neighbours,
    vertices: list[int],
    xs: list[int],
    ys: list[int],
    removable,
    contracted: bool = False,
) -> list[int] | None:
    """Minimum xs-ys vertex cut with unit cost on removable vertices, infinite elsewhere.

    Maximum flow by Dinic's method (Dinic 1970, "Algorithm for solution of a
    problem of maximum flow in networks with power estimation", Soviet Math.
    Doklady 11:1277-1280) on the usual split-vertex network: vertex u becomes
    u_in -> u_out with capacity 1 if removable, else unbounded, and each
    edge u - w becomes u_out -> w_in and w_out -> u_in, unbounded.  With unit
    capacities on the vertices it needs O(sqrt(V)) phases of linear time
    (Even & Tarjan 1975, "Network flow and testing graph connectivity", SIAM
    J. Comput. 4:507-518).  The cut returned is the removable vertices whose
    out-side can still reach the sink in the final residual network and whose
    in-side cannot: the minimum cut closest to Y, the same for every maximum
    flow (common practice), and the one ``networkx.minimum_cut`` gave before.
    Iterative throughout.
    """
    if set(xs) & set(ys) if contracted else _close_to(nbrs, xs, ys, removable) is None:
        # (On a contracted graph the groups of non-removable vertices are
        # maximal, so X and Y cannot be separated only when they share one.)
        return None
    n2 = len(nbrs)
    nodes = list(vertices)
    local = array("i", [-1]) * n2
    for i, u in enumerate(nodes):
        local[u] = i
    m = len(nodes)
    source, sink = 2 * m, 2 * m + 1
    big = m + 1  # more than any flow (at most one unit per removable vertex)
    # Arc k and its reverse k ^ 1 (capacity 0) are built together.
    head: list[int] = []
    tail: list[int] = []
    cap: list[int] = []
    for i, u in enumerate(nodes):
        into, out = 2 * i, 2 * i + 1
        head += (out, into)
        tail += (into, out)
        cap += (1 if removable[u] else big, 0)
        for w in nbrs[u]:
            other = 2 * local[w]
            head += (other, out)
            tail += (out, other)
            cap += (big, 0)
    for x in xs:
        head += (2 * local[x], source)
        tail += (source, 2 * local[x])
        cap += (big, 0)
    for y in ys:
        head += (sink, 2 * local[y] + 1)
        tail += (2 * local[y] + 1, sink)
        cap += (big, 0)
    head, tail, cap = array("i", head), array("i", tail), array("i", cap)
    # Arcs grouped by tail (counting sort): node v's arcs are order[start[v]:start[v + 1]].
    n_flow = 2 * m + 2
    start = array("i", [0]) * (n_flow + 1)
    for t in tail:
        start[t + 1] += 1
    for v in range(n_flow):
        start[v + 1] += start[v]
    fill = array("i", start)
    order = array("i", [0]) * len(tail)
    for k, t in enumerate(tail):
        order[fill[t]] = k
        fill[t] += 1
    while True:
        level = _levels(source, start, order, head, cap, n_flow)
        if level[sink] < 0:
            break
        _blocking_flow(source, sink, level, start, order, head, tail, cap)
    # The nodes that can still reach the sink: the cut is the removable vertices
    # whose out-side can and whose in-side cannot.
    reaches = bytearray(n_flow)
    reaches[sink] = 1
    stack = [sink]
    while stack:
        w = stack.pop()
        for k in order[start[w] : start[w + 1]]:
            v = head[k]
            if not reaches[v] and cap[k ^ 1] > 0:  # arc v -> w has capacity left
                reaches[v] = 1
                stack.append(v)
    return [
        u for i, u in enumerate(nodes) if removable[u] and reaches[2 * i + 1] and not reaches[2 * i]
    ]


def _levels(source: int, start, order, head, cap, n_flow: int) -> array:
    """Breadth-first distance from ``source`` along arcs with capacity left (-1: not reached)."""
    level = array("i", [-1]) * n_flow
    level[source] = 0
    frontier = [source]
    while frontier:
        nxt = []
        for v in frontier:
            d = level[v] + 1
            for k in order[start[v] : start[v + 1]]:
                if cap[k] > 0:
                    w = head[k]
                    if level[w] < 0:
                        level[w] = d
                        nxt.append(w)
        frontier = nxt
    return level


def _blocking_flow(source: int, sink: int, level, start, order, head, tail, cap) -> None:
    """Augment along shortest paths (level by level) until none is left: one Dinic phase.

    Depth-first with a current-arc pointer per node, so each arc is passed
    over at most once per phase; after an augmentation the search backs up
    to the tail of the first saturated arc only.
    """
    pointer = array("i", start)
    path: list[int] = []  # arc ids from the source
    v = source
    while True:
        if v == sink:
            push = min(cap[k] for k in path)
            first = -1
            for i, k in enumerate(path):
                cap[k] -= push
                cap[k ^ 1] += push
                if first < 0 and cap[k] == 0:
                    first = i
            del path[first:]
            v = source if not path else head[path[-1]]
            continue
        end = start[v + 1]
        p = pointer[v]
        want = level[v] + 1
        while p < end:
            k = order[p]
            if cap[k] > 0 and level[head[k]] == want:
                break
            p += 1
        pointer[v] = p
        if p < end:
            path.append(order[p])
            v = head[order[p]]
            continue
        if v == source:
            return
        level[v] = -1  # a dead end for the rest of the phase
        k = path.pop()
        v = tail[k]
        pointer[v] += 1


def smallest_adjustment_set(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], measured: Iterable[str]
) -> frozenset[str] | None:
    """A valid adjustment set of minimum size: a minimum vertex cut of the moralised
    ancestral proper back-door graph (van der Zander et al. 2019); None if none exists."""
    ix, nbrs, original, xs, ys, removable = _adjustment_problem(G, X, Y, measured)
    cut = _min_vertex_cut(nbrs, list(range(len(nbrs))), xs, ys, removable, contracted=True)
    return None if cut is None else frozenset(ix.names[original[v]] for v in cut)


class PairSeparators:
    """Minimal separators of pairs of one diagram, each in time linear in An({a, b}).

    For non-adjacent a and b, the separator of measured variables closest to
    a in the moral graph of An({a, b}) (Lauritzen et al. 1990, as in the
    module docstring; the closest minimal separator, as in Tian, Paz & Pearl
    1998, "Finding minimal d-separators", UCLA technical report R-254; from
    memory): grow a's side through variables that cannot be removed, keep
    the removable variables met, then keep those of them that touch what b
    reaches without crossing them.  The moral graph is never built: a
    variable's neighbours there are read off the arrows on the fly (the hub
    of its own family, and the hubs of its children inside An({a, b})), so
    a pair costs the size of An({a, b}) and the arrows into it, not the size
    of the diagram.  The answer is the one :func:`minimal_separator` gave
    when it built the moral graph of hubs for each pair.
    """

    __slots__ = ("G", "ix", "_measured")

    def __init__(self, G: nx.DiGraph, measured: Iterable[str]):
        self.G = G
        self.ix = ix = indexed(G)
        self._measured = ix.mask(v for v in measured if v in ix.index)

    def __call__(self, a: str, b: str) -> frozenset[str] | None:
        """The closest minimal separator of a and b; None when they are adjacent
        (or the same) or no measured set separates them."""
        G, ix = self.G, self.ix
        if a == b or arrow_between(G, a, b):
            return None
        ia, ib = ix.index[a], ix.index[b]
        succ, pred, n = ix.succ, ix.pred, ix.n
        anc = {ia, ib}
        stack = [ia, ib]
        while stack:
            for p in pred[stack.pop()]:
                if p not in anc:
                    anc.add(p)
                    stack.append(p)

        def nbrs(v: int) -> list[int]:
            # vertex n + c is the hub of c's family (c and its parents)
            if v >= n:
                return [v - n, *pred[v - n]]
            out = [n + c for c in succ[v] if c in anc]
            if pred[v]:
                out.append(n + v)
            return out

        measured = self._measured
        side = {ia}
        stack = [ia]
        border: list[int] = []
        on_border: set[int] = set()
        while stack:
            for u in nbrs(stack.pop()):
                if u in side or u in on_border:
                    continue
                if u < n and measured[u] and u != ib:
                    on_border.add(u)
                    border.append(u)
                else:
                    side.add(u)
                    stack.append(u)
        if ib in side:
            return None
        reached = {ib}
        stack = [ib]
        while stack:
            for u in nbrs(stack.pop()):
                if u not in reached and u not in on_border:
                    reached.add(u)
                    stack.append(u)
        names = ix.names
        return frozenset(names[x] for x in border if any(u in reached for u in nbrs(x)))


def minimal_separator(
    G: nx.DiGraph, a: str, b: str, measured: Iterable[str]
) -> frozenset[str] | None:
    """An inclusion-minimal d-separating set of measured variables for non-adjacent a, b.

    Takes the separator closest to ``a`` in the moral graph of An({a, b});
    None when a and b are adjacent or no measured set separates them.  For
    many pairs of one diagram, :class:`PairSeparators` reads the measured
    set once.
    """
    _as_set(G, {a, b})
    return PairSeparators(G, measured)(a, b)


def implied_independencies(
    G: nx.DiGraph, measured: Iterable[str]
) -> list[tuple[str, str, frozenset[str]]]:
    """One (a, b, separator) per non-adjacent measured pair a < b that some measured set separates."""
    names = sorted(set(measured))
    separator = PairSeparators(G, names)
    out = []
    for i, a in enumerate(names):
        for b in names[i + 1 :]:
            sep = separator(a, b)
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


def _back_door_reach(G: nx.DiGraph, x: str) -> set[str]:
    """The variables d-connected to x given the empty set once x's outgoing
    arrows are removed, in one linear pass.

    Such a path has no collider and starts with an arrow into x, so it goes
    up from x to an ancestor a and then down from a; the answer is the
    descendants of x's strict ancestors reached without passing through x.
    """
    ix = indexed(G)
    xi = ix.index[x]
    up = closure(ix.pred, ix.pred[xi], bytearray(ix.n))
    wall = bytearray(ix.n)
    wall[xi] = 1
    down = closure(ix.succ, up, wall)
    names = ix.names
    return {names[i] for i in down}


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
    candidates.append(med - _back_door_reach(G, x))
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
    "smallest_adjustment_set",
]
