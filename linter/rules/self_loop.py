"""self-loop: a variable is drawn as its own cause.

An arrow from a variable to itself (`a -> a`) has no meaning in a causal diagram:
a variable measured at two times is two variables (`bmi_2019 -> bmi_2020`).

Bad::

    bmi -> bmi  # expect: self-loop

Good::

    bmi_baseline -> bmi_followup
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    for arrow in ctx.diagram.arrows:
        if arrow.source_text == arrow.target_text:
            name = arrow.source_text
            yield ctx.finding(
                RULE,
                arrow.span,
                f"`{arrow.describe()}` makes `{name}` a cause of itself; a variable measured "
                f"twice is two variables (for example `{name}_before -> {name}_after`)",
            )


RULE = Rule(
    name="self-loop",
    severity="error",
    summary="An arrow from a variable to itself.",
    scope="structure",
    check=check,
    doc=__doc__,
)
