"""arrow-without-reason: an arrow line has no comment giving its reason (opt-in).

Every arrow is a claim about the world. A short comment at the end of the line
says why the claim is made (a study, a mechanism, expert judgement), so that a
reviewer can challenge it. Off by default; turn it on with
`enable = ["arrow-without-reason"]` or `--enable arrow-without-reason`.

Bad::

    # expect-next-line: arrow-without-reason
    age -> sick_days

Good::

    age -> sick_days  # older staff take more sick leave (HR records 2019-2023)
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..model import ArrowStatement
from .base import Context, Rule


def _what(s: ArrowStatement) -> str:
    if len(s.arrows) == 1:
        return f"`{s.arrows[0].describe()}` has"
    return f"this line's {len(s.arrows)} arrows (`{s.arrows[0].describe()}`, ...) have"


def check(ctx: Context) -> Iterator[Finding]:
    reasons = ctx.diagram.trailing_comments
    for s in ctx.diagram.statements:
        if not isinstance(s, ArrowStatement):
            continue
        comment = reasons.get(s.span.end_line)
        # an allow comment is not a reason
        if comment is None or comment.body.startswith("dagward:"):
            yield ctx.finding(
                RULE,
                s.arrows[0].span if len(s.arrows) == 1 else s.span,
                f"{_what(s)} no reason: add a comment at the end of the line saying why",
            )


RULE = Rule(
    name="arrow-without-reason",
    severity="info",
    summary="An arrow line has no trailing comment giving a reason.",
    scope="structure",
    check=check,
    doc=__doc__,
    enabled_by_default=False,
)
