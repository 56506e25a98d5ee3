"""variable-outside-periods: the file orders time with `period`, but a measured variable with arrows is in no period.

Once a diagram states periods, `arrow-against-time` checks each arrow against
them. A variable left out of every period escapes that check: an arrow from
follow-up into it, or from it into baseline, passes unnoticed. The usual cause
is a misspelt name in a `period` list (then the misspelt name is also reported
as a variable without arrows). Put the variable in its period.

Bad::

    period baseline: age
    period followup: sick_days
    age -> sick_days
    age -> enrolled  # expect: variable-outside-periods
    enrolled -> sick_days

Good::

    period baseline: age
    period programme: enrolled
    period followup: sick_days
    age -> sick_days
    age -> enrolled
    enrolled -> sick_days
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..wording import Speller, closest_name
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    diagram = ctx.diagram
    if not diagram.periods:
        return
    in_period = {text for _head, members in diagram.periods for text in members.texts}
    with_arrows: set[str] = set()
    for arrow in diagram.arrows:
        with_arrows.add(arrow.source_text)
        with_arrows.add(arrow.target_text)
    # a period name that no variable has is the likely misspelling
    strays = sorted(in_period - with_arrows)
    unmeasured = diagram.unmeasured
    variables = diagram.variables  # a first occurrence is built only when asked for
    outside = [
        (name, variables[name])
        for name in variables
        if name not in in_period and name in with_arrows and name not in unmeasured
    ]
    speller = Speller(strays, queries=len(outside))
    for name, first in outside:
        stray = closest_name(name, speller)
        hint = f" (`{stray}` in a period list may be a misspelling of it)" if stray else ""
        yield ctx.finding(
            RULE,
            first.span,
            f"`{name}` is in no period, so the time order of its arrows is not checked; "
            f"add it to its period{hint}",
        )


RULE = Rule(
    name="variable-outside-periods",
    severity="warning",
    summary="A measured variable with arrows belongs to no period, so its arrows escape the time check.",
    scope="structure",
    check=check,
    doc=__doc__,
)
