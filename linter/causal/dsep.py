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

from array import array
from collections import deque
from collections.abc import Callable, Iterable
from typing import TYPE_CHECKING

from .graph import _as_set, ancestors
from .indexed import Indexed, Rows, closure_rows, frozen, indexed

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx

UP = 0  # entered from a child, i.e. against the arrow
DOWN = 1  # entered from a parent, i.e. along the arrow


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
    ix = indexed(G)
    # The two-stack reachability loop of _connected_cut, with no arrow cut.
    return not _connected_cut(ix, xs, ys, zs, None, proper=False)


def _state_search(
    ix: Indexed,
    roots: Iterable[tuple[int, int, int, int]],
    inz: bytes | bytearray,
    anc: bytes | bytearray,
    targets: bytes | bytearray | None,
    no_enter: bytes | bytearray,
    *,
    accept_flag: int = 0,
    colliders: bytes | bytearray | None = None,
    no_expand: bytes | bytearray | None = None,
    tree: array | None = None,
    take: Callable[[list[str]], object] | None = None,
):
    """Breadth-first search over (variable, direction, flag) states with parent pointers.

    Variables are indices of ``ix``; sets are mark arrays.  ``roots`` are
    ``(origin, node, direction, flag)``: the walk starts at ``origin`` and
    its first move enters ``node`` in ``direction``.  A state is accepted
    when its variable is in ``targets`` and its flag equals ``accept_flag``;
    the search returns the walk (names, possibly repeating) to the first
    accepted state, or None.  Each state is expanded once, so the cost is
    linear in |V| + |E| times the (constant) number of flag values.

    Flags (used by the typed searches of dagward.causal.adjustment; a search
    whose roots have flag 0 and no ``colliders`` keeps flag 0 throughout):
    bit 1 "still a directed path from the exposure" is cleared by every move
    against an arrow; bit 2 "turned at a collider in ``colliders``" is set
    by a move against an arrow out of a state entered along one.

    With ``take``, each accepted walk is handed to ``take`` and the first
    result that is not None is returned (None when there is none): the same
    answer as scanning every accepted walk in order, without finishing the
    search once one is taken.  With ``targets`` None the search runs to the
    end; pass ``tree`` (an array of ``8 * n`` entries -1) to keep its parent
    pointers.
    """
    succ, pred = ix.rows()
    parent = tree if tree is not None else new_tree(ix)
    queue: deque[int] = deque()

    def accepted(state: int):
        walk = _walk_back(ix, parent, state)
        return walk if take is None else take(walk)

    for origin, node, d, f in roots:
        state = node << 3 | d << 2 | f
        if parent[state] != -1:
            continue
        parent[state] = -2 - origin
        if targets is not None and targets[node] and f == accept_flag:
            result = accepted(state)
            if result is not None:
                return result
        queue.append(state)
    while queue:
        state = queue.popleft()
        v, d, f = state >> 3, state >> 2 & 1, state & 3
        if no_expand is not None and no_expand[v]:
            continue
        # Same moves, in the same order, as the module docstring lists:
        # from an UP state parents then children, from a DOWN state children
        # (unless v is in Z) then parents (if v is in An(Z)).
        up_flag = f & 2  # a move against an arrow ends "still directed"
        if d == DOWN and colliders is not None and colliders[v]:
            up_flag = 2
        if d == UP:
            if inz[v]:
                continue
            steps = ((pred(v), UP << 2 | up_flag, up_flag), (succ(v), DOWN << 2 | f, f))
        elif inz[v]:
            steps = ((pred(v), UP << 2 | up_flag, up_flag),) if anc[v] else ()
        elif anc[v]:
            steps = ((succ(v), DOWN << 2 | f, f), (pred(v), UP << 2 | up_flag, up_flag))
        else:
            steps = ((succ(v), DOWN << 2 | f, f),)
        for nodes, low_bits, f2 in steps:
            for w in nodes:
                nxt = w << 3 | low_bits
                if parent[nxt] != -1 or no_enter[w]:
                    continue
                parent[nxt] = state
                if targets is not None and targets[w] and f2 == accept_flag:
                    result = accepted(nxt)
                    if result is not None:
                        return result
                queue.append(nxt)
    return None


def new_tree(ix: Indexed) -> array:
    """Parent pointers for every state of :func:`_state_search`, all unset (-1)."""
    return array("i", [-1]) * (8 * ix.n)


def tree_has(tree: array, v: int, d: int, f: int = 0) -> bool:
    return tree[v << 3 | d << 2 | f] != -1


def _walk_back(ix: Indexed, parent: array, state: int) -> list[str]:
    names = ix.names
    walk = [names[state >> 3]]
    cur = parent[state]
    while cur >= 0:
        walk.append(names[cur >> 3])
        cur = parent[cur]
    walk.append(names[-2 - cur])  # the origin
    walk.reverse()
    return walk


def walk_to(ix: Indexed, tree: array, v: int, d: int, f: int = 0) -> list[str]:
    """The walk of a finished search ``tree`` that ends in state (v, d, f)."""
    return _walk_back(ix, tree, v << 3 | d << 2 | f)


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


def start_roots(ix: Indexed, xs: Iterable[int], no_enter: bytes | bytearray, directed=None):
    """Roots of a search from each x (sorted by name): every parent entered UP,
    every child entered DOWN, none in ``no_enter``; a child in ``directed``
    starts with flag 1 ("still directed")."""
    succ, pred, names = ix.succ, ix.pred, ix.names
    roots = []
    for x in sorted(xs, key=names.__getitem__):
        roots += [(x, p, UP, 0) for p in pred[x] if not no_enter[p]]
        if directed is None:
            roots += [(x, c, DOWN, 0) for c in succ[x] if not no_enter[c]]
        else:
            roots += [(x, c, DOWN, 1 if directed[c] else 0) for c in succ[x] if not no_enter[c]]
    return roots


def ancestor_mask(ix: Indexed, nodes: Iterable[str], cut: ArrowCut | None = None) -> bytearray:
    """An(nodes) as a mark array, in G without the arrows of ``cut``."""
    return ancestor_mask_ids(ix, ix.ids(nodes), cut)


def ancestor_mask_ids(ix: Indexed, seeds: Iterable[int], cut: ArrowCut | None = None) -> bytearray:
    """:func:`ancestor_mask` of variables given by index."""
    return closure_rows(kept_rows(ix, cut)[1], seeds, bytearray(ix.n))


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
    ix = indexed(G)
    no_enter = ix.mask(xs)
    roots = start_roots(ix, ix.ids(xs), bytes(ix.n))
    walk = _state_search(ix, roots, ix.mask(zs), ancestor_mask(ix, zs), ix.mask(ys), no_enter)
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


def path_is_open(
    G: nx.DiGraph, path: list[str], zs: set[str], anc_z: set[str] | None = None
) -> bool:
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
        self.tails = frozen(tails)
        self.heads = None if heads is None else frozen(heads)

    def __call__(self, u: str, v: str) -> bool:
        return u in self.tails and (self.heads is None or v in self.heads)


# The arrows a search treats as absent (the proper back-door graph, an
# exposure's outgoing arrows), or None.
SkipEdge = ArrowCut | None


def kept_rows(ix: Indexed, cut: ArrowCut | None):
    """(children of v, parents of v) as functions, without the arrows of ``cut``.

    With no cut these are the index's own rows (:meth:`Indexed.rows`); with
    one, only the few variables the cut touches read a filtered row.
    """
    children, parents = ix.rows()
    if cut is None:
        return children, parents
    succ, pred = ix.succ, ix.pred
    tails = ix.mask(cut.tails)
    heads = None if cut.heads is None else ix.mask(cut.heads)
    into = bytearray(ix.n)  # variables some cut arrow points into
    for t in ix.ids(cut.tails):
        for c in succ[t]:
            if heads is None or heads[c]:
                into[c] = 1

    # Compressed rows are sliced here (one call a row instead of two).
    compressed = type(succ) is Rows and type(pred) is Rows
    if compressed:
        sf, so, pf, po = succ.flat, succ.at, pred.flat, pred.at

    def kept_children(v: int):
        if tails[v]:
            return () if heads is None else [c for c in succ[v] if not heads[c]]
        return sf[so[v] : so[v + 1]] if compressed else children(v)

    def kept_parents(v: int):
        if into[v]:
            return [p for p in pred[v] if not tails[p]]
        return pf[po[v] : po[v + 1]] if compressed else parents(v)

    return kept_children, kept_parents


def _connected_cut(
    ix: Indexed,
    xs: set[str],
    ys: set[str],
    zs: set[str],
    cut: ArrowCut | None,
    proper: bool,
) -> bool:
    """True when some y is reachable from xs by the Bayes-ball moves of
    :func:`_state_search` in G without the arrows of ``cut``."""
    inz = ix.mask(zs)
    return connected_marks(
        ix, ix.ids(xs), ix.mask(ys), inz, ancestor_mask(ix, zs, cut), cut, proper
    )


def connected_marks(
    ix: Indexed,
    xs: list[int],
    isy: bytes | bytearray,
    inz: bytes | bytearray,
    anc: bytes | bytearray,
    cut: ArrowCut | None,
    proper: bool,
) -> bool:
    """:func:`_connected_cut` with Y and Z as mark arrays and An(Z) given.

    The same moves and visited states as the general search, written as a
    two-stack loop with two visited marks (no states, no parent pointers, no
    flags) because only the yes/no answer is needed: this is the hot loop of
    d-separation, validity and instrument tests on large diagrams.
    """
    children, parents = kept_rows(ix, cut)
    up_stack = list(xs)
    seen_up = bytearray(ix.n)
    for x in xs:
        seen_up[x] = 1
    # proper: the exposures are never re-entered; otherwise they may be
    # entered along an arrow (entering one against an arrow repeats its start).
    seen_down = bytearray(seen_up) if proper else bytearray(ix.n)
    return two_stack_reach(children, parents, up_stack, seen_up, seen_down, isy, inz, anc)


def two_stack_reach(children, parents, up_stack, seen_up, seen_down, isy, inz, anc) -> bool:
    """The two-stack Bayes-ball loop (Shachter 1998) shared by every yes/no
    d-connection test: from the variables on ``up_stack`` (entered against an
    arrow, marked in ``seen_up``), is a variable marked in ``isy`` reached, given
    the variables marked in ``inz`` with ancestors ``anc``? Rows are functions,
    so callers may pass rows with some arrows cut."""
    down_stack: list[int] = []
    while up_stack or down_stack:
        while up_stack:
            v = up_stack.pop()
            # v is not in zs here: blocked states are never pushed.
            for p in parents(v):
                if not seen_up[p]:
                    if isy[p]:
                        return True
                    seen_up[p] = 1
                    if not inz[p]:
                        up_stack.append(p)
            for c in children(v):
                if not seen_down[c]:
                    if isy[c]:
                        return True
                    seen_down[c] = 1
                    down_stack.append(c)
        while down_stack:
            v = down_stack.pop()
            if not inz[v]:
                for c in children(v):
                    if not seen_down[c]:
                        if isy[c]:
                            return True
                        seen_down[c] = 1
                        down_stack.append(c)
            if anc[v]:
                for p in parents(v):
                    if not seen_up[p]:
                        if isy[p]:
                            return True
                        seen_up[p] = 1
                        if not inz[p]:
                            up_stack.append(p)
    return False


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
    return not _connected_cut(indexed(G), xs, ys, zs, skip_edge, proper)
