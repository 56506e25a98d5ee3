"""needs-g-methods: a joint or time-varying exposure that regression cannot handle.

An analysis with several exposures asks for their joint effect; when they come
in stages (a treatment sequence over periods, or a controlled direct effect,
whose exposures are the exposure and the mediators held fixed), a variable
measured between the stages can be both affected by an earlier exposure and a
cause of a later one and of the outcome (treatment-confounder feedback; Robins
1986, "A new approach to causal inference in mortality studies with a
sustained exposure period", Mathematical Modelling 7:1393-1512). Adjusting for
it in one regression blocks part of the earlier exposure's effect or opens a
path through it; leaving it out leaves the later exposure confounded. So no
single adjustment set is valid.

This rule fires when no single valid set exists but the sequential back-door
criterion (Pearl & Robins 1995, "Probabilistic evaluation of sequential plans
from causal models with hidden variables", UAI, from memory) holds with
measured covariates for each stage: the effect is identified, by the g-formula,
inverse probability weighting of a marginal structural model (Robins, Hernan &
Brumback 2000, "Marginal structural models and causal inference in
epidemiology", Epidemiology 11:550-560) or g-estimation of a structural nested
model. The message names the feedback variable and lists the covariates for
each stage. The stages follow the periods when every exposure has one, else
the order the diagram implies. It stands in for `unmeasured-confounding`.

Bad::

    period start: fatigue_0
    period visit1: dose_1
    period between: fatigue_1
    period visit2: dose_2
    period end: recovery
    unmeasured frailty
    fatigue_0 -> dose_1, fatigue_1
    dose_1 -> fatigue_1, dose_2, recovery
    fatigue_1 -> dose_2
    frailty -> fatigue_1, recovery
    dose_2 -> recovery
    analysis {  # expect: needs-g-methods
      exposure: dose_1, dose_2
      outcome: recovery
    }

Good::

    period start: fatigue_0
    period visit1: dose_1
    period end: recovery
    fatigue_0 -> dose_1, recovery
    dose_1 -> recovery
    analysis {
      exposure: dose_1
      outcome: recovery
      adjust: fatigue_0
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
    name="needs-g-methods",
    severity="warning",
    summary="Only g-methods, not one regression, can estimate this joint effect.",
    scope="causal",
    check=check,
    doc=__doc__,
)
