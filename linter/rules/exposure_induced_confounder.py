"""exposure-induced-confounder: natural effects are not identified.

Natural direct and indirect effects (Robins & Greenland 1992; Pearl 2001) ask
what the outcome would be if the mediator took the value it would have had
under another exposure. They are identified by adjustment when the adjustment
set closes three kinds of confounding: exposure-outcome, exposure-mediator and
mediator-outcome given the exposure (VanderWeele & Vansteelandt 2009,
"Conceptual issues concerning mediation, interventions and composition",
Statistics and Its Interface 2:457-468); the usual rules report each failure,
saying which of the three it is. A fourth condition cannot be met by any
adjustment: no confounder of the mediator and the outcome may itself be
affected by the exposure (the recanting witness of Avin, Shpitser & Pearl
2005, "Identifiability of path-specific effects", IJCAI). This rule fires
when one is.

The message names the variable and shows its paths from the exposure, to the
mediator and to the outcome. What can still be estimated: the controlled
direct effect (`effect: controlled-direct`, the mediator held fixed for
everyone), or the interventional (randomised) analogues of the natural
effects (VanderWeele, Vansteelandt & Robins 2014, "Effect decomposition in the
presence of an exposure-induced mediator-outcome confounder", Epidemiology
25:300-306, from memory).

Bad::

    tutoring -> confidence -> homework -> grade
    tutoring -> homework
    confidence -> grade
    tutoring -> grade
    analysis {
      exposure: tutoring
      outcome: grade
      effect: natural-direct
      mediator: homework  # expect: exposure-induced-confounder
      adjust: none
    }

Good::

    tutoring -> homework -> grade
    tutoring -> grade
    analysis {
      exposure: tutoring
      outcome: grade
      effect: natural-direct
      mediator: homework
      adjust: none
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ._causal_common import per_listed_name
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    return per_listed_name(ctx, RULE, "mediator", attribute="source")


RULE = Rule(
    name="exposure-induced-confounder",
    severity="error",
    summary="A mediator-outcome confounder is affected by the exposure.",
    scope="causal",
    check=check,
    doc=__doc__,
)
