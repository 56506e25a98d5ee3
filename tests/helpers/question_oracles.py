"""Brute-force oracles for the questions beyond the total effect, written straight
from the definitions by enumerating paths and subsets (small graphs only).

Definitions and sources are those of linter/causal/questions.py; here nothing
of the library is used except the hidden-node convention, and d-separation,
validity and the forbidden set come from the path-enumerating oracles of
tests/helpers/oracle.py.
"""

from __future__ import annotations

from itertools import combinations

import networkx as nx

from helpers.oracle import oracle_d_separated, oracle_forbidden, oracle_valid


def subsets(pool):
    pool = sorted(pool)
    for k in range(len(pool) + 1):
        yield from (frozenset(s) for s in combinations(pool, k))


def minimal(sets):
    sets = list(sets)
    return {s for s in sets if not any(t < s for t in sets)}


def is_hidden(G, v) -> bool:
    return bool(G.nodes[v].get("hidden", False))


# ---------------------------------------------------------------- selection


def oracle_sets_given(G, X, Y, R, measured) -> set[frozenset]:
    """Minimal W (measured, outside X, Y, R) with W ∪ R valid."""
    pool = set(measured) - X - Y - R
    return minimal(W for W in subsets(pool) if oracle_valid(G, X, Y, W | R))


def oracle_recoverable(G, X, Y, R, measured) -> bool:
    """Some measured W outside X, Y, R: valid for (X, Y) and Y d-separated from R given X ∪ W."""
    pool = set(measured) - X - Y - R
    return any(
        oracle_valid(G, X, Y, W) and oracle_d_separated(G, Y, R, X | W) for W in subsets(pool)
    )


def oracle_recovery_ok(G, X, Y, R, W) -> bool:
    return oracle_valid(G, X, Y, W) and not (W & R) and oracle_d_separated(G, Y, R, X | W)


def oracle_odds_ratio_ok(G, X, Y, R, W) -> bool:
    return oracle_valid(G, X, Y, W) and not (W & R) and oracle_d_separated(G, X, R, Y | W)


# ---------------------------------------------------------------- natural effects


def directed_paths(G, sources, targets, avoid=frozenset()):
    """Every directed path from a source to a target whose other variables avoid ``avoid``
    (the first variable may be in ``avoid``; the last may not)."""
    out = []
    for s in sorted(sources):
        stack = [(s, [s])]
        while stack:
            v, path = stack.pop()
            if v in targets and len(path) > 1 or (v in targets and len(path) == 1):
                out.append(path)
            for w in G.successors(v):
                if w in path or w in avoid:
                    continue
                stack.append((w, path + [w]))
    return out


def oracle_induced(G, X, M, Y) -> set[str]:
    """The exposure-induced mediator-outcome confounders, by their definition."""
    reaches_y = {m for m in M if directed_paths(G, {m}, Y)}
    out = set()
    for L in G:
        if L in X or L in M or L in Y or is_hidden(G, L):
            continue
        if not [p for p in directed_paths(G, X, {L}, avoid=X | M) if len(p) > 1]:
            continue
        dir_m = bool(directed_paths(G, {L}, reaches_y, avoid=X))
        dir_y = bool(directed_paths(G, {L}, Y, avoid=X | M))
        sibs = {w for h in G.predecessors(L) if is_hidden(G, h) for w in G.successors(h) if w != L}
        hid_m = any(w not in X and directed_paths(G, {w}, reaches_y, avoid=X) for w in sibs)
        hid_y = any(
            w not in X and w not in M and directed_paths(G, {w}, Y, avoid=X | M) for w in sibs
        )
        if (dir_m and (dir_y or hid_y)) or (hid_m and dir_y):
            out.add(L)
    return out


def oracle_natural_covariates_exist(G, X, M, Y, pool) -> bool:
    """Some C in the pool: valid for X -> Y and X -> M, and C ∪ X valid for M -> Y."""
    return any(
        oracle_valid(G, X, Y, C) and oracle_valid(G, X, M, C) and oracle_valid(G, M, Y, C | X)
        for C in subsets(pool)
    )


# ---------------------------------------------------------------- sequential


def stage_graph(G, stages, k):
    """G without the arrows out of stage k and into the later stages."""
    H = G.copy()
    H.remove_edges_from([(a, b) for a in stages[k] for b in list(G.successors(a))])
    for later in stages[k + 1 :]:
        for b in later:
            H.remove_edges_from([(a, b) for a in list(G.predecessors(b))])
    return H


def allowed_at(G, stages, k, measured, Y):
    later = set().union(*stages[k:])
    de = set(later)
    for x in later:
        de |= nx.descendants(G, x)
    X = set().union(*stages)
    return {v for v in measured if v not in de and v not in X and v not in Y}


def stage_holds(G, stages, k, C, Y) -> bool:
    H = stage_graph(G, stages, k)
    before = set().union(*stages[:k]) if k else set()
    return oracle_d_separated(H, set(stages[k]), set(Y), before | set(C))


def oracle_sequential(G, stages, Y, measured) -> bool:
    """Some chain C_1 ⊆ C_2 ⊆ ... with C_k ⊆ N_k passing every stage (Pearl & Robins 1995)."""
    frontier = {frozenset()}
    for k in range(len(stages)):
        pool = allowed_at(G, stages, k, measured, Y)
        nxt = set()
        for prev in frontier:
            if not prev <= pool:
                continue
            for extra in subsets(pool - prev):
                C = prev | extra
                if stage_holds(G, stages, k, C, Y):
                    nxt.add(C)
        if not nxt:
            return False
        frontier = nxt
    return True


def oracle_single_set(G, X, Y, measured) -> bool:
    pool = set(measured) - X - Y
    return any(oracle_valid(G, X, Y, W) for W in subsets(pool))


def oracle_forbidden_joint(G, X, Y):
    return oracle_forbidden(G, X, Y)


# ---------------------------------------------------------------- the questions


def oracle_valid_for_question(G, X, Y, Z, measured, effect="total", M=(), R=()) -> bool:
    """Z valid for the question asked (tests/test_questions_completeness.py says
    what that means for each effect and for a restriction)."""
    X, Y = set(X), set(Y)
    C = set(Z) - set(M) - set(R)
    if not C <= set(measured):
        return False
    if effect == "total":
        return oracle_valid(G, X, Y, C | (set(R) - X - Y))
    if effect == "controlled-direct":
        J = X | set(M)
        return oracle_valid(G, J, Y, C | (set(R) - J - Y))
    M = set(M)
    return (
        oracle_valid(G, X, Y, C | (set(R) - X - Y))
        and oracle_valid(G, X, M, C | (set(R) - X - M))
        and oracle_valid(G, M, Y, C | X | (set(R) - M - Y))
        and not oracle_induced(G, X, M, Y)
    )
