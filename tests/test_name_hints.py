"""Misspelling hints ("did you mean") stay linear in the size of a file.

A hint compares one name with every known name, so hints for thousands of
findings against thousands of names would cost their product. `Speller`
caps the comparisons per list of known names (`SPELLING_BUDGET`); these tests
count comparisons (never time) and check that hints within the budget are
the ones a single look-up gives.
"""

from __future__ import annotations

import difflib

import pytest
from dagward.config import Settings
from dagward.engine import lint_source
from dagward.wording import SPELLING_BUDGET, Speller, close_names


def test_hints_within_the_budget_are_those_of_a_single_look_up():
    known = [f"score_{i}" for i in range(200)] + ["age", "Income", "shift_work"]
    names = ["scor_17", "income", "shiftwork", "zzzz", "age", "score"]
    speller = Speller(known, queries=len(names))
    for name in names:
        assert speller.close(name) == close_names(name, known)
    assert speller.close("shiftwork") == ["shift_work"]


def test_past_the_budget_every_name_alike_gets_only_case_matches():
    known = [f"v{i}" for i in range(10_000)]
    queries = SPELLING_BUDGET // len(known) + 1  # one more than the budget allows
    speller = Speller(known, queries=queries)
    # no close spelling for any name, whatever its place in the file ...
    assert [speller.close(f"v{i}x") for i in range(3)] == [[], [], []]
    # ... but a match that differs only in case is a dictionary look-up, always given
    assert speller.close("V77") == ["v77"]
    # within the budget the same look-up gets its close spelling
    assert Speller(known, queries=queries - 1).close("v12x") == close_names("v12x", known)


def _many_strays_file(n: int) -> str:
    """n variables with arrows outside every period, and n period names with none."""
    lines = ["period early: " + ", ".join(f"stray{i}" for i in range(n))]
    lines += [f"node{i} -> node{i + 1}" for i in range(n)]
    return "\n".join(lines) + "\n"


@pytest.fixture
def counted_comparisons(monkeypatch):
    """Counts the known names difflib is asked to compare with, over every call."""
    seen = [0]
    real = difflib.get_close_matches

    def counting(word, possibilities, *args, **kwargs):
        possibilities = list(possibilities)
        seen[0] += len(possibilities)
        return real(word, possibilities, *args, **kwargs)

    monkeypatch.setattr(difflib, "get_close_matches", counting)
    return seen


def test_check_with_thousands_of_stray_names_compares_within_the_budget(counted_comparisons):
    n = 3_000  # unbounded, the hints would make 3,001 x 3,000 + 3,000 x 3,001 comparisons
    findings = lint_source(_many_strays_file(n), "strays.dag", Settings()).findings
    by_rule: dict[str, int] = {}
    for f in findings:
        by_rule[f.rule] = by_rule.get(f.rule, 0) + 1
    assert by_rule == {"variable-outside-periods": n + 1, "isolated-variable": n}
    # one budget per rule's list of known names: outside-periods and isolated-variable
    assert counted_comparisons[0] <= 2 * SPELLING_BUDGET
    # and that is far below the product the unbounded hints cost
    assert counted_comparisons[0] < 2 * n * n // 50
    # every finding is still reported in full; only the hint is left out past the budget
    assert all("add it to its period" in f.message for f in findings
               if f.rule == "variable-outside-periods")  # fmt: skip
