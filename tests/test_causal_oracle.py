"""Self-checks of the brute-force oracles (tests/helpers/oracle.py) on hand-made graphs.

The oracles are written straight from the definitions of d-separation (Pearl
1988, "Probabilistic Reasoning in Intelligent Systems", ch. 3) and of the
adjustment criterion (Shpitser, VanderWeele & Robins 2010; Perkovic et al. 2018).
"""

from __future__ import annotations

from itertools import combinations

import networkx as nx
from helpers.examples import examples
from helpers.oracle import (
    analysis_case,
    blocked,
    oracle_d_separated,
    oracle_forbidden,
    oracle_minimal_valid_sets,
    oracle_valid,
)
from hypothesis import HealthCheck, given, settings

# ---------------------------------------------------------------- oracle self-checks


def _g(*edges: str) -> nx.DiGraph:
    G = nx.DiGraph()
    for e in edges:
        a, b = e.split("->")
        G.add_edge(a.strip(), b.strip())
    return G


def test_oracle_blocked_chain_fork_collider():
    # Textbook d-separation cases (Pearl 1988, ch. 3; common practice).
    G = _g("a->m", "m->b", "a->c", "b->c", "c->d")
    assert blocked(G, ["a", "m", "b"], {"m"})
    assert not blocked(G, ["a", "m", "b"], set())
    assert blocked(G, ["a", "c", "b"], set())
    assert not blocked(G, ["a", "c", "b"], {"d"})  # descendant of the collider opens it
    assert oracle_d_separated(G, {"a"}, {"b"}, {"m"})
    assert not oracle_d_separated(G, {"a"}, {"b"}, {"m", "d"})


def test_oracle_adjustment_on_confounder_and_mediator():
    G = _g("age->enrolled", "age->sick_days", "enrolled->fitness", "fitness->sick_days")
    X, Y = {"enrolled"}, {"sick_days"}
    assert oracle_forbidden(G, X, Y) == {"fitness", "sick_days"}
    assert oracle_valid(G, X, Y, {"age"})
    assert not oracle_valid(G, X, Y, set())
    assert not oracle_valid(G, X, Y, {"age", "fitness"})
    assert oracle_minimal_valid_sets(G, X, Y, {"age", "fitness"}) == [frozenset({"age"})]


@settings(max_examples=examples(150), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(analysis_case(max_nodes=7))
def test_fast_minimal_sets_oracle_is_the_definition(case):
    # the hoisted oracle against the subset-by-subset definition
    X, Y = set(case.X), set(case.Y)
    pool = sorted(set(case.measured) - X - Y)
    naive = [
        frozenset(s)
        for k in range(len(pool) + 1)
        for s in combinations(pool, k)
        if oracle_valid(case.G, X, Y, set(s))
    ]
    naive = [s for s in naive if not any(t < s for t in naive)]
    assert sorted(map(sorted, oracle_minimal_valid_sets(case.G, X, Y, pool))) == sorted(
        map(sorted, naive)
    )
