"""`dagward identify` on fixture diagrams: text, JSON and LaTeX, and its usage errors."""

from __future__ import annotations

import json

from clirunner import ROOT, dagward, in_process
from dagward.causal.estimand import from_json, front_door_formula
from dagward.causal.identify import identify_effect
from dagward.config import Settings
from dagward.engine import read_and_lint

FIX = ROOT / "tests" / "fixtures"


def _json(path, *extra):
    run = dagward("identify", str(path), "--format", "json", *extra)
    assert run.code == 0, run.err
    return json.loads(run.out)["analyses"]


def test_front_door_fixture_text_and_json():
    path = FIX / "causal" / "front_door.dag"
    run = dagward("identify", str(path))
    assert run.code == 0
    assert "identified by the front-door criterion through {step_count}" in run.out
    assert (
        "P(sick_days | do(enrolled)) = sum over step_count of P(step_count | enrolled) * "
        "sum over enrolled' of P(sick_days | enrolled', step_count) P(enrolled')"
    ) in run.out
    (a,) = _json(path)
    assert a["route"] == "front-door" and a["front_door_set"] == ["step_count"]
    assert from_json(a["estimand"]) == front_door_formula("enrolled", "sick_days", {"step_count"})


def test_json_answers_are_those_of_the_library_on_every_fixture(capsys):
    for path in sorted(FIX.rglob("*.dag")):
        result = read_and_lint(str(path), Settings())
        if result.diagram is None or not result.causal_ran or not result.diagram.analyses:
            continue
        d = result.diagram
        # in this process: 50 fixtures, no interpreter start-up each (the tests
        # above run the real command line)
        run = in_process(capsys, "identify", str(path), "--format", "json")
        assert run.code == 0, run.err
        reports = json.loads(run.out)["analyses"]
        for a, report in zip(d.analyses, reports, strict=True):
            try:
                r = identify_effect(d.graph, a.exposure_set, a.outcome_set, d.measured)
            except ValueError:
                assert report["identified"] is None
                continue
            assert report["identified"] == r.identified and report["route"] == r.route, path
            if r.identified:
                assert from_json(report["estimand"]) == r.estimand


def test_bow_reports_the_hedge_and_the_instrument():
    path = FIX / "identify" / "bow.dag"
    run = dagward("identify", str(path))
    assert "not identified" in run.out
    assert "enrolled <-> sick_days (through `motivation`)" in run.out
    assert "distance_to_gym for enrolled" in run.out
    (a,) = _json(path)
    assert a["hedge"]["variables"] == ["enrolled", "sick_days"]
    assert a["hedge"]["bidirected"] == [["enrolled", "sick_days"]]
    assert a["hedge"]["unmeasured"] == ["motivation"]
    assert a["instruments"] == [
        {"exposure": "enrolled", "variable": "distance_to_gym", "given": []}
    ]


def test_napkin_latex_and_unicode():
    path = FIX / "identify" / "napkin.dag"
    run = dagward("identify", str(path), "--format", "latex")
    assert run.code == 0
    assert r"\frac{\sum_{\mathit{campaign\_area}}" in run.out
    assert r"\mathrm{do}(\mathit{joined\_walks})" in run.out
    run = dagward("identify", str(path), "--unicode")
    assert "identified by the general formula" in run.out
    assert "Σ_campaign_area P(campaign_area)" in run.out
    assert "same value for any values of flyer_seen" in run.out


def test_usage_errors_exit_2_with_one_line():
    run = dagward("identify", "no-such-file.dag")
    assert run.code == 2 and run.err.count("\n") == 1
    run = dagward("identify", str(FIX / "identify" / "bow.dag"), "--analysis", "nope")
    assert run.code == 2 and "no analysis `nope`" in run.err


def test_output_file_is_written(tmp_path):
    out = tmp_path / "answer.tex"
    run = dagward(
        "identify", str(FIX / "identify" / "napkin.dag"), "--format", "latex", "--output", str(out)
    )
    assert run.code == 0 and run.out == ""
    assert out.read_text().startswith("% dagward identify:")


def test_instrument_search_is_skipped_above_the_limit(monkeypatch):
    import dagward.commands.identify as command

    result = read_and_lint(str(FIX / "identify" / "bow.dag"), Settings())
    (a,) = result.diagram.analyses
    assert command.report_for(result.diagram, a)["instruments"] == [
        {"exposure": "enrolled", "variable": "distance_to_gym", "given": []}
    ]
    monkeypatch.setattr(command, "INSTRUMENT_SEARCH_LIMIT", 2)
    report = command.report_for(result.diagram, a)
    assert report["instruments"] is None
    assert "instruments: not searched (more than 2 measured variables" in command.render_text(
        "bow.dag", [report], False
    )
