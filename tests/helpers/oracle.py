"""Brute-force oracles written straight from the definitions, and random-DAG strategies.

The definitions are those of d-separation (Pearl 1988, "Probabilistic
Reasoning in Intelligent Systems", ch. 3) and of the adjustment criterion
(Shpitser, VanderWeele & Robins 2010, "On the validity of covariate
adjustment for estimating causal effects", UAI; Perkovic et al. 2018, JMLR
18(220)).  They enumerate every simple path, so they are only used on small
graphs.  Descendants come from networkx, not from the library under test.

Every test file imports its oracles and random diagrams from here (one
oracle, one random-diagram generator); tests/test_causal_oracle.py checks the
oracles themselves on hand-made graphs.
"""

from __future__ import annotations

from dataclasses import dataclass
from itertools import combinations

import networkx as nx
from dagward.causal import hidden_node_name
from hypothesis import strategies as st

# ---------------------------------------------------------------- oracles


def simple_paths(G: nx.DiGraph, X: set[str], Y: set[str], proper: bool = True) -> list[list[str]]:
    """Every simple path (arrows in either direction) from a node of X to a node of Y.

    With ``proper`` only the first node may lie in X; nodes of Y may occur inside.
    """
    U = G.to_undirected(as_view=True)
    out: list[list[str]] = []
    for x in sorted(X):
        stack = [(x, [x])]
        while stack:
            v, path = stack.pop()
            if v in Y and len(path) > 1:
                out.append(path)
            for w in U[v]:
                if w in path or (proper and w in X):
                    continue
                stack.append((w, path + [w]))
    return out


def is_collider(G: nx.DiGraph, path: list[str], i: int) -> bool:
    return G.has_edge(path[i - 1], path[i]) and G.has_edge(path[i + 1], path[i])


def blocked(G: nx.DiGraph, path: list[str], Z: set[str]) -> bool:
    """Pearl's definition: a non-collider in Z, or a collider with neither itself nor a descendant in Z."""
    for i in range(1, len(path) - 1):
        v = path[i]
        if is_collider(G, path, i):
            if v not in Z and not (nx.descendants(G, v) & Z):
                return True
        elif v in Z:
            return True
    return False


def causal(G: nx.DiGraph, path: list[str]) -> bool:
    return all(G.has_edge(a, b) for a, b in zip(path, path[1:], strict=False))


def oracle_d_separated(G, X, Y, Z) -> bool:
    if X & Y:
        return False
    return all(blocked(G, p, Z) for p in simple_paths(G, X, Y, proper=False))


def oracle_forbidden(G, X, Y) -> set[str]:
    cn = {v for p in simple_paths(G, X, Y) if causal(G, p) for v in p[1:]}
    out = set(cn)
    for v in cn:
        out |= nx.descendants(G, v)
    return out


def oracle_valid(G, X, Y, Z) -> bool:
    """Adjustment criterion straight from the definition (overlap with X or Y: invalid)."""
    if Z & (X | Y):
        return False
    if Z & oracle_forbidden(G, X, Y):
        return False
    return all(blocked(G, p, Z) for p in simple_paths(G, X, Y) if not causal(G, p))


def oracle_open_noncausal(G, X, Y, Z) -> list[list[str]]:
    return [p for p in simple_paths(G, X, Y) if not causal(G, p) and not blocked(G, p, Z)]


def oracle_confounding(G, X, Y, Z) -> list[list[str]]:
    return [
        p
        for p in simple_paths(G, X, Y)
        if not causal(G, p)
        and not any(is_collider(G, p, i) for i in range(1, len(p) - 1))
        and not (set(p) & Z)
    ]


def collider_reaching(G, path, z) -> list[str]:
    """Colliders on ``path`` that are z or an ancestor of z."""
    anc = nx.ancestors(G, z) | {z}
    return [path[i] for i in range(1, len(path) - 1) if is_collider(G, path, i) and path[i] in anc]


def oracle_minimal_valid_sets(G, X, Y, candidates) -> list[frozenset[str]]:
    """Every inclusion-minimal valid set among subsets of ``candidates``, by brute force.

    The same definition as ``oracle_valid`` for each subset, with the work that
    does not depend on the subset done once: the proper non-causal paths are
    enumerated once, and each is reduced to its non-colliders and, per collider,
    the collider with its descendants (Pearl's blocking condition). A subset Z
    is then valid iff it holds no forbidden variable and every path has a
    non-collider in Z or a collider whose closure misses Z.
    """
    pool = sorted(candidates)
    bit = {v: 1 << i for i, v in enumerate(pool)}

    def mask(names) -> int:
        return sum(bit[v] for v in names if v in bit)

    if (set(X) | set(Y)) & set(pool):
        raise ValueError("candidates overlap exposures or outcomes")
    forbidden = mask(oracle_forbidden(G, X, Y))
    conditions = []
    for p in simple_paths(G, X, Y):
        if causal(G, p):
            continue
        noncolliders, closures = 0, []
        for i in range(1, len(p) - 1):
            if is_collider(G, p, i):
                closures.append(mask(nx.descendants(G, p[i]) | {p[i]}))
            else:
                noncolliders |= mask([p[i]])
        conditions.append((noncolliders, tuple(closures)))

    def valid(z: int) -> bool:
        if z & forbidden:
            return False
        return all(n & z or any(not (c & z) for c in cs) for n, cs in conditions)

    found = [
        frozenset(s) for k in range(len(pool) + 1) for s in combinations(pool, k) if valid(mask(s))
    ]
    return [s for s in found if not any(t < s for t in found)]


def oracle_separable(G, a, b, measured) -> list[frozenset[str]]:
    pool = sorted(set(measured) - {a, b})
    return [
        frozenset(s)
        for k in range(len(pool) + 1)
        for s in combinations(pool, k)
        if nx.is_d_separator(G, {a}, {b}, set(s))
    ]


# ---------------------------------------------------------------- strategies


@dataclass(frozen=True)
class Case:
    G: nx.DiGraph
    observed: tuple[str, ...]
    measured: frozenset[str]
    X: frozenset[str]
    Y: frozenset[str]
    Z: frozenset[str]

    def __repr__(self) -> str:  # readable falsifying examples
        return (
            f"Case(edges={sorted(self.G.edges)}, measured={sorted(self.measured)}, "
            f"X={sorted(self.X)}, Y={sorted(self.Y)}, Z={sorted(self.Z)})"
        )


@st.composite
def random_dag(
    draw, min_nodes: int = 2, max_nodes: int = 8, max_hidden: int = 2, density: float | None = None
):
    """A random DAG over v0..v{n-1} (index order is a topological order), with
    hidden ``<->`` parents and a random unmeasured subset."""
    n = draw(st.integers(min_nodes, max_nodes))
    names = [f"v{i}" for i in range(n)]
    G = nx.DiGraph()
    G.add_nodes_from(names)
    pairs = [(a, b) for i, a in enumerate(names) for b in names[i + 1 :]]
    p = density if density is not None else draw(st.sampled_from([0.2, 0.35, 0.5]))
    for a, b in pairs:
        if draw(st.floats(0, 1)) < p:
            G.add_edge(a, b)
    for _ in range(draw(st.integers(0, max_hidden if n >= 2 else 0))):
        a, b = draw(st.sampled_from(pairs))
        h = hidden_node_name(a, b)
        G.add_node(h, hidden=True)
        G.add_edge(h, a)
        G.add_edge(h, b)
    unmeasured = draw(st.sets(st.sampled_from(names), max_size=max(0, n // 4)))
    return G, tuple(names), frozenset(names) - unmeasured


@st.composite
def analysis_case(draw, max_nodes: int = 8, max_roles: int = 2, **kw) -> Case:
    """A DAG with disjoint non-empty exposures X and outcomes Y and a set Z
    of measured variables outside X and Y."""
    G, names, measured = draw(random_dag(min_nodes=3, max_nodes=max_nodes, **kw))
    order = draw(st.permutations(names))
    nx_ = draw(st.integers(1, max_roles))
    ny_ = draw(st.integers(1, max_roles))
    X = frozenset(order[:nx_])
    Y = frozenset(order[nx_ : nx_ + ny_])
    rest = sorted(measured - X - Y)
    Z = frozenset(draw(st.sets(st.sampled_from(rest), max_size=len(rest))) if rest else set())
    return Case(G, names, measured, X, Y, Z)


def random_order_dag(rng, sizes: tuple[int, int], densities: tuple[float, float]) -> nx.DiGraph:
    """A DAG over v0..v{n-1}, n drawn from ``range(*sizes)``, with arrows along a
    random order of the variables, each present with a probability drawn from
    ``densities`` (for plain-``random`` tests; the hypothesis strategies are above)."""
    n = rng.randrange(*sizes)
    G = nx.DiGraph()
    G.add_nodes_from(f"v{i}" for i in range(n))
    order = list(G)
    rng.shuffle(order)
    p = rng.uniform(*densities)
    G.add_edges_from(
        (a, b) for i, a in enumerate(order) for b in order[i + 1 :] if rng.random() < p
    )
    return G
