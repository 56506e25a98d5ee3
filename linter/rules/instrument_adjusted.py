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
from ._causal_common import adjusted_names, analyses_with_facts
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    for analysis, facts in analyses_with_facts(ctx):
        if facts.adjust is None:
            continue
        exposures = ", ".join(f"`{x}`" for x in sorted(facts.exposure))
        for n in adjusted_names(analysis):
            if n.text in facts.forbidden or not facts.is_instrument_like(n.text):
                continue
            yield ctx.finding(
                RULE,
                n.span,
                f"`{n.text}` affects the outcome only through {exposures}: adjusting for it "
                "adds variance and can amplify bias from unmeasured confounding; consider "
                "removing it from `adjust:`",
                analysis=analysis,
            )


RULE = Rule(
    name="instrument-adjusted",
    severity="warning",
    summary="A member of the adjustment set affects the outcome only through the exposure.",
    scope="causal",
    check=check,
    doc=__doc__,
)
