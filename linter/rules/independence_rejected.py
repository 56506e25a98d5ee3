"""independence-rejected: the data contradict an independence the diagram implies.

Every pair of measured variables that no arrow joins is, by the diagram's
account, independent given some set of measured variables (d-separation;
Pearl 2009, *Causality*, section 1.2.3). With `--data`, each such statement
is tested (partial correlation and Fisher's z, `--method spearman` on ranks,
a G-test when a variable is categorical), the p values are adjusted across
the file by Holm's method (Holm 1979, "A simple sequentially rejective multiple
test procedure"), and the rule fires when the adjusted p is below `--alpha`
(default 0.05) *and* the effect is at least `--min-effect` (default 0.1) in
absolute value: with many rows, tiny departures are significant but rarely
worth a change to the diagram.

The message names the independence, the effect with its 95% interval, n (the
complete cases of that test) and the adjusted p. Consider an arrow between the
two variables, or a common cause of both that the diagram lacks (a `<->` if it
was never measured). A rejection is evidence against the diagram, not proof:
measurement error, non-linear relations and selected samples can also produce
it. The finding is reported once per file, at the first analysis header (line 1
when the file has no analysis).

Data::

    age,shift_work,sick_days
    25,40,4
    30,35,9
    35,33,5
    40,25,8
    45,22,6
    50,15,9
    55,12,7
    60,5,10

Bad::

    age -> sick_days
    shift_work -> sick_days
    analysis {  # expect: independence-rejected
      exposure: shift_work
      outcome: sick_days
      adjust: age
    }

Good::

    age -> sick_days
    age -> shift_work  # older staff choose fewer night shifts
    shift_work -> sick_days
    analysis {
      exposure: shift_work
      outcome: sick_days
      adjust: age
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..model import Span
from .base import Context, Rule


def describe(ind) -> str:
    """`a` and `b` are independent (given `c` and `d`) -- plain words, no symbols,
    so the message survives any terminal encoding."""
    from ..wording import backticked

    text = f"`{ind.a}` and `{ind.b}` are independent"
    if ind.given:
        text += f" given {backticked(ind.given)}"
    return text


def check(ctx: Context) -> Iterator[Finding]:
    table = ctx.data
    if table is None:
        return
    from ..data import (
        DataOptions,
        effect_name,
        format_p,
        implied,
        run_tests,
    )

    options = ctx.data_options if ctx.data_options is not None else DataOptions()
    independencies = implied(ctx.diagram)
    if not independencies:
        return
    # Statements naming a missing column cannot be tested; `missing-column`
    # reports the column, so they are left out here rather than noted twice.
    testable = [i for i in independencies if all(table.has_column(c) for c in i.columns())]
    if not testable:
        return
    analyses = ctx.diagram.analyses
    analysis = analyses[0] if analyses else None
    span = analysis.header if analysis else Span.at(1, 1)
    variables = ctx.diagram.variables
    for result in run_tests(table, testable, options):
        if not result.rejected:
            continue
        ind = result.independence
        yield ctx.finding(
            RULE,
            span,
            f"the diagram implies that {describe(ind)}, but the data disagree: "
            f"{effect_name(result)} {_effect_phrase(result)}, n = {result.n}, "
            f"Holm-adjusted p {_p_phrase(format_p(result.p_adjusted))}; "
            f"consider an arrow between `{ind.a}` and `{ind.b}` or a common cause of both "
            "that the diagram lacks",
            analysis=analysis,
            related=(
                ctx.related(variables[ind.a].span, f"`{ind.a}` first appears here"),
                ctx.related(variables[ind.b].span, f"`{ind.b}` first appears here"),
            ),
        )


def _effect_phrase(result) -> str:
    from ..data import format_number

    text = format_number(result.effect)
    if result.ci_low is not None and result.ci_high is not None:
        text += f" (95% interval {format_number(result.ci_low)} to {format_number(result.ci_high)})"
    return text


def _p_phrase(p: str) -> str:
    return f"< {p[1:]}" if p.startswith("<") else f"= {p}"


RULE = Rule(
    name="independence-rejected",
    severity="warning",
    summary="The data reject an independence that the diagram implies.",
    scope="data",
    check=check,
    doc=__doc__,
)
