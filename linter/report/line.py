"""One line per finding, for editors and their problem matchers (`--format line`).

    FILE:LINE:COLUMN: SEVERITY: MESSAGE [RULE]

SEVERITY is `error`, `warning` or `info`. Everything a finding says stays on its
line: related places are appended as `(see FILE:LINE:COLUMN: what is there; ...)`,
so no continuation line can be taken for a finding of its own. Newlines inside
a message (none today) are folded into spaces for the same reason. No summary
line: the output is exactly one line per finding.
"""

from __future__ import annotations

from ..findings import Finding
from . import Report


def _one_line(text: str) -> str:
    return " ".join(text.split())


def line(f: Finding) -> str:
    message = _one_line(f.message)
    if f.related:
        places = "; ".join(
            f"{r.file}:{r.span.line}:{r.span.column}: {_one_line(r.message)}" for r in f.related
        )
        message += f" (see {places})"
    return f"{f.file}:{f.span.line}:{f.span.column}: {f.severity}: {message} [{f.rule}]"


def render(report: Report) -> str:
    return "".join(line(f) + "\n" for f in report.findings)
