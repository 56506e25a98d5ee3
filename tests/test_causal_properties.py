"""Property tests of dagward.causal against networkx and brute-force oracles.

Random DAGs carry several exposures and outcomes, hidden ``<->`` parents and
unmeasured variables.  Oracles: ``networkx.is_d_separator`` (networkx 3.6)
and the path-enumerating definitions in tests/helpers/oracle.py.
"""

from __future__ import annotations

import random
from itertools import combinations

import networkx as nx
from dagward.causal import (
    adjustment_exists,
    canonical_adjustment,
    collider_bias_path,
    confounding_path,
    d_connecting_path,
    d_separated,
    forbidden,
    implied_independencies,
    is_valid_adjustment,
    minimal_adjustment_sets,
    minimal_separator,
    open_noncausal_path,
    proper_causal_nodes,
    smallest_adjustment_set,
)
from dagward.causal.separators import (
    _adjustment_problem,
    _numbered,
    _separator_search,
    enumerate_minimal_separators,
)
from helpers.examples import examples
from helpers.oracle import (
    analysis_case,
    blocked,
    causal,
    collider_reaching,
    is_collider,
    oracle_confounding,
    oracle_d_separated,
    oracle_forbidden,
    oracle_minimal_valid_sets,
    oracle_open_noncausal,
    oracle_separable,
    oracle_valid,
    random_dag,
)
from hypothesis import HealthCheck, given, note, settings
from hypothesis import strategies as st

FAST = settings(max_examples=examples(200), deadline=None, suppress_health_check=list(HealthCheck))
MANY = settings(max_examples=examples(400), deadline=None, suppress_health_check=list(HealthCheck))


def assert_genuine_path(G, path, X, Y):
    """Simple, adjacent in G, from X to Y, only the first node in X."""
    assert path[0] in X and path[-1] in Y
    assert len(set(path)) == len(path), path
    assert not set(path[1:]) & X, path
    for a, b in zip(path, path[1:], strict=False):
        assert G.has_edge(a, b) or G.has_edge(b, a), (a, b)


@st.composite
def dsep_query(draw, max_nodes=8, max_hidden=2):
    G, names, measured = draw(random_dag(min_nodes=2, max_nodes=max_nodes, max_hidden=max_hidden))
    nodes = sorted(G.nodes)
    xs = draw(st.sets(st.sampled_from(nodes), min_size=1, max_size=2))
    ys = draw(
        st.sets(st.sampled_from([v for v in nodes if v not in xs] or nodes), min_size=1, max_size=2)
    )
    ys -= xs
    pool = [v for v in nodes if v not in xs | ys]
    zs = draw(st.sets(st.sampled_from(pool), max_size=4)) if pool else set()
    return G, xs, ys, zs


@MANY
@given(dsep_query(max_nodes=25, max_hidden=4))
def test_d_separated_agrees_with_networkx(q):
    G, xs, ys, zs = q
    if not ys:
        return
    assert d_separated(G, xs, ys, zs) == nx.is_d_separator(G, xs, ys, zs)


@MANY
@given(dsep_query())
def test_d_separated_agrees_with_path_definition(q):
    G, xs, ys, zs = q
    if not ys:
        return
    assert d_separated(G, xs, ys, zs) == oracle_d_separated(G, xs, ys, zs)


@MANY
@given(dsep_query(max_nodes=12, max_hidden=3))
def test_witness_is_open_simple_path_exactly_when_connected(q):
    G, xs, ys, zs = q
    if not ys:
        return
    path = d_connecting_path(G, xs, ys, zs)
    assert (path is None) == nx.is_d_separator(G, xs, ys, zs)
    if path is not None:
        assert_genuine_path(G, path, xs, ys)
        assert not set(path[:-1]) & ys
        assert not blocked(G, path, zs)


def test_overlapping_sets_convention():
    G = nx.DiGraph([("a", "b"), ("b", "c")])
    assert not d_separated(G, {"a", "b"}, {"b"}, set())
    assert d_connecting_path(G, {"a", "b"}, {"b"}, set()) == ["b"]
    try:
        d_separated(G, {"a"}, {"c"}, {"a"})
    except ValueError:
        pass
    else:  # pragma: no cover - the convention is to refuse, like networkx
        raise AssertionError("x in z must raise ValueError")


@MANY
@given(analysis_case())
def test_is_valid_adjustment_agrees_with_definition(case):
    G, X, Y, Z = case.G, set(case.X), set(case.Y), set(case.Z)
    assert forbidden(G, X, Y) == oracle_forbidden(G, X, Y)
    assert is_valid_adjustment(G, X, Y, Z) == oracle_valid(G, X, Y, Z)


@FAST
@given(analysis_case(max_nodes=9))
def test_minimal_sets_smallest_and_existence_match_brute_force(case):
    G, X, Y, measured = case.G, set(case.X), set(case.Y), set(case.measured)
    candidates = measured - X - Y
    expected = oracle_minimal_valid_sets(G, X, Y, candidates)
    got = list(minimal_adjustment_sets(G, X, Y, measured))
    assert len(got) == len(set(got))
    assert set(got) == set(expected)
    assert adjustment_exists(G, X, Y, measured) == bool(expected)
    canon = canonical_adjustment(G, X, Y, measured)
    assert is_valid_adjustment(G, X, Y, canon) == bool(expected)
    smallest = smallest_adjustment_set(G, X, Y, measured)
    if expected:
        assert smallest is not None and oracle_valid(G, X, Y, set(smallest))
        assert len(smallest) == min(len(s) for s in expected)
        assert list(minimal_adjustment_sets(G, X, Y, measured, max_sets=1)) == got[:1]
    else:
        assert smallest is None


def assert_polynomial_delay(nbrs, xs, ys, removable):
    """Linear-time steps before the first set, between sets and after the last: at most 2|R| + 1.

    The bound is the one argued in enumerate_minimal_separators's docstring.
    Returns the sets found.
    """
    bound = 2 * sum(removable) + 1
    found, gap = [], 0
    for item in _separator_search(nbrs, xs, ys, removable):
        gap += 1
        if item is not None:
            assert gap <= bound, (gap, bound)
            found.append(frozenset(item))
            gap = 0
    assert gap <= bound, (gap, bound)
    return found


@FAST
@given(analysis_case(max_nodes=12))
def test_minimal_set_listing_has_polynomial_delay(case):
    G, X, Y, measured = case.G, set(case.X), set(case.Y), set(case.measured)
    ix, nbrs, original, xs, ys, removable = _adjustment_problem(G, X, Y, measured)
    found = assert_polynomial_delay(nbrs, xs, ys, removable)
    named = {frozenset(ix.names[original[i]] for i in s) for s in found}
    assert named == set(minimal_adjustment_sets(G, X, Y, measured))


def test_minimal_set_listing_exponentially_many_sets():
    """k parallel two-step routes from x to y have 2**k minimal separators (common practice:
    one vertex per route, either end), listed with the delay bound and no repeats."""
    k = 9
    adj = {"x": set(), "y": set()}
    for i in range(k):
        a, b = f"a{i}", f"b{i}"
        adj[a], adj[b] = {"x", b}, {a, "y"}
        adj["x"].add(a)
        adj["y"].add(b)
    nbrs, number, vertices = _numbered(adj)
    removable = bytearray(v not in ("x", "y") for v in vertices)
    found = assert_polynomial_delay(nbrs, [number["x"]], [number["y"]], removable)
    found = [frozenset(vertices[i] for i in s) for s in found]
    assert len(found) == len(set(found)) == 2**k
    assert all(len(s) == k and all({f"a{i}", f"b{i}"} & s for i in range(k)) for s in found)
    assert set(enumerate_minimal_separators(adj, {"x"}, {"y"}, set(adj) - {"x", "y"})) == set(found)


@MANY
@given(analysis_case())
def test_open_noncausal_path_is_genuine_and_complete(case):
    G, X, Y, Z = case.G, set(case.X), set(case.Y), set(case.Z)
    path = open_noncausal_path(G, X, Y, Z)
    expected = oracle_open_noncausal(G, X, Y, Z)
    if not Z & oracle_forbidden(G, X, Y):
        # Exact whenever Z holds no forbidden variable (the case that decides validity).
        assert (path is None) == (not expected)
    if path is not None:
        assert_genuine_path(G, path, X, Y)
        assert not causal(G, path) and not blocked(G, path, Z)


@MANY
@given(analysis_case())
def test_confounding_path_is_genuine_and_complete(case):
    G, X, Y, Z = case.G, set(case.X), set(case.Y), set(case.Z)
    path = confounding_path(G, X, Y, Z)
    assert (path is None) == (not oracle_confounding(G, X, Y, Z))
    if path is not None:
        assert_genuine_path(G, path, X, Y)
        assert G.has_edge(path[1], path[0])  # an arrow into the exposure
        assert not any(is_collider(G, path, i) for i in range(1, len(path) - 1))
        assert not set(path) & Z


@MANY
@given(analysis_case())
def test_collider_bias_path_is_genuine_and_covers_every_invalid_set(case):
    G, X, Y, Z = case.G, set(case.X), set(case.Y), set(case.Z)
    note(repr(case))
    opened = oracle_open_noncausal(G, X, Y, Z)
    found_any = False
    for z in sorted(Z):
        found = collider_bias_path(G, X, Y, Z, z)
        if found is None:
            continue
        found_any = True
        path, c = found
        assert_genuine_path(G, path, X, Y)
        assert not causal(G, path) and not blocked(G, path, Z)
        assert c in collider_reaching(G, path, z)
        assert path in opened
    # The guarantee the rule catalogue's completeness check relies on: when Z
    # has no forbidden variable and no confounding path is left open, yet an
    # open non-causal path exists, some z in Z gets a witness (known limit:
    # not always every z that has one).
    if opened and not oracle_confounding(G, X, Y, Z) and not Z & oracle_forbidden(G, X, Y):
        assert found_any


def test_collider_bias_path_rarely_misses_a_variable():
    """The known limit of collider_bias_path, measured: on 12,000 seeded random
    graphs of 3-8 variables (edge probability 0.4, one or two exposures and
    outcomes, each other variable adjusted with probability 0.5), the share of
    (analysis, z) pairs that have a qualifying path (brute force) but get None.
    On this sample: 5 of 2,947 (0.17%); 112 (3.8%) when only the walks the
    search trees recorded are joined, without the walks into the collider from
    other parents.  The bound 0.8% fails if that fallback is lost."""
    rng = random.Random(20261202)
    misses = total = 0
    for _ in range(12_000):
        n = rng.randint(3, 8)
        names = [f"n{i}" for i in range(n)]
        G = nx.DiGraph()
        G.add_nodes_from(names)
        G.add_edges_from(
            (a, b) for i, a in enumerate(names) for b in names[i + 1 :] if rng.random() < 0.4
        )
        order = rng.sample(names, n)
        nx_, ny_ = rng.randint(1, 2), rng.randint(1, 2)
        X, Y = set(order[:nx_]), set(order[nx_ : nx_ + ny_])
        Z = {v for v in order[nx_ + ny_ :] if rng.random() < 0.5}
        if not Z:
            continue
        opened = oracle_open_noncausal(G, X, Y, Z)
        for z in sorted(Z):
            if any(collider_reaching(G, p, z) for p in opened):
                total += 1
                misses += collider_bias_path(G, X, Y, Z, z) is None
    assert total > 2_000
    assert misses / total <= 0.008, (misses, total)


@FAST
@given(random_dag(min_nodes=2, max_nodes=7))
def test_minimal_separator_and_implied_independencies(dag):
    G, names, measured = dag
    listed = {(a, b): s for a, b, s in implied_independencies(G, measured)}
    assert list(listed) == sorted(listed)
    for a, b in combinations(sorted(measured), 2):
        adjacent = G.has_edge(a, b) or G.has_edge(b, a)
        seps = [] if adjacent else oracle_separable(G, a, b, measured)
        sep = minimal_separator(G, a, b, measured)
        assert (sep is None) == (not seps)
        assert ((a, b) in listed) == bool(seps)
        if sep is not None:
            assert sep <= measured - {a, b}
            assert nx.is_d_separator(G, {a}, {b}, set(sep))
            for k in range(len(sep)):
                for sub in combinations(sorted(sep), k):
                    assert not nx.is_d_separator(G, {a}, {b}, set(sub))
            assert listed[(a, b)] == sep


def test_answers_follow_a_graph_edited_between_calls():
    """The integer index and the cn/forb caches live in the graph's networkx cache,
    which networkx empties on every edit; a view is never cached.  Facts of the
    trade (common practice): a -> m -> b is blocked by m, a fork or chain opens
    when the blocking variable leaves the set, a new arrow a -> b connects."""
    G = nx.DiGraph([("a", "m"), ("m", "b")])
    assert d_separated(G, {"a"}, {"b"}, {"m"})
    assert proper_causal_nodes(G, {"a"}, {"b"}) == {"m", "b"}
    G.add_edge("a", "b")
    assert not d_separated(G, {"a"}, {"b"}, {"m"})
    G.remove_edge("a", "b")
    G.remove_edge("m", "b")
    assert d_separated(G, {"a"}, {"b"}, set())
    assert proper_causal_nodes(G, {"a"}, {"b"}) == set()
    G.add_edges_from([("c", "a"), ("c", "b")])
    view = G.subgraph(["a", "b", "c"])
    assert not d_separated(view, {"a"}, {"b"}, set())
    G.remove_edge("c", "b")
    assert d_separated(view, {"a"}, {"b"}, set())
    frozen = nx.freeze(nx.DiGraph(G))
    assert d_separated(frozen, {"a"}, {"b"}, set()) and d_separated(frozen, {"a"}, {"b"}, {"c"})


def test_both_row_layouts_agree_with_networkx():
    """d-separation reads compressed rows on graphs with four or more arrows per
    variable and one array per variable otherwise; both layouts must give the
    rows of the graph and networkx's answers (oracle: networkx.is_d_separator)."""
    from dagward.causal.indexed import indexed

    rng = random.Random(7)
    for arrows_per_variable in (1.5, 6):
        n = 80
        G = nx.DiGraph()
        G.add_nodes_from(f"v{i}" for i in range(n))
        while G.number_of_edges() < arrows_per_variable * n:
            a, b = sorted(rng.sample(range(n), 2))
            G.add_edge(f"v{a}", f"v{b}")
        ix = indexed(G)
        children, parents = ix.rows()
        assert (children == ix.succ.__getitem__) == (arrows_per_variable < 4)
        assert all(list(children(v)) == list(ix.succ[v]) for v in range(n))
        assert all(list(parents(v)) == list(ix.pred[v]) for v in range(n))
        nodes = list(G)
        for _ in range(300):
            x, y, *zs = rng.sample(nodes, 2 + rng.randint(0, 6))
            assert d_separated(G, {x}, {y}, set(zs)) == nx.is_d_separator(G, {x}, {y}, set(zs))
