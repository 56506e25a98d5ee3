"""dagward paths: every path between exposure and outcome, and why it is open or blocked.

For review discussions ("why is this set not enough?"). Paths are listed, so
their number can be exponential: the listing stops at `--limit` and says so.
Open paths come first (they are what a reviewer asks about); each next path
costs at most a bounded number of linear passes over the diagram
(dagward.causal.paths), so `--limit` bounds the time as well as the output.
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
    p.add_argument("--open", action="store_true",
                   help="list only the paths that are open given the adjustment set")  # fmt: skip


def describe(
    diagram,
    analysis,
    given: set[str] | None,
    limit: int,
    open_only: bool = False,
    steps: list[int] | None = None,
) -> dict:
    """The paths that matter for the analysis's question: between the exposure (for
    a controlled direct effect, the exposure and the mediators) and the outcome,
    judged given the adjustment set and the restriction; for natural effects also
    the mediator-outcome paths, given the adjustment set and the exposure.

    ``steps[0]``, when given, counts the linear-time searches of the listings
    (see dagward.causal.paths), for tests of the cost per path printed."""
    from ..verdict import verdict_of

    verdict = verdict_of(diagram, analysis)
    plain = verdict.question == "total" and not verdict.restricted_all
    adjust = given if given is not None else set(analysis.adjust_set or ())
    if plain:
        report = _describe(diagram, analysis.name, analysis.exposure_set, analysis.outcome_set,
                           adjust, adjust, limit, open_only, steps)  # fmt: skip
        return report
    adjust = set(adjust) - verdict.listed_mediators
    report = _describe(diagram, analysis.name, verdict.exposure, verdict.outcome, adjust,
                       adjust | verdict.forced, limit, open_only, steps)  # fmt: skip
    report["question"] = verdict.question
    report["restricted"] = sorted(verdict.restricted_all)
    part = verdict.parts.get("mediator-outcome")
    if part is not None:
        # only the non-causal mediator-outcome paths: the confounding that matters
        sub = _describe(diagram, analysis.name, part.exposure, part.outcome, adjust,
                        adjust | part.forced, limit, open_only, steps)  # fmt: skip
        report["mediator_outcome_paths"] = [r for r in sub["paths"] if not r["causal"]]
        report["mediator_outcome_truncated"] = sub["truncated"]
    return report


def _describe(
    diagram, name, X, Y, adjust, conditioned, limit: int, open_only: bool, steps=None
) -> dict:
    from ..causal import describe_paths, is_hidden
    from ..causal.paths import open_paths, simple_paths
    from ..wording import spell_path

    g = diagram.graph
    # Open paths first, found by a search that only walks open continuations;
    # then, unless only open ones are asked for, the others in listing order.
    paths: list[list[str]] = []
    cut = False
    for p in open_paths(g, X, Y, conditioned, steps, shortest_first=True):
        if len(paths) >= limit:
            cut = True
            break
        paths.append(p)
    if not open_only and not cut:
        listed = {tuple(p) for p in paths}
        for p in simple_paths(g, X, Y, steps, shortest_first=True):
            if tuple(p) in listed:
                continue
            if len(paths) >= limit:
                # Fewer open paths than the limit were all listed, so any
                # path not yet listed is a blocked one: the listing is cut.
                cut = True
                break
            paths.append(p)
    rows = []
    for p, info in zip(paths, describe_paths(g, paths, X, conditioned), strict=True):
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
    # open paths first (causal ones, then the biasing ones), then the blocked ones
    rows.sort(key=lambda r: (not r["open"], not r["causal"]))
    return {
        "name": name,
        "adjust": sorted(adjust),
        "paths": rows,
        "truncated": cut,
        "open_only": open_only,
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
        why = "; ".join(_blocked_reason(b) for b in row["blocked_by"])
    return f"  {kind} {state:<15} {row['text']}" + (f"   [{why}]" if why else "")


def _blocked_reason(block: dict) -> str:
    """Why a path is blocked at a variable, in plain words (the term once)."""
    v = block["variable"]
    if block["reason"].startswith("non"):
        return f"adjusting for `{v}` blocks it"
    return (
        f"`{v}` is a common effect of its neighbours on the path (a collider) and neither "
        "it nor its effects are adjusted for"
    )


def render_text(file: str, reports: list[dict], limit: int) -> str:
    lines = []
    for r in reports:
        adjust = "{" + ", ".join(r["adjust"]) + "}"
        restricted = (f", in data restricted on {{{', '.join(r['restricted'])}}}"
                      if r.get("restricted") else "")  # fmt: skip
        question = f" ({r['question'].replace('-', ' ')} effect)" if "question" in r else ""
        lines.append(f"{file}: analysis {r['name']}{question}, adjusting for {adjust}{restricted}:")
        lines.extend(_line(row) for row in r["paths"])
        what = "open path" if r.get("open_only") else "path"
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
            lines.append(f"  no {what} joins the exposure and the outcome")
        if r["truncated"]:
            lines.append(f"  ... stopped after {limit} {what}s (--limit); more exist")
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
            names = _with_suggestions(unknown, result.diagram.variables)
            raise UsageProblem(f"--given names unknown variables: {names}")
    reports = []
    for a in analyses:
        clash = (given or set()) & (a.exposure_set | a.outcome_set)
        if clash:
            raise UsageProblem(
                f"--given includes an exposure or outcome: {', '.join(sorted(clash))}"
            )
        reports.append(describe(result.diagram, a, given, args.limit, args.open))
    emit_analyses(args, reports, render_text(args.file, reports, args.limit))
    return 0


def _with_suggestions(unknown: list[str], known) -> str:
    """The unknown names, each with the closest known name when one is close."""
    from ..wording import closest_name

    parts = []
    for name in unknown:
        close = closest_name(name, sorted(known))
        parts.append(f"{name} (did you mean {close}?)" if close else name)
    return ", ".join(parts)
