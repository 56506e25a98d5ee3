"""instrument-adjusted: the adjustment set holds a variable that acts only through the exposure.

A variable that affects the outcome only through the exposure (an instrument-like
variable) does not confound. Adjusting for it removes useful variation in the
exposure, adds variance, and can amplify any bias from unmeasured confounding
(Pearl 2010, "On a class of bias-amplifying variables that endanger effect
estimates", UAI; Myers et al. 2011, Am J Epidemiol 174:1213-1222).

Bad::

    subsidy -> amendment -> wheat_yield
    soil_ph -> amendment, wheat_yield
    analysis {
      exposure: amendment
      outcome: wheat_yield
      adjust: soil_ph, subsidy  # expect: instrument-adjusted
    }

Good::

    subsidy -> amendment -> wheat_yield
    soil_ph -> amendment, wheat_yield
    analysis {
      exposure: amendment
      outcome: wheat_yield
      adjust: soil_ph
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
    name="instrument-adjusted",
    severity="warning",
    summary="A member of the adjustment set affects the outcome only through the exposure.",
    scope="causal",
    check=check,
    doc=__doc__,
)
