"""adjusted-mediator: the adjustment set holds a variable on a causal path.

A mediator carries part of the exposure's effect to the outcome. Adjusting for it
blocks that part, so the estimate is no longer the total effect (over-adjustment;
Schisterman, Cole & Platt 2009, "Overadjustment bias and unnecessary adjustment in
epidemiologic studies", Epidemiology 20:488-495).

Bad::

    enrolled -> fitness_12m -> sick_days
    age -> enrolled, sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: age, fitness_12m  # expect: adjusted-mediator
    }

Good::

    enrolled -> fitness_12m -> sick_days
    age -> enrolled, sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: age
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ._causal_common import per_adjusted_variable
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    return per_adjusted_variable(ctx, RULE)


RULE = Rule(
    name="adjusted-mediator",
    severity="error",
    summary="A member of the adjustment set lies on a causal path from exposure to outcome.",
    scope="causal",
    check=check,
    doc=__doc__,
)
