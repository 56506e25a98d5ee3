"""The light lint of the commands that reason about a diagram (`blocking_only`).

Those commands print a diagram's errors and nothing else, so only the rules
that can stop the causal reasoning run. Held here against the full lint that
`check` runs, on every fixture and sample: the same errors, the same decision
whether the causal reasoning may run.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from dagward.config import Settings
from dagward.engine import read_and_lint

ROOT = Path(__file__).resolve().parent.parent
FILES = sorted((ROOT / "tests" / "fixtures").rglob("*.dag")) + sorted(
    (ROOT / "samples").rglob("*.dag")
)


def _errors(result):
    return [(f.rule, f.line, f.column, f.message) for f in result.findings if f.severity == "error"]


@pytest.mark.parametrize(
    "settings",
    [Settings(), Settings(severity={"isolated-variable": "error"}, disable=frozenset({"cycle"}))],
    ids=["defaults", "raised-and-disabled"],
)
def test_blocking_only_keeps_the_errors_and_the_decision(settings):
    assert len(FILES) > 20
    for path in FILES:
        full = read_and_lint(str(path), settings)
        light = read_and_lint(str(path), settings, blocking_only=True)
        assert light.causal_ran == full.causal_ran, path
        if full.causal_ran:
            # the causal rules report on the analyses; they never stop the reasoning
            assert _errors(light) == [e for e in _errors(full) if _structure(e[0])], path
        else:
            assert _errors(light) == _errors(full), path
        assert len(light.findings) <= len(full.findings)


def _structure(rule: str) -> bool:
    from dagward.rules import STRUCTURE_RULES

    return rule in {r.name for r in STRUCTURE_RULES}
