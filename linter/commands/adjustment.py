"""dagward adjustment: valid and minimal adjustment sets, per analysis.

Exit status 0 when the report was made (whatever the verdicts: use `check` to
gate CI), 1 when the file has errors that stop the causal reasoning, 2 for usage
problems.
"""

from __future__ import annotations

import argparse

from .common import emit_analyses, load_for_analysis, settings_from

HELP = (
    "For each analysis: whether the declared adjustment set is valid, whether any valid "
    "set exists among the measured variables, the minimal valid sets and the smallest."
)
FORMATS = ("text", "json")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE", help="the diagram")
    p.add_argument("--analysis", metavar="NAME", help="only this analysis")
    p.add_argument("--max", type=int, default=20, metavar="N",
                   help="list at most N minimal sets (default 20)")  # fmt: skip


def _sorted_sets(sets) -> list[list[str]]:
    return sorted((sorted(s) for s in sets), key=lambda s: (len(s), s))


def report_for(diagram, analysis, max_sets: int) -> dict:
    from ..causal import (
        adjustment_exists,
        is_valid_adjustment,
        minimal_adjustment_sets,
        smallest_adjustment_set,
    )

    g, xs, ys = diagram.graph, analysis.exposure_set, analysis.outcome_set
    measured = diagram.measured
    declared = analysis.adjust_set
    identifiable = adjustment_exists(g, xs, ys, measured)
    minimal: list[frozenset] = []
    truncated = False
    if identifiable:
        for s in minimal_adjustment_sets(g, xs, ys, measured, max_sets + 1):
            if len(minimal) == max_sets:
                truncated = True
                break
            minimal.append(s)
    smallest = smallest_adjustment_set(g, xs, ys, measured) if identifiable else None
    return {
        "name": analysis.name,
        "exposure": sorted(xs),
        "outcome": sorted(ys),
        "declared": None if declared is None else sorted(declared),
        "declared_valid": None
        if declared is None
        else bool(declared <= measured and is_valid_adjustment(g, xs, ys, declared)),
        "identifiable": identifiable,
        "minimal_sets": _sorted_sets(minimal),
        "smallest": None if smallest is None else sorted(smallest),
        "truncated": truncated,
    }


def _set(names: list[str] | None) -> str:
    if names is None:
        return "none declared"
    return "{" + ", ".join(names) + "}" if names else "{} (no adjustment)"


def render_text(file: str, reports: list[dict], max_sets: int) -> str:
    lines = []
    for r in reports:
        lines.append(f"{file}: analysis {r['name']}: effect of {', '.join(r['exposure'])} "
                     f"on {', '.join(r['outcome'])}")  # fmt: skip
        if r["declared"] is None:
            lines.append("  declared set: none declared (no `adjust:` line)")
        else:
            verdict = "valid" if r["declared_valid"] else "NOT valid (run `dagward check`)"
            lines.append(f"  declared set: {_set(r['declared'])} is {verdict}")
        if not r["identifiable"]:
            lines.append("  no valid adjustment set exists among the measured variables")
        else:
            lines.append(f"  smallest valid set: {_set(r['smallest'])}")
            lines.append(f"  minimal valid sets ({len(r['minimal_sets'])}"
                         f"{', cut at --max ' + str(max_sets) if r['truncated'] else ''}):")  # fmt: skip
            lines.extend(f"    {_set(s)}" for s in r["minimal_sets"])
    if not reports:
        lines.append(f"{file}: no analysis to report on")
    return "\n".join(lines) + "\n"


def run(args: argparse.Namespace) -> int:
    from ..errors import UsageProblem

    if args.max < 1:
        raise UsageProblem("--max must be at least 1")
    settings = settings_from(args)
    result, analyses = load_for_analysis(args, settings)
    reports = [report_for(result.diagram, a, args.max) for a in analyses]
    emit_analyses(args, reports, render_text(args.file, reports, args.max))
    return 0
