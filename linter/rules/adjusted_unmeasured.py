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
from ._causal_common import adjusted_names
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    unmeasured = ctx.diagram.unmeasured
    for analysis in ctx.diagram.analyses:
        for n in adjusted_names(analysis):
            if n.text in unmeasured:
                yield ctx.finding(
                    RULE,
                    n.span,
                    f"`{n.text}` is declared `unmeasured`, so the analysis cannot adjust for it; "
                    "remove it from `adjust:` or measure it and drop it from `unmeasured`",
                    analysis=analysis,
                    related=(ctx.related(unmeasured[n.text].span, f"`{n.text}` declared unmeasured"),),
                )


RULE = Rule(
    name="adjusted-unmeasured",
    severity="error",
    summary="The adjustment set names an unmeasured variable.",
    scope="causal",
    check=check,
    doc=__doc__,
)
