"""The one finding type every rule produces and every reporter reads."""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Literal

from .model import Span

Severity = Literal["error", "warning", "info"]
SEVERITIES: tuple[Severity, ...] = ("error", "warning", "info")
SEVERITY_RANK = {"info": 0, "warning": 1, "error": 2}


@dataclass(frozen=True, slots=True)
class Related:
    """A second place that explains a finding (an arrow of a cycle or of a path)."""

    file: str
    span: Span
    message: str


@dataclass(frozen=True, slots=True)
class Finding:
    """One problem at one place.

    `path` lists variable names from exposure to outcome (hidden `<->` parents are
    written `<->`); `suggested_sets` are valid adjustment sets to consider;
    `excerpt` is the offending source line with a caret (syntax errors).
    """

    rule: str
    severity: Severity
    file: str
    span: Span
    message: str
    analysis: str | None = None
    path: tuple[str, ...] | None = None
    related: tuple[Related, ...] = ()
    suggested_sets: tuple[tuple[str, ...], ...] | None = None
    excerpt: str | None = None

    @property
    def line(self) -> int:
        return self.span.line

    @property
    def column(self) -> int:
        return self.span.column

    def with_severity(self, severity: Severity) -> Finding:
        return replace(self, severity=severity)

    def sort_key(self) -> tuple:
        return (self.file, self.span.line, self.span.column, self.rule, self.message)

    def __str__(self) -> str:
        """The one line `dagward check` prints: `file:line:col: severity [rule] message`."""
        return (
            f"{self.file}:{self.span.line}:{self.span.column}: {self.severity} "
            f"[{self.rule}] {self.message}"
        )

    __repr__ = __str__  # so `assert not problems, problems` reads as check's output

    def to_dict(self) -> dict:
        """The documented JSON shape (see docs in README, schema in tests)."""
        out: dict = {
            "rule": self.rule,
            "severity": self.severity,
            "file": self.file,
            "line": self.span.line,
            "column": self.span.column,
            "end_line": self.span.end_line,
            "end_column": self.span.end_column,
        }
        if self.analysis is not None:
            out["analysis"] = self.analysis
        out["message"] = self.message
        if self.path is not None:
            out["path"] = list(self.path)
        if self.related:
            out["related"] = [
                {
                    "file": r.file,
                    "line": r.span.line,
                    "column": r.span.column,
                    "message": r.message,
                }
                for r in self.related
            ]
        if self.suggested_sets is not None:
            out["suggested_sets"] = [list(s) for s in self.suggested_sets]
        if self.excerpt is not None:
            out["excerpt"] = self.excerpt
        return out


class DiagramError(Exception):
    """Raised by the Python API when a diagram has errors; carries the findings."""

    def __init__(self, findings: list[Finding]):
        self.findings = findings
        first = findings[0] if findings else None
        where = f"{first.file}:{first.line}:{first.column}: " if first else ""
        more = f" (and {len(findings) - 1} more)" if len(findings) > 1 else ""
        super().__init__(f"{where}{first.message if first else 'invalid diagram'}{more}")
