"""duplicate-analysis: two analyses share a name.

Analysis names identify results in reports, in `--analysis` and in the analysis
code's own tests, so they must be unique in a file. An analysis without a name is
called `main`.

Bad::

    age -> sick_days
    analysis primary {
      exposure: age
      outcome: sick_days
    }
    analysis primary {  # expect: duplicate-analysis
      exposure: age
      outcome: sick_days
    }

Good::

    age -> sick_days
    analysis primary {
      exposure: age
      outcome: sick_days
    }
    analysis sensitivity {
      exposure: age
      outcome: sick_days
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..model import Analysis
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    seen: dict[str, Analysis] = {}
    for analysis in ctx.diagram.analyses:
        first = seen.setdefault(analysis.name, analysis)
        if first is analysis:
            continue
        hint = (
            "an analysis without a name is called `main`; name each analysis"
            if analysis.name_token is None or first.name_token is None
            else "give each analysis its own name"
        )
        yield ctx.finding(
            RULE,
            analysis.header,
            f"analysis `{analysis.name}` is already defined on line {first.header.line}: {hint}",
            analysis=analysis,
            related=(ctx.related(first.header, f"first analysis `{first.name}`"),),
        )


RULE = Rule(
    name="duplicate-analysis",
    severity="error",
    summary="Two analyses share a name.",
    scope="structure",
    check=check,
    doc=__doc__,
)
