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
from ._causal_common import adjusted_names, analyses_with_facts, path_related
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    for analysis, facts in analyses_with_facts(ctx):
        if facts.adjust is None:
            continue
        for n in adjusted_names(analysis):
            if n.text not in facts.mediators:
                continue
            path = facts.causal_path_through(n.text)
            shown = f": it lies on the causal path {facts.spell(path)}" if path else ""
            yield ctx.finding(
                RULE,
                n.span,
                f"adjusting for the mediator `{n.text}` blocks part of the effect{shown}; "
                "remove it from `adjust:` to estimate the total effect",
                analysis=analysis,
                path=facts.json_path(path) if path else None,
                related=path_related(ctx, facts, path) if path else (),
            )


RULE = Rule(
    name="adjusted-mediator",
    severity="error",
    summary="A member of the adjustment set lies on a causal path from exposure to outcome.",
    scope="causal",
    check=check,
    doc=__doc__,
)
