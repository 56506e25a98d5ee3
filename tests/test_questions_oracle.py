"""The questions beyond the total effect (linter/causal/questions.py) against
brute-force oracles written from the definitions (tests/helpers/question_oracles.py),
on random small diagrams with ``<->`` and unmeasured variables.

Definitions: validity with the restriction forced in (adjustment criterion,
Shpitser, VanderWeele & Robins 2010); recoverability (Bareinboim, Tian & Pearl
2014); odds-ratio survival (Bareinboim & Pearl 2012); the three confounding
conditions of natural effects (VanderWeele & Vansteelandt 2009); the
exposure-induced confounder (recanting witness, Avin, Shpitser & Pearl 2005,
with the ``<->`` extension documented in the module); the sequential back-door
criterion (Pearl & Robins 1995).  All from memory.
"""

from __future__ import annotations

import networkx as nx
import pytest
from dagward.causal import collider_bias_paths, is_hidden
from dagward.causal.questions import (
    EXPOSURE_MEDIATOR,
    EXPOSURE_OUTCOME,
    MEDIATOR_OUTCOME,
    controlled_direct_verdict,
    exposure_induced_confounders,
    implied_stages,
    minimal_adjustment_sets_given,
    natural_effect_verdict,
    selection_verdict,
    sequential_verdict,
)
from helpers.examples import examples
from helpers.oracle import (
    blocked,
    causal,
    collider_reaching,
    oracle_confounding,
    oracle_forbidden,
    oracle_valid,
    random_dag,
    simple_paths,
)
from helpers.question_oracles import (
    allowed_at,
    directed_paths,
    oracle_induced,
    oracle_natural_covariates_exist,
    oracle_odds_ratio_ok,
    oracle_recoverable,
    oracle_recovery_ok,
    oracle_sequential,
    oracle_sets_given,
    oracle_single_set,
    stage_holds,
)
from hypothesis import HealthCheck, given, note, settings
from hypothesis import strategies as st

MANY = settings(max_examples=examples(700), deadline=None, suppress_health_check=list(HealthCheck))
SOME = settings(max_examples=examples(600), deadline=None, suppress_health_check=list(HealthCheck))


@st.composite
def question_case(draw, max_nodes: int = 7, extra: int = 1):
    """A random diagram with one or two exposures, one outcome, ``extra`` further
    disjoint roles (restriction or mediators), and a declared Z of measured variables."""
    G, names, measured = draw(random_dag(min_nodes=3 + extra, max_nodes=max_nodes))
    order = draw(st.permutations(names))
    nx_ = draw(st.integers(1, 2 if len(names) > 3 + extra else 1))
    X = frozenset(order[:nx_])
    Y = frozenset(order[nx_ : nx_ + 1])
    k = draw(st.integers(1, extra))
    S = frozenset(order[nx_ + 1 : nx_ + 1 + k])
    rest = sorted(measured - X - Y - S)
    Z = frozenset(draw(st.sets(st.sampled_from(rest), max_size=len(rest))) if rest else set())
    return G, measured, X, Y, S, Z


# ---------------------------------------------------------------- selection


@MANY
@given(question_case(extra=2))
def test_selection_matches_oracle(case):
    G, measured, X, Y, R, Z = case
    note(f"edges={sorted(G.edges)} measured={sorted(measured)} X={X} Y={Y} R={R} Z={Z}")
    v = selection_verdict(G, X, Y, Z, R, measured, max_sets=None)
    S = Z | R
    assert v.valid == oracle_valid(G, X, Y, S)
    forb = oracle_forbidden(G, X, Y)
    assert {f.variable for f in v.forbidden} == R & forb
    for f in v.forbidden:
        p = list(f.path)
        assert all(G.has_edge(a, b) for a, b in zip(p, p[1:], strict=False))
        if f.kind == "mediator":
            assert p[0] in X and p[-1] in Y and f.variable in p
        else:
            assert p[0] == f.via and p[-1] == f.variable
            assert (f.via in Y) == (f.kind == "outcome-descendant")
    for o in v.opened:  # each opened path is genuine (sound)
        p = list(o.path)
        assert p in simple_paths(G, X, Y) and not causal(G, p) and not blocked(G, p, S)
        assert o.collider in collider_reaching(G, p, o.variable)
    # completeness at the level of the whole conditioning set: when Z ∪ R is free
    # of forbidden variables, leaves no confounding path open and is invalid, a
    # member of R or of Z (the usual rule, given Z ∪ R) gets a collider path.
    if not v.valid and not (S & forb) and not oracle_confounding(G, X, Y, S) and not v.opened:
        assert Z and any(hit is not None for hit in collider_bias_paths(G, X, Y, S, Z).values())
    # minimal sets with the restriction forced in
    assert set(v.sets) == oracle_sets_given(G, X, Y, R, measured)
    assert v.fixable == bool(v.sets)
    # recoverability
    assert v.recoverable == oracle_recoverable(G, X, Y, R, measured)
    if v.recovery_set is not None:
        W = v.recovery_set
        assert W <= measured and oracle_recovery_ok(G, X, Y, R, W)
        assert not any(oracle_recovery_ok(G, X, Y, R, W - {w}) for w in W)  # minimal
    # odds ratio: sound, and exact for a valid declared set
    if v.odds_ratio.survives:
        assert oracle_odds_ratio_ok(G, X, Y, R, v.odds_ratio.adjusted)
    if oracle_odds_ratio_ok(G, X, Y, R, Z):
        assert v.odds_ratio.survives
    descendants_of_y = set(Y).union(*(nx.descendants(G, y) for y in Y))
    assert v.outcome_only == (R <= descendants_of_y)
    assert v.caused_by_restriction == bool(v.forbidden or v.opened)
    assert v.case_control == (v.outcome_only and v.odds_ratio.survives)
    if v.valid:  # nothing is blamed on a restriction that biases nothing
        assert not v.caused_by_restriction


@SOME
@given(question_case(extra=2))
def test_sets_given_an_empty_restriction_are_the_usual_minimal_sets(case):
    from dagward.causal import minimal_adjustment_sets

    G, measured, X, Y, _, _ = case
    assert set(minimal_adjustment_sets_given(G, X, Y, measured, set())) == set(
        minimal_adjustment_sets(G, X, Y, measured)
    )


# ---------------------------------------------------------------- natural effects


@MANY
@given(question_case(extra=2))
def test_natural_effects_match_oracle(case):
    G, measured, X, Y, M, Z = case
    note(f"edges={sorted(G.edges)} X={X} Y={Y} M={M} Z={Z}")
    v = natural_effect_verdict(G, X, M, Y, Z, measured)
    names = [c.name for c in v.conditions]
    assert names == [EXPOSURE_OUTCOME, EXPOSURE_MEDIATOR, MEDIATOR_OUTCOME]
    expected = [oracle_valid(G, X, Y, Z), oracle_valid(G, X, M, Z), oracle_valid(G, M, Y, Z | X)]
    assert [c.valid for c in v.conditions] == expected
    for c in v.conditions:
        if not c.valid and not c.forbidden:
            # exact witness when the set holds no forbidden variable
            p = list(c.path)
            assert p in simple_paths(G, set(c.exposures), set(c.outcomes))
            assert not causal(G, p) and not blocked(G, p, set(c.adjusted))
    induced = oracle_induced(G, X, M, Y)
    assert set(exposure_induced_confounders(G, X, M, Y)) == induced
    assert {i.variable for i in v.induced} == induced
    reaches_y = {m for m in M if directed_paths(G, {m}, Y)}
    for i in v.induced:
        h = list(i.from_exposure)
        assert h[0] in X and h[-1] == i.variable and not (set(h[1:]) & (X | M))
        assert all(G.has_edge(a, b) for a, b in zip(h, h[1:], strict=False))
        for route, ends, avoid in ((i.to_mediator, reaches_y, X), (i.to_outcome, Y, X | M)):
            r = list(route)
            assert r[0] == i.variable and r[-1] in ends and not (set(r[1:]) & avoid - ends)
            if len(r) > 2 and is_hidden(G, r[1]):  # variable <-> w, then directed
                assert G.has_edge(r[1], r[0]) and G.has_edge(r[1], r[2])
                r = r[2:]
            assert all(G.has_edge(a, b) for a, b in zip(r, r[1:], strict=False))
    assert v.identified == (all(expected) and not induced)
    cn = {n for p in simple_paths(G, X, Y) if causal(G, p) for n in p[1:]}
    assert set(v.not_mediators) == M - cn
    # pre-exposure covariates meeting all three conditions: exact over the pool
    de_x = set(X).union(*(nx.descendants(G, x) for x in X))
    pool = set(measured) - de_x - M - Y - oracle_forbidden(G, M, Y)
    assert (v.covariates is not None) == oracle_natural_covariates_exist(G, X, M, Y, pool)
    if v.covariates is not None:
        C = v.covariates
        assert C <= pool
        assert (
            oracle_valid(G, X, Y, C) and oracle_valid(G, X, M, C) and oracle_valid(G, M, Y, C | X)
        )
    assert v.identifiable == (v.covariates is not None and not induced)


# ---------------------------------------------------------------- sequential


@st.composite
def sequential_case(draw):
    G, names, measured = draw(random_dag(min_nodes=4, max_nodes=7))
    # exposures in index order (a topological order): stages by the implied order
    k = draw(st.integers(2, 3))
    picks = sorted(
        draw(st.lists(st.sampled_from(names), min_size=k + 1, max_size=k + 1, unique=True)),
        key=names.index,
    )
    *X, y = picks
    return G, measured, X, {y}


@MANY
@given(sequential_case())
def test_sequential_matches_oracle(case):
    G, measured, X, Y = case
    stages = implied_stages(G, X)
    note(f"edges={sorted(G.edges)} measured={sorted(measured)} stages={stages} Y={Y}")
    # the implied stages respect ancestry and hold no ancestor pairs
    where = {x: i for i, s in enumerate(stages) for x in s}
    for a in X:
        for b in X:
            if a != b and nx.has_path(G, a, b):
                assert where[a] < where[b]
    v = sequential_verdict(G, stages, Y, measured)
    stage_lists = [set(s) for s in stages]
    assert v.sequential == oracle_sequential(G, stage_lists, Y, measured)
    assert v.single_set_exists == oracle_single_set(G, set(X), Y, measured)
    if v.sequential:
        C: set[str] = set()
        for k, st_ in enumerate(v.stages):
            assert st_.holds
            assert st_.covariates <= allowed_at(G, stage_lists, k, measured, Y)
            C |= st_.covariates
            assert stage_holds(G, stage_lists, k, C, Y)
            for c in st_.covariates:  # no covariate of the stage can be dropped
                assert not stage_holds(G, stage_lists, k, C - {c}, Y)
        for f in v.feedback:
            p = list(f.affected_path)
            assert p[0] == f.earlier and p[-1] == f.variable
            assert all(G.has_edge(a, b) for a, b in zip(p, p[1:], strict=False))
            assert where[f.earlier] < where[f.later]
    else:
        assert not all(s.holds for s in v.stages)
    assert v.needs_g_methods == (v.sequential and not v.single_set_exists)


@SOME
@given(question_case(extra=1))
def test_controlled_direct_is_the_joint_exposure_question(case):
    G, measured, X, Y, M, Z = case
    v = controlled_direct_verdict(G, X, M, Y, Z, measured)
    assert v.condition.valid == oracle_valid(G, X | M, Y, Z - M)
    joint_single = oracle_single_set(G, X | M, Y, measured)
    assert (v.sequential is None) == joint_single


@st.composite
def dense_mediation_case(draw):
    """Denser diagrams with two mediators, where exposure-induced confounders are common."""
    G, names, measured = draw(random_dag(min_nodes=5, max_nodes=7, max_hidden=3, density=0.5))
    # roles in the diagram's order (exposure first, outcome last), so that the
    # mediators can lie between them
    picks = sorted(
        draw(st.lists(st.sampled_from(names), min_size=4, max_size=4, unique=True)), key=names.index
    )
    X, M, Y = frozenset(picks[:1]), frozenset(picks[1:3]), frozenset(picks[3:])
    rest = sorted(measured - X - Y - M)
    Z = frozenset(draw(st.sets(st.sampled_from(rest), max_size=len(rest))) if rest else set())
    return G, measured, X, Y, M, Z


@pytest.mark.slow  # runs in .ci/run; the sparse case above runs in the quick suite
@settings(max_examples=examples(1500), deadline=None, suppress_health_check=list(HealthCheck))
@given(dense_mediation_case())
def test_natural_effects_match_oracle_on_dense_diagrams(case):
    test_natural_effects_match_oracle.hypothesis.inner_test(case)
