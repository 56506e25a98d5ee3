"""syntax-error: the file does not parse.

The message says in words what was expected and shows the line with a caret. A
file gets at most one syntax error, and no other rule runs on it.

Bad::

    age -> # expect: syntax-error

Good::

    age -> sick_days
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..syntax import SyntaxProblem
from .base import Context, Rule


def check(ctx: Context) -> Iterator[Finding]:
    # Parse failures never reach the rules: the engine turns them into findings
    # with `finding_for`. A parsed diagram has no syntax error by definition.
    return iter(())


def finding_for(problem: SyntaxProblem, file: str) -> Finding:
    return Finding(
        rule=RULE.name,
        severity=RULE.severity,
        file=file,
        span=problem.span,
        message=problem.message,
        excerpt=problem.excerpt or None,
    )


RULE = Rule(
    name="syntax-error",
    severity="error",
    summary="The file does not follow the diagram language.",
    scope="structure",
    check=check,
    doc=__doc__,
)
