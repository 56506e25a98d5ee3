"""The separator search's test of which border vertices touch the y side.

`_touching_y_side` replaces a search of the whole y side with searches led
toward Y from the border. Checked here against the definition (a border
vertex touches D when one of its neighbours outside the x side and the border
is connected to Y there, by networkx's connected components) on random graphs
whose borders enclose pockets.
"""

from __future__ import annotations

import random

import networkx as nx
import pytest
from dagward.causal.indexed import distances
from dagward.causal.separators import _closure, _touching_y_side


def _by_definition(nbrs, ys, side, border_mark, border) -> set[int]:
    g = nx.Graph()
    g.add_nodes_from(range(len(nbrs)))
    g.add_edges_from((v, w) for v, row in enumerate(nbrs) for w in row)
    outside = [v for v in range(len(nbrs)) if not side[v] and not border_mark[v]]
    d_side: set[int] = set()
    for comp in nx.connected_components(g.subgraph(outside)):
        if comp & set(ys):
            d_side |= comp
    return {b for b in border if any(u in d_side for u in nbrs[b])}


@pytest.mark.parametrize("seed", range(60))
def test_touching_border_vertices_are_those_of_the_definition(seed):
    rng = random.Random(seed)
    n = rng.randrange(6, 60)
    p = rng.choice([0.05, 0.1, 0.2])
    g = nx.gnp_random_graph(n, p, seed=seed)
    # a few pockets: small cliques hung off single vertices (enclosed once those
    # vertices are on the border)
    for _ in range(rng.randrange(0, 4)):
        hang = rng.randrange(n)
        pocket = list(range(len(g), len(g) + rng.randrange(1, 4)))
        g.add_edges_from((hang, v) for v in pocket)
        g.add_edges_from((a, b) for a in pocket for b in pocket if a < b)
    nbrs = [sorted(g[v]) for v in range(len(g))]
    xs, ys = [0], [len(g) - 1]
    removable = bytearray(rng.random() < 0.6 for _ in range(len(g)))
    removable[0] = removable[len(g) - 1] = 0
    seed_side = list(xs) + rng.sample(range(1, len(g) - 1), k=min(3, len(g) - 2))
    side, _members, border_mark, border = _closure(nbrs, seed_side, removable)
    if side[ys[0]]:
        return  # the x side reached Y: the search stops before asking
    got = _touching_y_side(
        nbrs, distances(len(nbrs), nbrs.__getitem__, ys), ys, side, border_mark, border
    )
    assert got == _by_definition(nbrs, ys, side, border_mark, border)
