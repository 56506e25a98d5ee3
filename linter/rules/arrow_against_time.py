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


def check(ctx: Context) -> Iterator[Finding]:
    diagram = ctx.diagram
    order = {head.text: i for i, (head, _members) in enumerate(diagram.periods)}
    period_of: dict[str, tuple[str, Name]] = {}
    for s in diagram.statements:
        if not isinstance(s, PeriodStatement):
            continue
        for n in s.names:
            earlier = period_of.get(n.text)
            if earlier is None:
                period_of[n.text] = (s.period.text, n)
                continue
            yield ctx.finding(
                RULE,
                n.span,
                f"`{n.text}` is already in period `{earlier[0]}` (line {earlier[1].span.line}); "
                "a variable belongs to one period",
                related=(ctx.related(earlier[1].span, f"`{n.text}` in period `{earlier[0]}`"),),
            )
    for arrow in diagram.arrows:
        if arrow.bidirected:
            continue
        src = period_of.get(arrow.source_text)
        dst = period_of.get(arrow.target_text)
        if src is None or dst is None or order[src[0]] <= order[dst[0]]:
            continue
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
