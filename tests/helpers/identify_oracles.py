"""Brute-force oracles for identification questions, written from the definitions.

They build on the project's path-enumerating oracles (tests/helpers/oracle.py:
d-separation and the forbidden set straight from their definitions) and are
only used on small diagrams.
"""

from __future__ import annotations

from itertools import combinations

import networkx as nx

from helpers.oracle import causal, oracle_d_separated, simple_paths


def oracle_cn(G: nx.DiGraph, X: set[str], Y: set[str]) -> set[str]:
    """Variables outside X on a proper causal path from X to Y (by enumerating paths)."""
    return {v for p in simple_paths(G, X, Y) if causal(G, p) for v in p[1:]}


def oracle_instrument_sets(
    G: nx.DiGraph, x: str, Y: set[str], measured, z: str
) -> list[frozenset[str]]:
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


def oracle_projection(G: nx.DiGraph, measured) -> tuple[set[tuple[str, str]], set[frozenset[str]]]:
    """The latent projection by definition (Verma & Pearl 1990): arrows a -> b
    for a directed path whose inner variables are all unmeasured, arcs a <-> b
    for an unmeasured h with such paths to both.  Enumerates paths."""
    obs = set(measured) & {v for v in G if not G.nodes[v].get("hidden")}
    hidden = set(G) - obs

    def reach_through_hidden(start: str) -> set[str]:
        out = set()
        for b in obs:
            if b == start:
                continue
            for p in nx.all_simple_paths(G, start, b):
                if all(v in hidden for v in p[1:-1]):
                    out.add(b)
                    break
        return out

    arrows = {(a, b) for a in obs for b in reach_through_hidden(a)}
    arcs = set()
    for h in hidden:
        r = sorted(reach_through_hidden(h))
        arcs |= {frozenset((a, b)) for i, a in enumerate(r) for b in r[i + 1 :]}
    return arrows, arcs


def districts(nodes, arcs) -> list[set[str]]:
    """Connected components of ``nodes`` under the bidirected pairs ``arcs``."""
    U = nx.Graph()
    U.add_nodes_from(nodes)
    U.add_edges_from(tuple(a) for a in arcs if set(a) <= set(nodes))
    return [set(c) for c in nx.connected_components(U)]
