"""SARIF output: validates against the official 2.1.0 schema, and says the right things.

The schema is the OASIS one ("Static Analysis Results Interchange Format (SARIF)
Version 2.1.0", 2020), copied unchanged into tests/schemas/ (see the NOTICE there).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest
from dagward.cli import main
from dagward.engine import lint_source
from dagward.report import Report
from dagward.report.sarif import log, render
from dagward.rules import ALL_RULES

REPO = Path(__file__).resolve().parents[1]
SCHEMA_PATH = Path(__file__).resolve().parent / "schemas" / "sarif-schema-2.1.0.json"

# A diagram of our own with one known cycle finding: the cycle is reported at the
# arrow that comes last (line 3), with the other arrow of the cycle (line 2) related.
CYCLE = """\
title "Stress and sleep"
stress -> sleep_loss  # worry keeps people awake
sleep_loss -> stress
stress -> sick_days
"""

INLINE = {
    "cycle": CYCLE,
    "syntax-error": "age -> \n",
    "clean": "age -> enrolled -> sick_days\nage -> sick_days\n",
    "empty": "",
}


@pytest.fixture(scope="module")
def validator() -> jsonschema.Draft4Validator:
    # Fail loudly (never skip) when the schema is missing: CI must have it.
    assert SCHEMA_PATH.is_file(), f"official SARIF schema missing at {SCHEMA_PATH}"
    schema = json.loads(SCHEMA_PATH.read_text("utf-8"))
    jsonschema.Draft4Validator.check_schema(schema)
    return jsonschema.Draft4Validator(schema)


def _diagram_files() -> list[Path]:
    found = sorted(REPO.glob("samples/**/*.dag")) + sorted(REPO.glob("tests/fixtures/**/*.dag"))
    return found


def _sarif_for(paths_and_texts: list[tuple[str, str | bytes]], root: Path) -> dict:
    findings = []
    for path, text in paths_and_texts:
        findings.extend(lint_source(text, path).findings)
    return log(Report(findings, len(paths_and_texts), repository_root=str(root)))


def test_every_sample_and_fixture_validates(validator, monkeypatch):
    monkeypatch.chdir(REPO)
    files = _diagram_files()
    cases = [(str(p.relative_to(REPO)), p.read_bytes()) for p in files]
    cases += [(f"inline/{name}.dag", text) for name, text in INLINE.items()]
    # each file on its own (so one bad file cannot hide behind another) and all together
    for case in cases:
        doc = _sarif_for([case], REPO)
        errors = sorted(validator.iter_errors(doc), key=str)
        assert not errors, f"{case[0]}: {errors[0].message} at {list(errors[0].absolute_path)}"
    doc = _sarif_for(cases, REPO)
    validator.validate(doc)
    results = doc["runs"][0]["results"]
    # every finding became a result that points at its file, relative to the root
    expected = sum(len(lint_source(text, path).findings) for path, text in cases)
    assert len(results) == expected
    uris = {r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] for r in results}
    assert "inline/cycle.dag" in uris and "inline/syntax-error.dag" in uris
    for p in files:
        assert not str(p.relative_to(REPO)).startswith("/")


def test_known_cycle_finding_positions_and_related_location(validator, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "stress.dag").write_text(CYCLE, "utf-8")
    doc = _sarif_for([("stress.dag", CYCLE)], tmp_path)
    validator.validate(doc)
    run = doc["runs"][0]
    (cycle,) = [r for r in run["results"] if r["ruleId"] == "cycle"]
    rules = run["tool"]["driver"]["rules"]
    assert rules[cycle["ruleIndex"]]["id"] == "cycle"
    assert cycle["level"] == "error"
    assert "sleep_loss -> stress" in cycle["message"]["text"]
    location = cycle["locations"][0]["physicalLocation"]
    assert location["artifactLocation"] == {"uri": "stress.dag", "uriBaseId": "%SRCROOT%"}
    # `sleep_loss -> stress` on line 3: columns 1..20, end exclusive -> 21
    assert location["region"] == {"startLine": 3, "startColumn": 1, "endLine": 3, "endColumn": 21}
    (related,) = cycle["relatedLocations"]
    assert related["message"]["text"] == "arrow stress -> sleep_loss"
    assert related["physicalLocation"]["region"] == {
        "startLine": 2,
        "startColumn": 1,
        "endLine": 2,
        "endColumn": 21,
    }
    assert run["originalUriBaseIds"]["%SRCROOT%"]["uri"] == tmp_path.resolve().as_uri() + "/"


def test_rule_catalogue_in_driver(validator):
    doc = log(Report([], 0, repository_root=str(REPO)))
    validator.validate(doc)
    driver = doc["runs"][0]["tool"]["driver"]
    from dagward.version import __version__

    assert driver["name"] == "dagward" and driver["version"] == __version__
    assert [r["id"] for r in driver["rules"]] == [r.name for r in ALL_RULES]
    by_id = {r["id"]: r for r in driver["rules"]}
    cycle = by_id["cycle"]
    assert cycle["shortDescription"]["text"] == "The arrows contain a directed cycle."
    assert cycle["fullDescription"]["text"].startswith(
        "The arrows go round in a circle. A causal diagram must be acyclic"
    )
    assert cycle["defaultConfiguration"] == {"level": "error", "enabled": True}
    # the help holds the bad and the good example, as fenced code in Markdown
    assert "stress -> sleep_loss" in cycle["help"]["text"]
    assert (
        "**Bad:**\n\n```\nstress -> sleep_loss\nsleep_loss -> stress\n```"
        in cycle["help"]["markdown"]
    )
    assert "# expect:" not in cycle["help"]["markdown"]
    reason = by_id["arrow-without-reason"]
    assert reason["defaultConfiguration"] == {"level": "note", "enabled": False}


def test_uri_is_percent_encoded_and_relative_to_git_root(validator, tmp_path, monkeypatch):
    subprocess.run(["git", "init", "-q", str(tmp_path)], check=True)
    folder = tmp_path / "causal models"
    folder.mkdir()
    (folder / "größe.dag").write_text("größe -> gewicht\n", "utf-8")
    (folder / "loop.dag").write_text("a -> b\nb -> a\n", "utf-8")
    monkeypatch.chdir(folder)
    code = main(["check", "loop.dag", "größe.dag", "--format", "sarif", "--output", "out.sarif"])
    assert code == 1
    doc = json.loads((folder / "out.sarif").read_text("utf-8"))
    validator.validate(doc)
    (result,) = doc["runs"][0]["results"]
    assert result["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] == (
        "causal%20models/loop.dag"
    )
    # a file outside the repository root gets an absolute file URI
    outside = tmp_path.parent / f"{tmp_path.name}-outside.dag"
    outside.write_text("a -> a\n", "utf-8")
    try:
        findings = lint_source(outside.read_text("utf-8"), str(outside)).findings
        doc = log(Report(findings, 1, repository_root=str(tmp_path)))
        validator.validate(doc)
        loc = doc["runs"][0]["results"][0]["locations"][0]["physicalLocation"]
        assert loc["artifactLocation"] == {"uri": outside.resolve().as_uri()}
    finally:
        outside.unlink()


def test_unicode_path_encoding(validator, tmp_path):
    (tmp_path / "größe.dag").write_text("a -> a\n", "utf-8")
    findings = lint_source("a -> a\n", str(tmp_path / "größe.dag")).findings
    doc = json.loads(render(Report(findings, 1, repository_root=str(tmp_path))))
    validator.validate(doc)
    uri = doc["runs"][0]["results"][0]["locations"][0]["physicalLocation"]["artifactLocation"]
    assert uri["uri"] == "gr%C3%B6%C3%9Fe.dag"
    assert doc["runs"][0]["results"][0]["level"] == "error"


# --- following an alert from one revision to the next ----------------------------------

# Three findings on line 7 (two adjusted variables, one of them wrong in two ways);
# the findings stay the same when lines are added above.
THREE_ON_ONE_LINE = """\
age -> enrolled
age -> sick_days
enrolled -> fitness_12m -> sick_days
enrolled -> survey_response
sick_days -> survey_response
analysis total_effect {
  adjust: age, fitness_12m, survey_response
  exposure: enrolled
  outcome: sick_days
}
"""


def _results(tmp_path: Path, text: str) -> list[dict]:
    path = tmp_path / "study.dag"
    path.write_text(text, "utf-8")
    findings = lint_source(text, str(path)).findings
    return log(Report(findings, 1, repository_root=str(tmp_path)))["runs"][0]["results"]


def _prints(results: list[dict]) -> dict[tuple[str, str], str]:
    return {(r["ruleId"], r["message"]["text"]): r["partialFingerprints"]["dagwardFinding/v1"]
            for r in results}  # fmt: skip


def test_fingerprints_survive_a_line_inserted_above(validator, tmp_path):
    before = _results(tmp_path, THREE_ON_ONE_LINE)
    # the second revision: a comment and an unrelated arrow above everything
    after = _results(tmp_path, "# revised after review\nshift_work -> age\n" + THREE_ON_ONE_LINE)
    validator.validate({"version": "2.1.0", "runs": [{"tool": {"driver": {"name": "x"}},
                                                      "results": after}]})  # fmt: skip
    on_line_7 = [r for r in before if r["locations"][0]["physicalLocation"]["region"]
                 ["startLine"] == 7]  # fmt: skip
    assert len(on_line_7) == 3, [r["ruleId"] for r in before]
    # two of them even start at the same column (survey_response)
    starts = [r["locations"][0]["physicalLocation"]["region"]["startColumn"] for r in on_line_7]
    assert len(set(starts)) == 2
    # the findings moved two lines down ...
    assert {r["locations"][0]["physicalLocation"]["region"]["startLine"] for r in after} >= {9}
    # ... and each keeps its fingerprint
    old, new = _prints(before), _prints(after)
    for key in old:
        assert key in new, key
        assert new[key] == old[key], key
    # two findings on one line have different fingerprints
    line_7 = [r["partialFingerprints"]["dagwardFinding/v1"] for r in on_line_7]
    assert len(set(line_7)) == len(line_7)
    # every fingerprint in a run is distinct
    every = [r["partialFingerprints"]["dagwardFinding/v1"] for r in before]
    assert len(set(every)) == len(every)


def test_fingerprint_changes_when_the_finding_changes(tmp_path):
    before = _prints(_results(tmp_path, THREE_ON_ONE_LINE))
    # another exposure: other findings (and other messages), other fingerprints
    changed = THREE_ON_ONE_LINE.replace("exposure: enrolled", "exposure: age")
    after = _prints(_results(tmp_path, changed))
    assert after and not set(after.values()) & set(before.values())


def test_identical_findings_in_one_file_are_told_apart(tmp_path):
    # the same duplicate arrow stated three times: two findings with the same text
    text = "age -> sick_days\nage -> sick_days\nage -> sick_days\n"
    results = _results(tmp_path, text)
    dups = [r for r in results if r["ruleId"] == "duplicate-arrow"]
    assert len(dups) == 2
    assert len({r["partialFingerprints"]["dagwardFinding/v1"] for r in dups}) == 2
    # and they survive an insertion too
    again = _results(tmp_path, "# note\n" + text)
    assert [r["partialFingerprints"] for r in again if r["ruleId"] == "duplicate-arrow"] == [
        r["partialFingerprints"] for r in dups
    ]


def test_related_places_are_linked_from_the_message(tmp_path):
    (cycle,) = [r for r in _results(tmp_path, CYCLE) if r["ruleId"] == "cycle"]
    text = cycle["message"]["text"]
    # SARIF 2.1.0, 3.11.6: "[text](id)" links to the relatedLocation with that id
    ids = [r["id"] for r in cycle["relatedLocations"]]
    assert ids == [1]
    assert text.endswith(" (see [arrow stress -> sleep_loss](1))")


def test_brackets_in_a_message_are_escaped():
    from dagward.report.sarif import escape_message

    assert escape_message("a [b] c\\") == "a \\[b\\] c\\\\"


def test_help_uri_points_at_the_generated_rule_docs():
    from dagward.report import ruledoc
    from dagward.report.sarif import PROJECT_URL

    doc = log(Report([], 0, repository_root=str(REPO)))
    driver = doc["runs"][0]["tool"]["driver"]
    assert driver["informationUri"] == PROJECT_URL
    page = (REPO / ruledoc.DOCS_PATH).read_text("utf-8")
    headings = {line[3:] for line in page.splitlines() if line.startswith("## ")}
    for rule in driver["rules"]:
        uri = rule["helpUri"]
        assert uri.startswith(f"{PROJECT_URL}/blob/main/docs/rules.md#")
        # the anchor is a heading of the file (GitHub makes "## cycle" into #cycle)
        assert uri.rsplit("#", 1)[1] == rule["id"] and rule["id"] in headings


def test_rule_docs_file_is_in_sync_with_the_docstrings():
    from dagward.report import ruledoc

    on_disk = (REPO / ruledoc.DOCS_PATH).read_text("utf-8")
    assert on_disk == ruledoc.rules_markdown(), (
        "docs/rules.md is out of date: run `python -m dagward.report.ruledoc > docs/rules.md`"
    )
    for rule in ALL_RULES:
        assert "# expect:" not in on_disk
        # each rule's bad example is in its section
        assert ruledoc.parts(rule)[1].split("```")[1].strip() in on_disk


def test_fingerprints_from_standard_input_use_the_buffer(tmp_path):
    """An editor's unsaved buffer gets the fingerprints the saved file would get."""
    saved = tmp_path / "study.dag"
    saved.write_text(THREE_ON_ONE_LINE, "utf-8")
    on_disk = subprocess.run(
        [sys.executable, "-m", "dagward", "check", str(saved), "--format", "sarif"],
        cwd=tmp_path, env={**os.environ, "PYTHONPATH": str(REPO)}, capture_output=True,
        text=True, timeout=300,
    )  # fmt: skip
    # the file on disk now differs from the buffer (a line added above, one reformatted)
    saved.write_text("x -> y\n" + THREE_ON_ONE_LINE.replace("age -> enrolled", "age->enrolled"))
    buffer = subprocess.run(
        [sys.executable, "-m", "dagward", "check", "-", "--stdin-filename", str(saved),
         "--format", "sarif"],
        input=THREE_ON_ONE_LINE, cwd=tmp_path, env={**os.environ, "PYTHONPATH": str(REPO)},
        capture_output=True, text=True, timeout=300,
    )  # fmt: skip
    first = json.loads(on_disk.stdout)["runs"][0]["results"]
    second = json.loads(buffer.stdout)["runs"][0]["results"]
    assert [r["partialFingerprints"] for r in first] == [r["partialFingerprints"] for r in second]
    assert len(first) == 3


def test_rule_help_links_follow_the_project_url_the_action_sets(tmp_path):
    # the action sets DAGWARD_PROJECT_URL to the repository it runs from
    from clirunner import dagward

    run = dagward(
        "check", "samples/wellness.dag", "--format", "sarif",
        env={"DAGWARD_PROJECT_URL": "https://example.invalid/lab/dagward-fork/"},
    )  # fmt: skip
    driver = json.loads(run.out)["runs"][0]["tool"]["driver"]
    assert driver["informationUri"] == "https://example.invalid/lab/dagward-fork"
    assert all(
        r["helpUri"].startswith("https://example.invalid/lab/dagward-fork/blob/main/docs/rules.md#")
        for r in driver["rules"]
    )
