"""Small helpers shared by the causal rule modules."""

from __future__ import annotations

from collections.abc import Iterator

from ..model import Analysis, Name, Span
from .base import Context


def analyses_with_facts(ctx: Context):
    for analysis in ctx.diagram.analyses:
        yield analysis, ctx.facts(analysis)


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


def path_related(ctx: Context, facts, path: list[str]):
    return tuple(ctx.related(a.span, f"arrow {a.describe()}") for a in facts.arrows_on(path))


def format_set(names) -> str:
    names = sorted(names)
    return "{" + ", ".join(names) + "}" if names else "{} (no adjustment)"
