"""JSON: the stable, documented shape (schema: tests/schemas/check-output.schema.json)."""

from __future__ import annotations

import json

from ..version import __version__
from . import Report, counts

SCHEMA_VERSION = 1


def tool() -> dict:
    return {"name": "dagward", "version": __version__}


def render(report: Report) -> str:
    doc = {
        "tool": tool(),
        "schema": SCHEMA_VERSION,
        "findings": [f.to_dict() for f in report.findings],
        "summary": {"files": report.files, **counts(report.findings)},
    }
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"
