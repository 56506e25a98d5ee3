"""d-separation and d-connecting witness paths.

The test is the reachability formulation of Bayes-ball (Shachter 1998,
"Bayes-Ball: The Rational Pastime", UAI): a search over states
``(variable, direction)`` where *direction* says whether the walk entered the
variable along an arrow pointing into it (``DOWN``: arrived from a parent) or
against one (``UP``: arrived from a child).  Each state is visited at most
once, so a query costs O(|V| + |E|).

Moves from a state (Z = conditioning set, An(Z) = Z and its ancestors):

* ``(v, UP)``   with v not in Z: to every parent (UP) and every child (DOWN);
  with v in Z: nowhere (a conditioned chain or fork blocks).
* ``(v, DOWN)`` with v not in Z: to every child (DOWN);
  with v in An(Z): also to every parent (UP) -- an opened collider.

Conventions for overlapping sets (documented public behaviour):

* if ``xs`` and ``ys`` share a variable they are *not* d-separated (the
  one-variable path joins them); ``d_connecting_path`` returns ``[v]``;
* a variable of ``xs`` or ``ys`` inside ``zs`` raises ``ValueError``, as
  ``networkx.is_d_separator`` refuses non-disjoint sets too;
* an empty ``xs`` or ``ys`` is trivially separated.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Iterable

import networkx as nx

from .graph import _as_set, ancestors

UP = 0  # entered from a child, i.e. against the arrow
DOWN = 1  # entered from a parent, i.e. along the arrow

# skip_edge(parent, child) -> True when that arrow is to be treated as absent
SkipEdge = Callable[[str, str], bool] | None
# update(node, dir_in, dir_out, flag) -> new flag
FlagUpdate = Callable[[str, int, int, int], int]


def _check_sets(G: nx.DiGraph, xs, ys, zs) -> tuple[set[str], set[str], set[str]]:
    xs, ys, zs = _as_set(G, xs), _as_set(G, ys), _as_set(G, zs)
    clash = (xs | ys) & zs
    if clash:
        raise ValueError(f"conditioning set overlaps the end sets: {sorted(clash)}")
    return xs, ys, zs


def d_separated(G: nx.DiGraph, xs: Iterable[str], ys: Iterable[str], zs: Iterable[str]) -> bool:
    """True when every path between ``xs`` and ``ys`` is blocked by ``zs``.

    Linear-time Bayes-ball reachability (Shachter 1998); see the module
    docstring for the treatment of overlapping sets.
    """
    xs, ys, zs = _check_sets(G, xs, ys, zs)
    if xs & ys:
        return False
    if not xs or not ys:
        return True
    anc_z = ancestors(G, zs) if zs else set()
    # The two-stack reachability loop of _connected_cut, with no arrow cut.
    return not _connected_cut(G, xs, ys, zs, anc_z, None, proper=False)


def _state_search(
    G: nx.DiGraph,
    roots: Iterable[tuple[str, str, int, int]],
    zs: set[str],
    anc_z: set[str],
    accept: Callable[[str, int, int], bool],
    no_enter: set[str],
    skip_edge: SkipEdge = None,
    update: FlagUpdate | None = None,
    exhaustive: bool = False,
    no_expand: set[str] | frozenset[str] = frozenset(),
    tree: dict | None = None,
    take: Callable[[list[str]], object] | None = None,
):
    """Breadth-first search over (node, direction, flag) states with parent pointers.

    ``roots`` are ``(origin, node, direction, flag)``: the walk starts at
    ``origin`` and its first move enters ``node`` in ``direction``.  The
    origin itself is never re-entered when it is in ``no_enter``.  Returns the
    walk (node list, possibly with repeated nodes) ending at the first state
    for which ``accept`` holds, or None.  Each state is expanded once, so the
    cost is linear in |V| + |E| times the (constant) number of flag values.

    With ``exhaustive`` every accepting walk is collected, in search order.
    With ``take`` as well, each accepting walk is handed to ``take`` as soon
    as it is found and the first result that is not None is returned (None
    when there is none): the same answer as scanning the exhaustive list in
    order, without finishing the search once a walk is taken.
    """
    succ, pred = G._succ, G._pred
    parent: dict[tuple[str, int, int], tuple[str, int, int] | str] = {} if tree is None else tree
    queue: deque[tuple[str, int, int]] = deque()
    found: list[list[str]] = []

    def accepted(state: tuple[str, int, int]):
        """An accepted state: the walk to return, or None to keep searching."""
        walk = _walk_back(parent, state)
        if not exhaustive:
            return walk
        if take is not None:
            return take(walk)
        found.append(walk)
        return None

    for origin, node, d, f in roots:
        state = (node, d, f)
        if state in parent:
            continue
        parent[state] = origin
        if accept(node, d, f):
            result = accepted(state)
            if result is not None:
                return result
        queue.append(state)
    while queue:
        state = queue.popleft()
        v, d, f = state
        if v in no_expand:
            continue
        # Same moves, in the same order, as the module docstring lists; the
        # comprehensions without an arrow predicate are the common, fast case.
        if d == UP:
            if v in zs:
                continue
            if skip_edge is None:
                moves = [(p, UP) for p in pred[v]]
                moves += [(c, DOWN) for c in succ[v]]
            else:
                moves = [(p, UP) for p in pred[v] if not skip_edge(p, v)]
                moves += [(c, DOWN) for c in succ[v] if not skip_edge(v, c)]
        else:
            moves = []
            if v not in zs:
                moves = [(c, DOWN) for c in succ[v] if not (skip_edge and skip_edge(v, c))]
            if v in anc_z:
                moves += [(p, UP) for p in pred[v] if not (skip_edge and skip_edge(p, v))]
        for w, d2 in moves:
            if w in no_enter:
                continue
            nxt = (w, d2, update(v, d, d2, f)) if update else (w, d2, f)
            f2 = nxt[2]
            if nxt in parent:
                continue
            parent[nxt] = state
            if accept(w, d2, f2):
                result = accepted(nxt)
                if result is not None:
                    return result
            queue.append(nxt)
    if exhaustive and take is None:
        return found
    return None


def _walk_back(parent: dict, state: tuple[str, int, int]) -> list[str]:
    walk = [state[0]]
    cur = parent[state]
    while not isinstance(cur, str):
        walk.append(cur[0])
        cur = parent[cur]
    walk.append(cur)  # the origin
    walk.reverse()
    return walk


def shortcut_walk(walk: list[str]) -> list[str]:
    """Turn a d-connecting walk into a simple d-connecting path.

    Keep each node once: arrive at it along the walk's edge into the
    occurrence we jump to (its first occurrence after the last kept node) and
    leave along the edge out of its *last* occurrence.

    Why the result stays open (Z = conditioning set).  The walk comes from a
    search tree, so a node occurs at most once per state.  A kept node v is
    entered at occurrence i and left at occurrence j >= i; the junction
    (arrival state at i, departure edge at j) is a legal move of the search:

    * arrival UP at i: the walk left v at i, so v is not in Z and any
      departure is legal;
    * arrival DOWN, departure to a child: if v were in Z the walk could leave
      v only towards parents, so v is not in Z -- legal;
    * arrival DOWN, departure to a parent: legal iff v is in An(Z).  If v
      left occurrence j from a DOWN state this was already required.  If it
      left from an UP state, the walk went from (v, DOWN) at i to (v, UP) at
      j: leaving a DOWN state it either turned to a parent (v in An(Z)) or
      went down to children; to come back up into v it must turn at some
      collider u in An(Z) reached by a directed path from v, so v is in
      An(Z) as well.

    Every junction of the shortcut is a legal move, so the path is open.
    Its first and last edges are those of the walk when the end nodes occur
    once (the searches never re-enter the origin and stop at the target).
    """
    last = {v: i for i, v in enumerate(walk)}
    path: list[str] = []
    i = 0
    while i < len(walk):
        v = walk[i]
        path.append(v)
        i = last[v] + 1
    return path


def _start_roots(G: nx.DiGraph, xs: Iterable[str], skip_edge: SkipEdge = None):
    succ, pred = G._succ, G._pred
    for x in sorted(xs):
        for p in pred[x]:
            if not (skip_edge and skip_edge(p, x)):
                yield (x, p, UP, 0)
        for c in succ[x]:
            if not (skip_edge and skip_edge(x, c)):
                yield (x, c, DOWN, 0)


def d_connecting_path(
    G: nx.DiGraph, xs: Iterable[str], ys: Iterable[str], zs: Iterable[str]
) -> list[str] | None:
    """A simple path from some x to some y that is open given ``zs``, or None.

    Only the first node of the path is in ``xs`` and only the last is in
    ``ys``.  Breadth-first search over Bayes-ball states with parent
    pointers, then :func:`shortcut_walk`; linear time.
    """
    xs, ys, zs = _check_sets(G, xs, ys, zs)
    common = xs & ys
    if common:
        return [min(common)]
    if not xs or not ys:
        return None
    anc_z = ancestors(G, zs) if zs else set()
    walk = _state_search(
        G, _start_roots(G, xs), zs, anc_z, lambda v, d, f: v in ys, no_enter=xs
    )
    return shortcut_walk(walk) if walk else None


# --- definitional checks, used to verify witnesses and by describe_path ---


def arrow_between(G: nx.DiGraph, a: str, b: str) -> int:
    """+1 when the arrow is a -> b, -1 when b -> a, 0 when not adjacent."""
    if b in G._succ[a]:
        return 1
    if a in G._succ[b]:
        return -1
    return 0


def is_collider_on(G: nx.DiGraph, path: list[str], i: int) -> bool:
    """Both arrows at the inner node ``path[i]`` point into it."""
    return b_in(G, path[i - 1], path[i]) and b_in(G, path[i + 1], path[i])


def b_in(G: nx.DiGraph, a: str, b: str) -> bool:
    return b in G._succ[a]


def path_is_open(G: nx.DiGraph, path: list[str], zs: set[str], anc_z: set[str] | None = None) -> bool:
    """Definition: every inner non-collider is outside Z, every collider in An(Z)."""
    if anc_z is None:
        anc_z = ancestors(G, zs) if zs else set()
    for i in range(1, len(path) - 1):
        if is_collider_on(G, path, i):
            if path[i] not in anc_z:
                return False
        elif path[i] in zs:
            return False
    return True


def path_is_causal(G: nx.DiGraph, path: list[str]) -> bool:
    """Every arrow points away from the first node, towards the last."""
    return all(b_in(G, path[i], path[i + 1]) for i in range(len(path) - 1))


class ArrowCut:
    """The arrows t -> h with t in ``tails`` (and h in ``heads``, when given), as an
    edge predicate that the searches can also read as sets: they filter only the
    arrows at the few nodes the cut touches instead of calling a predicate per arrow."""

    __slots__ = ("tails", "heads")

    def __init__(self, tails: Iterable[str], heads: Iterable[str] | None = None):
        self.tails = frozenset(tails)
        self.heads = None if heads is None else frozenset(heads)

    def __call__(self, u: str, v: str) -> bool:
        return u in self.tails and (self.heads is None or v in self.heads)


class _Everything:
    """A 'set' holding every node: a general predicate may cut any arrow."""

    def __contains__(self, item: object) -> bool:
        return True


def _cut_sets(G: nx.DiGraph, skip_edge: SkipEdge):
    """(nodes whose outgoing arrows may be cut, nodes whose incoming arrows may be cut)."""
    if skip_edge is None:
        return frozenset(), frozenset()
    if isinstance(skip_edge, ArrowCut):
        succ = G._succ
        heads = {c for t in skip_edge.tails for c in succ[t]}
        if skip_edge.heads is not None:
            heads &= skip_edge.heads
        return skip_edge.tails, heads
    everything = _Everything()
    return everything, everything


def _connected_cut(
    G: nx.DiGraph,
    xs: set[str],
    ys: set[str],
    zs: set[str],
    anc_z: set[str],
    skip_edge: SkipEdge,
    proper: bool,
) -> bool:
    """True when some y is reachable from xs by the Bayes-ball moves of
    :func:`_state_search` in G without the arrows in ``skip_edge``.

    The same moves and visited states as the general search, written as a
    two-stack loop with two visited sets (no tuple states, no parent pointers,
    no flags) because only the yes/no answer is needed: this is the hot loop of
    d-separation, validity and instrument tests on large diagrams.
    """
    succ, pred = G._succ, G._pred
    cut_tails, cut_heads = _cut_sets(G, skip_edge)
    seen_up: set[str] = set(xs)
    # proper: the exposures are never re-entered; otherwise they may be
    # entered along an arrow (entering one against an arrow repeats its start).
    seen_down: set[str] = set(xs) if proper else set()
    up_stack = list(xs)
    down_stack: list[str] = []
    while up_stack or down_stack:
        while up_stack:
            v = up_stack.pop()
            # v is not in zs here: blocked states are never pushed.
            parents = pred[v] if v not in cut_heads else [p for p in pred[v] if not skip_edge(p, v)]
            for p in parents:
                if p not in seen_up:
                    if p in ys:
                        return True
                    seen_up.add(p)
                    if p not in zs:
                        up_stack.append(p)
            children = succ[v] if v not in cut_tails else [c for c in succ[v] if not skip_edge(v, c)]
            for c in children:
                if c not in seen_down:
                    if c in ys:
                        return True
                    seen_down.add(c)
                    down_stack.append(c)
        while down_stack:
            v = down_stack.pop()
            if v not in zs:
                children = succ[v] if v not in cut_tails else [c for c in succ[v] if not skip_edge(v, c)]
                for c in children:
                    if c not in seen_down:
                        if c in ys:
                            return True
                        seen_down.add(c)
                        down_stack.append(c)
            if v in anc_z:
                parents = pred[v] if v not in cut_heads else [p for p in pred[v] if not skip_edge(p, v)]
                for p in parents:
                    if p not in seen_up:
                        if p in ys:
                            return True
                        seen_up.add(p)
                        if p not in zs:
                            up_stack.append(p)
    return False


def _cut_test(cut_from: set[str], cut_to: set[str] | None) -> SkipEdge:
    """Edge predicate for 'arrows out of cut_from (into cut_to, or anywhere) removed'."""
    if not cut_from:
        return None
    return ArrowCut(cut_from, cut_to)


def ancestors_cut(G: nx.DiGraph, nodes: set[str], skip_edge: SkipEdge) -> set[str]:
    """Ancestors (inclusive) in G with the arrows chosen by ``skip_edge`` removed."""
    if skip_edge is None:
        return ancestors(G, nodes)
    pred = G._pred
    _, cut_heads = _cut_sets(G, skip_edge)
    seen = set(nodes)
    stack = list(seen)
    while stack:
        v = stack.pop()
        for p in pred[v]:
            if p not in seen and not (v in cut_heads and skip_edge(p, v)):
                seen.add(p)
                stack.append(p)
    return seen


def d_separated_cut(
    G: nx.DiGraph,
    xs: set[str],
    ys: set[str],
    zs: set[str],
    skip_edge: SkipEdge,
    proper: bool = True,
) -> bool:
    """d-separation in G with some arrows removed (given by ``skip_edge``).

    Used for the proper back-door graph and for graphs with an exposure's
    outgoing arrows removed, without copying G.  With ``proper`` the walk
    never re-enters ``xs``, which does not change the answer (a suffix of an
    open path is open) but keeps witness walks proper.
    """
    xs, ys, zs = _check_sets(G, xs, ys, zs)
    if xs & ys:
        return False
    if not xs or not ys:
        return True
    anc_z = ancestors_cut(G, zs, skip_edge) if zs else set()
    return not _connected_cut(G, xs, ys, zs, anc_z, skip_edge, proper)
