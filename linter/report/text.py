"""Plain text: one finding a line, related places indented, a summary at the end."""

from __future__ import annotations

from . import Report, counts

_COLORS = {"error": "\033[31;1m", "warning": "\033[33;1m", "info": "\033[36m"}
_DIM, _RESET, _BOLD = "\033[2m", "\033[0m", "\033[1m"


def _plural(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def summary(report: Report) -> str:
    c = counts(report.findings)
    files = _plural(report.files, "file")
    parts = [_plural(c["error"], "error"), _plural(c["warning"], "warning")]
    if c["info"]:
        parts.append(_plural(c["info"], "note"))
    if not report.findings:
        return f"no problems in {files}"
    return f"{', '.join(parts)} in {files}"


def render(report: Report) -> str:
    lines = []
    color = report.color
    for f in report.findings:
        where = f"{f.file}:{f.span.line}:{f.span.column}:"
        level = f.severity
        if color:
            where = f"{_BOLD}{where}{_RESET}"
            level = f"{_COLORS[level]}{level}{_RESET}"
        rule = f"[{f.rule}]" if not color else f"{_DIM}[{f.rule}]{_RESET}"
        lines.append(f"{where} {level} {rule} {f.message}")
        if f.excerpt:
            lines.extend("    " + row for row in f.excerpt.split("\n"))
        for r in f.related:
            lines.append(f"    {r.file}:{r.span.line}:{r.span.column}: {r.message}")
    if not report.quiet or report.findings:
        lines.append(summary(report))
    if report.findings and not report.quiet:
        # once per run, naming a rule that was found, so the hint can be pasted
        lines.append(
            f"what a rule means and how to fix it: dagward explain {report.findings[0].rule}"
        )
    return "\n".join(lines) + ("\n" if lines else "")
