"""The smallest adjustment set without moral cliques (dagward.causal.separators).

Oracles, outside our separator code: networkx's maximum flow on the classical
construction (the moral graph of the ancestral proper back-door graph, with
its cliques, each vertex split in two; Lauritzen et al. 1990 for the moral
graph, van der Zander, Liskiewicz & Textor 2019 for the proper back-door
graph and the restriction to removable variables) for the size, and
networkx.is_d_separator for validity.
"""

from __future__ import annotations

import random

import networkx as nx
from dagward.causal import (
    forbidden,
    is_valid_adjustment,
    minimal_adjustment_sets,
    smallest_adjustment_set,
)
from dagward.causal.adjustment import proper_backdoor_graph
from dagward.causal.indexed import indexed
from dagward.causal.separators import _moral_ids


def clique_flow_size(G, x, y, measured):
    """Size of a minimum valid adjustment set: networkx max-flow on the moral graph with cliques."""
    H = proper_backdoor_graph(G, {x}, {y})
    anc = nx.ancestors(H, x) | nx.ancestors(H, y) | {x, y}
    M = nx.moral_graph(H.subgraph(anc))
    removable = (anc & set(measured)) - {x, y} - set(forbidden(G, {x}, {y}))
    F = nx.DiGraph()
    for v in M:
        if v in removable:
            F.add_edge((v, 0), (v, 1), capacity=1)
        else:
            F.add_edge((v, 0), (v, 1))
        for u in M[v]:
            F.add_edge((v, 1), (u, 0))
    F.add_edge("s", (x, 0))
    F.add_edge((y, 1), "t")
    try:
        return nx.maximum_flow_value(F, "s", "t")
    except nx.NetworkXUnbounded:
        return None


def random_dag(rng, n):
    order = [f"v{i}" for i in range(n)]
    rng.shuffle(order)
    p = rng.uniform(0.05, 0.3)
    G = nx.DiGraph()
    G.add_nodes_from(order)
    G.add_edges_from(
        (a, b) for i, a in enumerate(order) for b in order[i + 1 :] if rng.random() < p
    )
    return nx.freeze(G)


def test_smallest_set_has_the_size_of_the_clique_flow_and_is_valid():
    rng = random.Random(21)
    checked = 0
    for _ in range(120):
        G = random_dag(rng, rng.randrange(8, 40))
        x, y = rng.sample(list(G), 2)
        measured = frozenset(v for v in G if rng.random() < 0.85) | {x, y}
        want = clique_flow_size(G, x, y, measured)
        got = smallest_adjustment_set(G, {x}, {y}, measured)
        if want is None:
            assert got is None
            continue
        assert got is not None and len(got) == want
        assert got <= measured and is_valid_adjustment(G, {x}, {y}, got)
        H = proper_backdoor_graph(G, {x}, {y})
        assert nx.is_d_separator(H, {x}, {y}, set(got))
        checked += 1
    assert checked > 50


def many_parents(k):
    """Invented: an outcome with k parents, every other one also a cause of the exposure."""
    G = nx.DiGraph([("x", "y")])
    for i in range(k):
        G.add_edge(f"c{i}", "y")
        if i % 2 == 0:
            G.add_edge(f"c{i}", "x")
    return nx.freeze(G)


def test_many_parents_smallest_set_without_the_clique():
    k = 600
    G = many_parents(k)
    measured = frozenset(G)
    # The graph searched has one edge per arrow and per variable, not the
    # k(k-1)/2 edges that marrying the outcome's parents would add.
    nbrs, _ = _moral_ids(indexed(G), {"x", "y"})
    assert sum(map(len, nbrs)) <= 2 * (G.number_of_nodes() + G.number_of_edges())
    smallest = smallest_adjustment_set(G, {"x"}, {"y"}, measured)
    assert smallest == {f"c{i}" for i in range(0, k, 2)}  # each confounder must be adjusted for
    # ... and it is the only minimal set (the other parents are needless)
    assert list(minimal_adjustment_sets(G, {"x"}, {"y"}, measured, max_sets=5)) == [smallest]
