"""Path listing with polynomial delay (dagward.causal.paths) and the `paths` options
built on it.

Oracles: networkx.all_simple_paths (every simple path) and the definitional
open/blocked test of test_causal_oracle (d-separation read off each path,
Pearl 1988). The delay is measured in the listing's own linear-time steps,
as the minimal-set listing's is in test_causal_properties; nothing is timed.
"""

from __future__ import annotations

import json
import random

import networkx as nx
import pytest
from clirunner import dagward
from dagward.causal.paths import FORWARD_TRIES, enumerate_paths, open_paths, simple_paths
from helpers.oracle import random_order_dag
from test_causal_oracle import blocked


def dense_dag(n: int, p: float, seed: int) -> nx.DiGraph:
    """Invented: arrows from each variable to later ones with probability p."""
    rng = random.Random(seed)
    G = nx.DiGraph()
    G.add_nodes_from(f"v{i}" for i in range(n))
    G.add_edges_from(
        (f"v{i}", f"v{j}") for i in range(n) for j in range(i + 1, n) if rng.random() < p
    )
    return nx.freeze(G)


def all_paths_oracle(G, X, Y):
    """Every simple path from an x to a y with no other exposure on it (networkx, brute force)."""
    U = G.to_undirected(as_view=True)
    out = set()
    for x in X:
        for y in Y - X:
            for p in nx.all_simple_paths(U, x, y):
                if not set(p[1:]) & X:
                    out.add(tuple(p))
    return out


def random_case(rng):
    G = random_order_dag(rng, (3, 10), (0.2, 0.6))
    nodes = list(G)
    rng.shuffle(nodes)
    kx, ky = rng.choice([1, 1, 2]), rng.choice([1, 2])
    X, Y = set(nodes[:kx]), set(nodes[kx : kx + ky])
    Z = {v for v in nodes[kx + ky :] if rng.random() < 0.4}
    return nx.freeze(G), X, Y, Z


def test_listings_match_networkx_and_the_definition_on_random_diagrams():
    rng = random.Random(11)
    for _ in range(300):
        G, X, Y, Z = random_case(rng)
        listed = list(simple_paths(G, X, Y))
        assert len(listed) == len({tuple(p) for p in listed})  # no path twice
        assert {tuple(p) for p in listed} == all_paths_oracle(G, X, Y)
        opened = list(open_paths(G, X, Y, Z))
        assert opened == [p for p in listed if not blocked(G, p, Z)]  # same order, open ones only


@pytest.mark.parametrize("nearest", [False, True])
@pytest.mark.parametrize("seed", [1, 2, 3])
def test_limit_5_on_a_dense_60_variable_diagram_stays_within_the_delay_bound(seed, nearest):
    """Each next path costs at most |V| + 1 searches (simple_paths) and at most
    (FORWARD_TRIES + 1)(2|V| + 1) (open_paths), plus the one pass for the
    distances before the first: the bounds argued in their docstrings.  Both
    orders: `paths` lists nearest to the outcome first."""
    G = dense_dag(60, 0.3, seed)
    n = G.number_of_nodes()
    for listing, bound, first in (
        (lambda steps: simple_paths(G, {"v0"}, {"v59"}, steps, nearest), n + 1, 0),
        (
            lambda steps: open_paths(G, {"v0"}, {"v59"}, {"v1", "v2", "v30"}, steps, nearest),
            (FORWARD_TRIES + 1) * (2 * n + 1),
            1,
        ),
    ):
        steps = [0]
        it = listing(steps)
        last = 0
        for k in range(6):  # five paths, and the sixth that says the listing was cut
            assert next(it) is not None
            assert steps[0] - last <= bound + (first if k == 0 else 0), (steps[0] - last, bound)
            last = steps[0]
    paths, cut = enumerate_paths(G, {"v0"}, {"v59"}, 5)
    assert len(paths) == 5 and cut


def test_no_path_is_proved_within_the_bound():
    """Exposure and outcome in different parts of the diagram: the listing ends
    without a path after at most |V| + 1 searches, however dense the rest."""
    G = nx.DiGraph(dense_dag(40, 0.5, 4))
    G.add_edge("a", "b")
    G = nx.freeze(G)
    steps = [0]
    assert list(simple_paths(G, {"v0"}, {"b"}, steps)) == []
    assert steps[0] <= G.number_of_nodes() + 1


def _dense_file(tmp_path):
    rng = random.Random(5)
    names = [f"v{i}" for i in range(60)]
    lines = [
        f"{a} -> {b}" for i, a in enumerate(names) for b in names[i + 1 :] if rng.random() < 0.3
    ]
    lines += ["analysis {", "  exposure: v0", "  outcome: v59", "  adjust: v1, v2", "}"]
    p = tmp_path / "dense.dag"
    p.write_text("\n".join(lines) + "\n")
    return p


@pytest.mark.parametrize("adjust", ["v1, v2", ", ".join(f"v{i}" for i in range(1, 59))])
def test_paths_limit_5_on_a_dense_60_variable_diagram_stays_within_the_bound(tmp_path, adjust):
    """`paths --limit 5` (dagward.commands.paths.describe, as the command runs it)
    takes at most six open paths (five and the one that shows the cut) and, when
    fewer than five are open, at most six more from the plain listing: with the
    per-path bounds of open_paths and simple_paths, at most
    1 + 6 (FORWARD_TRIES + 1)(2|V| + 1) + 6 (|V| + 1) linear-time searches.
    Adjusting for v1 and v2 leaves open paths; adjusting for every variable
    between the two blocks them all, so the plain listing runs too."""
    from dagward.commands.paths import describe
    from dagward.syntax import parse_source

    p = _dense_file(tmp_path)
    text = p.read_text().replace("adjust: v1, v2", f"adjust: {adjust}")
    diagram, problem = parse_source(text, str(p))
    assert problem is None
    n = diagram.graph.number_of_nodes()
    steps = [0]
    report = describe(diagram, diagram.analyses[0], None, 5, steps=steps)
    assert len(report["paths"]) == 5 and report["truncated"]
    assert any(r["open"] for r in report["paths"]) == (adjust == "v1, v2")
    assert 0 < steps[0] <= 1 + 6 * (FORWARD_TRIES + 1) * (2 * n + 1) + 6 * (n + 1)


def test_paths_lists_open_ones_first_and_open_lists_only_them(tmp_path):
    p = _dense_file(tmp_path)
    doc = json.loads(dagward("paths", str(p), "--limit", "30", "--format", "json").out)
    rows = doc["analyses"][0]["paths"]
    opens = [r["open"] for r in rows]
    assert opens == sorted(opens, reverse=True) and opens[0]  # open ones first
    doc = json.loads(dagward("paths", str(p), "--limit", "7", "--open", "--format", "json").out)
    report = doc["analyses"][0]
    assert (
        len(report["paths"]) == 7
        and all(r["open"] for r in report["paths"])
        and report["truncated"]
    )
    run = dagward("paths", str(p), "--limit", "7", "--open")
    assert "stopped after 7 open paths (--limit); more exist" in run.out


def test_paths_open_on_the_sample_lists_the_open_paths_only():
    run = dagward(
        "paths", "samples/wellness.dag", "--analysis", "total_effect", "--open", "--format", "json"
    )
    rows = json.loads(run.out)["analyses"][0]["paths"]
    assert [r["text"] for r in rows] == [
        "enrolled -> fitness_12m -> sick_days",
        "enrolled <- motivation -> fitness_12m -> sick_days",
    ]


def test_paths_given_with_a_misspelt_name_suggests_the_close_one():
    run = dagward("paths", "samples/wellness.dag", "--given", "agee,shift_work")
    assert run.code == 2
    assert "--given names unknown variables: agee (did you mean age?)" in run.err
    run = dagward("paths", "samples/wellness.dag", "--given", "zzzz")
    assert run.code == 2 and "zzzz" in run.err and "did you mean" not in run.err


def _larger_case(rng):
    """Invented: 8 to 12 variables, up to three exposures and outcomes, a random
    adjustment set; sparse enough that networkx can list every path."""
    G = random_order_dag(rng, (8, 13), (0.15, 0.35))
    nodes = list(G)
    rng.shuffle(nodes)
    kx, ky = rng.choice([1, 1, 2, 3]), rng.choice([1, 1, 2, 3])
    X, Y = set(nodes[:kx]), set(nodes[kx : kx + ky])
    Z = {v for v in nodes[kx + ky :] if rng.random() < 0.35}
    return nx.freeze(G), X, Y, Z


def test_kept_dead_regions_lose_no_open_path(monkeypatch):
    """The marks a failed search leaves (open_paths keeps them until the deepest
    path variable the search ran into is popped) never hide an open path: on
    larger random diagrams, in both neighbour orders, the listing is every path
    networkx lists that Pearl's definition (test_causal_oracle.blocked) leaves
    open, in the order of the plain listing, each once."""
    import dagward.causal.paths as paths_module

    kept = [0]
    add = paths_module._DeadStates.add

    def counting_add(self, states, level):
        kept[0] += len(states)
        add(self, states, level)

    monkeypatch.setattr(paths_module._DeadStates, "add", counting_add)
    rng = random.Random(23)
    for _ in range(250):
        G, X, Y, Z = _larger_case(rng)
        expected = all_paths_oracle(G, X, Y)
        for nearest in (False, True):
            listed = list(simple_paths(G, X, Y, shortest_first=nearest))
            assert len(listed) == len({tuple(p) for p in listed})
            assert {tuple(p) for p in listed} == expected
            opened = list(open_paths(G, X, Y, Z, shortest_first=nearest))
            assert opened == [p for p in listed if not blocked(G, p, Z)]
    assert kept[0] > 1000  # the marks were made and used, not only possible


def _first_adjusted_below(G, v, Z):
    """Breadth-first down from v over every child in name order: the first
    variable in Z met (v itself when in Z); the definition describe_path states."""
    if v in Z:
        return v
    seen, frontier = {v}, [v]
    while frontier:
        nxt = []
        for u in frontier:
            for c in sorted(G.successors(u)):
                if c in seen:
                    continue
                if c in Z:
                    return c
                seen.add(c)
                nxt.append(c)
        frontier = nxt
    return None


def test_describe_paths_matches_the_definitions_on_random_diagrams():
    """Open or blocked by Pearl's definition, causal when every arrow points
    forward, blockers as the definition names them, and each opened collider
    with the adjusted variable first met breadth-first below it (searched here
    over all descendants, there only along shortest routes down to Z)."""
    from dagward.causal import describe_path, describe_paths

    rng = random.Random(31)
    checked = 0
    for _ in range(150):
        G, X, Y, Z = _larger_case(rng)
        paths = list(simple_paths(G, X, Y))[:40]
        infos = describe_paths(G, paths, X, Z)
        for p, info in zip(paths, infos, strict=True):
            assert info == describe_path(G, p, X, Z)
            assert info.open == (not blocked(G, p, Z))
            assert info.causal == all(G.has_edge(a, b) for a, b in zip(p, p[1:], strict=False))
            colliders = [
                p[i]
                for i in range(1, len(p) - 1)
                if G.has_edge(p[i - 1], p[i]) and G.has_edge(p[i + 1], p[i])
            ]
            expected_blockers = [
                v
                for i, v in enumerate(p[1:-1], 1)
                if (v in colliders and _first_adjusted_below(G, v, Z) is None)
                or (v not in colliders and v in Z)
            ]
            assert [b.node for b in info.blocking] == expected_blockers
            if info.open:
                assert [(o.collider, o.adjusted) for o in info.opened_colliders] == [
                    (c, _first_adjusted_below(G, c, Z)) for c in colliders
                ]
                checked += len(colliders)
    assert checked > 50
