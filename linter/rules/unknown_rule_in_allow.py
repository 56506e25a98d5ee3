"""unknown-rule-in-allow: an allow comment names no rule.

`# dagward: allow RULE[, RULE...]` silences the named rules on its line. A name
that is not a rule silences nothing, so a typo would leave the finding in place
while looking deliberate.

Bad::

    age -> sick_days
    analysis {  # dagward: allow no-causal-paths  # expect: unknown-rule-in-allow
      exposure: age
      outcome: sick_days
    }

Good::

    age -> sick_days
    analysis {  # dagward: allow no-causal-path
      exposure: age
      outcome: sick_days
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..suppress import allow_comments
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    from ..wording import did_you_mean as suggestion
    from . import RULES_BY_NAME

    known = sorted(RULES_BY_NAME)
    for allow in allow_comments(ctx.diagram):
        if allow.malformed:
            yield ctx.finding(
                RULE,
                allow.comment.span,
                "a `dagward:` comment must read `# dagward: allow RULE[, RULE...]`",
            )
        for name in allow.rules:
            if name.text not in RULES_BY_NAME:
                yield ctx.finding(
                    RULE,
                    name.span,
                    f"`{name.text}` is not a dagward rule, so this comment silences nothing"
                    f"{suggestion(name.text, known)}",
                )


RULE = Rule(
    name="unknown-rule-in-allow",
    severity="warning",
    summary="An allow comment names no rule.",
    scope="structure",
    check=check,
    doc=__doc__,
)
