"""SARIF 2.1.0: one log with one run, for code-scanning services.

Follows the OASIS standard "Static Analysis Results Interchange Format (SARIF)
Version 2.1.0" (2020). The log validates against the official JSON schema
(tests/test_sarif.py checks every sample and fixture):

* `runs[0].tool.driver`: name, version, `rules` built from the rule catalogue
  (`dagward.rules.ALL_RULES`): id = rule name, short description = summary, full
  description = the prose of the rule's docstring, help = the whole docstring
  with its bad and good examples (plain text and Markdown), default level and
  whether the rule is on by default;
  and a `helpUri` to the rule's section of docs/rules.md in the repository
  (generated from the same docstrings; `dagward.report.ruledoc`); the driver's
  `informationUri` is the project's page;
* one result per finding: `ruleId`, `ruleIndex`, `level` (error, warning, or
  note for info), `message.text`, one physical location and the finding's
  related places as `relatedLocations`, each linked from the message text
  (SARIF's embedded links, `[text](id)`, section 3.11.6);
* `partialFingerprints["dagwardFinding/v1"]`: a hash of what the finding is
  (rule, file, analysis, the message with numbers blanked, the text of the
  source line) and, for identical ones, which occurrence in the file it is. It
  does not contain line or column numbers, so a line inserted above leaves it
  unchanged, and two findings on one line differ. Code-scanning services use it
  to follow an alert from one revision to the next;
* locations are URIs relative to the repository root (`git rev-parse
  --show-toplevel` from the current directory, else the current directory),
  percent-encoded, with `uriBaseId` `%SRCROOT%`; files outside the root get an
  absolute `file:` URI. Regions use 1-based lines and columns counted in
  Unicode code points (`columnKind`), the end column exclusive, as in SARIF.
"""

from __future__ import annotations

import hashlib
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
from . import Report, ruledoc

SARIF_VERSION = "2.1.0"
SARIF_SCHEMA_URI = (
    "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"
)
SRCROOT = "%SRCROOT%"
# The project's home and where its rule documentation lives (a branch, so the
# links keep working from release to release). The GitHub Action sets
# DAGWARD_PROJECT_URL to the repository the action runs from, which holds
# docs/rules.md; elsewhere set it to the clone you install from.
PROJECT_URL = os.environ.get("DAGWARD_PROJECT_URL", "https://github.com/dagward/dagward").rstrip(
    "/"
)
DOCS_BRANCH = "main"
FINGERPRINT_KEY = "dagwardFinding/v1"
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


def help_uri(rule_name: str) -> str:
    """The rule's section of docs/rules.md (headings are rule names, so anchors are too)."""
    return f"{PROJECT_URL}/blob/{DOCS_BRANCH}/{ruledoc.DOCS_PATH}#{rule_name}"


def rule_descriptors() -> tuple[list[dict], dict[str, int]]:
    from ..rules import ALL_RULES

    descriptors, index = [], {}
    for i, rule in enumerate(ALL_RULES):
        descriptor = {
            "id": rule.name,
            "shortDescription": {"text": rule.summary},
            # the docstring opens with "name: summary."; the full description is the rest
            "fullDescription": {"text": ruledoc.description(rule)},
            "helpUri": help_uri(rule.name),
            "help": {"text": ruledoc.cleaned(rule), "markdown": ruledoc.parts(rule)[1]},
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


_LINK_CHARS = re.compile(r"([\\\[\]])")
_NUMBER = re.compile(r"\d+")


def escape_message(text: str) -> str:
    """Plain text safe inside a SARIF message with embedded links: `\\`, `[`, `]` escaped."""
    return _LINK_CHARS.sub(r"\\\1", text)


def message_text(f: Finding) -> str:
    """The message, with each related place linked by its relatedLocations id."""
    text = escape_message(f.message)
    if f.related:
        links = "; ".join(f"[{escape_message(r.message)}]({i})" for i, r in enumerate(f.related, 1))
        text += f" (see {links})"
    return text


class SourceLines:
    """The lines of the checked files, read once each (for fingerprints)."""

    def __init__(self, given: dict[str, bytes] | None = None) -> None:
        self._files: dict[str, list[str]] = {
            name: data.decode("utf-8", errors="replace").splitlines()
            for name, data in (given or {}).items()
        }

    def line(self, file: str, number: int) -> str:
        if file not in self._files:
            try:
                with open(file, encoding="utf-8", errors="replace") as handle:
                    self._files[file] = handle.read().splitlines()
            except OSError:  # standard input, or gone since: the line text is unknown
                self._files[file] = []
        lines = self._files[file]
        return lines[number - 1] if 0 < number <= len(lines) else ""


def fingerprint_base(f: Finding, uri: str, source: SourceLines) -> str:
    """What identifies a finding apart from where it is (see the module docstring)."""
    line = " ".join(source.line(f.file, f.span.line).split())
    # "already stated on line 3" changes when lines move; the numbers carry no identity
    message = _NUMBER.sub("#", f.message)
    return "\x1f".join((f.rule, uri, f.analysis or "", message, line))


def fingerprints(
    findings: list[Finding], root: Path, sources: dict[str, bytes] | None = None
) -> list[str]:
    source = SourceLines(sources)
    seen: dict[str, int] = {}
    out = []
    for f in findings:
        uri = artifact_location(f.file, root)["uri"]
        base = fingerprint_base(f, uri, source)
        # the same finding twice in a file: tell them apart by order of appearance
        occurrence = seen.get(base, 0)
        seen[base] = occurrence + 1
        digest = hashlib.sha256(f"{base}\x1f{occurrence}".encode()).hexdigest()
        out.append(digest[:32])
    return out


def result(f: Finding, root: Path, index: dict[str, int], fingerprint: str | None = None) -> dict:
    out: dict = {"ruleId": f.rule}
    if f.rule in index:
        out["ruleIndex"] = index[f.rule]
    out["level"] = LEVELS[f.severity]
    out["message"] = {"text": message_text(f)}
    out["locations"] = [{"physicalLocation": _physical(f.file, f.span, root)}]
    if f.related:
        out["relatedLocations"] = [_related(r, i, root) for i, r in enumerate(f.related, 1)]
    if fingerprint is not None:
        out["partialFingerprints"] = {FINGERPRINT_KEY: fingerprint}
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
    # sorted as every reporter shows them, so "which occurrence" is well defined
    findings = sorted(report.findings, key=Finding.sort_key)
    prints = fingerprints(findings, root, report.sources)
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
                        "informationUri": PROJECT_URL,
                        "rules": descriptors,
                    }
                },
                "originalUriBaseIds": {SRCROOT: {"uri": root.as_uri() + "/"}},
                "columnKind": "unicodeCodePoints",
                "results": [
                    result(f, root, index, p) for f, p in zip(findings, prints, strict=True)
                ],
            }
        ],
    }


def render(report: Report) -> str:
    return json.dumps(log(report), indent=2, ensure_ascii=False) + "\n"
