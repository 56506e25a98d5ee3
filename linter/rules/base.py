"""What a rule is, and the context it runs in.

A rule is a module in `linter/rules/` holding a docstring (its user documentation,
with a bad and a good example that a test lints), a pure `check(ctx)` generator
and a `RULE = Rule(...)` record. `linter/rules/__init__.py` lists the modules
explicitly; nothing is discovered by name tricks.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

from ..findings import Finding, Related, Severity
from ..model import Analysis, Diagram, Span

if TYPE_CHECKING:
    from .facts import AnalysisFacts

Scope = Literal["structure", "causal", "data"]


@dataclass(frozen=True)
class Rule:
    name: str
    severity: Severity
    summary: str
    scope: Scope
    check: Callable[[Context], Iterable[Finding]]
    doc: str
    enabled_by_default: bool = True


@dataclass
class Context:
    """Everything a rule may read. Rules never mutate it (the facts cache aside)."""

    diagram: Diagram
    file: str  # the path as shown to the user
    data: Any = None  # a loaded data table, for the data rules (`--data`)
    data_options: Any = None
    _facts: dict[str, AnalysisFacts] | None = None

    def finding(
        self,
        rule: Rule,
        span: Span,
        message: str,
        *,
        analysis: Analysis | None = None,
        path: tuple[str, ...] | None = None,
        related: tuple[Related, ...] = (),
        suggested_sets: tuple[tuple[str, ...], ...] | None = None,
    ) -> Finding:
        return Finding(
            rule=rule.name,
            severity=rule.severity,
            file=self.file,
            span=span,
            message=message,
            analysis=analysis.name if analysis is not None else None,
            path=path,
            related=related,
            suggested_sets=suggested_sets,
        )

    def related(self, span: Span, message: str) -> Related:
        return Related(self.file, span, message)

    def facts(self, analysis: Analysis) -> AnalysisFacts:
        """Causal facts about one analysis, computed once and shared by the rules."""
        from .facts import AnalysisFacts

        if self._facts is None:
            self._facts = {}
        key = analysis.name
        if key not in self._facts:
            self._facts[key] = AnalysisFacts(self.diagram, analysis)
        return self._facts[key]


def backticked(names: Iterable[str]) -> str:
    """`a`, `b` and `c`"""
    items = [f"`{n}`" for n in names]
    if len(items) <= 1:
        return "".join(items)
    return ", ".join(items[:-1]) + " and " + items[-1]
