"""Identification of effects (dagward.causal.identify), estimands and instruments.

Checked against things outside the algorithm: published examples (sources
beside each), exact interventions in random binary structural models
(tests/helpers/scm.py), the adjustment and front-door verdicts of
dagward.causal, the latent projection and instrument definitions by brute
force (tests/helpers/identify_oracles.py), and a criterion of Tian & Pearl (2002).
"""

from __future__ import annotations

import json
import random
from itertools import product as cartesian

import networkx as nx
import numpy as np
import pytest
from dagward.causal import (
    adjustment_exists,
    front_door_set,
    hidden_node_name,
    smallest_adjustment_set,
)
from dagward.causal.estimand import (
    Prob,
    Product,
    Ratio,
    Sum,
    adjustment_formula,
    free_variables,
    from_json,
    front_door_formula,
    prob,
    simplify,
    to_json,
)
from dagward.causal.identify import (
    Hedge,
    general_identification,
    identify_effect,
    latent_projection,
)
from dagward.causal.instruments import Instrument, instruments
from dagward.report.estimand import render_estimand
from helpers.diagrams import describe, random_diagram
from helpers.identify_oracles import districts, oracle_instrument_sets, oracle_projection
from helpers.scm import BinaryModel, Observed, evaluate, interventional


def dag(
    *edges: str, bidirected: tuple[tuple[str, str], ...] = (), unmeasured: tuple[str, ...] = ()
):
    """(graph, measured) from "a -> b" strings, ``<->`` pairs as hidden parents."""
    G = nx.DiGraph()
    for e in edges:
        a, b = (s.strip() for s in e.split("->"))
        G.add_edge(a, b)
    for a, b in bidirected:
        h = hidden_node_name(a, b)
        G.add_node(h, hidden=True)
        G.add_edge(h, a)
        G.add_edge(h, b)
    measured = frozenset(v for v in G if not G.nodes[v].get("hidden") and v not in unmeasured)
    return G, measured


def numeric_agreement(G, measured, X, Y, exprs, seed: int = 0) -> None:
    """Every expression equals P(Y | do(X)) of a random binary model, for every
    value of X, Y and of the expression's other free variables."""
    model = BinaryModel(G, np.random.default_rng(seed))
    obs = Observed(model, measured)
    X, Y = sorted(X), sorted(Y)
    for e in exprs:
        extra = sorted(free_variables(e) - set(X) - set(Y))
        for xv in cartesian((0, 1), repeat=len(X)):
            do = dict(zip(X, xv, strict=True))
            for yv in cartesian((0, 1), repeat=len(Y)):
                ys = dict(zip(Y, yv, strict=True))
                truth = interventional(model, do, ys)
                for ev in cartesian((0, 1), repeat=len(extra)):
                    env = {**do, **ys, **dict(zip(extra, ev, strict=True))}
                    got = evaluate(e, env, obs)
                    assert abs(got - truth) < 1e-9, (render_estimand(e), env, got, truth)


# ------------------------------------------------------------ classic structures


def test_bow_arc_is_not_identified_and_two_models_prove_it():
    # The bow arc x -> y, x <-> y: the simplest non-identifiable effect
    # (Pearl 2009, Causality, 2nd ed., section 3.5, Fig. 3.9(a); Shpitser &
    # Pearl 2006 call it the simplest hedge; from memory).
    G, measured = dag("x -> y", bidirected=(("x", "y"),))
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert not r.identified and r.route == "not-identified" and r.estimand is None
    h = r.hedge
    assert h.outer == {"x", "y"} and h.inner == {"y"} and h.intervened == {"x"}
    assert h.arcs == (("x", "y"),) and h.arrows == (("x", "y"),)
    # The proof by two models (common practice): with a fair hidden coin u,
    # model A sets x = u, y = u (no effect); model B sets x = u, y = x.  Both
    # give P(x = y) = 1 with x fair, yet P(y = 1 | do(x = 1)) is 1/2 in A and 1 in B.
    obs_a = {(u, u): 0.5 for u in (0, 1)}
    obs_b = {(u, u): 0.5 for u in (0, 1)}
    assert obs_a == obs_b
    do_a = sum(0.5 for u in (0, 1) if u == 1)  # y = u whatever x is set to
    do_b = 1.0  # y = x = 1
    assert do_a != do_b


def test_front_door_graph_gives_the_front_door_formula():
    # Pearl (1995), "Causal diagrams for empirical research", Biometrika 82:669-688.
    G, measured = dag("x -> m", "m -> y", bidirected=(("x", "y"),))
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert r.identified and r.route == "front-door" and r.front_door_set == {"m"}
    assert r.estimand == front_door_formula("x", "y", {"m"})
    assert (
        render_estimand(r.estimand) == "sum over m of P(m | x) * sum over x' of P(y | m, x') P(x')"
    )
    assert render_estimand(r.estimand, "unicode") == "Σ_m P(m | x) Σ_x' P(y | m, x') P(x')"
    assert (
        render_estimand(r.estimand, "latex")
        == r"\sum_{m} P(m \mid x) \sum_{x'} P(y \mid m, x') P(x')"
    )
    # ID itself, run on the same graph, arrives at the same formula (factors reordered)
    assert set(r.general.body.factors[1].body.factors) == {prob({"y"}, {"m", "x"}), prob({"x"})}
    numeric_agreement(G, measured, {"x"}, {"y"}, [r.estimand, r.general])


def test_front_door_with_a_named_unmeasured_confounder():
    # the same structure, the common cause named and declared unmeasured
    G, measured = dag("u -> x", "u -> y", "x -> m", "m -> y", unmeasured=("u",))
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert r.route == "front-door" and r.estimand == front_door_formula("x", "y", {"m"})
    numeric_agreement(G, measured, {"x"}, {"y"}, [r.estimand, r.general], seed=3)


def test_napkin_is_identified_by_neither_adjustment_nor_front_door():
    # The "napkin" graph: w -> z -> x -> y, w <-> x, w <-> y (Pearl & Mackenzie
    # 2018, The Book of Why, ch. 7; Shpitser & Pearl 2006 discuss graphs of this
    # kind).  The known answer (from memory):
    #   P(y | do(x)) = sum_w P(x, y | z, w) P(w) / sum_w P(x | z, w) P(w),
    # the same for every value of z.
    G, measured = dag("w -> z", "z -> x", "x -> y", bidirected=(("w", "x"), ("w", "y")))
    assert not adjustment_exists(G, {"x"}, {"y"}, measured)
    assert front_door_set(G, {"x"}, {"y"}, measured) is None
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert r.identified and r.route == "general"
    expected = Ratio(
        Sum(frozenset({"w"}), Product((prob({"w"}), prob({"x", "y"}, {"w", "z"})))),
        Sum(frozenset({"w"}), Product((prob({"w"}), prob({"x"}, {"w", "z"})))),
    )
    assert r.estimand == expected
    assert r.any_value_of == {"z"}
    numeric_agreement(G, measured, {"x"}, {"y"}, [r.estimand], seed=5)


def test_confounded_mediator_chain_is_not_identified():
    # x -> z -> y with x <-> z: not identified (Pearl 2009, Causality, Fig. 3.9,
    # one of the non-identifiable graphs; from memory).  The hedge is {x, z}.
    G, measured = dag("x -> z", "z -> y", bidirected=(("x", "z"),))
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert not r.identified
    assert r.hedge.outer == {"x", "z"} and r.hedge.inner == {"z"}


def test_back_door_gives_the_adjustment_formula():
    # Pearl (2009), Causality, section 3.3.1, the back-door adjustment formula.
    G, measured = dag("z -> x", "z -> y", "x -> y")
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert r.route == "adjustment" and r.adjustment_set == {"z"}
    assert render_estimand(r.estimand) == "sum over z of P(y | x, z) P(z)"
    numeric_agreement(G, measured, {"x"}, {"y"}, [r.estimand, r.general])


def test_no_confounding_gives_the_conditional():
    G, measured = dag("x -> y", "x -> w")
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert r.route == "adjustment" and r.adjustment_set == frozenset()
    assert r.estimand == Prob(frozenset({"y"}), frozenset({"x"}))


def test_sequential_treatments_give_the_g_formula():
    # Two treatments with a covariate l that the first affects and that
    # confounds the second (Robins 1986; Pearl & Robins 1995): no single
    # adjustment set works, the g-formula  sum_l P(l | x1) P(y | l, x1, x2)  does.
    G, measured = dag(
        "x1 -> l",
        "l -> x2",
        "x1 -> x2",
        "x2 -> y",
        "x1 -> y",
        "l -> y",
        "u -> l",
        "u -> y",
        unmeasured=("u",),
    )
    X, Y = {"x1", "x2"}, {"y"}
    assert not adjustment_exists(G, X, Y, measured)
    r = identify_effect(G, X, Y, measured)
    assert r.route == "general"
    assert r.estimand == Sum(
        frozenset({"l"}), Product((prob({"l"}, {"x1"}), prob({"y"}, {"l", "x1", "x2"})))
    )
    numeric_agreement(G, measured, X, Y, [r.estimand], seed=7)


def test_joint_effect_on_two_outcomes_can_fail_where_each_succeeds():
    # Shpitser & Pearl (2006) show joint effects P_x(y1, y2) that are not
    # identified although each single one is (their hedge examples; this
    # small graph is ours): x -> y1, x -> w -> y2 with w <-> y1 ... here
    # x <-> y2 and x -> y1 -> y2 with y1 <-> y2: P_x(y1) = P(y1 | x) is
    # identified, the joint is not.
    G, measured = dag("x -> y1", "y1 -> y2", bidirected=(("x", "y2"), ("y1", "y2")))
    assert identify_effect(G, {"x"}, {"y1"}, measured).identified
    r = identify_effect(G, {"x"}, {"y1", "y2"}, measured)
    assert not r.identified
    assert {"x"} <= r.hedge.outer and not (r.hedge.inner & {"x"})


def test_unmeasured_exposure_is_a_value_error():
    G, measured = dag("x -> y", unmeasured=("x",))
    with pytest.raises(ValueError, match="measured"):
        identify_effect(G, {"x"}, {"y"}, measured)


# ------------------------------------------------------------ projection


def test_latent_projection_matches_its_definition_on_random_diagrams():
    rng = random.Random(11)
    for _ in range(300):
        G, measured, _X, _Y = random_diagram(rng, max_unmeasured=3)
        proj = latent_projection(G, measured)
        arrows, arcs = oracle_projection(G, measured)
        assert set(proj.arrows(proj.order)) == arrows, describe(G, measured, _X, _Y)
        assert {frozenset(a) for a in proj.arcs(proj.order)} == arcs


def test_chain_of_unmeasured_variables_projects_to_one_arrow_and_collider_to_nothing():
    # a -> u1 -> u2 -> b  gives  a -> b;  u1 -> u3 <- u2 with u1 -> c, u2 -> d
    # gives no c <-> d (u3 is a common effect, not a cause); u0 -> u1, u0 -> u2
    # makes c <-> d.
    G, _ = dag("a -> u1", "u1 -> u2", "u2 -> b")
    proj = latent_projection(G, {"a", "b"})
    assert proj.arrows(proj.order) == [("a", "b")] and proj.arcs(proj.order) == []
    G, _ = dag("u1 -> u3", "u2 -> u3", "u1 -> c", "u2 -> d", "u3 -> e")
    proj = latent_projection(G, {"c", "d", "e"})
    assert proj.arcs(proj.order) == [("c", "e"), ("d", "e")]
    G.add_edges_from([("u0", "u1"), ("u0", "u2")])
    proj = latent_projection(G, {"c", "d", "e"})
    assert ("c", "d") in proj.arcs(proj.order)
    assert proj.sources[frozenset(("c", "d"))] == {"u0"}


# ------------------------------------------------------------ random diagrams


def test_agrees_with_the_adjustment_and_front_door_verdicts_on_thousands_of_diagrams():
    rng = random.Random(2024)
    seen = {"adjustment": 0, "front-door": 0, "general": 0, "not-identified": 0}
    for _ in range(3000):
        G, measured, X, Y = random_diagram(rng)
        r = identify_effect(G, X, Y, measured)
        seen[r.route] += 1
        where = describe(G, measured, X, Y)
        if adjustment_exists(G, X, Y, measured):
            Z = smallest_adjustment_set(G, X, Y, measured)
            assert r.route == "adjustment" and r.adjustment_set == Z, where
            assert r.estimand == adjustment_formula(X, Y, Z), where
            assert r.general is not None, where  # ID agrees that it is identified
        else:
            assert r.route != "adjustment"
        if len(X) == len(Y) == 1 and front_door_set(G, X, Y, measured) is not None:
            assert r.identified and r.general is not None, where
    assert seen["adjustment"] > 500 and seen["general"] > 500 and seen["not-identified"] > 100, seen


def test_never_not_identified_when_the_front_door_criterion_holds():
    # Random diagrams planted around the front-door graph (Pearl 1995):
    # x -> m -> y with an unmeasured common cause of x and y, plus random
    # variables and arrows (the order v0 < x < m < y < v9 keeps it acyclic).
    rng = random.Random(31)
    holds = 0
    for _ in range(1500):
        names = ["v0", "v1", "x", "v2", "m", "v3", "y", "v4"]
        G = nx.DiGraph([("x", "m"), ("m", "y")])
        G.add_nodes_from(names)
        for i, a in enumerate(names):
            for b in names[i + 1 :]:
                if rng.random() < 0.15 and (a, b) != ("x", "y"):
                    G.add_edge(a, b)
        for a, b in [("x", "y")] + [tuple(rng.sample(names, 2)) for _ in range(rng.randint(0, 2))]:
            h = hidden_node_name(a, b)
            G.add_node(h, hidden=True)
            G.add_edges_from([(h, a), (h, b)])
        measured = frozenset(names) - set(
            rng.sample(["v0", "v1", "v2", "v3", "v4"], rng.randint(0, 2))
        )
        M = front_door_set(G, {"x"}, {"y"}, measured)
        r = identify_effect(G, {"x"}, {"y"}, measured)
        if M is not None:
            holds += 1
            assert r.identified and r.general is not None, describe(G, measured, {"x"}, {"y"})
            if r.route == "front-door" and holds < 60:
                numeric_agreement(G, measured, {"x"}, {"y"}, [r.estimand], seed=holds)
    assert holds > 100


def test_every_identified_formula_equals_the_interventional_distribution():
    # The numeric check of the expressions: P(y | do(x)) by intervention in a
    # random binary structural model (hidden variables included) against the
    # returned formula evaluated on the observed distribution only.
    rng = random.Random(7)
    checked = 0
    for i in range(400):
        G, measured, X, Y = random_diagram(rng)
        r = identify_effect(G, X, Y, measured)
        if not r.identified:
            continue
        checked += 1
        numeric_agreement(
            G, measured, X, Y, [e for e in (r.estimand, r.general) if e is not None], seed=i
        )
    assert checked > 250


def test_hedges_are_pairs_of_c_forests_with_the_same_roots():
    # What ID guarantees where it stops (Shpitser & Pearl 2006, line 5 and the
    # hedge definition, from memory): F' inside F, each one c-component, F
    # meets the intervened variables and F' does not, every variable of F is
    # an ancestor of the outcomes, and the roots of F (variables without
    # children inside it) are roots of F' too.
    rng = random.Random(5)
    found = 0
    for _ in range(1500):
        G, measured, X, Y = random_diagram(rng)
        r = identify_effect(G, X, Y, measured)
        if r.identified:
            continue
        found += 1
        h: Hedge = r.hedge
        arrows, arcs = oracle_projection(G, measured)
        assert h.inner < h.outer and h.intervened == h.outer - h.inner and h.intervened
        assert len(districts(h.outer, arcs)) == 1 and len(districts(h.inner, arcs)) == 1

        def roots(S, arrows=arrows):
            return {v for v in S if not any((v, c) in arrows for c in S)}

        assert roots(h.outer) <= roots(h.inner)
        D = nx.DiGraph(list(arrows))
        D.add_nodes_from(measured)
        anc_y = set(Y).union(*(nx.ancestors(D, y) for y in Y))
        assert h.outer <= anc_y
        assert {frozenset(a) for a in h.arcs} == {a for a in arcs if a <= h.outer}
        json.dumps(h.to_json())
    assert found > 50


def test_tian_pearl_criterion_for_the_effect_on_all_other_variables():
    # Tian & Pearl (2002), Theorem 3 (from memory): P(v | do(x)) for a single x
    # and all other variables v is identified iff no child of x is in x's
    # c-component (no bidirected path from x to a child of x).
    rng = random.Random(9)
    for _ in range(800):
        G, measured, X, _Y = random_diagram(rng, max_roles=1)
        (x,) = X
        rest = set(measured) - {x}
        if not rest:
            continue
        arrows, arcs = oracle_projection(G, measured)
        dist = next(d for d in districts(measured, arcs) if x in d)
        kids = {b for a, b in arrows if a == x}
        expect = not (kids & dist)
        got = not isinstance(general_identification(G, X, rest, measured), Hedge)
        assert got == expect, describe(G, measured, X, rest)


# ------------------------------------------------------------ estimand trees


def test_simplification_rules():
    # each rule is an identity of probability (common practice)
    a, b, c = "a", "b", "c"
    assert simplify(Sum(frozenset({b}), prob({a, b}, {c}))) == prob({a}, {c})
    assert simplify(Sum(frozenset({a}), prob({a}, {c}))) == Product(())
    assert simplify(Product((prob({a}, {b, c}), prob({b}, {c})))) == prob({a, b}, {c})
    assert simplify(Ratio(prob({a, b}, {c}), prob({b}, {c}))) == prob({a}, {b, c})
    # factors move out; the chain rule and marginalisation finish the sum
    assert simplify(
        Sum(frozenset({a}), Product((prob({b}), prob({c}, {a}), prob({a}))))
    ) == Product((prob({b}), prob({c})))
    # a conditional summed over a variable it is conditioned on is not touched
    s = Sum(frozenset({a}), Product((prob({b}, {a}), prob({c}, {a}))))
    assert simplify(s) == s


def test_json_round_trip_and_shape():
    e = front_door_formula("x", "y", {"m"})
    doc = to_json(e)
    assert doc["type"] == "sum" and doc["over"] == ["m"] and doc["of"]["type"] == "product"
    assert from_json(json.loads(json.dumps(doc))) == e


def test_latex_names_with_underscores():
    e = adjustment_formula({"step_count"}, {"sick_days"}, {"age"})
    assert render_estimand(e, "latex") == (
        r"\sum_{\mathit{age}} P(\mathit{sick\_days} \mid \mathit{age}, \mathit{step\_count}) "
        r"P(\mathit{age})"
    )


# ------------------------------------------------------------ instruments


def test_classic_instrument():
    # z -> x -> y with x <-> y: z is an instrument (common practice; Angrist,
    # Imbens & Rubin 1996 for the setting).
    G, measured = dag("z -> x", "x -> y", bidirected=(("x", "y"),))
    assert instruments(G, {"x"}, {"y"}, measured) == [Instrument("x", "z", frozenset())]


def test_an_instrument_does_not_make_the_bow_identified():
    # z -> x -> y, x <-> y: z is an instrument, yet the effect is not identified
    # without further assumptions (Pearl 2009, Causality, section 8.2, from
    # memory: only bounds follow).
    G, measured = dag("z -> x", "x -> y", bidirected=(("x", "y"),))
    r = identify_effect(G, {"x"}, {"y"}, measured)
    assert not r.identified and r.hedge.outer == {"x", "y"}
    assert [i.variable for i in instruments(G, {"x"}, {"y"}, measured)] == ["z"]


def test_conditional_instrument_needs_its_set():
    # z is confounded with y through c; given c it is an instrument.
    G, measured = dag("c -> z", "c -> y", "z -> x", "x -> y", bidirected=(("x", "y"),))
    assert instruments(G, {"x"}, {"y"}, measured) == [Instrument("x", "z", frozenset({"c"}))]
    G, measured = dag(
        "c -> z", "c -> y", "z -> x", "x -> y", bidirected=(("x", "y"),), unmeasured=("c",)
    )
    assert instruments(G, {"x"}, {"y"}, measured) == []


def test_instruments_agree_with_the_brute_force_oracle():
    rng = random.Random(3)
    found = conditional = 0
    for _ in range(1200):
        G, measured, X, Y = random_diagram(rng)
        got = {(i.exposure, i.variable): i.given for i in instruments(G, X, Y, measured)}
        for x in sorted(X):
            usable = measured - (X - {x})
            for z in sorted(usable - {x} - Y):
                sets = oracle_instrument_sets(G, x, set(Y), usable, z)
                where = (describe(G, measured, X, Y), x, z)
                assert ((x, z) in got) == bool(sets), where
                if (x, z) in got:
                    assert got[(x, z)] in sets, where
                    found += 1
                    conditional += bool(got[(x, z)])
    assert found > 100 and conditional > 20


def test_front_door_back_door_reach_matches_d_separation():
    # front_door_set's one-pass test of "no open back-door path from x to m"
    # against the d-separation routine it replaces, on random diagrams.
    from dagward.causal.dsep import ArrowCut, d_separated_cut
    from dagward.causal.separators import _back_door_reach

    rng = random.Random(13)
    for _ in range(500):
        G, _m, X, _Y = random_diagram(rng, max_nodes=8, max_arcs=4)
        for x in sorted(v for v in G if not G.nodes[v].get("hidden"))[:3]:
            reach = _back_door_reach(G, x)
            for v in G:
                if v != x:
                    open_ = not d_separated_cut(G, {x}, {v}, set(), ArrowCut({x}), proper=False)
                    assert open_ == (v in reach)
