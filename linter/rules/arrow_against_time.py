"""arrow-against-time: an arrow runs backwards in time, or a variable is in two periods.

`period` statements give the time order (periods are ordered by their first
appearance). A cause cannot come after its effect, so an arrow from a variable of
a later period into one of an earlier period is an error; so is a variable put
in two periods.

Bad::

    period baseline: fitness_base
    period followup: sick_days
    sick_days -> fitness_base  # expect: arrow-against-time

Good::

    period baseline: fitness_base
    period followup: sick_days
    fitness_base -> sick_days
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..model import Name, PeriodStatement
from .base import Context, Rule


def _first(statements: list[PeriodStatement], at: int) -> tuple[str, Name]:
    """(period, Name) of the place packed in ``at``."""
    s = statements[at >> 24]
    return s.period.text, s.names[at & 0xFFFFFF]


def check(ctx: Context) -> Iterator[Finding]:
    diagram = ctx.diagram
    order = {head.text: i for i, (head, _members) in enumerate(diagram.periods)}
    # Each variable's first period statement and place in it, packed in one
    # number (a Name a variable would cost about 200 bytes): statement << 24 | place.
    statements = [s for s in diagram.statements if isinstance(s, PeriodStatement)]
    packed: dict[str, int] = {}
    for k, s in enumerate(statements):
        for i, text in enumerate(s.names.texts):
            at = packed.get(text)
            if at is None:
                packed[text] = k << 24 | i
                continue
            n = s.names[i]
            earlier = _first(statements, at)
            yield ctx.finding(
                RULE,
                n.span,
                f"`{n.text}` is already in period `{earlier[0]}` (line {earlier[1].span.line}); "
                "a variable belongs to one period",
                related=(ctx.related(earlier[1].span, f"`{n.text}` in period `{earlier[0]}`"),),
            )
    rank = [order[s.period.text] for s in statements]  # each statement's period's place
    for arrow in diagram.arrows:
        if arrow.bidirected:
            continue
        at_src = packed.get(arrow.source_text)
        at_dst = packed.get(arrow.target_text)
        if at_src is None or at_dst is None:
            continue
        if rank[at_src >> 24] <= rank[at_dst >> 24]:
            continue
        src, dst = _first(statements, at_src), _first(statements, at_dst)
        yield ctx.finding(
            RULE,
            arrow.span,
            f"`{arrow.describe()}` runs against time: `{arrow.source_text}` is in period "
            f"`{src[0]}`, which comes after `{dst[0]}` of `{arrow.target_text}`; reverse the "
            "arrow or fix the periods",
            related=(
                ctx.related(src[1].span, f"`{arrow.source_text}` in period `{src[0]}`"),
                ctx.related(dst[1].span, f"`{arrow.target_text}` in period `{dst[0]}`"),
            ),
        )


RULE = Rule(
    name="arrow-against-time",
    severity="error",
    summary="An arrow runs from a later period into an earlier one.",
    scope="structure",
    check=check,
    doc=__doc__,
)
