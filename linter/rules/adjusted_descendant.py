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
from ._causal_common import adjusted_names, analyses_with_facts, path_related
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    for analysis, facts in analyses_with_facts(ctx):
        if facts.adjust is None:
            continue
        for n in adjusted_names(analysis):
            if n.text not in facts.forbidden or n.text in facts.mediators:
                continue
            # say whose effect it is: an outcome first, else the nearest mediator
            outcome_path = facts.directed_path(facts.outcome, n.text)
            if outcome_path is not None:
                path, whose = outcome_path, f"the outcome `{outcome_path[0]}`"
            else:
                path = facts.directed_path(facts.mediators, n.text) or [n.text]
                whose = f"the mediator `{path[0]}`"
            yield ctx.finding(
                RULE,
                n.span,
                f"`{n.text}` is an effect of {whose} ({facts.spell(path)}); adjusting for it "
                "biases the estimate: remove it from `adjust:`",
                analysis=analysis,
                path=facts.json_path(path),
                related=path_related(ctx, facts, path),
            )


RULE = Rule(
    name="adjusted-descendant",
    severity="error",
    summary="A member of the adjustment set is an effect of a mediator or of the outcome.",
    scope="causal",
    check=check,
    doc=__doc__,
)
