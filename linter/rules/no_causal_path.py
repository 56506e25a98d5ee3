"""no-causal-path: the diagram says the exposure cannot affect the outcome.

With no directed path from any exposure to any outcome, the diagram asserts the
effect is zero. That is right for a negative-control analysis (say so with
`# dagward: allow no-causal-path` on the analysis line); otherwise an arrow is
missing.

Bad::

    age -> enrolled
    age -> sick_days
    analysis {  # expect: no-causal-path
      exposure: enrolled
      outcome: sick_days
      adjust: age
    }

Good::

    age -> enrolled
    age -> sick_days
    enrolled -> sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: age
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ._causal_common import per_analysis
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    return per_analysis(ctx, RULE)


RULE = Rule(
    name="no-causal-path",
    severity="warning",
    summary="There is no causal path from any exposure to any outcome.",
    scope="causal",
    check=check,
    doc=__doc__,
)
