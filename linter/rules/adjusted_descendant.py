"""adjusted-descendant: the adjustment set holds an effect of a mediator or of the outcome.

Descendants of the outcome or of a mediator are *forbidden* in an adjustment set
(the adjustment criterion, Shpitser, VanderWeele & Robins 2010): adjusting for
them conditions on a consequence of the effect being estimated and biases it,
even when no path looks open.

Bad::

    enrolled -> sick_days -> readmission
    age -> enrolled, sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: age, readmission  # expect: adjusted-descendant
    }

Good::

    enrolled -> sick_days -> readmission
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
    name="adjusted-descendant",
    severity="error",
    summary="A member of the adjustment set is an effect of a mediator or of the outcome.",
    scope="causal",
    check=check,
    doc=__doc__,
)
