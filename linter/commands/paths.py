"""dagward paths: every path between exposure and outcome, and why it is open or blocked.

For review discussions ("why is this set not enough?"). Paths are listed, so
their number can be exponential: the listing stops at `--limit` and says so.
"""

from __future__ import annotations

import argparse

from .common import emit_analyses, load_for_analysis, settings_from

HELP = (
    "List the paths between the exposure and the outcome of each analysis, each marked "
    "causal or non-causal, open or blocked given the adjustment set, with the reason."
)
FORMATS = ("text", "json")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE")
    p.add_argument("--analysis", metavar="NAME", help="only this analysis")
    p.add_argument("--given", metavar="A,B", help="adjustment set to use instead of `adjust:`")
    p.add_argument("--limit", type=int, default=100, metavar="N",
                   help="list at most N paths per analysis (default 100)")  # fmt: skip


def describe(diagram, analysis, given: set[str] | None, limit: int) -> dict:
    """The paths that matter for the analysis's question: between the exposure (for
    a controlled direct effect, the exposure and the mediators) and the outcome,
    judged given the adjustment set and the restriction; for natural effects also
    the mediator-outcome paths, given the adjustment set and the exposure."""
    from ..verdict import Verdict

    verdict = Verdict(diagram, analysis)
    plain = verdict.question == "total" and not verdict.restricted_all
    adjust = given if given is not None else set(analysis.adjust_set or ())
    if plain:
        return _describe(diagram, analysis.name, analysis.exposure_set, analysis.outcome_set,
                         adjust, adjust, limit)  # fmt: skip
    adjust = set(adjust) - verdict.listed_mediators
    report = _describe(diagram, analysis.name, verdict.exposure, verdict.outcome, adjust,
                       adjust | verdict.forced, limit)  # fmt: skip
    report["question"] = verdict.question
    report["restricted"] = sorted(verdict.restricted_all)
    part = verdict.parts.get("mediator-outcome")
    if part is not None:
        # only the non-causal mediator-outcome paths: the confounding that matters
        sub = _describe(diagram, analysis.name, part.exposure, part.outcome, adjust,
                        adjust | part.forced, limit)  # fmt: skip
        report["mediator_outcome_paths"] = [r for r in sub["paths"] if not r["causal"]]
        report["mediator_outcome_truncated"] = sub["truncated"]
    return report


def _describe(diagram, name, X, Y, adjust, conditioned, limit: int) -> dict:
    from ..causal import describe_path, enumerate_paths, is_hidden
    from ..wording import spell_path

    g = diagram.graph
    paths, cut = enumerate_paths(g, X, Y, limit)
    rows = []
    for p in paths:
        info = describe_path(g, p, X, conditioned)
        rows.append({
            "path": ["<->" if is_hidden(g, n) else n for n in p],
            "text": spell_path(g, p),
            "causal": info.causal,
            "open": info.open,
            "blocked_by": [{"variable": b.node, "reason": b.reason} for b in info.blocking
                           if not is_hidden(g, b.node)],
            "opened_colliders": [{"collider": o.collider, "by": o.adjusted}
                                 for o in info.opened_colliders],
        })  # fmt: skip
    # causal paths first, then open non-causal ones (the problems), then the rest
    rows.sort(key=lambda r: (not r["causal"], r["causal"] or not r["open"]))
    return {
        "name": name,
        "adjust": sorted(adjust),
        "paths": rows,
        "truncated": cut,
    }


def _line(row: dict) -> str:
    kind = "causal    " if row["causal"] else "non-causal"
    if row["open"]:
        state = "open"
        why = "; ".join(f"collider `{o['collider']}` opened by conditioning on `{o['by']}`"
                        for o in row["opened_colliders"])  # fmt: skip
        if not row["causal"]:
            state = "OPEN (biasing)"
    else:
        state = "blocked"
        why = "; ".join(
            f"`{b['variable']}` ({'adjusted non-collider' if b['reason'].startswith('non') else 'collider left alone'})"
            for b in row["blocked_by"]
        )
    return f"  {kind} {state:<15} {row['text']}" + (f"   [{why}]" if why else "")


def render_text(file: str, reports: list[dict], limit: int) -> str:
    lines = []
    for r in reports:
        adjust = "{" + ", ".join(r["adjust"]) + "}"
        restricted = (f", in data restricted on {{{', '.join(r['restricted'])}}}"
                      if r.get("restricted") else "")  # fmt: skip
        question = f" ({r['question'].replace('-', ' ')} effect)" if "question" in r else ""
        lines.append(f"{file}: analysis {r['name']}{question}, adjusting for {adjust}{restricted}:")
        lines.extend(_line(row) for row in r["paths"])
        if "mediator_outcome_paths" in r:
            # the open ones only: they are the mediator-outcome confounding left
            rows = r["mediator_outcome_paths"]
            shown = [row for row in rows if row["open"]]
            more = len(rows) - len(shown)
            lines.append("  mediator-outcome confounding paths left open, given the "
                         f"adjustment set and the exposure ({more} more blocked):")  # fmt: skip
            lines.extend("  " + _line(row) for row in shown)
            if not shown:
                lines.append("    none")
        if not r["paths"]:
            lines.append("  no path joins the exposure and the outcome")
        if r["truncated"]:
            lines.append(f"  ... stopped after {limit} paths (--limit); more exist")
    return "\n".join(lines) + "\n"


def run(args: argparse.Namespace) -> int:
    from ..errors import UsageProblem

    if args.limit < 1:
        raise UsageProblem("--limit must be at least 1")
    settings = settings_from(args)
    result, analyses = load_for_analysis(args, settings)
    given = None
    if args.given is not None:
        given = {n.strip() for n in args.given.split(",") if n.strip()}
        unknown = sorted(given - set(result.diagram.variables))
        if unknown:
            raise UsageProblem(f"--given names unknown variables: {', '.join(unknown)}")
    reports = []
    for a in analyses:
        clash = (given or set()) & (a.exposure_set | a.outcome_set)
        if clash:
            raise UsageProblem(f"--given includes an exposure or outcome: {', '.join(sorted(clash))}")
        reports.append(describe(result.diagram, a, given, args.limit))
    emit_analyses(args, reports, render_text(args.file, reports, args.limit))
    return 0
