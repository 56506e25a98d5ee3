"""Each rule's docstring is its user documentation: it must hold a bad and a good
example, and the test lints both (the bad one must fire the rule at the annotated
line, the good one must not fire it)."""

from __future__ import annotations

import textwrap

import pytest
from expectations import expectations_in

from linter.config import Settings
from linter.engine import lint_source
from linter.rules import ALL_RULES


def _block(doc: str, label: str) -> str:
    """The indented block after `Bad::` or `Good::`."""
    lines = doc.split("\n")
    start = lines.index(f"{label}::") + 1
    block = []
    for line in lines[start:]:
        if line and not line.startswith("    "):
            break
        block.append(line)
    return textwrap.dedent("\n".join(block)).strip("\n") + "\n"


def _data(doc: str) -> dict:
    """`lint_source` keyword arguments for a data rule: the `Data::` block is a CSV table."""
    if "\nData::\n" not in doc:
        return {}
    from linter.data import DataOptions, table_from_csv_text

    return {
        "table": table_from_csv_text(_block(doc, "Data"), "data.csv"),
        "data_options": DataOptions(),
    }


@pytest.mark.parametrize("rule", ALL_RULES, ids=lambda r: r.name)
def test_docstring_has_examples_that_lint(rule):
    doc = rule.doc
    assert doc.startswith(f"{rule.name}: "), "the docstring starts with the rule name"
    bad, good = _block(doc, "Bad"), _block(doc, "Good")
    settings = Settings().with_overrides(enable=[rule.name])
    expected, _options = expectations_in(bad)
    expected_lines = sorted({line for line, name in expected if name == rule.name})
    assert expected_lines, "the bad example marks the line where the rule fires"
    data = _data(doc)
    bad_found = [
        f for f in lint_source(bad, "bad.dag", settings, **data).findings if f.rule == rule.name
    ]
    assert sorted({f.line for f in bad_found}) == expected_lines
    good_found = [
        f for f in lint_source(good, "good.dag", settings, **data).findings if f.rule == rule.name
    ]
    assert good_found == []


def test_rule_names_are_unique_and_kebab_case():
    names = [r.name for r in ALL_RULES]
    assert len(names) == len(set(names))
    for n in names:
        assert n == n.lower() and " " not in n and "_" not in n
