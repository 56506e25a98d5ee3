"""Published worked examples at graph level, plus API behaviour checks.

Variables are renamed into scenarios of our own; each test names its source.
"""

from __future__ import annotations

import random

import networkx as nx
from dagward.causal import (
    adjustment_exists,
    canonical_adjustment,
    collider_bias_path,
    confounding_path,
    d_separated,
    describe_path,
    enumerate_paths,
    forbidden,
    front_door_set,
    hidden_node_name,
    instrument_like,
    is_hidden,
    is_valid_adjustment,
    mediators,
    minimal_adjustment_sets,
    open_noncausal_path,
    proper_backdoor_graph,
    proper_causal_nodes,
    smallest_adjustment_set,
)
from dagward.causal.paths import REASON_COLLIDER, REASON_NONCOLLIDER


def dag(*edges: str, bidirected: tuple[tuple[str, str], ...] = ()) -> nx.DiGraph:
    G = nx.DiGraph()
    for e in edges:
        a, b = (s.strip() for s in e.split("->"))
        G.add_edge(a, b)
    for a, b in bidirected:
        h = hidden_node_name(a, b)
        G.add_node(h, hidden=True)
        G.add_edge(h, a)
        G.add_edge(h, b)
    return G


def observed(G):
    return {v for v in G if not is_hidden(G, v)}


def test_hidden_node_convention():
    G = dag("a->b", bidirected=(("a", "b"),))
    h = hidden_node_name("a", "b")
    assert h == "<-> a b" and is_hidden(G, h) and not is_hidden(G, "a")
    assert set(G.successors(h)) == {"a", "b"}


# Pearl, Causality 2nd ed. 2009, section 3.3.1, back-door example (Fig. 3.4),
# structure from memory, renamed: canopy = exposure, heat_admissions = outcome.
# X1 = soil_type, X2 = income, X3 = district_age, X4 = irrigation,
# X5 = housing_density, X6 = shade_index (a mediator).
PEARL_FIG = dag(
    "soil_type->district_age",
    "soil_type->irrigation",
    "income->district_age",
    "income->housing_density",
    "district_age->canopy",
    "district_age->heat_admissions",
    "irrigation->canopy",
    "housing_density->heat_admissions",
    "canopy->shade_index",
    "shade_index->heat_admissions",
)


def test_pearl_backdoor_example_admissible_and_not():
    G, X, Y = PEARL_FIG, {"canopy"}, {"heat_admissions"}
    assert is_valid_adjustment(G, X, Y, {"district_age", "irrigation"})
    assert is_valid_adjustment(G, X, Y, {"district_age", "housing_density"})
    # {X4} leaves canopy <- district_age -> heat_admissions open.
    assert not is_valid_adjustment(G, X, Y, {"irrigation"})
    assert confounding_path(G, X, Y, {"irrigation"}) == [
        "canopy",
        "district_age",
        "heat_admissions",
    ]
    # {X3} alone opens the collider district_age on
    # canopy <- irrigation <- soil_type -> district_age <- income -> housing_density -> heat_admissions.
    assert not is_valid_adjustment(G, X, Y, {"district_age"})
    path, c = collider_bias_path(G, X, Y, {"district_age"}, "district_age")
    assert c == "district_age"
    assert path == [
        "canopy",
        "irrigation",
        "soil_type",
        "district_age",
        "income",
        "housing_density",
        "heat_admissions",
    ]
    # X6 is a mediator: never admissible.
    assert mediators(G, X, Y) == {"shade_index"}
    assert not is_valid_adjustment(G, X, Y, {"district_age", "irrigation", "shade_index"})
    sets = set(minimal_adjustment_sets(G, X, Y, observed(G)))
    assert sets == {
        frozenset({"district_age", s})
        for s in ("soil_type", "income", "irrigation", "housing_density")
    }
    assert len(smallest_adjustment_set(G, X, Y, observed(G))) == 2


# M-bias: Greenland, Pearl & Robins 1999, "Causal diagrams for epidemiologic
# research", Epidemiology 10:37-48.  Renamed: wellness programme and sick days;
# prior_injury is a pre-exposure collider of two unmeasured causes.
M_BIAS = dag(
    "motivation->enrolled",
    "motivation->prior_injury",
    "frailty->prior_injury",
    "frailty->sick_days",
    "enrolled->sick_days",
)


def test_m_bias_adjusting_the_collider_is_invalid():
    G, X, Y = M_BIAS, {"enrolled"}, {"sick_days"}
    measured = {"enrolled", "sick_days", "prior_injury"}
    assert is_valid_adjustment(G, X, Y, set())
    assert not is_valid_adjustment(G, X, Y, {"prior_injury"})
    found = collider_bias_path(G, X, Y, {"prior_injury"}, "prior_injury")
    assert found == (
        ["enrolled", "motivation", "prior_injury", "frailty", "sick_days"],
        "prior_injury",
    )
    assert confounding_path(G, X, Y, {"prior_injury"}) is None
    assert list(minimal_adjustment_sets(G, X, Y, measured)) == [frozenset()]


# Birth-weight paradox: Hernandez-Diaz, Schisterman & Hernan 2006, "The birth
# weight 'paradox' uncovered?", Am J Epidemiol 164:1115-1120.  Structure from
# memory: smoking -> low birth weight <- birth defects -> mortality.
BIRTH = dag(
    "smoking->low_birth_weight",
    "smoking->infant_mortality",
    "low_birth_weight->infant_mortality",
    "birth_defect->low_birth_weight",
    "birth_defect->infant_mortality",
)


def test_birth_weight_paradox():
    G, X, Y = BIRTH, {"smoking"}, {"infant_mortality"}
    assert mediators(G, X, Y) == {"low_birth_weight"}
    assert not is_valid_adjustment(G, X, Y, {"low_birth_weight"})
    assert is_valid_adjustment(G, X, Y, set())
    # Conditioning on birth weight opens smoking -> low_birth_weight <-
    # birth_defect -> infant_mortality, which is why low-birth-weight infants
    # of smokers can look better off:
    Gd = G.copy()
    Gd.remove_edge("low_birth_weight", "infant_mortality")
    Gd.remove_edge("smoking", "infant_mortality")
    assert d_separated(Gd, {"smoking"}, {"infant_mortality"}, set())
    assert not d_separated(Gd, {"smoking"}, {"infant_mortality"}, {"low_birth_weight"})
    assert open_noncausal_path(G, X, Y, {"low_birth_weight"}) == [
        "smoking",
        "low_birth_weight",
        "birth_defect",
        "infant_mortality",
    ]


# Over-adjustment: Schisterman, Cole & Platt 2009, "Overadjustment bias and
# unnecessary adjustment in epidemiologic studies", Epidemiology 20:488-495.
def test_overadjustment_for_mediator_and_its_descendant():
    G = dag(
        "amendment->soil_nitrogen",
        "soil_nitrogen->crop_yield",
        "amendment->crop_yield",
        "soil_nitrogen->leaf_colour",
        "rainfall->crop_yield",
        "rainfall->amendment",
    )
    X, Y = {"amendment"}, {"crop_yield"}
    assert proper_causal_nodes(G, X, Y) == {"soil_nitrogen", "crop_yield"}
    assert forbidden(G, X, Y) == {"soil_nitrogen", "crop_yield", "leaf_colour"}
    assert is_valid_adjustment(G, X, Y, {"rainfall"})
    assert not is_valid_adjustment(G, X, Y, {"rainfall", "soil_nitrogen"})
    assert not is_valid_adjustment(G, X, Y, {"rainfall", "leaf_colour"})
    assert canonical_adjustment(G, X, Y, observed(G)) == {"rainfall"}


# Adjustment criterion, not back-door: Shpitser, VanderWeele & Robins 2010,
# "On the validity of covariate adjustment for estimating causal effects", UAI.
def test_valid_set_that_fails_the_backdoor_criterion():
    G = dag(
        "canopy->heat_admissions",
        "canopy->bird_count",
        "district_age->canopy",
        "district_age->heat_admissions",
    )
    X, Y = {"canopy"}, {"heat_admissions"}
    # bird_count is an effect of the exposure (back-door criterion forbids
    # any descendant of X) but does not affect the outcome: still valid.
    assert is_valid_adjustment(G, X, Y, {"district_age", "bird_count"})
    assert "bird_count" not in forbidden(G, X, Y)
    assert not is_valid_adjustment(G, X, Y, {"bird_count"})
    H = proper_backdoor_graph(G, X, Y)
    assert not H.has_edge("canopy", "heat_admissions") and H.has_edge("canopy", "bird_count")


# Front door: Pearl 1995, "Causal diagrams for empirical research",
# Biometrika 82:669-688 (smoking -> tar -> cancer with a hidden confounder), renamed.
def test_front_door():
    G = dag(
        "enrolled->step_count", "step_count->sick_days", bidirected=(("enrolled", "sick_days"),)
    )
    measured = {"enrolled", "step_count", "sick_days"}
    X, Y = {"enrolled"}, {"sick_days"}
    assert not adjustment_exists(G, X, Y, measured)
    assert smallest_adjustment_set(G, X, Y, measured) is None
    assert list(minimal_adjustment_sets(G, X, Y, measured)) == []
    assert front_door_set(G, X, Y, measured) == frozenset({"step_count"})
    # A hidden confounder of mediator and outcome breaks condition (iii).
    G2 = dag(
        "enrolled->step_count",
        "step_count->sick_days",
        bidirected=(("enrolled", "sick_days"), ("step_count", "sick_days")),
    )
    assert front_door_set(G2, X, Y, measured) is None
    # An unmeasured mediator leaves no measured front-door set.
    assert front_door_set(G, X, Y, {"enrolled", "sick_days"}) is None


# Bias amplification: Pearl 2010, "On a class of bias-amplifying variables
# that endanger effect estimates", UAI; Myers et al. 2011, "Effects of
# adjusting for instrumental variables on bias and precision of effect
# estimates", Am J Epidemiol 174:1213-1222.
def test_instrument_like_variable():
    G = dag(
        "distance_to_gym->enrolled",
        "enrolled->sick_days",
        "age->enrolled",
        "age->sick_days",
        bidirected=(("enrolled", "sick_days"),),
    )
    X, Y = {"enrolled"}, {"sick_days"}
    Z = {"distance_to_gym", "age"}
    assert instrument_like(G, X, Y, Z, "distance_to_gym")
    assert not instrument_like(G, X, Y, Z, "age")  # a confounder, not an instrument


def test_describe_and_enumerate_paths():
    G = M_BIAS
    paths, cut = enumerate_paths(G, {"enrolled"}, {"sick_days"}, limit=10)
    assert not cut
    assert paths == [
        ["enrolled", "motivation", "prior_injury", "frailty", "sick_days"],
        ["enrolled", "sick_days"],
    ]
    info = describe_path(G, paths[0], {"enrolled"}, set())
    assert not info.causal and not info.open
    assert [(b.node, b.reason) for b in info.blocking] == [("prior_injury", REASON_COLLIDER)]
    info = describe_path(G, paths[0], {"enrolled"}, {"prior_injury"})
    assert info.open and [(o.collider, o.adjusted) for o in info.opened_colliders] == [
        ("prior_injury", "prior_injury")
    ]
    info = describe_path(G, paths[0], {"enrolled"}, {"motivation", "prior_injury"})
    assert [(b.node, b.reason) for b in info.blocking] == [("motivation", REASON_NONCOLLIDER)]
    assert describe_path(G, paths[1], {"enrolled"}, set()).causal
    paths, cut = enumerate_paths(G, {"enrolled"}, {"sick_days"}, limit=1)
    assert cut and len(paths) == 1


def _dense_dag(n: int, p: float, seed: int) -> nx.DiGraph:
    rng = random.Random(seed)
    names = [f"w{i:02d}" for i in range(n)]
    G = nx.DiGraph()
    G.add_nodes_from(names)
    G.add_edges_from(
        (a, b) for i, a in enumerate(names) for b in names[i + 1 :] if rng.random() < p
    )
    return G


def test_dense_sixty_variable_dag():
    # Invented dense graph; checked against networkx d-separation in an
    # explicitly built proper back-door graph.
    G = _dense_dag(60, 0.3, seed=7)
    X, Y = {"w20"}, {"w45"}
    measured = set(G) - {"w50", "w57"}
    forb = forbidden(G, X, Y)
    H = proper_backdoor_graph(G, X, Y)
    canon = canonical_adjustment(G, X, Y, measured)
    exists = adjustment_exists(G, X, Y, measured)
    assert exists == (not (canon & forb) and nx.is_d_separator(H, X, Y, canon))
    assert exists  # the unmeasured variables come after the outcome, so cannot confound
    first = next(minimal_adjustment_sets(G, X, Y, measured))
    assert nx.is_d_separator(H, X, Y, set(first)) and not first & forb
    for v in first:
        assert not is_valid_adjustment(G, X, Y, first - {v})
    assert confounding_path(G, X, Y, canon) is None
    path = confounding_path(G, X, Y, set())
    assert path is not None and G.has_edge(path[1], path[0])
    assert not any(
        G.has_edge(path[i - 1], path[i]) and G.has_edge(path[i + 1], path[i])
        for i in range(1, len(path) - 1)
    )
    # adjusting for a forbidden descendant of the outcome opens collider paths
    z = sorted(forb - proper_causal_nodes(G, X, Y))[0]
    Z = set(canon) | {z}
    assert not is_valid_adjustment(G, X, Y, Z)
    assert open_noncausal_path(G, X, Y, canon) is None
    for v in sorted(canon):
        smaller = canon - {v}
        path = open_noncausal_path(G, X, Y, smaller)
        if path is None:
            continue
        info = describe_path(G, path, X, smaller)
        assert info.open and not info.causal and path[0] in X and path[-1] in Y
        for opened in info.opened_colliders:
            found = collider_bias_path(G, X, Y, smaller, opened.adjusted)
            assert found is not None and found[1] in nx.ancestors(G, opened.adjusted) | {
                opened.adjusted
            }
