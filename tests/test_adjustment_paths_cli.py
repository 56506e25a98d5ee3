"""`dagward adjustment` and `dagward paths` end to end, checked against the
brute-force oracle of tests/helpers/oracle.py (definitions, every path enumerated)."""

from __future__ import annotations

import json
import random

from clirunner import ROOT, dagward
from dagward.engine import read_and_lint
from helpers.oracle import blocked, causal, oracle_minimal_valid_sets, oracle_valid
from helpers.question_oracles import oracle_sets_given, oracle_valid_for_question

KEYS = ["name", "exposure", "outcome", "declared", "declared_valid", "identifiable",
        "minimal_sets", "smallest", "truncated", "best_achievable", "front_door", "route", "problems", "notes",
        "question"]  # fmt: skip


def _diagram(path):
    return read_and_lint(str(ROOT / path), __import__("dagward.config").config.Settings()).diagram


def test_adjustment_json_matches_the_oracle_on_every_sample():
    for sample in sorted((ROOT / "samples").glob("*.dag")):
        rel = str(sample.relative_to(ROOT))
        doc = json.loads(dagward("adjustment", rel, "--format", "json").out)
        assert doc["tool"]["name"] == "dagward" and doc["schema"] == 1 and doc["file"] == rel
        d = _diagram(rel)
        G = d.graph
        for report, analysis in zip(doc["analyses"], d.analyses, strict=True):
            assert list(report) == KEYS
            X, Y = set(analysis.exposure_set), set(analysis.outcome_set)
            q = report["question"]
            assert q["effect"] == analysis.effect
            if q["effect"] != "total" or q["restricted"]:
                # the questions beyond the total effect: the declared set against the
                # question's oracle, and a restriction's sets with it forced in
                M, R = set(q["mediators"]), set(q["restricted"])
                if analysis.adjust_set is not None:
                    assert report["declared_valid"] == oracle_valid_for_question(
                        G, X, Y, analysis.adjust_set, d.measured, q["effect"], M, R
                    ), rel
                if q["effect"] == "total" and not R & Y:
                    expected = oracle_sets_given(G, X, Y, R, d.measured)
                    assert {frozenset(s) for s in report["minimal_sets"]} == expected, rel
                continue
            candidates = sorted(d.measured - X - Y)
            expected = sorted((sorted(s) for s in oracle_minimal_valid_sets(G, X, Y, candidates)),
                              key=lambda s: (len(s), s))  # fmt: skip
            assert report["minimal_sets"] == expected
            assert report["identifiable"] == bool(expected)
            if expected:
                assert len(report["smallest"]) == min(len(s) for s in expected)
                assert oracle_valid(G, X, Y, set(report["smallest"]))
            else:
                assert report["smallest"] is None
            declared = analysis.adjust_set
            assert report["declared"] == (None if declared is None else sorted(declared))
            assert report["declared_valid"] == (
                None
                if declared is None
                else declared <= d.measured and oracle_valid(G, X, Y, set(declared))
            )


def test_adjustment_text_max_and_unknown_analysis():
    run = dagward(
        "adjustment", "samples/wellness.dag", "--analysis", "fitness_effect", "--max", "1"
    )
    assert run.code == 0
    assert "declared set: {age, shift_work} is valid" in run.out
    assert "cut at --max 1" in run.out
    doc = json.loads(dagward("adjustment", "samples/wellness.dag", "--analysis", "fitness_effect",
                             "--max", "1", "--format", "json").out)  # fmt: skip
    assert doc["analyses"][0]["truncated"] is True and len(doc["analyses"][0]["minimal_sets"]) == 1
    run = dagward("adjustment", "samples/wellness.dag", "--analysis", "nope")
    assert run.code == 2 and "has no analysis `nope`" in run.err and "fitness_effect" in run.err
    run = dagward("adjustment", "tests/fixtures/causal/front_door.dag", "--format", "json")
    report = json.loads(run.out)["analyses"][0]
    assert report["declared"] is None and report["declared_valid"] is None
    assert (
        report["identifiable"] is False
        and report["minimal_sets"] == []
        and report["smallest"] is None
    )


def test_paths_are_classified_as_the_definitions_say():
    doc = json.loads(dagward("paths", "samples/wellness.dag", "--format", "json").out)
    d = _diagram("samples/wellness.dag")
    G = d.graph
    for report in doc["analyses"]:
        analysis = d.analysis(report["name"])
        Z = set(analysis.adjust_set or ())
        assert report["adjust"] == sorted(Z) and report["truncated"] is False
        assert report["paths"], "every sample analysis has paths"
        for row in report["paths"]:
            nodes = row["path"]
            assert "<->" not in nodes  # the sample has no shared hidden causes
            assert row["causal"] == causal(G, nodes)
            assert row["open"] == (not blocked(G, nodes, Z))
            assert nodes[0] in analysis.exposure_set and nodes[-1] in analysis.outcome_set


def test_paths_given_overrides_adjust_and_limit_says_so(tmp_path):
    run = dagward("paths", "samples/wellness.dag", "--analysis", "total_effect", "--given", "age")
    assert "adjusting for {age}" in run.out
    assert "OPEN (biasing)  enrolled <- fitness_base -> fitness_12m -> sick_days" in run.out
    # a dense diagram has far more paths than can be listed
    rng = random.Random(5)
    names = [f"v{i}" for i in range(60)]
    lines = [
        f"{a} -> {b}" for i, a in enumerate(names) for b in names[i + 1 :] if rng.random() < 0.3
    ]
    lines += ["analysis {", "  exposure: v0", "  outcome: v59", "  adjust: v1, v2", "}"]
    p = tmp_path / "dense.dag"
    p.write_text("\n".join(lines) + "\n")
    run = dagward("paths", str(p), "--limit", "25")
    assert run.code == 0
    assert run.out.count("\n  ") >= 25 and "stopped after 25 paths (--limit); more exist" in run.out
    doc = json.loads(dagward("paths", str(p), "--limit", "25", "--format", "json").out)
    assert doc["analyses"][0]["truncated"] is True and len(doc["analyses"][0]["paths"]) == 25
    # ... and `check` on it needs no path listing: it finishes and reports validity
    run = dagward("check", str(p))
    summary = [x for x in run.out.splitlines() if not x.startswith("what a rule")][-1]
    assert run.code in (0, 1) and summary.endswith("in 1 file")
    run = dagward("paths", str(p), "--given", "v0")
    assert run.code == 2 and "exposure or outcome" in run.err
