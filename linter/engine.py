"""Runs the rules on a file: parse, structure rules, causal rules, data rules,
then settings (enable/disable/severity) and `# dagward: allow` comments."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from .config import Settings
from .findings import Finding
from .model import Diagram
from .rules import CAUSAL_RULES, DATA_RULES, STRUCTURE_RULES
from .rules.base import Context, Rule
from .rules.syntax_error import finding_for
from .suppress import allowed_by_line
from .syntax import parse_source

# Structure problems after which the causal algorithms must not run at all
# (they assume an acyclic graph whose analyses name real variables), whether or
# not the finding was silenced.
_ALWAYS_BLOCKING = {"cycle", "self-loop", "unknown-variable", "role-conflict"}


@dataclass
class FileResult:
    file: str
    findings: list[Finding]
    diagram: Diagram | None = None
    causal_ran: bool = False


def lint_source(
    data: bytes | str,
    file: str,
    settings: Settings | None = None,
    *,
    table: Any = None,
    data_options: Any = None,
    blocking_only: bool = False,
) -> FileResult:
    settings = settings or Settings()
    diagram, problem = parse_source(data, file)
    if problem is not None:
        finding = finding_for(problem, file)
        from .rules.syntax_error import RULE as SYNTAX

        return FileResult(file, [finding.with_severity(settings.severity_of(SYNTAX))])
    assert diagram is not None
    return lint_diagram(
        diagram, file, settings, table=table, data_options=data_options, blocking_only=blocking_only
    )


def lint_diagram(
    diagram: Diagram,
    file: str,
    settings: Settings | None = None,
    *,
    table: Any = None,
    data_options: Any = None,
    blocking_only: bool = False,
) -> FileResult:
    """The findings of every enabled rule, and whether the causal rules could run.

    With ``blocking_only``, for a command that only needs to know whether the
    diagram is fit to reason about (it prints errors and nothing else), only
    the structure rules whose findings could stop the causal reasoning run:
    those at severity error under the settings and those in
    ``_ALWAYS_BLOCKING``. ``causal_ran`` and the structure errors are the
    same as in a full run; warnings and the causal rules (which never stop
    the reasoning) are not computed: on a large diagram their messages can
    cost more than the command itself.
    """
    settings = settings or Settings()
    ctx = Context(diagram=diagram, file=file, data=table, data_options=data_options)
    allowed = allowed_by_line(diagram)

    def run(rules: tuple[Rule, ...]) -> list[Finding]:
        out = []
        for rule in rules:
            if not settings.is_enabled(rule):
                continue
            severity = settings.severity_of(rule)
            if blocking_only and severity != "error" and rule.name not in _ALWAYS_BLOCKING:
                continue
            for f in rule.check(ctx):
                out.append(f if f.severity == severity else f.with_severity(severity))
        return out

    structure = run(STRUCTURE_RULES)
    blocked = any(
        f.rule in _ALWAYS_BLOCKING
        or (f.severity == "error" and f.rule not in allowed.get(f.line, ()))
        for f in structure
    )
    findings = structure
    if not blocked and not blocking_only:
        findings = findings + run(CAUSAL_RULES)
        if table is not None:
            findings = findings + run(DATA_RULES)
    kept = [f for f in findings if f.rule not in allowed.get(f.line, ())]
    kept.sort(key=Finding.sort_key)
    return FileResult(file, kept, diagram, causal_ran=not blocked)


def read_and_lint(file: str, settings: Settings, **kwargs: Any) -> FileResult:
    """Read a file from disk and lint it; OSError propagates (the CLI exits 2)."""
    with open(file, "rb") as handle:
        data = handle.read()
    return lint_source(data, file, settings, **kwargs)
