"""Seeded random small diagrams with ``<->`` arcs and unmeasured variables (test helper)."""

from __future__ import annotations

import random

import networkx as nx
from dagward.causal import hidden_node_name


def random_diagram(
    rng: random.Random,
    min_nodes: int = 3,
    max_nodes: int = 7,
    max_arcs: int = 3,
    max_unmeasured: int = 2,
    max_roles: int = 2,
):
    """(G, measured, X, Y): a random DAG over v0..v{n-1} (index order is a
    topological order) with hidden ``<->`` parents, a few unmeasured
    variables, and disjoint measured exposures X and outcomes Y."""
    n = rng.randint(min_nodes, max_nodes)
    names = [f"v{i}" for i in range(n)]
    p = rng.choice([0.25, 0.4, 0.55])
    G = nx.DiGraph()
    G.add_nodes_from(names)
    for i, a in enumerate(names):
        for b in names[i + 1 :]:
            if rng.random() < p:
                G.add_edge(a, b)
    pairs = [(a, b) for i, a in enumerate(names) for b in names[i + 1 :]]
    for _ in range(rng.randint(0, max_arcs)):
        a, b = rng.choice(pairs)
        h = hidden_node_name(a, b)
        G.add_node(h, hidden=True)
        G.add_edge(h, a)
        G.add_edge(h, b)
    order = names[:]
    rng.shuffle(order)
    nx_ = rng.randint(1, max_roles)
    ny_ = rng.randint(1, max_roles)
    X = frozenset(order[:nx_])
    Y = frozenset(order[nx_ : nx_ + ny_])
    rest = order[nx_ + ny_ :]
    unmeasured = set(rng.sample(rest, min(len(rest), rng.randint(0, max_unmeasured))))
    measured = frozenset(names) - unmeasured
    return G, measured, X, Y


def describe(G: nx.DiGraph, measured, X, Y) -> str:
    """A readable form of a case for assertion messages."""
    return (
        f"edges={sorted(G.edges)}, unmeasured={sorted(set(G) - set(measured))}, "
        f"X={sorted(X)}, Y={sorted(Y)}"
    )
