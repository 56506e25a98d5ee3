"""dagward identify: is each analysis's effect identified at all, and by what formula.

Exit status 0 when the report was made (whatever the answers: use `check` to
gate CI), 1 when the file has errors that stop the causal reasoning, 2 for usage
problems.
"""

from __future__ import annotations

import argparse

from .common import emit, emit_analyses, load_for_analysis, settings_from

HELP = (
    "For each analysis: whether the effect is identified from the measured variables at "
    "all, by which route (adjustment, front-door criterion or the general formula for "
    "diagrams with unmeasured variables) and formula, or the structure that prevents it; "
    "and the instruments for each exposure."
)
FORMATS = ("text", "json", "latex")
# The instrument search tests each measured variable with a few linear-time
# searches, so its time grows with the square of the diagram's size (about 1-4 s
# at 1,000 variables on the development machine: tests/bench_identify.py).
from ..verdict import INSTRUMENT_SEARCH_LIMIT  # noqa: E402  (one limit for every command)


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE")
    p.add_argument("--analysis", metavar="NAME", help="only this analysis")
    p.add_argument("--unicode", action="store_true",
                   help="write sums with the Σ sign in text output")  # fmt: skip


def _braces(names) -> str:
    return "{" + ", ".join(sorted(names)) + "}"


def route_text(r) -> str:
    """The route in words, built from the structured answer."""
    if r.route == "adjustment":
        if not r.adjustment_set:
            return "by adjustment for {} (no adjustment needed)"
        return f"by adjustment for {_braces(r.adjustment_set)}"
    if r.route == "front-door":
        return f"by the front-door criterion through {_braces(r.front_door_set)}"
    if r.route == "general":
        return "by the general formula"
    return "not identified"


def _arc_text(a: str, b: str, via) -> str:
    named = sorted(via)
    if named:
        return f"{a} <-> {b} (through {', '.join('`' + n + '`' for n in named)})"
    return f"{a} <-> {b}"


def report_for(diagram, analysis) -> dict:
    from ..causal.estimand import to_json
    from ..causal.identify import identify_effect
    from ..causal.instruments import instruments
    from ..report.estimand import render_estimand

    g, xs, ys = diagram.graph, analysis.exposure_set, analysis.outcome_set
    measured = diagram.measured
    base = {"name": analysis.name, "exposure": sorted(xs), "outcome": sorted(ys)}
    try:
        r = identify_effect(g, xs, ys, measured)
    except ValueError as e:
        return {**base, "identified": None, "route": None, "problem": str(e)}
    hedge = None
    if r.hedge is not None:
        from ..causal.identify import latent_projection

        sources = latent_projection(g, measured).sources
        hedge = r.hedge.to_json()
        hedge["bidirected_through"] = [
            sorted(sources.get(frozenset(a), frozenset())) for a in r.hedge.arcs
        ]
    searched = len(measured) <= INSTRUMENT_SEARCH_LIMIT
    ivs = instruments(g, xs, ys, measured) if searched else None
    e = r.estimand
    return {
        **base,
        "identified": r.identified,
        "route": r.route,
        "route_text": route_text(r),
        "adjustment_set": None if r.adjustment_set is None else sorted(r.adjustment_set),
        "front_door_set": None if r.front_door_set is None else sorted(r.front_door_set),
        "estimand": None if e is None else to_json(e),
        "estimand_text": None if e is None else render_estimand(e, "text"),
        "estimand_unicode": None if e is None else render_estimand(e, "unicode"),
        "estimand_latex": None if e is None else render_estimand(e, "latex"),
        "any_value_of": sorted(r.any_value_of),
        "hedge": hedge,
        "instruments": None if ivs is None else [i.to_json() for i in ivs],
    }


def _effect(r: dict, do: str = "do") -> str:
    return f"P({', '.join(r['outcome'])} | {do}({', '.join(r['exposure'])}))"


def render_text(file: str, reports: list[dict], unicode: bool) -> str:
    lines = []
    for r in reports:
        lines.append(f"{file}: analysis {r['name']}: effect of {', '.join(r['exposure'])} "
                     f"on {', '.join(r['outcome'])}")  # fmt: skip
        if r["identified"] is None:
            lines.append(f"  cannot answer: {r['problem']}")
            continue
        if r["identified"]:
            lines.append(f"  identified {r['route_text']}")
            formula = r["estimand_unicode"] if unicode else r["estimand_text"]
            lines.append(f"  {_effect(r)} = {formula}")
            if r["any_value_of"]:
                lines.append(f"  (the formula gives the same value for any values of "
                             f"{', '.join(r['any_value_of'])})")  # fmt: skip
        else:
            h = r["hedge"]
            lines.append("  not identified: no formula in the measured variables gives this "
                         "effect under the diagram alone (only added assumptions, such as "
                         "linear effects, could give one)")  # fmt: skip
            inner = h["without_intervened"]
            lines.append(f"  what prevents it (a hedge): in {_braces(h['variables'])}, linked by "
                         f"unmeasured common causes, the effect of {_braces(h['intervened'])} "
                         f"on {_braces(inner)} cannot be recovered from the data, and the "
                         f"effect asked about depends on it; the links:")  # fmt: skip
            for (a, b), via in zip(h["bidirected"], h["bidirected_through"], strict=True):
                lines.append(f"    {_arc_text(a, b, via)}")
        lines.extend(_instrument_lines(r["instruments"]))
    if not reports:
        lines.append(f"{file}: no analysis to report on")
    return "\n".join(lines) + "\n"


def _instrument_lines(ivs: list[dict] | None) -> list[str]:
    if ivs is None:
        return [
            f"  instruments: not searched (more than {INSTRUMENT_SEARCH_LIMIT:,} measured "
            "variables; dagward.causal.instruments.instruments does it from Python)"
        ]
    if not ivs:
        return ["  instruments: none among the measured variables"]
    out = ["  instruments:"]
    for i in ivs:
        given = f" given {_braces(i['given'])}" if i["given"] else ""
        out.append(f"    {i['variable']} for {i['exposure']}{given}")
    return out


def render_latex(file: str, reports: list[dict]) -> str:
    """One display-math line per identified analysis, comments for the rest."""
    lines = [f"% dagward identify: {file}"]
    for r in reports:
        lines.append(f"% analysis {r['name']}: effect of {', '.join(r['exposure'])} "
                     f"on {', '.join(r['outcome'])}")  # fmt: skip
        if r["identified"] is None:
            lines.append(f"% cannot answer: {r['problem']}")
        elif r["identified"]:
            lines.append(f"% identified {r['route_text']}")
            from ..report.estimand import variable_name

            ys = ", ".join(variable_name(v, "latex") for v in r["outcome"])
            xs = ", ".join(variable_name(v, "latex") for v in r["exposure"])
            lines.append(rf"\[ P({ys} \mid \mathrm{{do}}({xs})) = {r['estimand_latex']} \]")
        else:
            lines.append("% not identified from the measured variables")
    return "\n".join(lines) + "\n"


def run(args: argparse.Namespace) -> int:
    settings = settings_from(args)
    result, analyses = load_for_analysis(args, settings)
    reports = [report_for(result.diagram, a) for a in analyses]
    if args.format == "latex":
        emit(args, render_latex(args.file, reports))
    else:
        emit_analyses(args, reports, render_text(args.file, reports, args.unicode))
    return 0
