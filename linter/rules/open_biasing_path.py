"""open-biasing-path: a confounding path is left open by the adjustment set.

A non-causal path from exposure to outcome without colliders (a back-door path
through a common cause, say) carries association that is not effect. The
adjustment set must hold a variable on it. The message shows one such path and
lists up to three minimal valid adjustment sets, the ones closest to the declared
set first. Not reported when no measured set can be enough (`unmeasured-confounding`).

Bad::

    age -> enrolled, sick_days
    enrolled -> sick_days
    analysis {
      exposure: enrolled
      outcome: sick_days
      adjust: none  # expect: open-biasing-path
    }

Good::

    age -> enrolled, sick_days
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
from ._causal_common import adjust_key_span, per_analysis
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    return per_analysis(ctx, RULE, adjust_key_span)


RULE = Rule(
    name="open-biasing-path",
    severity="error",
    summary="A confounding path from exposure to outcome has no variable in the adjustment set.",
    scope="causal",
    check=check,
    doc=__doc__,
)
