"""selection-bias: the data are restricted on a variable that biases the estimate.

`restricted: r` says the data hold only one level of `r` (only hospitalised
patients, only responders, only members). Every estimate from such data is
conditioned on `r`, so dagward judges the adjustment set together with the
restriction. The restriction biases the estimate when `r` is a common effect
(a collider), or an effect of one, on a non-causal path between exposure and
outcome: restricting opens that path (collider stratification; Berkson-type
bias when both the exposure and the outcome bring people into the data;
index-event bias when the data start at an event that both cause). It also
biases it when `r` lies on a causal path (part of the effect is held fixed) or
is an effect of the outcome or of a mediator. Failures caused by the adjusted
variables stay with the usual rules.

The message shows the path, names the sets that repair it when adjusting
(with the restriction) can, says whether the effect in the whole population
is still recoverable from the restricted data (the outcome independent of the
restriction given the exposure and some valid set; Bareinboim, Tian & Pearl
2014, "Recovering from selection bias in causal and statistical inference",
AAAI, from memory), and for a restriction that depends on the outcome alone,
as in case-control sampling, says whether the odds ratio survives
(Bareinboim & Pearl 2012, "Controlling selection bias in causal inference",
AISTATS, from memory). The structural account of selection bias is Hernan,
Hernandez-Diaz & Robins (2004), "A structural approach to selection bias",
Epidemiology 15:615-625. A restriction on the outcome itself is the design of
the study, not a bias of the adjustment, and is not reported.

Bad::

    sprained_ankle -> urgent_care
    chest_pain -> urgent_care
    sprained_ankle -> chest_pain
    analysis {
      exposure: sprained_ankle
      outcome: chest_pain
      adjust: none
      restricted: urgent_care  # expect: selection-bias
    }

Good::

    sprained_ankle -> urgent_care
    chest_pain -> urgent_care
    sprained_ankle -> chest_pain
    analysis {
      exposure: sprained_ankle
      outcome: chest_pain
      adjust: none
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ._causal_common import per_listed_name
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    return per_listed_name(ctx, RULE, "restricted")


RULE = Rule(
    name="selection-bias",
    severity="error",
    summary="The data are restricted on a variable that biases the estimate.",
    scope="causal",
    check=check,
    doc=__doc__,
)
