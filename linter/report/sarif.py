"""SARIF 2.1.0: one log with one run, for code-scanning services.

Follows the OASIS standard "Static Analysis Results Interchange Format (SARIF)
Version 2.1.0" (2020). The log validates against the official JSON schema
(tests/test_sarif.py checks every sample and fixture):

* `runs[0].tool.driver`: name, version, `rules` built from the rule catalogue
  (`dagward.rules.ALL_RULES`): id = rule name, short description = summary, full
  description = the prose of the rule's docstring, help = the whole docstring
  with its bad and good examples (plain text and Markdown), default level and
  whether the rule is on by default;
* one result per finding: `ruleId`, `ruleIndex`, `level` (error, warning, or
  note for info), `message.text`, one physical location and the finding's
  related places as `relatedLocations`;
* locations are URIs relative to the repository root (`git rev-parse
  --show-toplevel` from the current directory, else the current directory),
  percent-encoded, with `uriBaseId` `%SRCROOT%`; files outside the root get an
  absolute `file:` URI. Regions use 1-based lines and columns counted in
  Unicode code points (`columnKind`), the end column exclusive, as in SARIF.
"""

from __future__ import annotations

import json
import os
import re
import subprocess
from functools import lru_cache
from pathlib import Path
from urllib.parse import quote

from ..findings import Finding, Related
from ..model import Span
from ..version import __version__
from . import Report

SARIF_VERSION = "2.1.0"
SARIF_SCHEMA_URI = (
    "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"
)
SRCROOT = "%SRCROOT%"
LEVELS = {"error": "error", "warning": "warning", "info": "note"}


# --- where files are -----------------------------------------------------------------


@lru_cache(maxsize=8)
def _git_toplevel(cwd: str) -> str | None:
    try:
        done = subprocess.run(
            ["git", "rev-parse", "--show-toplevel"],
            cwd=cwd,
            capture_output=True,
            text=True,
            timeout=10,
        )
    except (OSError, subprocess.SubprocessError):
        return None
    top = done.stdout.strip()
    return top if done.returncode == 0 and top else None


def repository_root(explicit: str | None = None) -> Path:
    """The directory locations are relative to: given, else the git top level, else cwd."""
    if explicit:
        return Path(explicit).resolve()
    cwd = os.getcwd()
    top = _git_toplevel(cwd)
    return Path(top).resolve() if top else Path(cwd).resolve()


def relative_to_root(file: str, root: Path) -> str | None:
    """`file` as a POSIX path relative to `root`, or None when it lies outside."""
    try:
        return Path(file).resolve().relative_to(root).as_posix()
    except ValueError:
        return None


def artifact_location(file: str, root: Path) -> dict:
    relative = relative_to_root(file, root)
    if relative is None:
        return {"uri": Path(file).resolve().as_uri()}
    return {"uri": quote(relative, safe="/"), "uriBaseId": SRCROOT}


# --- the rule catalogue ----------------------------------------------------------------

_EXAMPLE_HEAD = re.compile(r"^(\w[\w ]*)::\s*$")
# The rule examples carry `# expect: rule` annotations for the test suite; users
# do not need them in the help text.
_EXPECT = re.compile(r"[ \t]*# expect: [\w\-, ]+$", re.MULTILINE)


def _doc_parts(doc: str) -> tuple[str, str]:
    """(prose, markdown) of a rule docstring: the paragraphs before the examples, and
    the whole docstring with its `Bad::`/`Good::` blocks turned into fenced code."""
    lines = _EXPECT.sub("", doc or "").strip("\n").splitlines()
    prose: list[str] = []
    markdown: list[str] = []
    seen_example = False
    i = 0
    while i < len(lines):
        head = _EXAMPLE_HEAD.match(lines[i])
        if not head:
            markdown.append(lines[i])
            if not seen_example:
                prose.append(lines[i])
            i += 1
            continue
        seen_example = True
        i += 1
        code: list[str] = []
        while i < len(lines) and (not lines[i].strip() or lines[i].startswith(" ")):
            code.append(lines[i][4:] if lines[i].startswith("    ") else lines[i].strip())
            i += 1
        while code and not code[0].strip():
            code.pop(0)
        while code and not code[-1].strip():
            code.pop()
        markdown += [f"**{head.group(1)}:**", "", "```", *code, "```", ""]
    text = " ".join(" ".join(prose).split())
    return text, "\n".join(markdown).strip() + "\n"


def rule_descriptors() -> tuple[list[dict], dict[str, int]]:
    from ..rules import ALL_RULES

    descriptors, index = [], {}
    for i, rule in enumerate(ALL_RULES):
        prose, markdown = _doc_parts(rule.doc)
        # the docstring opens with "name: summary."; the full description is the rest
        prose = prose.removeprefix(f"{rule.name}:").strip()
        prose = prose[:1].upper() + prose[1:]
        descriptor = {
            "id": rule.name,
            "shortDescription": {"text": rule.summary},
            "fullDescription": {"text": prose or rule.summary},
            "help": {
                "text": _EXPECT.sub("", rule.doc or rule.summary).strip(),
                "markdown": markdown,
            },
            "defaultConfiguration": {
                "level": LEVELS[rule.severity],
                "enabled": rule.enabled_by_default,
            },
            "properties": {"tags": [rule.scope]},
        }
        descriptors.append(descriptor)
        index[rule.name] = i
    return descriptors, index


# --- results ---------------------------------------------------------------------------


def _region(span: Span) -> dict:
    return {
        "startLine": span.line,
        "startColumn": span.column,
        "endLine": span.end_line,
        # SARIF wants end > start on one line; our spans always cover a character,
        # but guard against a zero-width span from a future rule.
        "endColumn": max(span.end_column, span.column + 1)
        if span.end_line == span.line
        else span.end_column,
    }


def _physical(file: str, span: Span, root: Path) -> dict:
    return {"artifactLocation": artifact_location(file, root), "region": _region(span)}


def _related(r: Related, i: int, root: Path) -> dict:
    return {
        "id": i,
        "physicalLocation": _physical(r.file, r.span, root),
        "message": {"text": r.message},
    }


def result(f: Finding, root: Path, index: dict[str, int]) -> dict:
    out: dict = {"ruleId": f.rule}
    if f.rule in index:
        out["ruleIndex"] = index[f.rule]
    out["level"] = LEVELS[f.severity]
    out["message"] = {"text": f.message}
    out["locations"] = [{"physicalLocation": _physical(f.file, f.span, root)}]
    if f.related:
        out["relatedLocations"] = [_related(r, i, root) for i, r in enumerate(f.related, 1)]
    properties: dict = {}
    if f.analysis is not None:
        properties["analysis"] = f.analysis
    if f.path is not None:
        properties["path"] = list(f.path)
    if f.suggested_sets is not None:
        properties["suggestedSets"] = [list(s) for s in f.suggested_sets]
    if properties:
        out["properties"] = properties
    return out


def log(report: Report) -> dict:
    """The SARIF log as a dict (what `render` prints)."""
    root = repository_root(report.repository_root)
    descriptors, index = rule_descriptors()
    return {
        "$schema": SARIF_SCHEMA_URI,
        "version": SARIF_VERSION,
        "runs": [
            {
                "tool": {
                    "driver": {
                        "name": "dagward",
                        "version": __version__,
                        "semanticVersion": __version__,
                        "rules": descriptors,
                    }
                },
                "originalUriBaseIds": {SRCROOT: {"uri": root.as_uri() + "/"}},
                "columnKind": "unicodeCodePoints",
                "results": [result(f, root, index) for f in report.findings],
            }
        ],
    }


def render(report: Report) -> str:
    return json.dumps(log(report), indent=2, ensure_ascii=False) + "\n"
