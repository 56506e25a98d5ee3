"""unknown-variable: a name that the diagram does not have.

Names used in an analysis (`exposure:`, `outcome:`, `adjust:`) and the targets
of `label` statements must be variables of the diagram, that is, appear in an
arrow, an `unmeasured` or a `period` statement. The message suggests the closest
existing name. (A `label` alone does not create a variable here, so that a
misspelt label is caught rather than silently adding a new, isolated variable.)

Bad::

    age -> sick_days
    analysis {
      exposure: Age  # expect: unknown-variable
      outcome: sick_days
    }

Good::

    age -> sick_days
    analysis {
      exposure: age
      outcome: sick_days
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..model import LabelStatement
from ..wording import Speller, did_you_mean
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    known = ctx.diagram.variables
    unknown = sum(s.target.text not in known for s in ctx.diagram.statements
                  if isinstance(s, LabelStatement))  # fmt: skip
    unknown += sum(n.text not in known for a in ctx.diagram.analyses
                   for entry in a.entries for n in entry.names)  # fmt: skip
    if not unknown:
        return
    hints = Speller(known, queries=unknown)
    for s in ctx.diagram.statements:
        if isinstance(s, LabelStatement) and s.target.text not in known:
            yield ctx.finding(
                RULE,
                s.target.span,
                f"`label` names `{s.target.text}`, which no arrow, `unmeasured` or `period` "
                f"statement mentions{did_you_mean(s.target.text, hints)}",
            )
    for analysis in ctx.diagram.analyses:
        for entry in analysis.entries:
            for n in entry.names:
                if n.text not in known:
                    yield ctx.finding(
                        RULE,
                        n.span,
                        f"`{n.text}` in `{entry.key}:` of analysis `{analysis.name}` is not a "
                        f"variable of the diagram{did_you_mean(n.text, hints)}",
                        analysis=analysis,
                    )


RULE = Rule(
    name="unknown-variable",
    severity="error",
    summary="An analysis or label names a variable the diagram does not have.",
    scope="structure",
    check=check,
    doc=__doc__,
)
