"""duplicate-arrow: the same arrow is stated twice.

Harmless for the analysis, but usually a sign of a copy-paste slip or of two
people editing the diagram; keep one statement (and its reason).

Bad::

    age -> sick_days
    age -> sick_days  # expect: duplicate-arrow

Good::

    age -> sick_days
"""

from __future__ import annotations

from collections.abc import Iterator

from ..causal.indexed import indexed
from ..findings import Finding
from ..model import Arrow
from .base import Context, Rule


def _all_distinct(diagram) -> bool:
    """No arrow is stated twice: as many `->` statements as distinct arrows
    between variables in the causal graph `check` builds anyway, and no two
    `<->` statements of one pair (few, so counted by their pairs). A diagram
    without repeats (nearly every one) then needs no key per arrow."""
    graph = diagram.compact_graph
    ix, hidden_from = indexed(graph), graph.hidden_from
    pairs = [frozenset((a.source_text, a.target_text)) for a in diagram.arrows if a.bidirected]
    directed = len(diagram.arrows) - len(pairs)
    distinct = sum(len(ix.succ[v]) for v in range(hidden_from))
    return directed == distinct and len(set(pairs)) == len(pairs)


def check(ctx: Context) -> Iterator[Finding]:
    if _all_distinct(ctx.diagram):
        return
    seen: dict[tuple, Arrow] = {}
    for arrow in ctx.diagram.arrows:
        a, b = arrow.source_text, arrow.target_text
        key = ("<->", *sorted((a, b))) if arrow.bidirected else ("->", a, b)
        first = seen.get(key)
        if first is None:
            seen[key] = arrow
            continue
        yield ctx.finding(
            RULE,
            arrow.span,
            f"the arrow `{arrow.describe()}` is already stated on line {first.span.line}; "
            "remove one of them",
            related=(ctx.related(first.span, f"first statement of {first.describe()}"),),
        )


RULE = Rule(
    name="duplicate-arrow",
    severity="warning",
    summary="The same arrow is stated twice.",
    scope="structure",
    check=check,
    doc=__doc__,
)
