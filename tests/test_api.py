"""The Python API, as an analysis project's own tests would use it."""

from __future__ import annotations

from pathlib import Path

import networkx as nx
import pytest
from dagward import DiagramError, check_covariates, load_diagram
from dagward.api import VALIDITY_RULES
from helpers.oracle import oracle_valid

ROOT = Path(__file__).resolve().parent.parent
WELLNESS = ROOT / "samples" / "wellness.dag"


def test_load_and_ask():
    diagram = load_diagram(WELLNESS)
    assert diagram.analyses == ["total_effect", "fitness_effect"]
    G = diagram.diagram.graph
    for xs, ys, zs in [({"age"}, {"shift_work"}, set()), ({"enrolled"}, {"sick_days"}, {"age"}),
                       ({"fitness_base"}, {"age"}, {"enrolled"})]:  # fmt: skip
        assert diagram.d_separated(xs, ys, given=zs) == nx.is_d_separator(G, xs, ys, zs)
    sets = diagram.adjustment_sets("fitness_effect")
    assert sets and all(oracle_valid(G, {"fitness_12m"}, {"sick_days"}, set(s)) for s in sets)
    assert diagram.adjustment_sets("total_effect") == []
    with pytest.raises(ValueError, match="not variables"):
        diagram.d_separated({"agee"}, {"sick_days"})
    with pytest.raises(ValueError, match="2 analyses"):
        diagram.adjustment_sets()


def test_check_covariates_agrees_with_the_oracle():
    G = load_diagram(WELLNESS).diagram.graph
    for covariates in (["age", "shift_work"], ["age"], ["age", "fitness_base"], ["age", "enrolled"],
                       [], ["age", "shift_work", "fitness_base"]):  # fmt: skip
        problems = check_covariates(WELLNESS, analysis="fitness_effect", covariates=covariates)
        valid = oracle_valid(G, {"fitness_12m"}, {"sick_days"}, set(covariates))
        assert (not {p.rule for p in problems} & VALIDITY_RULES) == valid, (covariates, problems)
        if covariates == ["age", "shift_work", "fitness_base"]:  # valid, but fitness_base
            assert [p.rule for p in problems] == ["instrument-adjusted"]  # acts only via exposure
        assert all(p.analysis == "fitness_effect" for p in problems)


def test_check_covariates_reports_the_mediator_and_unknown_names():
    problems = check_covariates(WELLNESS, "total_effect", ["age", "fitness_12m"])
    assert "adjusted-mediator" in {p.rule for p in problems}
    (unknown,) = check_covariates(WELLNESS, "fitness_effect", ["agee"])
    assert unknown.rule == "unknown-variable" and "did you mean `age`?" in unknown.message


SIBLINGS = """\
age -> cycling, sick_days
cycling -> fitness -> sick_days

analysis primary {
  exposure: cycling
  outcome: sick_days
  adjust: age
}
analysis adjusted_for_the_mediator {
  exposure: cycling
  outcome: sick_days
  adjust: age, fitness
}
"""


def test_check_covariates_keeps_to_its_own_analysis(tmp_path):
    # a deliberately invalid sensitivity analysis beside a valid primary one
    path = tmp_path / "study.dag"
    path.write_text(SIBLINGS, "utf-8")
    assert check_covariates(path, "primary", ["age"]) == []
    problems = check_covariates(path, "adjusted_for_the_mediator", ["age", "fitness"])
    assert [p.rule for p in problems] == ["adjusted-mediator"]


def test_check_covariates_honours_the_configuration_check_uses(tmp_path):
    path = tmp_path / "study.dag"
    path.write_text(SIBLINGS, "utf-8")
    assert [p.rule for p in check_covariates(path, "primary", ["age", "fitness"])] == [
        "adjusted-mediator"
    ]
    (tmp_path / "pyproject.toml").write_text(
        '[tool.dagward]\ndisable = ["adjusted-mediator"]\n', "utf-8"
    )
    assert check_covariates(path, "primary", ["age", "fitness"]) == []


def test_a_finding_prints_as_the_line_check_shows(tmp_path):
    from clirunner import dagward

    path = tmp_path / "study.dag"
    path.write_text(SIBLINGS, "utf-8")
    (finding,) = check_covariates(path, "adjusted_for_the_mediator", ["age", "fitness"])
    shown = dagward("check", str(path), "--no-color").out.splitlines()[0]
    assert str(finding).split(": ", 1)[1] == shown.split(": ", 1)[1]
    assert repr([finding]) == f"[{finding}]"


def test_the_graph_is_the_diagram_graph():
    diagram = load_diagram(WELLNESS)
    assert diagram.graph is diagram.diagram.graph
    assert set(diagram.variables) <= set(diagram.graph)


def test_broken_diagram_raises_with_findings():
    with pytest.raises(DiagramError) as info:
        load_diagram(ROOT / "samples" / "broken" / "cycle.dag")
    assert info.value.findings[0].rule == "cycle"
    assert "cycle.dag:4:1" in str(info.value)
