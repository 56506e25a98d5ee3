"""Covariate adjustment: causal nodes, forbidden set, validity, biasing paths.

Definitions follow the generalised adjustment criterion (Shpitser,
VanderWeele & Robins 2010, "On the validity of covariate adjustment for
estimating causal effects", UAI; Perkovic, Textor, Kalisch & Maathuis 2018,
"Complete graphical characterization and construction of adjustment sets in
Markov equivalence classes of ancestral graphs", JMLR 18(220)):

* a path from X to Y is *proper* when only its first node is in X (other
  nodes of Y may occur inside it);
* cn(X, Y): nodes outside X on a proper causal path from X to Y;
* forb(X, Y): the descendants of cn(X, Y) (cn included);
* Z is valid iff Z has no forbidden node and blocks every proper
  non-causal path from X to Y.  When Z has no forbidden node the second
  condition is the same as X and Y being d-separated by Z in the proper
  back-door graph, i.e. G without the first arrow of every proper causal
  path (van der Zander, Liskiewicz & Textor 2019, "Separators and adjustment
  sets in causal graphs: complete criteria and an algorithmic framework",
  Artificial Intelligence 270:1-40).

A set that overlaps X or Y is never valid.  X and Y must be disjoint
(``ValueError`` otherwise).
"""

from __future__ import annotations

from collections.abc import Iterable
from itertools import compress
from typing import TYPE_CHECKING

from .dsep import (
    DOWN,
    UP,
    ArrowCut,
    _check_sets,
    _state_search,
    ancestor_mask,
    ancestor_mask_ids,
    connected_marks,
    d_separated_cut,
    new_tree,
    path_is_causal,
    path_is_open,
    shortcut_walk,
    start_roots,
    tree_has,
    walk_to,
)
from .graph import _as_set, ancestors
from .indexed import (
    AS_WALLS,
    WALL_UNLESS_2,
    MaskView,
    NodeSet,
    both,
    closure,
    combine,
    frozen,
    graph_cache,
    indexed,
)

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx


def _roles(G: nx.DiGraph, X: Iterable[str], Y: Iterable[str]) -> tuple[set[str], set[str]]:
    X, Y = _as_set(G, X), _as_set(G, Y)
    if X & Y:
        raise ValueError(f"exposures and outcomes overlap: {sorted(X & Y)}")
    return X, Y


# cn(X, Y) is needed by almost every question about an analysis (validity,
# forbidden set, witnesses, instruments), so it is kept per graph, together with
# forb(X, Y) and De(X), in the graph's networkx cache next to its index (see
# linter/causal/indexed.py: networkx empties it when the graph changes).


def _per_graph(
    G: nx.DiGraph, kind: str, sets: tuple[frozenset[str], ...], compute
) -> frozenset[str]:
    """Memoise ``compute()`` for this graph, question kind and node sets."""
    cache = graph_cache(G)
    if cache is None:
        return frozen(compute())
    key = (kind, sets, len(G._succ))
    per_graph = cache.setdefault("sets", {})
    cached = per_graph.get(key)
    if cached is None:
        if len(per_graph) > 64:
            per_graph.clear()
        cached = per_graph[key] = frozen(compute())
    return cached


def proper_causal_nodes(G: nx.DiGraph, X: Iterable[str], Y: Iterable[str]) -> set[str]:
    """cn(X, Y): variables outside X on a proper causal path from X to Y.

    A node w is on such a path iff it is reachable from X along arrows
    without passing through X again and it reaches Y along arrows without
    passing through X; in a DAG the two directed pieces join into a simple
    path.  Linear time (and computed once per graph and question).
    """
    X, Y = _roles(G, X, Y)
    return set(_cn_cached(G, X, Y))


def _cn_cached(G: nx.DiGraph, X: set[str], Y: set[str]) -> frozenset[str]:
    """cn(X, Y) as the cached frozenset (internal callers must not change it)."""
    sets = (frozen(X), frozen(Y))
    return _per_graph(G, "cn", sets, lambda: _proper_causal_nodes(G, X, Y))


def _descendants_cached(G: nx.DiGraph, nodes: set[str]) -> frozenset[str]:
    """De(nodes), inclusive, computed once per graph and node set."""
    return _per_graph(G, "de", (frozen(nodes),), lambda: _descendant_marks(G, nodes))


def _descendant_marks(G: nx.DiGraph, nodes: Iterable[str]) -> NodeSet:
    ix = indexed(G)
    return NodeSet.of_ids(ix, closure(ix.succ, ix.ids(nodes), bytearray(ix.n)))


def _forbidden_cached(G: nx.DiGraph, X: set[str], Y: set[str]) -> frozenset[str]:
    sets = (frozen(X), frozen(Y))
    return _per_graph(G, "forb", sets, lambda: _descendants_cached(G, _cn_cached(G, X, Y)))


def _proper_causal_nodes(G: nx.DiGraph, X: set[str], Y: set[str]) -> NodeSet:
    ix = indexed(G)
    xs = ix.ids(X)
    mark = ix.mask(X)
    mark = mark.translate(AS_WALLS)  # X is a wall for both searches
    # bit 2: reaches Y along arrows without passing through X
    closure(ix.pred, ix.ids(Y), mark, 2)
    # bit 1, entering only variables with bit 2: reached from X along arrows
    # inside An(Y); what this search newly marks is cn(X, Y).
    mark = mark.translate(WALL_UNLESS_2)
    found = closure(ix.succ, [c for x in xs for c in ix.succ[x]], mark, 1)
    return NodeSet.of_ids(ix, found)


def mediators(G: nx.DiGraph, X: Iterable[str], Y: Iterable[str]) -> set[str]:
    """cn(X, Y) without the outcomes: variables strictly between X and Y on causal paths."""
    return proper_causal_nodes(G, X, Y) - _as_set(G, Y)


def forbidden(G: nx.DiGraph, X: Iterable[str], Y: Iterable[str]) -> set[str]:
    """forb(X, Y): descendants of cn(X, Y), cn included (Perkovic et al. 2018)."""
    X, Y = _roles(G, X, Y)
    return set(_forbidden_cached(G, X, Y))


def proper_backdoor_skip(X: set[str], cn: Iterable[str]):
    """Edge predicate of the proper back-door graph: drop x -> w for x in X, w in cn.

    The first arrow of a proper causal path is exactly such an arrow, and
    every such arrow starts one; a predicate avoids copying G.
    """
    return ArrowCut(X, cn)


def proper_backdoor_graph(G: nx.DiGraph, X: Iterable[str], Y: Iterable[str]) -> nx.DiGraph:
    """A copy of G without the first arrow of every proper causal path (small graphs, display)."""
    X, Y = _roles(G, X, Y)
    cn = _cn_cached(G, X, Y)
    H = G.copy()
    H.remove_edges_from([(x, w) for x in X for w in list(G._succ[x]) if w in cn])
    return H


def is_valid_adjustment(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], Z: Iterable[str]
) -> bool:
    """The generalised adjustment criterion (not the back-door criterion).

    Z is valid iff Z ∩ forb(X,Y) = ∅ and Z d-separates X and Y in the proper
    back-door graph (van der Zander et al. 2019, Theorem on constructive
    back-door; equivalent to Shpitser et al. 2010).  With no forbidden node
    in Z, An(Z) is the same in G and in the proper back-door graph, because
    every removed arrow ends in cn.  Linear time.
    """
    X, Y = _roles(G, X, Y)
    Z = _as_set(G, Z)
    if Z & (X | Y):
        return False
    cn = _cn_cached(G, X, Y)
    if cn and not _forbidden_cached(G, X, Y).isdisjoint(Z):
        return False
    return d_separated_cut(G, X, Y, Z, proper_backdoor_skip(X, cn))


def _is_proper_noncausal(G: nx.DiGraph, path: list[str], X: set[str], Y: set[str]) -> bool:
    return (
        len(path) >= 2
        and path[0] in X
        and path[-1] in Y
        and not (set(path[1:]) & X)
        and len(set(path)) == len(path)
        and not path_is_causal(G, path)
    )


def _first_good(candidates, good):
    for p in candidates:
        if p is not None and good(p):
            return p
    return None


def _shortcuts(walk: list[str]) -> list[list[str]]:
    """Forward and backward shortcuts of a walk; both are open (see shortcut_walk)."""
    fwd = shortcut_walk(walk)
    bwd = list(reversed(shortcut_walk(list(reversed(walk)))))
    return [fwd, bwd] if bwd != fwd else [fwd]


def open_noncausal_path(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], Z: Iterable[str]
) -> list[str] | None:
    """A simple proper non-causal path from X to Y that is open given Z, or None.

    Such a path (a) starts with an arrow into its exposure, (b) starts
    x -> w with w outside cn(X, Y) (then it can never be causal), or (c)
    starts x -> w with w in cn(X, Y) and later turns at a collider, which is
    then forbidden and an ancestor of Z.  Types (a) and (b) are found by one
    linear search whose shortcut keeps the first arrow, so it stays
    non-causal: the answer is exact whenever Z holds no forbidden variable
    (the case that decides validity).  Type (c) only exists when Z holds a
    forbidden variable; it is searched with a "still directed" flag and the
    shortcut is re-checked, so a returned path is always genuine, but such a
    path can be missed (known limit; the forbidden member of Z is reported by
    the mediator/descendant rules anyway).
    """
    X, Y = _roles(G, X, Y)
    X, Y, Z = _check_sets(G, X, Y, Z)
    q = _Query(G, X, Y, Z)
    cn = _cn_cached(G, X, Y)
    cn_mask = q.ix.mask(cn)
    # Types (a) and (b): every first step except x -> w with w in cn.
    roots = [r for r in start_roots(q.ix, q.xs, q.x_mask, cn_mask) if r[3] == 0]
    walk = _state_search(q.ix, roots, q.inz, q.anc, q.y_mask, q.x_mask)
    if walk:
        return shortcut_walk(walk)
    if not any(q.anc[i] for i in q.ix.ids(cn)):
        return None
    return _typed_search(G, q, cn_mask, None)


class _Query:
    """One question's X, Y and Z as mark arrays over the graph's index, with An(Z)."""

    __slots__ = (
        "G",
        "X",
        "Y",
        "Z",
        "ix",
        "xs",
        "ys",
        "x_mask",
        "y_mask",
        "inz",
        "anc",
        "anc_names",
    )

    def __init__(self, G: nx.DiGraph, X: set[str], Y: set[str], Z: set[str]):
        self.G, self.X, self.Y, self.Z = G, X, Y, Z
        ix = self.ix = indexed(G)
        self.xs, self.ys = ix.ids(X), ix.ids(Y)
        self.x_mask, self.y_mask, self.inz = ix.mask(X), ix.mask(Y), ix.mask(Z)
        self.anc = ancestor_mask(ix, Z)
        self.anc_names = MaskView(ix, self.anc)

    def genuine(self, path: list[str], colliders: set[str] | None) -> bool:
        """Proper, non-causal, open given Z and (when asked) through a collider in ``colliders``."""
        G = self.G
        if not (
            _is_proper_noncausal(G, path, self.X, self.Y)
            and path_is_open(G, path, self.Z, self.anc_names)
        ):
            return False
        return colliders is None or _collider_in(G, path, colliders) is not None


def _typed_search(G, q: _Query, cn_mask: bytearray, collider_targets=None, colliders=None):
    """Flagged search for type (c) paths and for collider-bias paths.

    Flag bit 1: the walk is still a directed path from its exposure.
    Flag bit 2: the walk has turned at a collider in ``collider_targets`` (a
    name container; ``colliders`` are the same variables as marks).
    A walk is accepted at an outcome with bit 1 clear and bit 2 as asked.
    """
    roots = start_roots(q.ix, q.xs, q.x_mask, cn_mask)
    # Shortcutting a flagged walk can drop the node that set the flag, so every
    # accepting walk is re-checked, in search order, until one gives a good
    # path (still one linear search, stopped at the first good one).
    return _state_search(
        q.ix, roots, q.inz, q.anc, q.y_mask, q.x_mask,
        accept_flag=0 if collider_targets is None else 2, colliders=colliders,
        take=lambda walk: _first_good(_shortcuts(walk), lambda p: q.genuine(p, collider_targets)),
    )  # fmt: skip


class _MeetTrees:
    """The two search trees of :func:`_meet_at_collider`, built once per (X, Y, Z).

    They do not depend on the adjusted variable z whose collider is sought,
    so every z of one analysis is tested against the same trees.
    """

    def __init__(self, q: _Query):
        ix = q.ix
        self.tree_x, self.tree_y = new_tree(ix), new_tree(ix)
        # Outcomes are passed through: a proper path may visit one on its way.
        _state_search(
            ix, start_roots(ix, q.xs, q.x_mask), q.inz, q.anc, None, q.x_mask, tree=self.tree_x
        )
        xy = bytearray(q.x_mask)
        for y in q.ys:
            xy[y] = 1
        _state_search(ix, start_roots(ix, q.ys, xy), q.inz, q.anc, None, xy, tree=self.tree_y)

    def meet_at(self, c: int) -> bool:
        """Both searches entered c along an arrow (a collider reachable from both sides)."""
        return tree_has(self.tree_x, c, DOWN) and tree_has(self.tree_y, c, DOWN)


class _Targets:
    """The colliders sought (An(z)): their numbers, their marks, and a name view."""

    __slots__ = ("ids", "mark", "view")

    def __init__(self, ix, ids: list[int], mark: bytearray):
        self.ids, self.mark, self.view = ids, mark, MaskView(ix, mark)

    def in_name_order(self, ix, keep=None) -> list[int]:
        names = ix.names
        return sorted((i for i in self.ids if keep is None or keep(i)), key=names.__getitem__)


def _meet_at_collider(q: _Query, targets: _Targets, trees: _MeetTrees):
    """Join an open walk from X and an open walk from Y that both enter a
    collider c (an ancestor of z) along an arrow; shortcut and re-check.

    Two linear searches (shared by all z); candidates are tried in a fixed
    order and each check costs the length of the walk.
    """
    ix = q.ix
    for i in targets.in_name_order(ix, trees.meet_at):
        walk = (
            walk_to(ix, trees.tree_x, i, DOWN)
            + list(reversed(walk_to(ix, trees.tree_y, i, DOWN)))[1:]
        )
        path = _first_good(_shortcuts(walk), lambda p: q.genuine(p, targets.view))
        if path is not None:
            return path
    return None


def _meet_by_parents(q: _Query, targets: _Targets, trees: _MeetTrees) -> list[str] | None:
    """Like :func:`_meet_at_collider`, but the two walks may enter c from other
    parents than the ones their search trees recorded.

    The tree's walk into c can share variables with the other side's walk, and
    then shortcutting drops c; a walk into c from a different parent often does
    not.  For each collider c (in name order) and each pair of distinct parents
    (px, py) from which the search from X, resp. from Y, could step down into c,
    the joined walk is shortcut and re-checked.  Tried only after the recorded
    walks gave nothing, and stopped after 8 |V| walk variables (counting every
    walk read from the trees), so it stays linear in the size of the graph.
    """
    ix = q.ix
    names = ix.names
    budget = 8 * ix.n + 64
    for i in targets.in_name_order(ix):
        ends_x = _walks_into(ix, trees.tree_x, i, q.inz, q.x_mask, bytes(ix.n))
        budget -= sum(map(len, ends_x))
        if not ends_x:
            continue
        ends_y = _walks_into(ix, trees.tree_y, i, q.inz, q.y_mask, q.x_mask)
        budget -= sum(map(len, ends_y))
        if budget < 0:
            return None
        for wx in ends_x:
            for wy in ends_y:
                if wx[-1] == wy[-1]:
                    continue
                walk = [*wx, names[i], *reversed(wy)]
                budget -= len(walk)
                if budget < 0:
                    return None
                path = _first_good(_shortcuts(walk), lambda p: q.genuine(p, targets.view))
                if path is not None:
                    return path
    return None


def _walks_into(ix, tree, c: int, inz, origins, never) -> list[list[str]]:
    """Walks of a finished search ``tree`` (started at ``origins``) that end at a
    parent p of c from which the search could step down into c: p outside Z,
    and p an origin or a state of p in the tree (p not in ``never``)."""
    walks = []
    for p in sorted(ix.pred[c], key=ix.names.__getitem__):
        if inz[p] or never[p]:
            continue
        if origins[p]:
            walks.append([ix.names[p]])
            continue
        for d in (UP, DOWN):
            if tree_has(tree, p, d):
                walks.append(walk_to(ix, tree, p, d))
    return walks


def _collider_in(G: nx.DiGraph, path: list[str], targets: set[str]) -> str | None:
    succ = G._succ
    for i in range(1, len(path) - 1):
        c = path[i]
        if c in targets and c in succ[path[i - 1]] and c in succ[path[i + 1]]:
            return c
    return None


def confounding_path(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], Z: Iterable[str]
) -> list[str] | None:
    """A proper non-causal path from X to Y with no collider and no node in Z, or None.

    Without colliders a non-causal path must start with an arrow into its
    exposure, climb to a fork (or to the outcome) and then descend, so a
    search that may not turn from descending to climbing finds it.  The
    climbing and descending parts cannot share a node (that would close a
    directed cycle), so the walk is already simple.  Linear time.
    """
    X, Y = _roles(G, X, Y)
    X, Y, Z = _check_sets(G, X, Y, Z)
    ix = indexed(G)
    x_mask = ix.mask(X)
    roots = [r for r in start_roots(ix, ix.ids(X), x_mask) if r[2] == UP]
    # An(Z) taken as empty: no collider may be passed.
    walk = _state_search(ix, roots, ix.mask(Z), bytes(ix.n), ix.mask(Y), x_mask)
    return shortcut_walk(walk) if walk else None


def fixable_confounding_path(
    G: nx.DiGraph,
    X: Iterable[str],
    Y: Iterable[str],
    Z: Iterable[str],
    fixable: Iterable[str],
    rounds: int = 10,
) -> list[str] | None:
    """A confounding path (as :func:`confounding_path`) with a variable of ``fixable``
    among its inner variables, or None.

    Sound, not complete (the exact answer needs a simple path through a chosen
    vertex; see :mod:`dagward.causal.bounded`): every walk the search accepts is
    shortcut and kept only when a fixable variable survives; when none does, the
    inner variables of the first path found are treated as adjusted (a
    collider-free path is open exactly when none of its variables is adjusted,
    so what is found then is still open given Z) and the search runs again, at
    most ``rounds`` times. Linear time per round.
    """
    X, Y = _roles(G, X, Y)
    X, Y, Z = _check_sets(G, X, Y, Z)
    ix = indexed(G)
    fixable = set(fixable) & set(ix.index)
    fix_mask = ix.mask(fixable)
    index = ix.index
    x_mask, y_mask = ix.mask(X), ix.mask(Y)
    # a direct arrow from an outcome has no inner variable: never a root here, so
    # that it does not claim the outcome's search state before longer paths
    roots = [r for r in start_roots(ix, ix.ids(X), x_mask) if r[2] == UP and not y_mask[r[1]]]
    walls = ix.mask(Z)
    for _ in range(rounds):
        first: list[list[str]] = []

        def take(walk: list[str], first: list[list[str]] = first) -> list[str] | None:
            path = shortcut_walk(walk)
            if any(fix_mask[index[v]] for v in path[1:-1]):
                return path
            if not first:
                first.append(path)
            return None

        found = _state_search(ix, roots, walls, bytes(ix.n), ix.mask(Y), x_mask, take=take)
        if found is not None:
            return found
        if not first or len(first[0]) <= 2:
            return None
        walls = bytearray(walls)
        for v in first[0][1:-1]:
            walls[index[v]] = 1
    return _through_candidates(G, X, Y, Z, sorted(fixable), rounds)


def _directed_chain(G: nx.DiGraph, start: str, targets: set[str], walls: set[str]):
    """A shortest directed path from start to a target whose other variables avoid walls."""
    succ = G.succ
    parent: dict[str, str | None] = {start: None}
    queue = [start]
    for v in queue:
        if v in targets and v != start:
            path = [v]
            while parent[path[-1]] is not None:
                path.append(parent[path[-1]])  # type: ignore[arg-type]
            return path[::-1]
        for w in succ[v]:
            if w not in parent and (w in targets or w not in walls):
                parent[w] = v
                queue.append(w)
    return None


def _through_candidates(G, X, Y, Z, candidates, limit):
    """Paths built through one fixable variable f at a time (at most ``limit``):
    a directed chain from f to an exposure (f above it) joined to a collider-free
    route from f to an outcome that avoids the chain, or a directed chain from f
    to an outcome joined to a route from f back to an exposure entering f from
    above. Each joined path is simple and collider-free by construction and is
    re-checked before it is returned."""
    blocked = set(Z) | set(X)
    tried = 0
    for f in candidates:
        if tried >= limit:
            break
        # f on the exposure's side: f -> ... -> x
        up = _directed_chain(G, f, set(X), set(Z) | set(Y))
        down = _directed_chain(G, f, set(Y), blocked)
        if up is None and down is None:
            continue
        tried += 1
        if up is not None:
            avoid = blocked | set(up[1:])
            rest = _directed_chain(G, f, set(Y), avoid) or confounding_path(G, {f}, Y, avoid - {f})
            if rest is not None:
                path = up[::-1] + list(rest[1:])
                if _is_open_confounding(G, path, X, Y, Z):
                    return path
        if down is not None:
            avoid = (set(Z) | set(Y) | set(down[1:])) - {f}
            back = confounding_path(G, {f}, X, avoid)
            if back is not None:
                path = back[::-1] + down[1:]
                if _is_open_confounding(G, path, X, Y, Z):
                    return path
    return None


def _is_open_confounding(G, path, X, Y, Z) -> bool:
    if len(set(path)) != len(path) or path[0] not in X or path[-1] not in Y:
        return False
    if any(v in X for v in path[1:]) or any(v in Z for v in path[1:-1]):
        return False
    succ = G.succ
    for i in range(1, len(path) - 1):
        if path[i] in succ[path[i - 1]] and path[i] in succ[path[i + 1]]:
            return False
    return not path_is_causal(G, path)


def collider_bias_path(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], Z: Iterable[str], z: str
) -> tuple[list[str], str] | None:
    """A proper non-causal path open given Z with a collider c that is z or an ancestor of z.

    Returns (path, c) or None.  Two searches, from X and from Y, whose walks
    are joined at a collider above z (first the walks the search trees
    recorded, then walks into the collider from other parents), then a
    flagged Bayes-ball search (collider passed, still directed); every
    candidate is shortcut and re-checked
    definitionally, so a returned path always has the stated properties.
    Linear time per call.

    Known limit: a state of the search is claimed by the first walk that
    reaches it, and shortcutting that walk can drop the collider, so on some
    graphs a qualifying path exists and None is returned (0.17% of the
    variables that have one, on random graphs of 3-8 variables: see
    tests/test_causal_properties.py).  Completeness where the linter needs it is
    kept by a last fallback: the :func:`open_noncausal_path` witness (exact
    when Z has no forbidden variable) is returned when it turns at a
    collider above z, so whenever Z is free of forbidden variables, leaves
    no confounding path open and is still invalid, at least one z in Z gets
    a path.
    """
    return collider_bias_paths(G, X, Y, Z, [z])[z]


def collider_bias_paths(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], Z: Iterable[str], zs: Iterable[str]
) -> dict[str, tuple[list[str], str] | None]:
    """:func:`collider_bias_path` for each z in ``zs``, sharing the work that
    does not depend on z: An(Z), cn(X, Y), the two trees joined at a collider
    and the fallback witness are computed at most once for all of them.  The
    answer for each z is the one :func:`collider_bias_path` gives.
    """
    X, Y = _roles(G, X, Y)
    X, Y, Z = _check_sets(G, X, Y, Z)
    zs = list(zs)
    for z in zs:
        if z not in Z:
            raise ValueError(f"{z!r} is not in the adjustment set")
    q = _Query(G, X, Y, Z)
    cn_mask = q.ix.mask(_cn_cached(G, X, Y))
    trees: _MeetTrees | None = None
    fallback: list[list[str] | None] = []
    out: dict[str, tuple[list[str], str] | None] = {}
    for z in zs:
        if z in out:
            continue
        # An(z), as the variables' numbers (for the loops) and as a name view
        # (for the definitional checks), never as a set of names.
        z_mark = bytearray(q.ix.n)
        above_z = _Targets(q.ix, closure(q.ix.pred, [q.ix.index[z]], z_mark), z_mark)
        targets = above_z.view
        # The joined trees are shared by every z, so they are tried first; the
        # flagged search (one per z, over four times as many states) only when
        # they give no path.  Each search is sound, so the order changes which
        # path is shown, never whether one is found.
        if trees is None:
            trees = _MeetTrees(q)
        path = _meet_at_collider(q, above_z, trees)
        if path is None:
            path = _meet_by_parents(q, above_z, trees)
        if path is None:
            path = _typed_search(G, q, cn_mask, targets, z_mark)
        if path is None:
            # Fall back on the exact open non-causal path search: when its
            # path turns at a collider above z, that path is the witness.
            if not fallback:
                fallback.append(open_noncausal_path(G, X, Y, Z))
            path = fallback[0]
        collider = None if path is None else _collider_in(G, path, targets)
        out[z] = None if collider is None else (path, collider)
    return out


def canonical_adjustment(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], measured: Iterable[str]
) -> set[str]:
    """An(X ∪ Y) ∩ measured minus X, Y and forb(X, Y) (van der Zander et al. 2019)."""
    X, Y = _roles(G, X, Y)
    measured = set(measured)
    return (ancestors(G, X | Y) & measured) - X - Y - _forbidden_cached(G, X, Y)


def adjustment_exists(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], measured: Iterable[str]
) -> bool:
    """A valid set among measured variables exists iff the canonical set is valid.

    The same test as ``is_valid_adjustment(G, X, Y, canonical_adjustment(...))``,
    done on mark arrays: the canonical set of a large diagram holds most of its
    variables, so building it as a set of names would cost more than the search.
    """
    X, Y = _roles(G, X, Y)
    ix = indexed(G)
    cn = _cn_cached(G, X, Y)
    index = ix.index
    if type(measured) is NodeSet and measured.ix is ix:
        pass  # marks over this index: every member is a variable
    elif not (isinstance(measured, frozenset) and index.keys() >= measured):
        measured = frozenset(v for v in measured if v in index)
    measured_mask = ix.mask(measured)  # kept by the index for the diagram's own set
    # An(X ∪ Y) ∩ measured, minus X, Y and forb(X, Y): no forbidden variable,
    # so the validity test is d-separation in the proper back-door graph.
    canon = combine(
        both(ancestor_mask(ix, X | Y), measured_mask),
        ix.mask(X | Y),
        ix.mask(_forbidden_cached(G, X, Y)) if cn else bytes(ix.n),
    )
    cut = proper_backdoor_skip(X, cn)
    anc = ancestor_mask_ids(ix, compress(range(ix.n), canon), cut)
    return not connected_marks(ix, ix.ids(X), ix.mask(Y), canon, anc, cut, proper=True)


def instrument_like(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], Z: Iterable[str], z: str
) -> bool:
    """The test behind rule ``instrument-adjusted``.

    z is not a descendant of X; z is d-separated from Y given Z minus z in G
    with the exposures' outgoing arrows removed; and z is d-connected to X
    given Z minus z.  Such a variable affects the outcome only through the
    exposure (an instrument-like variable); adjusting for it can amplify
    bias (Pearl 2010, "On a class of bias-amplifying variables that endanger
    effect estimates", UAI; Myers et al. 2011, Am J Epidemiol 174:1213-1222).
    """
    X, Y = _roles(G, X, Y)
    Z = _as_set(G, Z)
    if z in X or z in Y or z in _descendants_cached(G, X):
        return False
    rest = Z - {z}
    if rest & (X | Y):
        raise ValueError("adjustment set overlaps exposures or outcomes")
    skip = ArrowCut(X)  # the exposures' outgoing arrows removed
    if not d_separated_cut(G, {z}, Y, rest, skip, proper=False):
        return False
    return not d_separated_cut(G, {z}, X, rest, None, proper=False)


def instrument_conditions(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], Z: Iterable[str], z: str
) -> tuple[str, ...]:
    """The other adjusted variables that an instrument-like z relies on.

    A subset W of Z minus z, minimal by inclusion, such that z is still
    d-separated from Y given W once the exposures' outgoing arrows are removed:
    "given W, z is related to the outcome only through the exposure" is then
    literally true, and W is empty when it holds with nothing adjusted.
    Greedy removal keeps the separation at every step (d-separation is not
    monotone in the conditioning set, so each removal is tested); |Z| linear
    tests.
    """
    X, Y = _roles(G, X, Y)
    skip = ArrowCut(X)
    kept = set(_as_set(G, Z)) - {z}
    for w in sorted(kept):
        trial = kept - {w}
        if d_separated_cut(G, {z}, Y, trial, skip, proper=False):
            kept = trial
    return tuple(sorted(kept))


__all__ = [
    "adjustment_exists",
    "canonical_adjustment",
    "collider_bias_path",
    "collider_bias_paths",
    "confounding_path",
    "fixable_confounding_path",
    "forbidden",
    "instrument_conditions",
    "instrument_like",
    "is_valid_adjustment",
    "mediators",
    "open_noncausal_path",
    "proper_backdoor_graph",
    "proper_backdoor_skip",
    "proper_causal_nodes",
]
