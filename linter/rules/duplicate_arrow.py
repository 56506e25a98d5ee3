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

from ..findings import Finding
from ..model import Arrow
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
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
