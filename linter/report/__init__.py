"""Reporters: each turns findings into text. The CLI never formats output itself.

A reporter is a module with `render(report: Report) -> str`; `REPORTERS` maps a
`--format` name to the module path, imported only when that format is asked for.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable
from dataclasses import dataclass

from ..findings import Finding

REPORTERS: dict[str, str] = {
    "text": "dagward.report.text",
    "json": "dagward.report.json_report",
    "sarif": "dagward.report.sarif",
    "github": "dagward.report.github",
    "line": "dagward.report.line",
}


@dataclass(frozen=True)
class Report:
    findings: list[Finding]
    files: int
    color: bool = False
    quiet: bool = False
    repository_root: str | None = None  # for SARIF URIs
    # text of files that are not on disk as checked (standard input), by file name
    sources: dict[str, bytes] | None = None


def counts(findings: list[Finding]) -> dict[str, int]:
    out = {"error": 0, "warning": 0, "info": 0}
    for f in findings:
        out[f.severity] += 1
    return out


def reporter(name: str) -> Callable[[Report], str]:
    return importlib.import_module(REPORTERS[name]).render
