"""Every fixture diagram is linted and its findings compared, rule *and* line, with
the `# expect:` annotations in the file (see tests/expectations.py)."""

from __future__ import annotations

from collections import Counter
from pathlib import Path

import pytest
from dagward.engine import read_and_lint
from expectations import expectations, settings_for

ROOT = Path(__file__).resolve().parent.parent
# the samples of the questions beyond the total effect carry `# expect:` lines too
QUESTION_SAMPLES = ("clinic_sample.dag", "walking_group.dag", "reading_support.dag")
FIXTURES = sorted(
    [
        *(ROOT / "tests" / "fixtures").rglob("*.dag"),
        *(ROOT / "samples" / "broken").glob("*.dag"),
        *(ROOT / "samples" / name for name in QUESTION_SAMPLES),
    ]
)


def test_there_are_fixtures():
    assert len(FIXTURES) >= 20


@pytest.mark.parametrize("path", FIXTURES, ids=lambda p: str(p.relative_to(ROOT)))
def test_fixture(path: Path):
    expected, options = expectations(path)
    result = read_and_lint(str(path), settings_for(options))
    found = Counter((f.line, f.rule) for f in result.findings)
    missing = expected - found
    unexpected = found - expected
    detail = "\n".join(f"  {f.line}:{f.column} {f.rule}: {f.message}" for f in result.findings)
    assert not missing and not unexpected, (
        f"missing {sorted(missing)}, unexpected {sorted(unexpected)}; found:\n{detail}"
    )


def test_broken_samples_cover_every_structure_rule():
    from dagward.rules import STRUCTURE_RULES

    fired = set()
    for path in (ROOT / "samples" / "broken").glob("*.dag"):
        expected, _ = expectations(path)
        fired.update(rule for _line, rule in expected)
    assert {r.name for r in STRUCTURE_RULES} <= fired
