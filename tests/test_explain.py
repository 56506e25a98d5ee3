"""`dagward explain RULE`: the rule's docstring in the terminal, and `check`'s pointer to it."""

from __future__ import annotations

import pytest
from clirunner import dagward, in_process
from dagward.config import Settings
from dagward.engine import lint_source
from dagward.report import ruledoc
from dagward.rules import ALL_RULES
from dagward.wording import SPELLING_BUDGET, Speller, close_names


@pytest.mark.parametrize("rule", ALL_RULES, ids=lambda r: r.name)
def test_explain_prints_the_docstring_with_both_examples(rule, capsys):
    run = in_process(capsys, "explain", rule.name)
    assert run.code == 0 and run.err == ""
    text = run.out
    assert text.startswith(f"{rule.name}: ")
    assert "Bad example:" in text and "Good example:" in text
    assert "# expect:" not in text
    # every line of the cleaned docstring is printed, examples indented as written
    for line in ruledoc.cleaned(rule).splitlines():
        if not line.endswith("::"):
            assert line in text.splitlines()
    assert f"Severity {rule.severity}, {rule.scope} rule" in text
    assert f"# dagward: allow {rule.name}" in text


def test_unknown_rule_exits_2_with_a_suggestion():
    run = dagward("explain", "colider-adjusted")
    assert run.code == 2 and run.out == ""
    assert run.err == (
        "dagward: error: no rule named `colider-adjusted`; did you mean `collider-adjusted`? "
        "(`dagward explain` lists them)\n"
    )
    run = dagward("explain", "nothing-like-it")
    assert run.code == 2 and "did you mean" not in run.err


def test_explain_without_a_rule_lists_them_all():
    run = dagward("explain")
    assert run.code == 0
    assert [line.split()[0] for line in run.out.splitlines()] == [r.name for r in ALL_RULES]


def test_close_names():
    names = [r.name for r in ALL_RULES]
    assert close_names("cycles", names) == ["cycle"]
    assert close_names("CYCLE", names) == ["cycle"]
    assert "collider-adjusted" in close_names("collider", names)
    assert close_names("zzzz", names) == []


def _outside_hints(text: str) -> dict[str, str]:
    """The message of variable-outside-periods by the variable it names."""
    found = lint_source(text, "t.dag", Settings()).findings
    return {
        f.message.split("`")[1]: f.message for f in found if f.rule == "variable-outside-periods"
    }


def test_spelling_hints_stop_at_the_budget_for_every_name_alike():
    # A small file: the close spelling `sleep_hour` in a period hints at `sleep_hours`.
    small = "period night: sleep_hour, Mood\nsleep_hours -> mood\n"
    hints = _outside_hints(small)
    assert "`sleep_hour` in a period list may be a misspelling" in hints["sleep_hours"]
    assert "`Mood` in a period list may be a misspelling" in hints["mood"]
    # Many variables outside the periods against many period members without arrows:
    # past the budget only the match that differs in case is offered, and to every
    # name alike (the same whatever the order of the lines).
    n = int(SPELLING_BUDGET**0.5) + 10
    assert n * n > SPELLING_BUDGET
    arrows = [f"visit_{i} -> visit_{i}_done" for i in range(n)]
    members = [f"visit_{i}_don" for i in range(n)] + ["VISIT_7"]
    big = "period p: " + ", ".join(members) + "\n" + "\n".join(arrows) + "\n"
    hints = _outside_hints(big)
    assert len(hints) == 2 * n
    assert "`VISIT_7` in a period list" in hints["visit_7"]
    assert not any("misspelling" in m for name, m in hints.items() if name != "visit_7")
    # under the budget, the same names get the close spellings
    speller = Speller(members, queries=1)
    assert close_names("visit_3_done", speller, n=1) == ["visit_3_don"]
    assert Speller(members, queries=n).close("visit_3_done") == []
    reordered = "period p: " + ", ".join(members) + "\n" + "\n".join(reversed(arrows)) + "\n"
    assert _outside_hints(reordered) == hints


def test_check_points_at_explain_once_and_the_pointer_works(tmp_path):
    broken = ["samples/broken/cycle.dag", "samples/broken/duplicate_arrow.dag"]
    run = dagward("check", *broken)
    assert run.code == 1
    hints = [line for line in run.out.splitlines() if "dagward explain" in line]
    assert len(hints) == 1 and run.out.splitlines()[-1] == hints[0]
    command = hints[0].split(": ", 1)[1].split()
    assert command[:2] == ["dagward", "explain"]
    assert f"[{command[2]}]" in run.out  # names a rule that was found
    assert dagward(*command[1:]).code == 0
    # no findings, no pointer; and none in quiet mode or other formats
    (tmp_path / "clean.dag").write_text("age -> sick_days\n")
    clean = dagward("check", str(tmp_path / "clean.dag"))
    assert clean.out == "no problems in 1 file\n"
    assert "explain" not in dagward("check", *broken, "-q").out
    assert "explain" not in dagward("check", *broken, "--format", "line").out
