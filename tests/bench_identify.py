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

from linter.causal import hidden_node_name  # noqa: E402
from linter.causal.identify import general_identification, identify_effect  # noqa: E402
from linter.causal.instruments import instruments  # noqa: E402


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
    for k in rows[100]:
        ratio = rows[1000][k] / rows[100][k] if rows[100][k] else float("nan")
        print(f"growth 100 -> 1,000 variables, {k}: x{ratio:.1f}")
    goal = rows[1000]["identify_effect"]
    print(
        f"goal: identify_effect on 1,000 variables under 2 s: {goal:.3f} s "
        f"({'met' if goal < 2 else 'NOT met'})"
    )


if __name__ == "__main__":
    main()
