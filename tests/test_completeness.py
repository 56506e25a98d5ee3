"""The completeness property of the rule catalogue, on random diagrams written as
`.dag` text and linted end to end:

for every analysis with a declared set Z and no structure error, Z is a valid
adjustment set (measured, and meeting the adjustment criterion of Shpitser,
VanderWeele & Robins 2010 / Perkovic et al. 2018) if and only if none of the six
validity rules fires. Validity is decided by the brute-force oracle in
tests/helpers/oracle.py, written straight from the definitions (every path enumerated).
"""

from __future__ import annotations

from dagward.causal import is_hidden
from dagward.engine import lint_source
from helpers.dag_text import to_dag_text
from helpers.examples import examples
from helpers.oracle import (
    analysis_case,
    blocked,
    causal,
    collider_reaching,
    oracle_valid,
    simple_paths,
)
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

VALIDITY_RULES = {
    "adjusted-unmeasured",
    "adjusted-mediator",
    "adjusted-descendant",
    "collider-adjusted",
    "open-biasing-path",
    "unmeasured-confounding",
}


def _graph_of(result):
    return result.diagram.graph


@st.composite
def case_with_unmeasured_adjustment(draw):
    case = draw(analysis_case(max_nodes=8, max_roles=2))
    unmeasured = sorted(set(case.observed) - case.measured - case.X - case.Y)
    extra = draw(st.sets(st.sampled_from(unmeasured), max_size=1)) if unmeasured else set()
    return case, frozenset(case.Z | extra)


@settings(max_examples=examples(300), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case_with_unmeasured_adjustment())
def test_declared_set_valid_iff_no_validity_rule_fires(drawn):
    case, Z = drawn
    text = to_dag_text(case.G, case.observed, case.measured, case.X, case.Y, Z)
    result = lint_source(text, "random.dag")
    assert result.causal_ran, result.findings
    fired = {f.rule for f in result.findings} & VALIDITY_RULES
    G = _graph_of(result)
    valid = Z <= case.measured and oracle_valid(G, set(case.X), set(case.Y), set(Z))
    assert valid == (not fired), (text, sorted(fired))

    by_rule = {f.rule: f for f in result.findings}
    # the witness paths printed are genuine
    if "open-biasing-path" in by_rule:
        f = by_rule["open-biasing-path"]
        # it fires under unmeasured confounding too (rules.md); its sets are valid
        for s in f.suggested_sets or ():
            assert oracle_valid(G, set(case.X), set(case.Y), set(s)), (text, s)
    for f in result.findings:
        if f.rule == "collider-adjusted":
            z = f.message.split("`")[1]
            assert z in Z
    if "unmeasured-confounding" in by_rule:
        # really no valid set among measured variables (brute force over subsets)
        from helpers.oracle import oracle_minimal_valid_sets

        candidates = sorted(case.measured - case.X - case.Y)
        assert oracle_minimal_valid_sets(G, set(case.X), set(case.Y), candidates) == []


@settings(max_examples=examples(300), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(analysis_case(max_nodes=8, max_roles=1))
def test_confounding_and_collider_paths_are_real(case):
    text = to_dag_text(case.G, case.observed, case.measured, case.X, case.Y, case.Z)
    result = lint_source(text, "random.dag")
    G = _graph_of(result)
    names = {n for n in G if not is_hidden(G, n)}
    for f in result.findings:
        if f.rule not in ("open-biasing-path", "collider-adjusted") or f.path is None:
            continue
        # rebuild the node path (a `<->` stands for the hidden parent of its neighbours)
        shown = list(f.path)
        nodes = []
        for i, n in enumerate(shown):
            if n == "<->":
                a, b = shown[i - 1], shown[i + 1]
                nodes.append(
                    next(h for h in G.predecessors(a) if is_hidden(G, h) and b in G.successors(h))
                )
            else:
                assert n in names
                nodes.append(n)
        assert nodes[0] in case.X and nodes[-1] in case.Y
        assert len(set(nodes)) == len(nodes)
        assert not causal(G, nodes)
        assert not blocked(G, nodes, set(case.Z))
        proper = [p for p in simple_paths(G, set(case.X), set(case.Y))]
        assert nodes in proper
        if f.rule == "collider-adjusted":
            z = f.message.split("`")[1]
            assert collider_reaching(G, nodes, z)
