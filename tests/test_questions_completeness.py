"""The completeness property of rules.md for every `effect:` and with restrictions,
on random small diagrams written as `.dag` text and linted end to end.

For every analysis with a declared set Z and no structure error, Z is valid for
the question asked if and only if none of the validity rules fires (the six of
the total effect plus `selection-bias`, `exposure-induced-confounder` and
`needs-g-methods`). "Valid for the question" is decided by the brute-force
oracles of tests/helpers/oracle.py and tests/helpers/question_oracles.py,
written from the definitions (every path enumerated):

* restricted on R: Z ∪ R is a valid adjustment set (Hernan, Hernandez-Diaz &
  Robins 2004: restriction is conditioning); a restriction on an exposure or an
  outcome of the question is the design, not a conditioning variable;
* `controlled-direct` with mediators M: Z (without M) valid for the joint
  exposure X ∪ M (Robins & Greenland 1992; Pearl 2001);
* `natural-direct` / `natural-indirect`: Z (without M) valid for X -> Y and for
  X -> M, Z ∪ X valid for M -> Y (VanderWeele & Vansteelandt 2009), each with
  the restriction, and no exposure-induced mediator-outcome confounder (Avin,
  Shpitser & Pearl 2005).
"""

from __future__ import annotations

import json

from dagward.engine import lint_source
from dagward.rules import VALIDITY_RULES
from helpers.dag_text import to_dag_text
from helpers.examples import examples
from helpers.oracle import analysis_case
from helpers.question_oracles import oracle_sets_given, oracle_valid_for_question
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

EFFECTS = ("total", "controlled-direct", "natural-direct", "natural-indirect")


@st.composite
def question_case(draw):
    case = draw(analysis_case(max_nodes=7, max_roles=2))
    effect = draw(st.sampled_from(EFFECTS))
    rest = sorted(set(case.observed) - case.X - case.Y)
    M = frozenset()
    if effect != "total":
        if not rest:
            effect = "total"
        else:
            M = frozenset(draw(st.sets(st.sampled_from(rest), min_size=1, max_size=2)))
    # a restriction may be an outcome, a mediator or adjusted, never an exposure
    pool = sorted(set(case.observed) - case.X)
    R = frozenset(draw(st.sets(st.sampled_from(pool), max_size=2)) if draw(st.booleans()) else ())
    return case, effect, M, R


@settings(max_examples=examples(1200), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(question_case())
def test_declared_set_valid_for_question_iff_no_validity_rule_fires(drawn):
    case, effect, M, R = drawn
    text = to_dag_text(
        case.G,
        case.observed,
        case.measured,
        case.X,
        case.Y,
        case.Z,
        effect=effect,
        mediator=M,
        restricted=R,
    )
    result = lint_source(text, "random.dag")
    assert result.causal_ran, (text, result.findings)
    fired = {f.rule for f in result.findings} & VALIDITY_RULES
    valid = oracle_valid_for_question(
        result.diagram.graph, case.X, case.Y, case.Z, case.measured, effect, M, R
    )
    assert valid == (not fired), (text, sorted(fired))
    assert {"selection-bias", "exposure-induced-confounder", "needs-g-methods"} <= VALIDITY_RULES
    if not R:
        assert "selection-bias" not in fired, text
    if not effect.startswith("natural"):
        assert "exposure-induced-confounder" not in fired, text


@settings(max_examples=examples(400), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(question_case())
def test_adjustment_json_lists_sets_valid_with_the_restriction(drawn):
    """`adjustment --format json` of a restricted total-effect analysis lists
    exactly the minimal W with W ∪ R valid (brute force), up to the cut."""
    from dagward.verdict import Verdict

    case, _, _, R = drawn
    R = frozenset(R) - case.Y
    if not R:
        return
    text = to_dag_text(case.G, case.observed, case.measured, case.X, case.Y, case.Z, restricted=R)
    result = lint_source(text, "random.dag")
    assert result.causal_ran
    verdict = Verdict(result.diagram, result.diagram.analyses[0])
    data = json.loads(json.dumps(verdict.to_dict(max_sets=1000)))
    listed = {frozenset(s) for s in data["minimal_sets"]}
    G = result.diagram.graph
    expect = oracle_sets_given(G, set(case.X), set(case.Y), set(R), case.measured)
    assert listed == expect, text
    assert data["question"]["restricted"] == sorted(R)
