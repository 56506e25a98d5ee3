"""The Python API, as an analysis project's own tests would use it."""

from __future__ import annotations

from pathlib import Path

import networkx as nx
import pytest
from test_causal_oracle import oracle_valid

from linter import DiagramError, check_covariates, load_diagram
from linter.api import VALIDITY_RULES

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
    with pytest.raises(ValueError, match="not variables"):
        check_covariates(WELLNESS, "fitness_effect", ["agee"])


def test_broken_diagram_raises_with_findings():
    with pytest.raises(DiagramError) as info:
        load_diagram(ROOT / "samples" / "broken" / "cycle.dag")
    assert info.value.findings[0].rule == "cycle"
    assert "cycle.dag:4:1" in str(info.value)
