"""missing-column: a measured variable that the analysis needs is not in the data.

With `--data`, every measured variable used by an analysis (its `exposure:`,
`outcome:`, `adjust:` and `mediator:` names) must be a column of the data
file, spelled exactly as in the diagram. (`restricted:` names are not: data
restricted on a variable often lack it, since it would hold one value.) In a
file with no analysis, the variables of the implied independencies must be
columns instead. The finding points at the variable's first appearance in the
file and suggests close column names (a different case, a typo). When no
needed variable at all is a column, the message adds that the separator is the
likely cause (set it with `--sep`). Unmeasured variables are never expected in
the data. Rename the column or the variable so that they match.

Data::

    age,shift_work,sick_days
    30,10,4
    41,25,7
    52,5,9
    35,40,6
    47,15,8
    29,30,3

Bad::

    age -> sickdays  # expect: missing-column
    shift_work -> sickdays
    analysis {
      exposure: shift_work
      outcome: sickdays
      adjust: age
    }

Good::

    age -> sick_days
    shift_work -> sick_days
    analysis {
      exposure: shift_work
      outcome: sick_days
      adjust: age
    }
"""

from __future__ import annotations

import difflib
from collections.abc import Iterator

from ..findings import Finding
from ..model import Analysis
from .base import Context, Rule


def close_columns(name: str, columns: list[str], limit: int = 3) -> list[str]:
    """Columns that are probably meant: same name in another case, then near spellings."""
    same_case = [c for c in columns if c.lower() == name.lower()]
    if same_case:  # a difference of case is almost surely the answer
        return same_case[:limit]
    return difflib.get_close_matches(name, columns, n=limit, cutoff=0.6)


def _needed(ctx: Context) -> dict[str, Analysis | None]:
    """Measured variables the data must hold, with the first analysis using each."""
    diagram = ctx.diagram
    needed: dict[str, Analysis | None] = {}
    if diagram.analyses:
        for analysis in diagram.analyses:
            for entry in analysis.entries:
                if entry.key == "restricted":
                    # data restricted on a variable often lack it as a column (it
                    # would hold one value): that is not a missing column
                    continue
                for n in entry.names:
                    if n.text in diagram.measured:
                        needed.setdefault(n.text, analysis)
        return needed
    from ..data import implied

    for ind in implied(diagram):
        for name in ind.columns():
            needed.setdefault(name, None)
    return needed


def check(ctx: Context) -> Iterator[Finding]:
    table = ctx.data
    if table is None:
        return
    columns = list(table.columns())
    source = getattr(ctx.data_options, "source", None) or getattr(table, "source", "the data")
    needed = _needed(ctx)
    absent = [name for name in needed if not table.has_column(name)]
    # When not one needed variable is a column, the file was most likely split at
    # the wrong character (a semicolon file read with commas): say so once.
    separator_hint = ""
    if len(absent) == len(needed) > 1:
        separator_hint = (
            f"; no variable of the diagram is a column of {source}, so the file was most "
            f"likely split at the wrong separator (its header reads as {len(columns)} "
            f"column{'s' if len(columns) != 1 else ''}: {_header_excerpt(columns)}); "
            "set it with --sep"
        )
    for name in absent:
        analysis = needed[name]
        first = ctx.diagram.variables[name]
        close = close_columns(name, columns)
        hint = f"; did you mean {' or '.join(f'`{c}`' for c in close)}?" if close else ""
        hint += separator_hint
        used = (
            f"analysis `{analysis.name}` uses it" if analysis else "an implied independence uses it"
        )
        yield ctx.finding(
            RULE,
            first.span,
            f"`{name}` is not a column of {source} ({used}); rename the column or the "
            f"variable so that they match{hint}",
            analysis=analysis,
        )


def _header_excerpt(columns: list[str], limit: int = 60) -> str:
    text = ", ".join(f"`{c}`" for c in columns)
    return text if len(text) <= limit else text[: limit - 3] + "..."


RULE = Rule(
    name="missing-column",
    severity="error",
    summary="A measured variable used by an analysis is not a column of the data.",
    scope="data",
    check=check,
    doc=__doc__,
)
