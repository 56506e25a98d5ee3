"""GitHub Actions workflow commands: one annotation per finding.

    ::error file=F,line=L,col=C,endLine=EL,endColumn=EC,title=RULE::MESSAGE

`warning` for warnings and `notice` for info findings. Files are written relative
to the repository root (as GitHub expects), or as given when they lie outside it.
`endColumn` is the last column of the finding (inclusive), given only when the
finding sits on one line. The related places of a finding are appended to the
message, one a line.

Escaping follows GitHub's runner (the toolkit's `command.ts`): in the message,
`%` -> `%25`, CR -> `%0D`, LF -> `%0A`; in property values additionally
`:` -> `%3A` and `,` -> `%2C`.
"""

from __future__ import annotations

from ..findings import Finding
from . import Report
from .sarif import relative_to_root, repository_root

COMMANDS = {"error": "error", "warning": "warning", "info": "notice"}


def escape_data(text: str) -> str:
    return text.replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A")


def escape_property(text: str) -> str:
    return escape_data(text).replace(":", "%3A").replace(",", "%2C")


def command(f: Finding, file: str, related_files: list[str] | None = None) -> str:
    span = f.span
    props = [("file", file), ("line", str(span.line)), ("col", str(span.column))]
    props.append(("endLine", str(span.end_line)))
    if span.end_line == span.line:
        props.append(("endColumn", str(max(span.end_column - 1, span.column))))
    props.append(("title", f.rule))
    message = f.message
    for r, shown in zip(f.related, related_files or [r.file for r in f.related], strict=True):
        message += f"\n{shown}:{r.span.line}:{r.span.column}: {r.message}"
    joined = ",".join(f"{k}={escape_property(v)}" for k, v in props)
    return f"::{COMMANDS[f.severity]} {joined}::{escape_data(message)}"


def render(report: Report) -> str:
    root = repository_root(report.repository_root)

    def shown(file: str) -> str:
        return relative_to_root(file, root) or file

    lines = [command(f, shown(f.file), [shown(r.file) for r in f.related]) for f in report.findings]
    return "\n".join(lines) + ("\n" if lines else "")
