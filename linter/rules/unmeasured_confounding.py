"""unmeasured-confounding: no set of measured variables can be enough.

Some non-causal path from exposure to outcome can only be blocked by unmeasured
variables (or only through variables that must not be adjusted for), so the
effect cannot be identified by covariate adjustment (van der Zander, Liskiewicz &
Textor 2019: a valid set exists iff the canonical one is valid). The message shows
such a path and says when Pearl's front-door criterion (Pearl 1995, "Causal
diagrams for empirical research", Biometrika 82:669-688) holds for a measured set.
Measure a variable on the path, or use a design that does not rely on adjustment.

Bad::

    unmeasured motivation
    motivation -> enrolled, sick_days
    enrolled -> sick_days
    analysis {  # expect: unmeasured-confounding
      exposure: enrolled
      outcome: sick_days
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
from ._causal_common import per_analysis
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    return per_analysis(ctx, RULE)


RULE = Rule(
    name="unmeasured-confounding",
    severity="warning",
    summary="No valid adjustment set exists among the measured variables.",
    scope="causal",
    check=check,
    doc=__doc__,
)
