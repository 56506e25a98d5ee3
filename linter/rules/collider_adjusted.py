"""collider-adjusted: adjusting for a collider (or its effect) opens a biasing path.

A collider on a path blocks it, until the analysis adjusts for the collider or
for one of its effects: then the path opens and the two causes of the collider
become associated (selection or collider-stratification bias; Greenland, Pearl &
Robins 1999, "Causal diagrams for epidemiologic research", Epidemiology 10:37-48;
Hernandez-Diaz, Schisterman & Hernan 2006, "The birth weight 'paradox' uncovered?",
Am J Epidemiol 164:1115-1120). The message shows the path that the adjustment opens.

Bad::

    unmeasured motivation, health_literacy
    motivation -> enrolled
    motivation -> survey_response
    health_literacy -> survey_response
    health_literacy -> sick_days
    enrolled -> sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: survey_response  # expect: collider-adjusted
    }

Good::

    unmeasured motivation, health_literacy
    motivation -> enrolled
    motivation -> survey_response
    health_literacy -> survey_response
    health_literacy -> sick_days
    enrolled -> sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: none
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
    name="collider-adjusted",
    severity="error",
    summary="Adjusting for a collider, or an effect of one, opens a non-causal path.",
    scope="causal",
    check=check,
    doc=__doc__,
)
