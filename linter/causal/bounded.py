"""Exact witnesses on small diagrams, by a depth-first listing with a fixed budget.

Two of the linter's questions ask for a *simple path* with a property that a
walk-based linear search cannot always keep when it shortcuts its walk:

* collider-adjusted: for each adjusted z, is there a proper non-causal path
  from X to Y, open given Z, with a collider that is z or an ancestor of z?
* open-biasing-path: is there a proper non-causal path from X to Y, open
  given Z, without colliders, that has a *fixable* variable on it?

Asking for a simple path through a given vertex is the kind of question (two
disjoint paths) for which no linear algorithm is known, so on small diagrams
dagward answers it exactly by listing the open paths depth-first, never
extending a partial path that is already blocked (a non-collider in Z, or a
collider with no descendant in Z: the definition of d-separation, Pearl 1988,
"Probabilistic Reasoning in Intelligent Systems", ch. 3).  The listing stops
after ``budget`` steps; the caller then falls back on the linear searches of
:mod:`dagward.causal.adjustment`.  The budget is a constant, so the cost in
``check`` stays bounded whatever the diagram: paths are never enumerated
without a bound.

Neighbours are visited in sorted order, so the answer (and the path shown)
does not depend on the order of the lines in the file.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx


# Diagrams up to this many nodes (hidden `<->` parents included) are searched
# exhaustively, within the step budget below.
EXACT_MAX_NODES = 40
EXACT_BUDGET = 200_000


@dataclass(frozen=True)
class OpenPathWitnesses:
    """What the exhaustive listing found (shortest witnesses, ties by name order)."""

    colliders: dict[str, tuple[tuple[str, ...], str]]  # z -> (path, collider)
    confounding: tuple[str, ...] | None  # a collider-free open path with a fixable variable
    any_open: tuple[str, ...] | None  # a shortest open proper non-causal path, if any


def open_path_witnesses(
    G: nx.DiGraph,
    X: Iterable[str],
    Y: Iterable[str],
    Z: Iterable[str],
    fixable: Iterable[str],
    budget: int = EXACT_BUDGET,
    max_nodes: int = EXACT_MAX_NODES,
) -> OpenPathWitnesses | None:
    """Exact witnesses, or None when the diagram is too large or the budget runs out."""
    if G.number_of_nodes() > max_nodes:
        return None
    X, Y, Z, fixable = set(X), set(Y), set(Z), set(fixable)
    succ, pred = G.succ, G.pred
    from .graph import ancestors, descendants

    an_z: set[str] = ancestors(G, Z) if Z else set()
    # For a collider c: the adjusted variables that are c or descend from it.
    below: dict[str, list[str]] = {}

    def adjusted_below(c: str) -> list[str]:
        if c not in below:
            below[c] = sorted(descendants(G, {c}) & Z)
        return below[c]

    neighbours = {v: sorted(set(succ[v]) | set(pred[v])) for v in G}
    colliders: dict[str, tuple[tuple[str, ...], str]] = {}
    confounding: tuple[str, ...] | None = None
    any_open: tuple[str, ...] | None = None

    def better(new: tuple[str, ...], old: tuple[str, ...] | None) -> bool:
        return old is None or (len(new), new) < (len(old), old)

    steps = 0
    for x in sorted(X):
        # A frame: the path so far, whether it is still directed (causal so
        # far), the colliders on it, whether it has a fixable variable, and the
        # index of the next neighbour to try.
        path = [x]
        on_path = {x}
        stack: list[tuple[int, bool, tuple[str, ...], bool]] = [(0, True, (), False)]
        while stack:
            steps += 1
            if steps > budget:
                return None
            i, directed, cols, has_fix = stack[-1]
            v = path[-1]
            nbrs = neighbours[v]
            if i >= len(nbrs):
                stack.pop()
                on_path.discard(path.pop())
                continue
            stack[-1] = (i + 1, directed, cols, has_fix)
            w = nbrs[i]
            if w in on_path or w in X:
                continue
            forward = w in succ[v]
            new_cols = cols
            if len(path) > 1:  # v is an inner node: is it blocked with w as its next?
                u = path[-2]
                collider = v in succ[u] and not forward
                if collider:
                    if v not in an_z:
                        continue
                    new_cols = cols + (v,)
                elif v in Z:
                    continue
            new_directed = directed and forward
            new_fix = has_fix or (len(path) > 1 and v in fixable)
            path.append(w)
            on_path.add(w)
            if w in Y and not new_directed:
                found = tuple(path)
                if better(found, any_open):
                    any_open = found
                if not new_cols:
                    if new_fix and better(found, confounding):
                        confounding = found
                else:
                    for c in new_cols:
                        for z in adjusted_below(c):
                            old = colliders.get(z)
                            if old is None or better(found, old[0]):
                                colliders[z] = (found, c)
            stack.append((0, new_directed, new_cols, new_fix))
    return OpenPathWitnesses(colliders, confounding, any_open)
