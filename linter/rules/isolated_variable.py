"""isolated-variable: a variable with no arrows at all.

A variable that neither causes nor is caused by anything in the diagram plays no
part in any analysis. Either an arrow is missing or the variable can go.

Bad::

    unmeasured grit  # expect: isolated-variable
    age -> sick_days

A misspelt name in a `period` or `unmeasured` list is the usual cause; the
message then names the variable it probably meant.

Good::

    unmeasured grit
    grit -> sick_days
    age -> sick_days
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..wording import Speller, did_you_mean
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    connected: set[str] = set()
    for arrow in ctx.diagram.arrows:
        connected.add(arrow.source_text)
        connected.add(arrow.target_text)
    # a variable with arrows and a close spelling is what a misspelt name meant
    variables = ctx.diagram.variables  # a first occurrence is built only when asked for
    isolated = [(name, variables[name]) for name in variables if name not in connected]
    if not isolated:
        return
    candidates = Speller(sorted(connected), queries=len(isolated))
    for name, first in isolated:
        yield ctx.finding(
            RULE,
            first.span,
            f"`{name}` has no arrows: add the arrows that connect it, or remove it"
            f"{did_you_mean(name, candidates)}",
        )


RULE = Rule(
    name="isolated-variable",
    severity="warning",
    summary="A variable has no arrows at all.",
    scope="structure",
    check=check,
    doc=__doc__,
)
