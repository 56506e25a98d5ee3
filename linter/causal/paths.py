"""Path listing and path explanation for review (the ``paths`` command only).

Path enumeration is exponential in the worst case, so nothing used by
``check`` calls it; it is capped by ``limit``.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import networkx as nx

from .dsep import b_in, is_collider_on, path_is_causal
from .graph import _as_set

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

    Iterative depth-first search over neighbours in sorted order, so the
    listing is deterministic.  Outcomes may occur inside a path.  Returns the
    paths and whether the listing was cut at ``limit``.
    """
    X, Y = _as_set(G, X), _as_set(G, Y)
    succ, pred = G._succ, G._pred

    def neighbours(v: str) -> list[str]:
        return sorted(set(succ[v]) | set(pred[v]))

    paths: list[list[str]] = []
    for x in sorted(X):
        path = [x]
        on_path = {x}
        stack = [iter(neighbours(x))]
        while stack:
            nxt = next(stack[-1], None)
            if nxt is None:
                stack.pop()
                on_path.discard(path.pop())
                continue
            if nxt in on_path or nxt in X:
                continue
            path.append(nxt)
            on_path.add(nxt)
            if nxt in Y:
                if len(paths) >= limit:
                    return paths, True
                paths.append(list(path))
            stack.append(iter(neighbours(nxt)))
    return paths, False


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
    for i in range(1, len(path) - 1):
        v = path[i]
        if is_collider_on(G, path, i):
            opener = _nearest_adjusted_descendant(G, v, Z)
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


def _nearest_adjusted_descendant(G: nx.DiGraph, v: str, Z: set[str]) -> str | None:
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
                if c in seen:
                    continue
                if c in Z:
                    return c
                seen.add(c)
                nxt.append(c)
        frontier = nxt
    return None


