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
    from ..verdict import verdict_of

    return verdict_of(diagram, analysis, compact=True).to_dict(max_sets)


def render_text(file: str, diagram, reports: list[dict], max_sets: int) -> str:
    from ..verdict import verdict_of
    from ..wording import format_set, problem_message, question_text

    lines = []
    for r in reports:
        verdict = verdict_of(diagram, diagram.analysis(r["name"]), compact=True)
        if verdict.question == "total" and not verdict.restricted_all:
            lines.append(f"{file}: analysis {r['name']}: effect of {', '.join(r['exposure'])} "
                         f"on {', '.join(r['outcome'])}")  # fmt: skip
        else:
            lines.append(f"{file}: analysis {r['name']}: {question_text(verdict)}")
            lines.extend(_question_lines(verdict, r))
        if r["declared"] is None:
            lines.append("  declared set: none declared (no `adjust:` line)")
        elif r["declared_valid"]:
            lines.append(f"  declared set: {format_set(r['declared'])} is valid")
        else:
            own = [p for p in verdict.problems
                   if p.rule not in ("unmeasured-confounding", "needs-g-methods")]  # fmt: skip
            why = ":" if own else ", as no set of measured variables is (below)"
            lines.append(f"  declared set: {format_set(r['declared'])} is not valid{why}")
            lines.extend(f"    - {problem_message(p, verdict)} [{p.rule}]" for p in own)
        given = " (each with the restriction)" if verdict.restricted else ""
        asked = " for this question" if verdict.question != "total" or given else ""
        if not r["identifiable"]:
            lines.append(f"  no valid adjustment set exists among the measured variables{asked}")
            for p in verdict.problems:
                if p.rule in ("unmeasured-confounding", "needs-g-methods"):
                    lines.append(f"    - {problem_message(p, verdict)} [{p.rule}]")
            if r["best_achievable"] is not None:
                best = format_set(r["best_achievable"])
                lines.append(f"  best achievable set: {best} (closes every confounding path "
                             "that measured variables can close)")  # fmt: skip
            if r["best_achievable"] is None:
                pass
            elif r["front_door"]:
                lines.append(f"  front-door criterion holds for {format_set(r['front_door'])}")
        else:
            lines.append(f"  smallest valid set: {format_set(r['smallest'])}")
            if verdict.natural is not None:
                lines.append("  covariates meeting all three conditions (not affected by the "
                             f"exposure{', with the restriction' if given else ''}):")  # fmt: skip
            else:
                cut = f", cut at --max {max_sets}" if r["truncated"] else ""
                lines.append(f"  minimal valid sets{given} ({len(r['minimal_sets'])}{cut}):")
            lines.extend(f"    {format_set(s)}" for s in r["minimal_sets"])
    if not reports:
        lines.append(f"{file}: no analysis to report on")
    return "\n".join(lines) + "\n"


def _question_lines(verdict, r: dict) -> list[str]:
    """What is particular to the question: the three confounding questions of
    natural effects, the stages of a joint exposure, the restriction."""
    from ..wording import PART_WORDS, format_set

    q = r["question"]
    out = []
    for part, facts in q.get("natural", {}).items():
        state = "closed" if facts["declared_valid"] else "not closed"
        if facts["declared_valid"] is None:
            state = "closable" if facts["identifiable"] else "not closable by measured variables"
        out.append(f"  {PART_WORDS[part]}: {state}")
    if q.get("exposure_induced_confounders"):
        names = ", ".join(q["exposure_induced_confounders"])
        out.append(f"  affected by the exposure and confounding mediator and outcome: {names} "
                   "(natural effects not identified)")  # fmt: skip
    for i, st in enumerate(q.get("stages", ()), start=1):
        state = "" if st["holds"] else " (no measured covariates work)"
        out.append(f"  stage {i} ({', '.join(st['exposures'])}): adjust for "
                   f"{format_set(st['covariates'])}{state}")  # fmt: skip
    sel = q.get("selection")
    if sel is not None:
        out.append("  effect in the whole population recoverable from the restricted data: "
                   + (f"yes, with {format_set(sel['recovery_set'])}" if sel["recoverable"]
                      else "no"))  # fmt: skip
        if sel["outcome_only"]:
            out.append("  odds ratio survives the restriction: "
                       + (f"yes, adjusted for {format_set(sel['odds_ratio_set'])}"
                          if sel["odds_ratio_survives"] else "no"))  # fmt: skip
    if q.get("odds_ratio_only"):
        out.append("  restricted on the outcome: only the odds ratio can be estimated")
    return out


def run(args: argparse.Namespace) -> int:
    from ..errors import UsageProblem

    if args.max < 1:
        raise UsageProblem("--max must be at least 1")
    settings = settings_from(args)
    result, analyses = load_for_analysis(args, settings)
    reports = [report_for(result.diagram, a, args.max) for a in analyses]
    emit_analyses(args, reports, render_text(args.file, result.diagram, reports, args.max))
    return 0
