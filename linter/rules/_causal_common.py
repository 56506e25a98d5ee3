"""Small helpers shared by the causal rule modules: they turn the verdict's
problems into findings (the verdict judges, `dagward.wording` words)."""

from __future__ import annotations

from collections.abc import Iterator
from typing import TYPE_CHECKING

from ..findings import Finding, Related
from ..model import Analysis, Arrow, Name, Span, arrow_key
from ..wording import problem_message
from .base import Context, Rule

if TYPE_CHECKING:  # the verdict (and networkx) load only when a causal rule runs
    from ..verdict import Problem, Verdict


def analyses_with_verdicts(ctx: Context) -> Iterator[tuple[Analysis, Verdict]]:
    for analysis in ctx.diagram.analyses:
        yield analysis, ctx.verdict(analysis)


def adjusted_names(analysis: Analysis) -> Iterator[Name]:
    """Each adjusted variable once, at its first place in `adjust:`."""
    seen = set()
    for n in analysis.adjust or []:
        if n.text not in seen:
            seen.add(n.text)
            yield n


def adjust_key_span(analysis: Analysis) -> Span:
    entry = analysis.entry("adjust")
    return entry.key_span if entry is not None else analysis.header


def arrows_on(ctx: Context, graph, path) -> list[Arrow]:
    """The arrow statements behind the steps of a path, in path order."""
    from ..causal.graph import is_hidden

    # the keys each step may stand for, then their first statements in one pass
    # over the arrows (no index of every arrow of the diagram)
    steps: list[tuple[tuple[str, str, str], ...]] = []
    i = 0
    while i < len(path) - 1:
        a, b = path[i], path[i + 1]
        if is_hidden(graph, b) and i + 2 < len(path):
            steps.append((arrow_key(a, path[i + 2], True),))
            i += 2
        elif is_hidden(graph, a):
            i += 1
        else:
            steps.append((arrow_key(a, b, False), arrow_key(b, a, False)))
            i += 1
    index = ctx.diagram.first_arrows(k for keys in steps for k in keys)
    out: list[Arrow] = []
    for keys in steps:
        arrow = next((index[k] for k in keys if k in index), None)
        if arrow is not None and arrow not in out:
            out.append(arrow)
    return out


def path_related(ctx: Context, graph, path) -> tuple[Related, ...]:
    return tuple(ctx.related(a.span, f"arrow {a.describe()}") for a in arrows_on(ctx, graph, path))


def problem_finding(
    ctx: Context,
    rule: Rule,
    span: Span,
    analysis: Analysis,
    verdict: Verdict,
    problem: Problem,
    related: tuple[Related, ...] = (),
    suggested_sets: tuple[tuple[str, ...], ...] | None = None,
) -> Finding:
    from ..verdict import json_path

    path = problem.path
    return ctx.finding(
        rule,
        span,
        problem_message(problem, verdict),
        analysis=analysis,
        path=json_path(verdict.graph, path) if path else None,
        related=related + (path_related(ctx, verdict.graph, path) if path else ()),
        suggested_sets=suggested_sets,
    )


def per_adjusted_variable(ctx: Context, rule: Rule) -> Iterator[Finding]:
    """One finding per adjusted variable that the verdict names under `rule`,
    at that name in `adjust:`."""
    for analysis, verdict in analyses_with_verdicts(ctx):
        if analysis.adjust is None:
            continue
        problems: dict[str | None, list[Problem]] = {}
        for p in verdict.problems_of(rule.name):
            problems.setdefault(p.variable, []).append(p)
        if not problems:
            continue
        for n in adjusted_names(analysis):
            for problem in problems.get(n.text, ()):
                yield problem_finding(ctx, rule, n.span, analysis, verdict, problem)


def per_listed_name(
    ctx: Context, rule: Rule, key: str, attribute: str = "variable"
) -> Iterator[Finding]:
    """One finding per problem under `rule`, at the name in the analysis key `key`
    (`restricted:`, `mediator:`) that the problem's `attribute` names; at the
    key's first name, or the header, when that name is not listed."""
    for analysis, verdict in analyses_with_verdicts(ctx):
        found = verdict.problems_of(rule.name)
        if not found:
            continue
        names = analysis.restricted if key == "restricted" else analysis.mediator
        for problem in found:
            target = getattr(problem, attribute)
            span = next((n.span for n in names if n.text == target), None)
            if span is None:
                span = names[0].span if names else analysis.header
            yield problem_finding(ctx, rule, span, analysis, verdict, problem)


def per_analysis(ctx: Context, rule: Rule, span_of=lambda a: a.header) -> Iterator[Finding]:
    """One finding per problem of the analysis as a whole, at `span_of(analysis)`."""
    for analysis, verdict in analyses_with_verdicts(ctx):
        for problem in verdict.problems_of(rule.name):
            own = verdict.verdict_of(problem)
            sets = own.suggestions() if problem.rule == "open-biasing-path" else None
            yield problem_finding(
                ctx,
                rule,
                span_of(analysis),
                analysis,
                verdict,
                problem,
                suggested_sets=sets or None,
            )
