"""Path listing and path explanation for review (the ``paths`` command only).

Path enumeration is exponential in the worst case, so nothing used by
``check`` calls it; it is capped by ``limit``.
"""

from __future__ import annotations

from array import array
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from itertools import chain, compress
from typing import TYPE_CHECKING

from .dsep import ancestor_mask, b_in, is_collider_on, path_is_causal
from .graph import _as_set
from .indexed import distances, indexed

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx

REASON_NONCOLLIDER = "non-collider in the adjustment set"
REASON_COLLIDER = "collider not adjusted and no adjusted descendant"


@dataclass(frozen=True)
class BlockingNode:
    """A variable that blocks a path, and why."""

    node: str
    reason: str


@dataclass(frozen=True)
class OpenedCollider:
    """A collider on an open path and the adjusted variable (itself or a descendant) that opens it."""

    collider: str
    adjusted: str


@dataclass(frozen=True)
class PathInfo:
    """Classification of one path from an exposure given an adjustment set."""

    path: tuple[str, ...]
    causal: bool
    open: bool
    blocking: tuple[BlockingNode, ...]
    opened_colliders: tuple[OpenedCollider, ...]


def enumerate_paths(
    G: nx.DiGraph, X: Iterable[str], Y: Iterable[str], limit: int
) -> tuple[list[list[str]], bool]:
    """Simple paths from X to Y (only the first node in X), at most ``limit``.

    Depth-first, neighbours in name order, so the listing is deterministic;
    outcomes may occur inside a path.  Returns the paths and whether the
    listing was cut at ``limit`` (more paths exist).  Listed by
    :func:`simple_paths`, so ``limit`` bounds the time, not only the output.
    """
    paths: list[list[str]] = []
    for p in simple_paths(G, X, Y):
        if len(paths) >= limit:
            return paths, True
        paths.append(p)
    return paths, False


class _Walker:
    """The graph's index with neighbours in a fixed order (computed for the variables visited)."""

    __slots__ = ("ix", "_sorted", "_rows", "steps", "_key")

    def __init__(self, G: nx.DiGraph, steps: list[int] | None, near: Iterable[str] | None = None):
        self.ix = ix = indexed(G)
        self._sorted: dict[int, list[int]] = {}
        self._rows: dict[int, tuple[list[int], bytes]] = {}
        self.steps = steps
        self._key = ix.names.__getitem__
        if near is not None:
            # Neighbours closer to the outcomes first (arrows taken both ways),
            # then by name: a fixed order per variable, so the listing stays
            # complete and without repeats, and its first paths are short.
            dist = _distances(ix, ix.ids(near))
            names = ix.names
            self._key = lambda v: (dist[v], names[v])

    def neighbours(self, v: int) -> list[int]:
        row = self._sorted.get(v)
        if row is None:
            ix = self.ix
            row = self._sorted[v] = sorted({*ix.succ[v], *ix.pred[v]}, key=self._key)
        return row

    def row(self, v: int) -> tuple[list[int], bytes]:
        """The neighbours of v in order, and for each whether it is a child of v."""
        got = self._rows.get(v)
        if got is None:
            row = self.neighbours(v)
            children = set(self.ix.succ[v])
            got = self._rows[v] = (row, bytes(u in children for u in row))
        return got

    def step(self) -> None:
        if self.steps is not None:
            self.steps[0] += 1


def _distances(ix, seeds: list[int]) -> array:
    """Number of arrows (either way) from the nearest seed; n where none leads."""
    succ, pred = ix.succ, ix.pred
    return distances(ix.n, lambda v: chain(succ[v], pred[v]), seeds)


def simple_paths(
    G: nx.DiGraph,
    X: Iterable[str],
    Y: Iterable[str],
    steps: list[int] | None = None,
    shortest_first: bool = False,
) -> Iterator[list[str]]:
    """Every simple path from X to Y (only its first node in X), with polynomial delay.

    Depth-first listing in name order that never enters a branch from which
    no outcome can be reached without repeating a variable, the idea of Read
    & Tarjan (1975, "Bounds on backtrack algorithms for listing cycles,
    paths, and spanning trees", Networks 5:237-252; see also Birmele et al.
    2013, "Optimal listing of cycles and st-paths in undirected graphs",
    SODA).  One depth-first search from the top of the current path, over
    the variables not on it, both finds the first neighbour that leads to an
    outcome and the path there: neighbours whose search fails are closed
    regions that cannot reach an outcome while the path below them stays,
    so they are never tried again from that point.  Each search is one
    linear-time step; a failed search pops one variable, so between two
    paths (and after the last) there are at most |V| + 1 steps,
    O(|V|(|V| + |E|)) time.  When no outcome is left off the path (the top
    is the only outcome, say) the step pops at once instead of searching
    the whole diagram for one.  The order is
    that of the plain depth-first listing.  ``steps[0]``, when given, counts
    the searches (for tests of the delay).  With ``shortest_first`` the
    neighbours are tried nearest to an outcome first instead of by name
    (the first paths are short ones; on a large diagram name order gives
    paths through thousands of variables).
    """
    X, Y = _as_set(G, X), _as_set(G, Y)
    w = _Walker(G, steps, Y if shortest_first else None)
    ix = w.ix
    names = ix.names
    x_ids = sorted(ix.ids(X), key=names.__getitem__)
    y_mask = ix.mask(Y)
    x_mask = ix.mask(X)
    reachable_outcomes = len(Y - X)  # outcomes that are neither exposures nor on the path
    for x in x_ids:
        path, pointer = [x], [0]
        on_path = bytearray(x_mask)  # other exposures are never entered
        while path:
            w.step()
            found = None
            if reachable_outcomes:
                found = _advance(w, path[-1], pointer[-1], on_path, y_mask)
            if found is None:
                v = path.pop()
                pointer.pop()
                if y_mask[v] and not x_mask[v]:
                    reachable_outcomes += 1
                if path:
                    on_path[v] = 0
                continue
            chosen, suffix = found
            pointer[-1] = chosen[0] + 1
            for u, i in zip(suffix, chosen[1:], strict=False):
                path.append(u)
                pointer.append(i + 1)
            path.append(suffix[-1])
            pointer.append(0)
            for u in suffix:
                on_path[u] = 1
                if y_mask[u]:
                    reachable_outcomes -= 1
            yield [names[u] for u in path]


def _advance(
    w: _Walker, top: int, start: int, on_path: bytearray, y_mask
) -> tuple[list[int], list[int]] | None:
    """Depth-first search from ``top`` (its neighbours from position ``start``)
    over variables not on the path, to the first outcome.

    Returns (the position of the neighbour taken at each variable of the
    walk, the variables after ``top`` up to the outcome), or None.
    """
    seen = bytearray(on_path)
    nbrs = w.neighbours
    stack = [top]
    at = [start]
    while stack:
        u = stack[-1]
        row = nbrs(u)
        i = at[-1]
        while i < len(row) and seen[row[i]]:
            i += 1
        if i == len(row):
            stack.pop()
            at.pop()
            continue
        at[-1] = i
        v = row[i]
        seen[v] = 1
        if y_mask[v]:
            return at, stack[1:] + [v]
        stack.append(v)
        at.append(0)
    return None


# Forward searches tried per scan before one backward search settles the rest:
# a failed forward search is usually a small dead end, a backward one always
# covers the diagram.
FORWARD_TRIES = 8


def open_paths(
    G: nx.DiGraph,
    X: Iterable[str],
    Y: Iterable[str],
    Z: Iterable[str],
    steps: list[int] | None = None,
    shortest_first: bool = False,
) -> Iterator[list[str]]:
    """Every simple path from X to Y that is open given Z (d-connecting; Pearl 1988).

    Depth-first in name order, like :func:`simple_paths`, but the path is
    only extended by a variable u when the step keeps it open (a collider
    in An(Z), or a non-collider outside Z) and an open walk leads on from u
    to an outcome over variables not on the path.  Such a walk can be
    shortened to an open path over the same variables that leaves u the way
    the walk may (the usual argument that d-connecting walks give
    d-connecting paths; it holds in the diagram without the path's
    variables because An(Z) is taken in the whole diagram; ours), so no
    branch entered is fruitless.  A neighbour is tried with a forward search
    over (variable, direction) states (the moves of Shachter's 1998 Bayes
    ball), which usually reaches an outcome at once or fails in a small dead
    end; after ``FORWARD_TRIES`` failures, one backward search from the
    outcomes settles the other neighbours of the scan.  (The forward search
    walls off u itself, the backward one does not; both are exact by the
    argument above.)

    Failed regions are kept, as Read & Tarjan (1975) keep the part of the
    graph a failed search proved dead and Johnson (1975, "Finding all the
    elementary circuits of a directed graph", SIAM J. Computing 4:77-84)
    keeps blocked vertices: the states a failed forward search visited lead
    to no outcome while the path variables it ran into stay on the path (it
    never needed the others as walls), so they are marked dead until the
    deepest of those variables is popped, and later searches treat them as
    walls instead of walking them again.  Searches also stop at once when no
    outcome is left off the path.

    Delay: one backward pass first gives every state its distance to an
    outcome (states with none are never tried; the forward searches walk
    the nearest states first, so a search that succeeds usually walks
    straight to an outcome).  A scan of a variable then costs at most
    ``FORWARD_TRIES`` + 1 linear-time searches: up to ``FORWARD_TRIES``
    failed forward searches and the backward one, or fewer failures and
    one success (a neighbour already marked dead costs none).  A variable
    is scanned when entered and again after each return to it, so between
    two paths (and after the last) there are at most
    (``FORWARD_TRIES`` + 1)(2|V| + 1) searches, O(|V|(|V| + |E|)) time,
    and one more before the first path (the distances); the kept marks only
    remove work from that bound.  ``steps[0]`` counts the searches.
    ``shortest_first`` as for :func:`simple_paths`.
    """
    X, Y, Z = _as_set(G, X), _as_set(G, Y), _as_set(G, Z)
    w = _Walker(G, steps, Y if shortest_first else None)
    ix = w.ix
    names = ix.names
    y_mask, x_mask, inz = ix.mask(Y), ix.mask(X), ix.mask(Z)
    anc = ancestor_mask(ix, Z)
    dead = _DeadStates(ix.n)
    w.step()
    moves = _Moves(ix, x_mask, inz, anc, y_mask)
    far = moves.dist
    pos = array("i", [-1]) * ix.n  # index on the path, -1 off it
    reachable_outcomes = len(Y - X)  # outcomes that are neither exposures nor on the path
    for x in sorted(ix.ids(X), key=names.__getitem__):
        path, pointer, down = [x], [0], [False]  # down: entered along an arrow into it
        on_path = bytearray(x_mask)
        pos[x] = 0
        while path:
            v = path[-1]
            good: tuple[bytearray, bytearray] | None = None
            failed = 0
            row, kids = w.row(v)
            i = pointer[-1] if reachable_outcomes else len(row)
            entered = None
            while i < len(row):
                u = row[i]
                into_u = kids[i]  # v -> u
                i += 1
                if on_path[u]:
                    continue
                if len(path) > 1:
                    collider = down[-1] and not into_u
                    if not (anc[v] if collider else not inz[v]):
                        continue  # the path would be blocked at v
                if y_mask[u]:
                    entered = (u, into_u)
                    break
                first = 2 * u + into_u
                if dead.mark[first] or far[first] == UNREACHABLE:
                    continue
                # A forward search usually finds an outcome at once; after one
                # fails, one backward search settles every other neighbour.
                if good is None:
                    w.step()
                    on_path[u] = 1
                    ok = _open_walk_to(moves, first, on_path, pos, dead, y_mask)
                    on_path[u] = 0
                    if not ok:
                        failed += 1
                        if failed == FORWARD_TRIES:
                            w.step()
                            good = _open_to_outcome(ix, on_path, dead.mark, inz, anc, y_mask)
                else:
                    ok = good[into_u][u]
                if ok:
                    entered = (u, into_u)
                    break
            pointer[-1] = i
            if entered is None:
                path.pop()
                pointer.pop()
                down.pop()
                dead.release(len(path) + 1)
                pos[v] = -1
                if y_mask[v] and not x_mask[v]:
                    reachable_outcomes += 1
                if path:
                    on_path[v] = 0
                continue
            u, into_u = entered
            on_path[u] = 1
            pos[u] = len(path)
            path.append(u)
            pointer.append(0)
            down.append(bool(into_u))
            if y_mask[u]:
                reachable_outcomes -= 1
                yield [names[t] for t in path]


class _DeadStates:
    """(variable, direction) states proved to lead to no outcome, by level.

    State 2v + 1 is v entered along an arrow into it, 2v entered from one of
    its children.  A state of level k stays dead while the first k variables
    of the path stay (k - 1 is the deepest path position its proof ran into;
    level 0 needs none of them).
    """

    __slots__ = ("mark", "level", "buckets", "scratch")

    def __init__(self, n: int):
        self.mark = bytearray(2 * n)
        self.scratch = bytearray(2 * n)  # a search's own visited marks, all 0 between searches
        self.level = array("i", [0]) * (2 * n)
        self.buckets: list[list[int]] = []

    def add(self, states: list[int], level: int) -> None:
        buckets = self.buckets
        while len(buckets) <= level:
            buckets.append([])
        mark, lv = self.mark, self.level
        for s in states:
            mark[s] = 1
            lv[s] = level
        buckets[level].extend(states)

    def release(self, level: int) -> None:
        """The path is down to level - 1 variables: the states of that level are alive again."""
        if level < len(self.buckets) and self.buckets[level]:
            mark = self.mark
            for s in self.buckets[level]:
                mark[s] = 0
            self.buckets[level] = []


UNREACHABLE = 2**31 - 1


class _Moves:
    """The open moves from each (variable, direction) state, nearest to an outcome first.

    ``dist[s]``: the fewest moves of a walk open given Z from state s to an
    outcome that never enters an exposure (one backward breadth-first pass,
    with the moves of :func:`_open_to_outcome`), ``UNREACHABLE`` when there is
    none.  Exposures are walls throughout the listing, so a state without
    such a walk is never worth entering.  The forward searches walk the
    nearest states first, so a search that succeeds usually walks straight
    to an outcome.
    """

    __slots__ = ("dist", "_cache", "_succ", "_pred", "_inz", "_anc")

    def __init__(self, ix, walls, inz, anc, y_mask):
        n = ix.n
        self._succ, self._pred, self._inz, self._anc = ix.succ, ix.pred, inz, anc
        dist = self.dist = array("i", [UNREACHABLE]) * (2 * n)
        frontier = []
        for y in compress(range(n), y_mask):
            if not walls[y]:
                dist[2 * y] = dist[2 * y + 1] = 0
                frontier += (2 * y, 2 * y + 1)
        d = 0
        succ, pred = ix.succ, ix.pred
        while frontier:
            d += 1
            nxt = []
            for s in frontier:
                c = s >> 1
                if s & 1:  # (c, entered along an arrow): from a parent outside Z stepping down
                    for a in pred[c]:
                        if walls[a] or inz[a]:
                            continue
                        for t in (2 * a + 1, 2 * a):
                            if dist[t] == UNREACHABLE:
                                dist[t] = d
                                nxt.append(t)
                else:  # (c, entered from a child): from a child a stepping up
                    for a in succ[c]:
                        if walls[a]:
                            continue
                        if anc[a] and dist[2 * a + 1] == UNREACHABLE:  # a collider opened by Z
                            dist[2 * a + 1] = d
                            nxt.append(2 * a + 1)
                        if not inz[a] and dist[2 * a] == UNREACHABLE:
                            dist[2 * a] = d
                            nxt.append(2 * a)
            frontier = nxt
        self._cache: dict[int, list[int]] = {}

    def __call__(self, s: int) -> list[int]:
        """The states one open move from s that can reach an outcome, farthest
        first (a search's stack then takes the nearest first)."""
        got = self._cache.get(s)
        if got is None:
            v = s >> 1
            inz, dist = self._inz, self.dist
            out = []
            if not inz[v]:  # on to a child: v is a non-collider
                out += [2 * c + 1 for c in self._succ[v] if dist[2 * c + 1] != UNREACHABLE]
            if self._anc[v] if s & 1 else not inz[v]:  # on to a parent
                out += [2 * p for p in self._pred[v] if dist[2 * p] != UNREACHABLE]
            out.sort(key=dist.__getitem__, reverse=True)
            got = self._cache[s] = out
        return got


def _open_walk_to(
    moves: _Moves, first: int, walls: bytearray, pos, dead: _DeadStates, y_mask
) -> bool:
    """Whether a walk open given Z leads from state ``first`` (2u + 1: u
    entered along an arrow into it; 2u: from one of its children) to an
    outcome without entering a wall or a dead state.

    On failure every state visited is marked dead, at the level of the
    deepest path variable (``pos``) or dead state the search ran into.  The
    search costs the states it visits and their moves, nothing per variable
    of the diagram.
    """
    mark, lv, seen = dead.mark, dead.level, dead.scratch
    seen[first] = 1
    visited = [first]
    stack = [first]
    bump = 0
    found = False
    while stack and not found:
        for t in moves(stack.pop()):
            c = t >> 1
            if walls[c]:
                if pos[c] >= bump:
                    bump = pos[c] + 1
                continue
            if mark[t]:
                if lv[t] > bump:
                    bump = lv[t]
                continue
            if seen[t]:
                continue
            if y_mask[c]:
                found = True
                break
            seen[t] = 1
            visited.append(t)
            stack.append(t)
    for t in visited:  # the scratch marks are cleared by the states set, not by a pass
        seen[t] = 0
    if not found:
        dead.add(visited, bump)
    return found


def _open_to_outcome(
    ix, walls: bytearray, dead: bytearray, inz, anc, y_mask
) -> tuple[bytearray, bytearray]:
    """The states (u entered from one of its children; u entered along an
    arrow into it) from which a walk open given Z reaches an outcome without
    entering a wall: searched backwards from the outcomes.  Dead states lead
    to no outcome, so the search does not enter them."""
    succ, pred = ix.succ, ix.pred
    good_down = bytearray(ix.n)
    good_up = bytearray(ix.n)
    stack = []
    for y in compress(range(ix.n), y_mask):
        if not walls[y]:
            good_down[y] = good_up[y] = 1
            stack.append((y, True))
            stack.append((y, False))
    while stack:
        c, d = stack.pop()
        if d:  # (c, entered along an arrow) is good: a parent outside Z may step down into c
            for a in pred[c]:
                if walls[a] or inz[a]:
                    continue
                if not good_down[a] and not dead[2 * a + 1]:
                    good_down[a] = 1
                    stack.append((a, True))
                if not good_up[a] and not dead[2 * a]:
                    good_up[a] = 1
                    stack.append((a, False))
        else:  # (c, entered from a child) is good: a child a may step up into c
            for a in succ[c]:
                if walls[a]:
                    continue
                if anc[a] and not good_down[a] and not dead[2 * a + 1]:  # a collider, opened by Z
                    good_down[a] = 1
                    stack.append((a, True))
                if not inz[a] and not good_up[a] and not dead[2 * a]:
                    good_up[a] = 1
                    stack.append((a, False))
    return good_up, good_down


def describe_path(G: nx.DiGraph, path: list[str], X: Iterable[str], Z: Iterable[str]) -> PathInfo:
    """Whether ``path`` is causal and whether it is open given Z, with reasons.

    A path is blocked by a non-collider in Z, or by a collider that is not in
    Z and has no descendant in Z (d-separation; Pearl 1988).  For open
    paths each collider is reported with the adjusted variable that opens it
    (itself, or the first adjusted descendant found breadth-first, children
    in name order).  ``X`` is accepted for symmetry with the other calls;
    the path is read from its first node.  To judge many paths given one Z,
    :func:`describe_paths` does the pass over the diagram once.
    """
    return describe_paths(G, [path], X, Z)[0]


def describe_paths(
    G: nx.DiGraph, paths: Iterable[list[str]], X: Iterable[str], Z: Iterable[str]
) -> list[PathInfo]:
    """:func:`describe_path` of each path, with one pass over the diagram for all.

    The pass is a breadth-first search up from Z that gives each ancestor of
    Z its distance down to the nearest adjusted variable.  A collider's
    opener is then found by the breadth-first search down from it that
    :func:`describe_path` describes, restricted to the children one arrow
    nearer to Z: a child not nearer has no child nearer either, so dropping
    it changes neither the first adjusted variable met nor the order in
    which the others are met.  The cost is one linear pass plus, per path,
    its length and the variables on shortest directed routes from its
    colliders down to Z.
    """
    _as_set(G, X)
    Z = _as_set(G, Z)
    ix = indexed(G)
    to_z = _distances_to(ix, Z)
    return [_describe_one(G, ix, list(p), Z, to_z) for p in paths]


def _distances_to(ix, Z: set[str]) -> array:
    """Arrows on the shortest directed path from each variable down to Z; -1 outside An(Z)."""
    dist = array("i", [-1]) * ix.n
    frontier = ix.ids(Z)
    for z in frontier:
        dist[z] = 0
    pred = ix.pred
    d = 0
    while frontier:
        d += 1
        nxt = []
        for v in frontier:
            for p in pred[v]:
                if dist[p] < 0:
                    dist[p] = d
                    nxt.append(p)
        frontier = nxt
    return dist


def _describe_one(G: nx.DiGraph, ix, path: list[str], Z: set[str], to_z) -> PathInfo:
    for a, b in zip(path, path[1:], strict=False):
        if not (b_in(G, a, b) or b_in(G, b, a)):
            raise ValueError(f"{a!r} and {b!r} are not adjacent")
    blocking: list[BlockingNode] = []
    opened: list[OpenedCollider] = []
    index = ix.index
    for i in range(1, len(path) - 1):
        v = path[i]
        if is_collider_on(G, path, i):
            opener = None
            if to_z[index[v]] >= 0:
                opener = _nearest_adjusted_descendant(ix, index[v], to_z)
            if opener is None:
                blocking.append(BlockingNode(v, REASON_COLLIDER))
            else:
                opened.append(OpenedCollider(v, opener))
        elif v in Z:
            blocking.append(BlockingNode(v, REASON_NONCOLLIDER))
    is_open = not blocking
    return PathInfo(
        path=tuple(path),
        causal=path_is_causal(G, path),
        open=is_open,
        blocking=tuple(blocking),
        opened_colliders=tuple(opened) if is_open else (),
    )


def _nearest_adjusted_descendant(ix, v: int, to_z) -> str:
    """The first adjusted variable met breadth-first down from v (children in
    name order), v itself when adjusted; v must be an ancestor of Z."""
    names = ix.names
    if to_z[v] == 0:
        return names[v]
    frontier = [v]
    seen = {v}
    while frontier:  # breadth-first so the closest adjusted descendant is named
        nxt = []
        for u in frontier:
            nearer = to_z[u] - 1
            for c in sorted((c for c in ix.succ[u] if to_z[c] == nearer), key=names.__getitem__):
                if c in seen:
                    continue
                if nearer == 0:
                    return names[c]
                seen.add(c)
                nxt.append(c)
        frontier = nxt
    raise AssertionError("an ancestor of Z has a shortest route down to Z")
