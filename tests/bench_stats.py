"""Benchmark: test every implied independence of a 20-variable diagram on
1,000,000 rows (target: within 20 seconds, loading included).

Run: ``python tests/bench_stats.py [--rows N] [--missing]``. It simulates a
linear-Gaussian model on a seeded random 20-variable DAG, writes a temporary
CSV, then times ``load_table`` and ``test_independencies`` for pearson and
spearman, and prints a table of the figures and their ratio to the target.
With ``--missing`` about 0.1% of the cells of every column are blanked, the
slow case where tests do not share one set of complete rows.
"""

from __future__ import annotations

import argparse
import itertools
import sys
import tempfile
import time
from pathlib import Path

import networkx as nx
import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from dagward.stats import Independence, load_table, simulate_linear_gaussian  # noqa: E402
from dagward.stats import test_independencies as run_tests  # noqa: E402

TARGET_SECONDS = 20.0
VARIABLES = 20


def random_dag(seed: int, size: int, p_edge: float = 0.25) -> nx.DiGraph:
    rng = np.random.default_rng(seed)
    names = [f"x{i:02d}" for i in range(size)]
    graph = nx.DiGraph()
    graph.add_nodes_from(names)
    for i, j in itertools.combinations(range(size), 2):
        if rng.random() < p_edge:
            graph.add_edge(names[i], names[j])
    return graph


def implied(graph: nx.DiGraph) -> list[Independence]:
    found = []
    for a, b in itertools.combinations(sorted(graph.nodes), 2):
        if graph.has_edge(a, b) or graph.has_edge(b, a):
            continue
        separator = nx.find_minimal_d_separator(graph, a, b)
        found.append(Independence(a, b, tuple(sorted(separator))))
    return found


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--missing", action="store_true")
    args = parser.parse_args()

    graph = random_dag(7, VARIABLES)
    independencies = implied(graph)
    data = simulate_linear_gaussian(graph, args.rows, seed=11)
    import pandas as pd

    frame = pd.DataFrame(data)
    if args.missing:
        rng = np.random.default_rng(3)
        for name in frame.columns:
            frame.loc[rng.choice(args.rows, args.rows // 1000, replace=False), name] = np.nan
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bench.csv"
        start = time.perf_counter()
        frame.to_csv(path, index=False, float_format="%.6g")
        write_seconds = time.perf_counter() - start
        size_mb = path.stat().st_size / 1e6

        start = time.perf_counter()
        table = load_table(path)
        load_seconds = time.perf_counter() - start

        figures = []
        for method in ("pearson", "spearman"):
            start = time.perf_counter()
            results = run_tests(table, independencies, method=method)
            seconds = time.perf_counter() - start
            rejected = sum(r.rejected for r in results)
            figures.append((method, seconds, rejected, len(results)))

    given = [len(ind.given) for ind in independencies]
    print(
        f"diagram: {VARIABLES} variables, {graph.number_of_edges()} arrows, "
        f"{len(independencies)} implied independencies "
        f"(conditioning sets of size {min(given)}-{max(given)}, mean {np.mean(given):.1f})"
    )
    print(
        f"data: {args.rows:,} rows, CSV {size_mb:.0f} MB (written in {write_seconds:.1f} s, "
        f"not timed){', 0.1% cells missing per column' if args.missing else ''}"
    )
    print()
    print(
        f"{'method':<10}{'load s':>9}{'tests s':>9}{'total s':>9}{'target s':>10}"
        f"{'ratio':>8}{'rejected':>10}"
    )
    for method, seconds, rejected, total in figures:
        whole = load_seconds + seconds
        print(
            f"{method:<10}{load_seconds:>9.2f}{seconds:>9.2f}{whole:>9.2f}"
            f"{TARGET_SECONDS:>10.0f}{whole / TARGET_SECONDS:>8.2f}{rejected:>6}/{total}"
        )
    worst = max(load_seconds + seconds for _m, seconds, _r, _t in figures)
    print()
    print("within target" if worst <= TARGET_SECONDS else "OVER TARGET")


if __name__ == "__main__":
    main()
