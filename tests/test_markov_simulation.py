"""The global Markov property, checked by simulation.

Data from a linear-Gaussian structural equation model are Markov to its DAG
(common practice; Spirtes, Glymour & Scheines 2000, *Causation, Prediction, and
Search*, ch. 3): every d-separation statement (Pearl 2009, *Causality*, ch. 1;
Lauritzen 1996, *Graphical Models*, section 3.2.2) is a conditional
independence of the data. So each implied independence, tested at level 0.05,
must be rejected with probability 0.05 before any adjustment, and over many
tests the count of raw p < 0.05 must fall inside a binomial interval.

The implied independencies are computed here with networkx alone (a minimal
d-separator for every non-adjacent pair), independently of linter/causal.
"""

from __future__ import annotations

import itertools

import networkx as nx
import numpy as np
import pytest
from dagward.stats import Independence, Table, simulate_linear_gaussian
from dagward.stats import test_independencies as run_tests
from scipy import stats as sps

N_ROWS = 2000
SEEDS = range(40)


def random_dag(seed: int) -> nx.DiGraph:
    """8-12 variables, each forward pair joined with probability 0.3."""
    rng = np.random.default_rng(seed)
    size = int(rng.integers(8, 13))
    order = [f"v{i}" for i in rng.permutation(size)]
    graph = nx.DiGraph()
    graph.add_nodes_from(order)
    for i, j in itertools.combinations(range(size), 2):
        if rng.random() < 0.3:
            graph.add_edge(order[i], order[j])
    return graph


def implied(graph: nx.DiGraph) -> list[Independence]:
    found = []
    for a, b in itertools.combinations(sorted(graph.nodes), 2):
        if graph.has_edge(a, b) or graph.has_edge(b, a):
            continue
        separator = nx.find_minimal_d_separator(graph, a, b)
        assert separator is not None  # in a DAG every non-adjacent pair is separable
        assert nx.is_d_separator(graph, {a}, {b}, separator)
        found.append(Independence(a, b, tuple(sorted(separator))))
    return found


@pytest.fixture(scope="module")
def runs() -> list[tuple[nx.DiGraph, list[Independence], Table]]:
    out = []
    for seed in SEEDS:
        graph = random_dag(seed)
        table = Table.from_columns(simulate_linear_gaussian(graph, N_ROWS, seed=1000 + seed))
        out.append((graph, implied(graph), table))
    return out


@pytest.mark.parametrize("method", ["pearson", "spearman"])
def test_implied_independencies_are_rejected_at_the_nominal_rate(runs, method: str) -> None:
    # Spearman: the rank partial correlation of Gaussian data that are
    # conditionally independent is not exactly zero (ranks are a non-linear
    # transform), but at n = 2,000 the bias is far below the test's noise;
    # this check would catch a wrong variance factor or degrees of freedom.
    hits = 0
    total = 0
    conditional = 0
    for _graph, independencies, table in runs:
        results = run_tests(table, independencies, method=method)
        assert [r.independence for r in results] == independencies
        assert all(r.n == N_ROWS and r.note is None for r in results)
        hits += sum(r.p < 0.05 for r in results)
        total += len(results)
        conditional += sum(bool(r.independence.given) for r in results)
    assert total > 500 and conditional > 200  # enough tests, most of them conditional
    low, high = sps.binom.interval(0.999, total, 0.05)
    assert low <= hits <= high, (hits, total, low, high)


def test_p_values_are_uniform_under_the_markov_property(runs) -> None:
    # A sharper view of the same fact: the raw p-values of true
    # independencies follow U(0, 1). Kolmogorov-Smirnov on the first test of
    # each data set (one per data set, so the p-values are independent).
    firsts = []
    for _graph, independencies, table in runs:
        conditional = [ind for ind in independencies if ind.given] or independencies
        firsts.append(run_tests(table, conditional[:1])[0].p)
    assert sps.kstest(firsts, "uniform").pvalue > 0.001


def test_an_added_arrow_breaks_the_independence_it_crosses(runs) -> None:
    checked = 0
    for seed, (graph, independencies, _table) in zip(SEEDS, runs, strict=True):
        if not independencies:
            continue
        rng = np.random.default_rng(seed)
        target = independencies[int(rng.integers(len(independencies)))]
        order = list(nx.topological_sort(graph))
        tail, head = sorted((target.a, target.b), key=order.index)  # keep it acyclic
        wider = graph.copy()
        wider.add_edge(tail, head)
        assert nx.is_directed_acyclic_graph(wider)
        assert not nx.is_d_separator(wider, {tail}, {head}, set(target.given))
        data = simulate_linear_gaussian(
            wider, N_ROWS, seed=2000 + seed, coefficients={(tail, head): 0.6}
        )
        results = run_tests(Table.from_columns(data), independencies)
        broken = results[independencies.index(target)]
        assert broken.rejected, (seed, target, broken)
        assert abs(broken.effect) >= 0.1 and broken.ci_low * broken.ci_high > 0
        checked += 1
    assert checked >= 30
