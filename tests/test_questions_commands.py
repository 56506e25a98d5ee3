"""Every command speaks the questions beyond the total effect: `paths`, `diff`,
the API's `check_covariates`, and the JSON and SARIF reports, on the question
samples (invented scenarios; expectations worked out by hand from the diagrams
and cross-checked with the brute-force oracles of tests/helpers)."""

from __future__ import annotations

import json

from clirunner import ROOT, dagward
from dagward.api import check_covariates, load_diagram
from dagward.cli import main
from dagward.config import Settings
from dagward.rules import VALIDITY_RULES
from helpers.oracle import blocked, simple_paths
from helpers.question_oracles import oracle_valid_for_question

WALKING = ROOT / "samples" / "walking_group.dag"
CLINIC = ROOT / "samples" / "clinic_sample.dag"


def test_paths_lists_mediator_outcome_paths_for_natural_effects():
    doc = json.loads(dagward("paths", "samples/walking_group.dag", "--analysis",
                             "direct_effect", "--format", "json").out)  # fmt: skip
    (report,) = doc["analyses"]
    assert report["question"] == "natural-direct"
    rows = report["mediator_outcome_paths"]
    d = load_diagram(WALKING, Settings()).diagram
    G = d.graph
    # openness of each listed mediator-outcome path given Z and the exposure, by definition
    given = {"age", "income", "walking_group"}
    for row in rows:
        assert not row["causal"]
        assert row["open"] == (not blocked(G, row["path"], given)), row
    opened = [r["path"] for r in rows if r["open"]]
    assert opened == [["weight_change", "diet_change", "blood_pressure"]]
    # every non-causal mediator-outcome path is listed (no cut on this small diagram)
    every = simple_paths(G, {"weight_change"}, {"blood_pressure"})
    causal = [p for p in every if all(G.has_edge(a, b) for a, b in zip(p, p[1:], strict=False))]
    assert len(rows) == len(every) - len(causal)


def test_paths_judges_paths_given_the_restriction():
    run = dagward("paths", "samples/clinic_sample.dag", "--analysis", "clinic_data")
    assert "in data restricted on {clinic_patient}" in run.out
    assert (
        "OPEN (biasing)  cycling -> knee_strain -> clinic_patient <- back_pain   "
        "[collider `clinic_patient` opened by conditioning on `clinic_patient`]"
    ) in run.out


def test_check_covariates_judges_the_question_asked():
    # natural direct effect: no covariates repair the exposure-induced confounder
    found = check_covariates(WALKING, "direct_effect", ["age", "income", "diet_change"],
                             Settings())  # fmt: skip
    assert "exposure-induced-confounder" in {f.rule for f in found}
    # controlled direct effect: stage-by-stage adjustment only
    found = check_covariates(WALKING, "controlled_direct", ["age", "income"], Settings())
    assert {f.rule for f in found} & VALIDITY_RULES == {"needs-g-methods"}
    # restricted sample: valid iff the oracle says so for Z with R forced in
    d = load_diagram(CLINIC, Settings()).diagram
    for covs in ([], ["age"], ["age", "desk_job"]):
        found = check_covariates(CLINIC, "case_control", covs, Settings())
        fired = {f.rule for f in found} & VALIDITY_RULES
        expect = oracle_valid_for_question(d.graph, {"cycling"}, {"back_pain"}, set(covs),
                                           d.measured, "total", (), {"in_study"})  # fmt: skip
        assert expect == (not fired)
        assert "selection-bias" in fired  # in_study is an effect of the outcome


def test_json_and_sarif_reports_carry_the_new_rules(tmp_path):
    run = dagward("check", "--format", "json", "samples/walking_group.dag")
    doc = json.loads(run.out)
    rules = (
        {f["rule"] for f in doc["findings"]}
        if "findings" in doc
        else {f["rule"] for file in doc["files"] for f in file["findings"]}
    )
    assert {"exposure-induced-confounder", "needs-g-methods", "open-biasing-path"} <= rules
    run = dagward("check", "--format", "sarif", "samples/clinic_sample.dag")
    sarif = json.loads(run.out)
    catalogue = {r["id"] for r in sarif["runs"][0]["tool"]["driver"]["rules"]}
    assert {"selection-bias", "needs-g-methods", "exposure-induced-confounder"} <= catalogue
    assert {r["ruleId"] for r in sarif["runs"][0]["results"]} == {"selection-bias"}


def test_diff_shows_the_question_and_the_new_problems(tmp_path, monkeypatch, capsys):
    import subprocess

    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path.parent))
    repo = tmp_path / "study"
    repo.mkdir()

    def git(*args):
        subprocess.run(["git", "-c", "user.name=t", "-c", "user.email=t@example.invalid", *args],
                       cwd=repo, check=True, capture_output=True)  # fmt: skip

    git("init", "-q", "-b", "main")
    restriction = "  restricted: clinic_patient  # expect: selection-bias\n"
    base = CLINIC.read_text().replace(restriction, "")
    (repo / "c.dag").write_text(base)
    git("add", ".")
    git("commit", "-q", "-m", "first")
    (repo / "c.dag").write_text(CLINIC.read_text())
    monkeypatch.chdir(repo)
    assert main(["diff", "--format", "json", "--base", "HEAD"]) == 0
    doc = json.loads(capsys.readouterr().out)
    (f,) = doc["files"]
    (a,) = [x for x in f["analyses"] if x["name"] == "clinic_data"]
    assert a["before"]["question"]["restricted"] == []
    assert a["after"]["question"]["restricted"] == ["clinic_patient"]
    assert a["before"]["declared_valid"] is True and a["after"]["declared_valid"] is False
    assert "selection-bias" in {p["rule"] for p in a["after"]["problems"]}
    assert main(["diff", "--base", "HEAD"]) == 0
    text = capsys.readouterr().out
    assert "the restriction changed from none to `clinic_patient`" in text
    assert "now reported: selection-bias for `clinic_patient`" in text
    assert "verdict: valid -> not valid (selection-bias)" in text
