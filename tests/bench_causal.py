"""Benchmark of linter.causal (run: python tests/bench_causal.py). Prints figures; asserts nothing."""

from __future__ import annotations

import os
import random
import sys
import time

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))

import networkx as nx  # noqa: E402

from linter.causal import d_separated, minimal_adjustment_sets  # noqa: E402


def random_dag(n: int, m: int, seed: int) -> nx.DiGraph:
    """Random DAG: m arrows between random pairs, oriented by index (a topological order)."""
    rng = random.Random(seed)
    G = nx.DiGraph()
    G.add_nodes_from(f"v{i}" for i in range(n))
    edges: set[tuple[int, int]] = set()
    while len(edges) < m:  # G.number_of_edges() is O(|V|), so count here
        a, b = rng.randrange(n), rng.randrange(n)
        if a != b:
            edges.add((min(a, b), max(a, b)))
    G.add_edges_from((f"v{a}", f"v{b}") for a, b in sorted(edges))
    return G


def queries(G: nx.DiGraph, k: int, seed: int):
    rng = random.Random(seed)
    nodes = list(G)
    out = []
    for _ in range(k):
        x, y, *zs = rng.sample(nodes, 7)
        out.append(({x}, {y}, set(zs)))
    return out


def plain_bfs(G: nx.DiGraph, start: str) -> int:
    succ, pred = G._succ, G._pred
    seen = {start}
    stack = [start]
    while stack:
        v = stack.pop()
        for w in succ[v]:
            if w not in seen:
                seen.add(w)
                stack.append(w)
        for w in pred[v]:
            if w not in seen:
                seen.add(w)
                stack.append(w)
    return len(seen)


def best(f, repeat=3):
    t = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        f()
        t.append(time.perf_counter() - t0)
    return min(t)


def main() -> None:
    rows = []
    G1 = random_dag(10_000, 50_000, 1)
    q1 = queries(G1, 20, 2)
    ours1 = best(lambda: [d_separated(G1, x, y, z) for x, y, z in q1]) / len(q1)
    theirs1 = best(lambda: [nx.is_d_separator(G1, x, y, z) for x, y, z in q1], 1) / len(q1)
    bfs1 = best(lambda: [plain_bfs(G1, next(iter(x))) for x, _, _ in q1]) / len(q1)
    assert [d_separated(G1, x, y, z) for x, y, z in q1] == [nx.is_d_separator(G1, x, y, z) for x, y, z in q1]
    rows.append(("d-sep, 10k vars / 50k arrows (ours)", ours1))
    rows.append(("networkx.is_d_separator, same queries", theirs1))
    rows.append(("one plain BFS over the graph", bfs1))

    G2 = random_dag(100_000, 500_000, 3)
    q2 = queries(G2, 20, 4)
    ours2 = best(lambda: [d_separated(G2, x, y, z) for x, y, z in q2]) / len(q2)
    rows.append(("d-sep, 100k vars / 500k arrows (ours)", ours2))

    # Adjustment analysis on 10k variables: exposure and outcome in the middle of the order.
    t0 = time.perf_counter()
    it = minimal_adjustment_sets(G1, {"v5000"}, {"v5100"}, set(G1))
    first = next(it, None)
    t_first = time.perf_counter() - t0
    t0 = time.perf_counter()
    sets20 = list(minimal_adjustment_sets(G1, {"v5000"}, {"v5100"}, set(G1), max_sets=20))
    t_20 = time.perf_counter() - t0
    rows.append((f"first minimal adjustment set, 10k vars (size {len(first) if first else None})", t_first))
    rows.append((f"max_sets=20, 10k vars ({len(sets20)} sets)", t_20))

    print(f"{'measure':62} {'seconds':>10}")
    for name, t in rows:
        print(f"{name:62} {t:10.4f}")
    print()
    print(f"{'ratio':62} {'value':>10}  target")
    print(f"{'networkx / ours (10k)':62} {theirs1 / ours1:10.1f}  >= 10")
    print(f"{'ours / plain BFS (10k)':62} {ours1 / bfs1:10.2f}  <= 3")
    print(f"{'ours 100k / ours 10k':62} {ours2 / ours1:10.1f}  <= 12")


if __name__ == "__main__":
    main()
