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
from ._causal_common import adjusted_names, analyses_with_facts, path_related
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    for analysis, facts in analyses_with_facts(ctx):
        if facts.adjust is None:
            continue
        for n in adjusted_names(analysis):
            found = facts.collider_path(n.text)
            if found is None:
                continue
            path, collider = found
            role = (
                f"`{n.text}` is a collider on it"
                if collider == n.text
                else f"`{n.text}` is an effect of the collider `{collider}` on it"
            )
            yield ctx.finding(
                RULE,
                n.span,
                f"adjusting for `{n.text}` opens {facts.spell(path)} ({role}); remove it from "
                "`adjust:`, or also adjust for a non-collider on that path",
                analysis=analysis,
                path=facts.json_path(path),
                related=path_related(ctx, facts, path),
            )


RULE = Rule(
    name="collider-adjusted",
    severity="error",
    summary="Adjusting for a collider, or an effect of one, opens a non-causal path.",
    scope="causal",
    check=check,
    doc=__doc__,
)
