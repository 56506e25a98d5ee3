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
    from ..verdict import Verdict

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
    """Everything a rule may read. Rules never mutate it (the verdict cache aside)."""

    diagram: Diagram
    file: str  # the path as shown to the user
    data: Any = None  # a loaded data table, for the data rules (`--data`)
    data_options: Any = None

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

    def verdict(self, analysis: Analysis) -> Verdict:
        """The verdict on one analysis, computed once and shared by the rules."""
        from ..verdict import verdict_of

        # the compact graph: the rules never need networkx's
        return verdict_of(self.diagram, analysis, compact=True)
