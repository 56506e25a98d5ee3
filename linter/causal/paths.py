"""Path listing and path explanation for review (the ``paths`` command only).

Path enumeration is exponential in the worst case, so nothing used by
``check`` calls it; it is capped by ``limit``.
"""

from __future__ import annotations

from array import array
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from itertools import chain, compress

import networkx as nx

from .dsep import ancestor_mask, b_in, is_collider_on, path_is_causal
from .graph import _as_set
from .indexed import MaskView, indexed

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
    """The graph's index with neighbours in name order (computed for the variables visited)."""

    __slots__ = ("ix", "_sorted", "steps", "_key")

    def __init__(self, G: nx.DiGraph, steps: list[int] | None, near: Iterable[str] | None = None):
        self.ix = ix = indexed(G)
        self._sorted: dict[int, list[int]] = {}
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

    def step(self) -> None:
        if self.steps is not None:
            self.steps[0] += 1


def _distances(ix, seeds: list[int]) -> array:
    """Number of arrows (either way) from the nearest seed; n where none leads."""
    dist = array("i", [ix.n]) * ix.n
    frontier = []
    for s in seeds:
        dist[s] = 0
        frontier.append(s)
    d = 0
    while frontier:
        d += 1
        nxt = []
        for v in frontier:
            for u in chain(ix.succ[v], ix.pred[v]):
                if dist[u] > d:
                    dist[u] = d
                    nxt.append(u)
        frontier = nxt
    return dist


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
    paths (and after the last) there are at most |V| + 1 steps.  The order is
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
    for x in x_ids:
        path, pointer = [x], [0]
        on_path = bytearray(x_mask)  # other exposures are never entered
        while path:
            w.step()
            found = _advance(w, path[-1], pointer[-1], on_path, y_mask)
            if found is None:
                v = path.pop()
                pointer.pop()
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
    argument above.)  So a scan of a variable costs at most
    ``FORWARD_TRIES`` + 2 linear-time steps; a variable is scanned when
    entered and again after each return to it, so between two paths there
    are at most (``FORWARD_TRIES`` + 2)(2|V| + 1) steps.  ``shortest_first``
    as for :func:`simple_paths`.
    ``steps[0]`` counts them.
    """
    X, Y, Z = _as_set(G, X), _as_set(G, Y), _as_set(G, Z)
    w = _Walker(G, steps, Y if shortest_first else None)
    ix = w.ix
    names = ix.names
    succ_of = ix.succ
    y_mask, x_mask, inz = ix.mask(Y), ix.mask(X), ix.mask(Z)
    anc = ancestor_mask(ix, Z)
    for x in sorted(ix.ids(X), key=names.__getitem__):
        path, pointer, down = [x], [0], [False]  # down: entered along an arrow into it
        on_path = bytearray(x_mask)
        while path:
            v = path[-1]
            good: tuple[bytearray, bytearray] | None = None
            failed = 0
            row = w.neighbours(v)
            i = pointer[-1]
            entered = None
            while i < len(row):
                u = row[i]
                i += 1
                if on_path[u]:
                    continue
                into_u = u in succ_of[v]  # v -> u
                if len(path) > 1:
                    collider = down[-1] and not into_u
                    if not (anc[v] if collider else not inz[v]):
                        continue  # the path would be blocked at v
                if y_mask[u]:
                    entered = (u, into_u)
                    break
                # A forward search usually finds an outcome at once; after one
                # fails, one backward search settles every other neighbour.
                w.step()
                if good is None:
                    on_path[u] = 1
                    ok = _open_walk_to(ix, u, into_u, on_path, inz, anc, y_mask)
                    on_path[u] = 0
                    if not ok:
                        failed += 1
                        if failed == FORWARD_TRIES:
                            w.step()
                            good = _open_to_outcome(ix, on_path, inz, anc, y_mask)
                else:
                    ok = good[0 if into_u else 1][u]
                if ok:
                    entered = (u, into_u)
                    break
            pointer[-1] = i
            if entered is None:
                path.pop()
                pointer.pop()
                down.pop()
                if path:
                    on_path[v] = 0
                continue
            u, into_u = entered
            on_path[u] = 1
            path.append(u)
            pointer.append(0)
            down.append(into_u)
            if y_mask[u]:
                yield [names[t] for t in path]


def _open_walk_to(ix, start: int, down: bool, walls: bytearray, inz, anc, y_mask) -> bool:
    """Whether a walk open given Z leads from ``start`` (entered along an arrow
    into it when ``down``) to an outcome without entering a wall."""
    succ, pred = ix.succ, ix.pred
    seen_up = bytearray(walls)
    seen_down = bytearray(walls)
    (seen_down if down else seen_up)[start] = 1
    stack = [(start, down)]
    while stack:
        v, d = stack.pop()
        moves_down = not inz[v]  # on to a child: v is a non-collider (d) or a fork/chain (not d)
        moves_up = anc[v] if d else not inz[v]  # on to a parent: a collider needs v in An(Z)
        if moves_down:
            for c in succ[v]:
                if not seen_down[c]:
                    if y_mask[c]:
                        return True
                    seen_down[c] = 1
                    stack.append((c, True))
        if moves_up:
            for p in pred[v]:
                if not seen_up[p]:
                    if y_mask[p]:
                        return True
                    seen_up[p] = 1
                    stack.append((p, False))
    return False


def _open_to_outcome(ix, walls: bytearray, inz, anc, y_mask) -> tuple[bytearray, bytearray]:
    """The states (u entered along an arrow into it; u entered from one of its
    children) from which a walk open given Z reaches an outcome without
    entering a wall: searched backwards from the outcomes."""
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
                if not good_down[a]:
                    good_down[a] = 1
                    stack.append((a, True))
                if not good_up[a]:
                    good_up[a] = 1
                    stack.append((a, False))
        else:  # (c, entered from a child) is good: a child a may step up into c
            for a in succ[c]:
                if walls[a]:
                    continue
                if anc[a] and not good_down[a]:  # a collider, opened by Z
                    good_down[a] = 1
                    stack.append((a, True))
                if not inz[a] and not good_up[a]:
                    good_up[a] = 1
                    stack.append((a, False))
    return good_down, good_up


def describe_path(G: nx.DiGraph, path: list[str], X: Iterable[str], Z: Iterable[str]) -> PathInfo:
    """Whether ``path`` is causal and whether it is open given Z, with reasons.

    A path is blocked by a non-collider in Z, or by a collider that is not in
    Z and has no descendant in Z (d-separation; Pearl 1988).  For open
    paths each collider is reported with the adjusted variable that opens it
    (itself, or the first adjusted descendant found breadth-first).
    ``X`` is accepted for symmetry with the other calls; the path is read
    from its first node.
    """
    _as_set(G, X)
    Z = _as_set(G, Z)
    for a, b in zip(path, path[1:], strict=False):
        if not (b_in(G, a, b) or b_in(G, b, a)):
            raise ValueError(f"{a!r} and {b!r} are not adjacent")
    blocking: list[BlockingNode] = []
    opened: list[OpenedCollider] = []
    # Only ancestors of Z have an adjusted descendant, and the directed paths
    # down to Z run through ancestors of Z only: one pass for An(Z) keeps each
    # collider's search inside it (a long path has thousands of colliders).
    ix = indexed(G)
    above_z = MaskView(ix, ancestor_mask(ix, Z)) if Z else None
    for i in range(1, len(path) - 1):
        v = path[i]
        if is_collider_on(G, path, i):
            opener = None
            if above_z is not None and v in above_z:
                opener = _nearest_adjusted_descendant(G, v, Z, above_z)
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


def _nearest_adjusted_descendant(G: nx.DiGraph, v: str, Z: set[str], above_z) -> str | None:
    if v in Z:
        return v
    if not Z:
        return None
    succ = G._succ
    frontier = [v]
    seen = {v}
    while frontier:  # breadth-first so the closest adjusted descendant is named
        nxt = []
        for u in frontier:
            for c in sorted(succ[u]):
                if c in seen or c not in above_z:
                    continue
                if c in Z:
                    return c
                seen.add(c)
                nxt.append(c)
        frontier = nxt
    return None
