"""Brute-force oracles for identification questions, written from the definitions.

They build on the path-enumerating oracles of tests/test_causal_oracle.py
(d-separation and the forbidden set straight from their definitions) and are
only used on small diagrams.
"""

from __future__ import annotations

from itertools import combinations

import networkx as nx
from test_causal_oracle import causal, oracle_d_separated, simple_paths


def oracle_cn(G: nx.DiGraph, X: set[str], Y: set[str]) -> set[str]:
    """Variables outside X on a proper causal path from X to Y (by enumerating paths)."""
    return {v for p in simple_paths(G, X, Y) if causal(G, p) for v in p[1:]}


def oracle_instrument_sets(G: nx.DiGraph, x: str, Y: set[str], measured, z: str) -> list[frozenset[str]]:
    """Every W among the measured ancestors of x, Y and z for which z is an
    instrument for x (the definition in linter/causal/instruments.py), found
    by trying every subset."""
    X = {x}
    if z in X or z in Y or z not in measured or z in nx.descendants(G, x):
        return []
    cn = oracle_cn(G, X, Y)
    forb = set(cn)
    for c in cn:
        forb |= nx.descendants(G, c)
    Gc = G.copy()
    Gc.remove_edges_from([(x, c) for c in cn if G.has_edge(x, c)])
    anc = set(X | Y | {z})
    for v in list(anc):
        anc |= nx.ancestors(G, v)
    pool = sorted((set(measured) & anc) - X - Y - {z} - forb)
    out = []
    for k in range(len(pool) + 1):
        for W in combinations(pool, k):
            W = set(W)
            if not oracle_d_separated(Gc, {z}, Y, W):
                continue
            if oracle_d_separated(G, {z}, X, W):
                continue
            out.append(frozenset(W))
    return out
