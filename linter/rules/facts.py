"""Causal facts about one analysis, computed once (lazily) and shared by the rules.

This is the only place the causal rules call `linter.causal`; the rules turn the
facts into findings. Nothing here enumerates paths: every path shown is a witness
found by a linear search.
"""

from __future__ import annotations

from collections import deque
from functools import cached_property

from ..causal import (
    adjustment_exists,
    canonical_adjustment,
    collider_bias_paths,
    confounding_path,
    forbidden,
    front_door_set,
    instrument_like,
    is_hidden,
    is_valid_adjustment,
    minimal_adjustment_sets,
    open_noncausal_path,
    proper_causal_nodes,
)
from ..model import Analysis, Arrow, Diagram

# How many minimal sets to look at when suggesting the ones closest to the declared
# set: each costs a linear pass, so fewer on very large diagrams.
SUGGESTION_POOL = 20
SUGGESTION_POOL_LARGE = 3
LARGE_DIAGRAM = 5_000  # variables


class AnalysisFacts:
    def __init__(self, diagram: Diagram, analysis: Analysis):
        self.diagram = diagram
        self.analysis = analysis
        self.graph = diagram.graph
        self.exposure = set(analysis.exposure_set)
        self.outcome = set(analysis.outcome_set)
        declared = analysis.adjust_set
        self.adjust: set[str] | None = None if declared is None else set(declared)
        self.measured = set(diagram.measured)

    # -- sets ---------------------------------------------------------------------
    @cached_property
    def causal_nodes(self) -> set[str]:
        return proper_causal_nodes(self.graph, self.exposure, self.outcome)

    @cached_property
    def mediators(self) -> set[str]:
        return self.causal_nodes - self.outcome

    @cached_property
    def forbidden(self) -> set[str]:
        return forbidden(self.graph, self.exposure, self.outcome)

    @cached_property
    def has_causal_path(self) -> bool:
        return bool(self.causal_nodes & self.outcome)

    @cached_property
    def identifiable(self) -> bool:
        return adjustment_exists(self.graph, self.exposure, self.outcome, self.measured)

    @cached_property
    def declared_valid(self) -> bool | None:
        if self.adjust is None:
            return None
        return self.adjust <= self.measured and is_valid_adjustment(
            self.graph, self.exposure, self.outcome, self.adjust
        )

    @cached_property
    def minimal_sets(self) -> list[frozenset[str]]:
        """Up to SUGGESTION_POOL minimal valid sets (lazy enumeration, capped)."""
        if not self.identifiable:
            return []
        pool = SUGGESTION_POOL if len(self.graph) < LARGE_DIAGRAM else SUGGESTION_POOL_LARGE
        return list(
            minimal_adjustment_sets(self.graph, self.exposure, self.outcome, self.measured, pool)
        )

    def suggestions(self, limit: int = 3) -> tuple[tuple[str, ...], ...]:
        """Minimal valid sets, the ones closest to the declared set first."""
        declared = self.adjust or set()
        ranked = sorted(
            self.minimal_sets,
            key=lambda s: (len(s ^ declared), len(s), sorted(s)),
        )
        return tuple(tuple(sorted(s)) for s in ranked[:limit])

    # -- witness paths ------------------------------------------------------------
    @cached_property
    def declared_blocks_everything(self) -> bool:
        """True when the declared set leaves no proper non-causal path open.

        One validity test (linear) settles it for a valid set, so the per-variable
        witness searches below are skipped for the usual, correct analysis.
        """
        return bool(self.adjust is not None and self.declared_valid)

    @cached_property
    def confounding_path(self) -> list[str] | None:
        if self.declared_blocks_everything:
            return None
        return confounding_path(self.graph, self.exposure, self.outcome, self.adjust or set())

    def collider_path(self, z: str) -> tuple[list[str], str] | None:
        if self.declared_blocks_everything:
            return None
        return self.collider_paths[z]

    @cached_property
    def collider_paths(self) -> dict[str, tuple[list[str], str] | None]:
        """collider_bias_path for every adjusted variable at once: the searches that
        do not depend on the variable run once per analysis, not once per variable."""
        adjust = self.adjust or set()
        return collider_bias_paths(self.graph, self.exposure, self.outcome, adjust, sorted(adjust))

    def is_instrument_like(self, z: str) -> bool:
        return instrument_like(self.graph, self.exposure, self.outcome, self.adjust or set(), z)

    @cached_property
    def unblockable_path(self) -> list[str] | None:
        """A proper non-causal path left open by the canonical set (so by every measured set)."""
        canonical = canonical_adjustment(self.graph, self.exposure, self.outcome, self.measured)
        return open_noncausal_path(self.graph, self.exposure, self.outcome, canonical)

    @cached_property
    def front_door(self) -> frozenset[str] | None:
        return front_door_set(self.graph, self.exposure, self.outcome, self.measured)

    def directed_path(self, sources: set[str], target: str) -> list[str] | None:
        """A shortest directed path from a source to target (iterative BFS)."""
        succ = self.graph._succ
        parent: dict[str, str | None] = {s: None for s in sources}
        queue = deque(sorted(sources))
        while queue:
            node = queue.popleft()
            if node == target:
                path = [node]
                while parent[path[-1]] is not None:
                    path.append(parent[path[-1]])  # type: ignore[arg-type]
                return path[::-1]
            for nxt in succ[node]:
                if nxt not in parent:
                    parent[nxt] = node
                    queue.append(nxt)
        return None

    def causal_path_through(self, m: str) -> list[str] | None:
        first = self.directed_path(self.exposure, m)
        rest = self.directed_path({m}, next(iter(sorted(self.outcome & self._reachable_from(m)))))
        if first is None or rest is None:
            return None
        return first + rest[1:]

    def _reachable_from(self, m: str) -> set[str]:
        from ..causal import descendants

        return descendants(self.graph, {m})

    # -- presenting paths ---------------------------------------------------------
    def spell(self, path: list[str]) -> str:
        """`a <- b -> c`, with a hidden `<->` parent written `a <-> c`."""
        return spell_path(self.graph, path)

    def json_path(self, path: list[str]) -> tuple[str, ...]:
        return tuple("<->" if is_hidden(self.graph, n) else n for n in path)

    def arrows_on(self, path: list[str]) -> list[Arrow]:
        """The arrow statements behind the steps of a path, in path order."""
        index = self.arrow_index
        out: list[Arrow] = []
        i = 0
        while i < len(path) - 1:
            a, b = path[i], path[i + 1]
            if is_hidden(self.graph, b) and i + 2 < len(path):
                arrow = index.get(("<->", *sorted((a, path[i + 2]))))
                i += 2
            elif is_hidden(self.graph, a):
                i += 1
                continue
            else:
                arrow = index.get(("->", a, b)) or index.get(("->", b, a))
                i += 1
            if arrow is not None and arrow not in out:
                out.append(arrow)
        return out

    @cached_property
    def arrow_index(self) -> dict[tuple, Arrow]:
        index: dict[tuple, Arrow] = {}
        for arrow in self.diagram.arrows:
            a, b = arrow.source.text, arrow.target.text
            key = ("<->", *sorted((a, b))) if arrow.bidirected else ("->", a, b)
            index.setdefault(key, arrow)
        return index


def spell_path(graph, path: list[str]) -> str:
    succ = graph._succ
    parts = [path[0]]
    i = 0
    while i < len(path) - 1:
        a, b = path[i], path[i + 1]
        if is_hidden(graph, b) and i + 2 < len(path):
            parts.append(f" <-> {path[i + 2]}")
            i += 2
            continue
        parts.append(f" -> {b}" if b in succ[a] else f" <- {b}")
        i += 1
    return "".join(parts)
