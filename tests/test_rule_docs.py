"""Each rule's docstring is its user documentation: it must hold a bad and a good
example, and the test lints both (the bad one must fire the rule at the annotated
line, the good one must not fire it)."""

from __future__ import annotations

import pytest
from dagward.config import Settings
from dagward.engine import lint_source
from dagward.rules import ALL_RULES
from expectations import expectations_in
from helpers.docblocks import block, data_for


@pytest.mark.parametrize("rule", ALL_RULES, ids=lambda r: r.name)
def test_docstring_has_examples_that_lint(rule):
    doc = rule.doc
    assert doc.startswith(f"{rule.name}: "), "the docstring starts with the rule name"
    bad, good = block(doc, "Bad"), block(doc, "Good")
    settings = Settings().with_overrides(enable=[rule.name])
    expected, _options = expectations_in(bad)
    expected_lines = sorted({line for line, name in expected if name == rule.name})
    assert expected_lines, "the bad example marks the line where the rule fires"
    data = data_for(doc)
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
