"""role-conflict: a variable has two roles in one analysis, or is listed twice.

A variable cannot be both exposure and outcome, an exposure or outcome cannot be
in the adjustment set, and a name is listed once per key. The finding is at the
second occurrence.

Bad::

    age -> sick_days
    analysis {
      exposure: age
      outcome: sick_days
      adjust: age  # expect: role-conflict
    }

Good::

    age -> sick_days
    analysis {
      exposure: age
      outcome: sick_days
      adjust: none
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..model import Name
from .base import Context, Rule

_ROLE_WORD = {"exposure": "an exposure", "outcome": "an outcome", "adjust": "adjusted for"}


def check(ctx: Context) -> Iterator[Finding]:
    for analysis in ctx.diagram.analyses:
        first_role: dict[str, tuple[str, Name]] = {}
        for entry in analysis.entries:
            if entry.is_none and any(
                e.key == "adjust" and e.names for e in analysis.entries
            ):
                yield ctx.finding(
                    RULE,
                    entry.span,
                    f"analysis `{analysis.name}` says `adjust: none` and also lists "
                    "variables to adjust for; keep one",
                    analysis=analysis,
                )
            for n in entry.names:
                earlier = first_role.get(n.text)
                if earlier is None:
                    first_role[n.text] = (entry.key, n)
                    continue
                role, first = earlier
                if role == entry.key:
                    msg = f"`{n.text}` is listed twice in `{entry.key}:`; list it once"
                else:
                    msg = (
                        f"`{n.text}` is {_ROLE_WORD[role]} and also {_ROLE_WORD[entry.key]} "
                        f"in analysis `{analysis.name}`; a variable has one role per analysis"
                    )
                yield ctx.finding(
                    RULE,
                    n.span,
                    msg,
                    analysis=analysis,
                    related=(ctx.related(first.span, f"first use of `{n.text}`"),),
                )


RULE = Rule(
    name="role-conflict",
    severity="error",
    summary="A variable is both exposure and outcome, adjusted while exposure or outcome, "
    "or listed twice.",
    scope="structure",
    check=check,
    doc=__doc__,
)
