"""adjusted-unmeasured: the adjustment set names a variable nobody measured.

An `unmeasured` variable is not in the data, so the analysis code cannot adjust
for it; the declared set is not the set the analysis uses.

Bad::

    unmeasured motivation
    motivation -> enrolled, sick_days
    enrolled -> sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: motivation  # expect: adjusted-unmeasured
    }

Good::

    motivation -> enrolled, sick_days
    enrolled -> sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: motivation
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ._causal_common import adjusted_names, analyses_with_verdicts, problem_finding
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    unmeasured = ctx.diagram.unmeasured
    for analysis, verdict in analyses_with_verdicts(ctx):
        problems = {p.variable: p for p in verdict.problems_of(RULE.name)}
        for n in adjusted_names(analysis):
            problem = problems.get(n.text)
            if problem is None:
                continue
            declared = ctx.related(unmeasured[n.text].span, f"`{n.text}` declared unmeasured")
            yield problem_finding(ctx, RULE, n.span, analysis, verdict, problem, (declared,))


RULE = Rule(
    name="adjusted-unmeasured",
    severity="error",
    summary="The adjustment set names an unmeasured variable.",
    scope="causal",
    check=check,
    doc=__doc__,
)
