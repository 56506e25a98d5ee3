"""Benchmark of `identify` (run: python tests/bench_identify.py). Prints figures; asserts nothing.

Random diagrams with n variables, 2n arrows oriented by index, and 50 ``<->``
pairs; the exposure is chosen in the middle of the order and the outcome
among the last 5%, with a causal path between them, so the outcome's
ancestors hold most of the diagram (the hardest shape for the algorithm: it works inside the
outcome's ancestors).  Goal: identify_effect on 1,000 variables under 2 s.  Each row is
the best of five runs over three diagrams of each size (the slowest diagram
is reported).
"""

from __future__ import annotations

import os
import random
import sys
import time

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))

import networkx as nx  # noqa: E402
from dagward.causal import hidden_node_name  # noqa: E402
from dagward.causal.identify import general_identification, identify_effect  # noqa: E402
from dagward.causal.instruments import instruments  # noqa: E402


def diagram(n: int, pairs: int, seed: int):
    rng = random.Random(seed)
    G = nx.DiGraph()
    names = [f"v{i}" for i in range(n)]
    G.add_nodes_from(names)
    edges: set[tuple[int, int]] = set()
    while len(edges) < 2 * n:
        a, b = rng.randrange(n), rng.randrange(n)
        if a != b:
            edges.add((min(a, b), max(a, b)))
    G.add_edges_from((names[a], names[b]) for a, b in edges)
    done = 0
    while done < pairs:
        a, b = rng.sample(names, 2)
        h = hidden_node_name(a, b)
        if h in G:
            continue
        G.add_node(h, hidden=True)
        G.add_edges_from([(h, a), (h, b)])
        done += 1
    G = nx.freeze(G)
    while True:
        x = rng.randrange(n // 4, n // 2)
        y = rng.randrange(n - n // 20, n)
        if nx.has_path(G, names[x], names[y]):
            return G, frozenset(names), {names[x]}, {names[y]}


def chain(n: int, seed: int):
    """A harder shape for the algorithm: a long chain with skips, a ``<->`` pair
    every 20 variables; exposure in the middle, outcome last (general route)."""
    rng = random.Random(seed)
    G = nx.DiGraph()
    names = [f"v{i}" for i in range(n)]
    G.add_nodes_from(names)
    for i in range(n - 1):
        G.add_edge(names[i], names[i + 1])
    for i in range(n):
        for j in (i + 2, i + 5):
            if j < n and rng.random() < 0.5:
                G.add_edge(names[i], names[j])
    for i in range(0, n - 3, 20):
        h = hidden_node_name(names[i], names[i + 3])
        G.add_node(h, hidden=True)
        G.add_edges_from([(h, names[i]), (h, names[i + 3])])
    return nx.freeze(G), frozenset(names), {names[n // 2]}, {names[-1]}


def best(f, repeat: int = 5) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        f()
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    rows = {}
    for n in (100, 1000):
        worst = {"identify_effect": 0.0, "ID alone": 0.0, "instruments": 0.0}
        routes = []
        for seed in range(3):
            G, measured, X, Y = diagram(n, 50, seed)
            routes.append(identify_effect(G, X, Y, measured).route)
            worst["identify_effect"] = max(
                worst["identify_effect"],
                best(lambda G=G, X=X, Y=Y, m=measured: identify_effect(G, X, Y, m)),
            )
            worst["ID alone"] = max(
                worst["ID alone"],
                best(lambda G=G, X=X, Y=Y, m=measured: general_identification(G, X, Y, m)),
            )
            worst["instruments"] = max(
                worst["instruments"],
                best(lambda G=G, X=X, Y=Y, m=measured: instruments(G, X, Y, m), repeat=1),
            )
        rows[n] = worst
        print(f"{n:>5} variables, 50 <-> pairs (routes {', '.join(routes)}):")
        for k, v in worst.items():
            print(f"    {k:<16} {v * 1000:8.1f} ms")
    chain_rows = {}
    for n in (100, 1000):
        G, measured, X, Y = chain(n, 0)
        route = identify_effect(G, X, Y, measured).route
        chain_rows[n] = best(lambda G=G, X=X, Y=Y, m=measured: identify_effect(G, X, Y, m))
        print(
            f"{n:>5}-variable chain, a <-> pair every 20 (route {route}): "
            f"identify_effect {chain_rows[n] * 1000:.1f} ms"
        )
    print(f"growth 100 -> 1,000 variables, chain: x{chain_rows[1000] / chain_rows[100]:.1f}")
    for k in rows[100]:
        ratio = rows[1000][k] / rows[100][k] if rows[100][k] else float("nan")
        print(f"growth 100 -> 1,000 variables, {k}: x{ratio:.1f}")
    goal = max(rows[1000]["identify_effect"], chain_rows[1000])
    print(
        f"goal: identify_effect on 1,000 variables under 2 s: {goal:.3f} s "
        f"({'met' if goal < 2 else 'NOT met'})"
    )


if __name__ == "__main__":
    main()
