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


def report_for(diagram, analysis, max_sets: int) -> dict:
    """The analysis's verdict as the documented JSON shape."""
    from ..verdict import Verdict

    return Verdict(diagram, analysis).to_dict(max_sets)


def render_text(file: str, diagram, reports: list[dict], max_sets: int) -> str:
    from ..verdict import Verdict
    from ..wording import format_set, problem_message

    lines = []
    for r in reports:
        verdict = Verdict(diagram, diagram.analysis(r["name"]))
        lines.append(f"{file}: analysis {r['name']}: effect of {', '.join(r['exposure'])} "
                     f"on {', '.join(r['outcome'])}")  # fmt: skip
        if r["declared"] is None:
            lines.append("  declared set: none declared (no `adjust:` line)")
        elif r["declared_valid"]:
            lines.append(f"  declared set: {format_set(r['declared'])} is valid")
        else:
            own = [p for p in verdict.problems if p.rule != "unmeasured-confounding"]
            why = ":" if own else ", as no set of measured variables is (below)"
            lines.append(f"  declared set: {format_set(r['declared'])} is not valid{why}")
            lines.extend(f"    - {problem_message(p, verdict)} [{p.rule}]" for p in own)
        if not r["identifiable"]:
            lines.append("  no valid adjustment set exists among the measured variables")
            for p in verdict.problems_of("unmeasured-confounding"):
                lines.append(f"    - {problem_message(p, verdict)} [{p.rule}]")
            lines.append(f"  best achievable set: {format_set(r['best_achievable'])} "
                         "(closes every confounding path that measured variables can close)")  # fmt: skip
            if r["front_door"]:
                lines.append(f"  front-door criterion holds for {format_set(r['front_door'])}")
        else:
            lines.append(f"  smallest valid set: {format_set(r['smallest'])}")
            lines.append(f"  minimal valid sets ({len(r['minimal_sets'])}"
                         f"{', cut at --max ' + str(max_sets) if r['truncated'] else ''}):")  # fmt: skip
            lines.extend(f"    {format_set(s)}" for s in r["minimal_sets"])
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
    emit_analyses(args, reports, render_text(args.file, result.diagram, reports, args.max))
    return 0
