"""Exact computation with random binary structural models, for checking estimands.

A random model gives every variable of a diagram (hidden ``<->`` parents and
unmeasured variables included) the values 0 and 1 and a random conditional
table P(v = 1 | parents) with entries in [0.1, 0.9], so every joint
probability is positive.  The joint is computed exactly by enumerating all
2^n states (numpy, vectorised); an intervention do(x) replaces x's table by
a point mass (Pearl 2009, *Causality*, definition of the truncated
factorisation, eq. 3.10; from memory).  ``evaluate`` computes an estimand
tree from the observed marginal of the measured variables only.
"""

from __future__ import annotations

from itertools import product as cartesian

import networkx as nx
import numpy as np
from dagward.causal.estimand import Expr, Prob, Product, Ratio, Sum


class BinaryModel:
    def __init__(self, G: nx.DiGraph, rng: np.random.Generator):
        self.G = G
        self.order = list(nx.topological_sort(G))
        self.col = {v: i for i, v in enumerate(self.order)}
        n = len(self.order)
        self.states = ((np.arange(2**n)[:, None] >> np.arange(n)[None, :]) & 1).astype(np.int8)
        self.tables = {
            v: rng.uniform(0.1, 0.9, size=2 ** len(list(G.predecessors(v)))) for v in self.order
        }
        self.parents = {v: sorted(G.predecessors(v)) for v in self.order}

    def joint(self, do: dict[str, int] | None = None) -> np.ndarray:
        """Probability of each state (rows of ``self.states``) under do(...)."""
        do = do or {}
        p = np.ones(len(self.states))
        for v in self.order:
            val = self.states[:, self.col[v]]
            if v in do:
                p *= val == do[v]
                continue
            idx = np.zeros(len(self.states), dtype=np.int64)
            for k, u in enumerate(self.parents[v]):
                idx |= self.states[:, self.col[u]].astype(np.int64) << k
            p1 = self.tables[v][idx]
            p *= np.where(val == 1, p1, 1 - p1)
        return p

    def probability(self, p: np.ndarray, values: dict[str, int]) -> float:
        mask = np.ones(len(self.states), dtype=bool)
        for v, x in values.items():
            mask &= self.states[:, self.col[v]] == x
        return float(p[mask].sum())


class Observed:
    """Marginals of the observed distribution of the measured variables (cached)."""

    def __init__(self, model: BinaryModel, measured):
        self.model = model
        self.measured = frozenset(measured)
        self.p = model.joint()
        self.cache: dict[frozenset, float] = {}

    def marginal(self, values: dict[str, int]) -> float:
        if not set(values) <= self.measured:
            raise AssertionError(
                f"estimand uses unmeasured variables: {sorted(set(values) - self.measured)}"
            )
        key = frozenset(values.items())
        got = self.cache.get(key)
        if got is None:
            got = self.cache[key] = self.model.probability(self.p, values)
        return got


def evaluate(e: Expr, env: dict[str, int], obs: Observed) -> float:
    """The value of an estimand with free variables set by ``env`` (a sum binds its own)."""
    if isinstance(e, Prob):
        both = {v: env[v] for v in e.vars | e.given}
        cond = {v: env[v] for v in e.given}
        return obs.marginal(both) / (obs.marginal(cond) if cond else 1.0)
    if isinstance(e, Product):
        out = 1.0
        for f in e.factors:
            out *= evaluate(f, env, obs)
        return out
    if isinstance(e, Ratio):
        return evaluate(e.numerator, env, obs) / evaluate(e.denominator, env, obs)
    assert isinstance(e, Sum)
    over = sorted(e.over)
    total = 0.0
    for vals in cartesian((0, 1), repeat=len(over)):
        inner = dict(env)
        inner.update(zip(over, vals, strict=True))
        total += evaluate(e.body, inner, obs)
    return total


def interventional(model: BinaryModel, do: dict[str, int], ys: dict[str, int]) -> float:
    """P(ys | do(do)) computed by intervening in the model."""
    return model.probability(model.joint(do), ys)
