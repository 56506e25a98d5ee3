"""Benchmark of the questions beyond the total effect (run: python tests/bench_questions.py).

Prints figures; asserts nothing.  Each question is timed on a 10,000-variable
random diagram (50,000 arrows, as in tests/bench_causal.py), in the same run as
two references on the same roles:

* the total-effect validity check alone (``is_valid_adjustment``);
* the total-effect check as the rules run it: validity, whether a valid set
  exists, and for an invalid set the witness paths and three minimal sets.

A second table times the full `check` path through the verdict
(``lint_diagram`` on the parsed `.dag` text, every rule, parsing not timed):
each question as an analysis with `effect:`, `mediator:` or `restricted:`
beside the plain total-effect analysis of the same exposure, outcome and
declared set, in the same run.

Each question is compared with the reference that does the same kind of work:
a question whose set is invalid (the restriction, the joint exposure) with the
rules' check of an invalid set; a question whose sets are valid with the
validity check of a valid set.  Target: within 5x.  The cyclic garbage
collector is off, as in the command line (linter/cli.py).
"""

from __future__ import annotations

import os
import random
import sys
import time

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))

import networkx as nx  # noqa: E402
from dagward.causal import (  # noqa: E402
    adjustment_exists,
    collider_bias_paths,
    confounding_path,
    descendants,
    forbidden,
    is_valid_adjustment,
    minimal_adjustment_sets,
    open_noncausal_path,
)
from dagward.causal.questions import (  # noqa: E402
    controlled_direct_verdict,
    natural_effect_verdict,
    selection_verdict,
    sequential_verdict,
)


def random_dag(n: int, m: int, seed: int) -> nx.DiGraph:
    """m arrows between random pairs, oriented by index; a sparse local band so
    that exposures have a few hundred descendants rather than all the graph."""
    rng = random.Random(seed)
    G = nx.DiGraph()
    G.add_nodes_from(f"v{i}" for i in range(n))
    edges: set[tuple[int, int]] = set()
    while len(edges) < m:
        a, b = rng.randrange(n), rng.randrange(n)
        if a != b:
            edges.add((min(a, b), max(a, b)))
    G.add_edges_from((f"v{a}", f"v{b}") for a, b in sorted(edges))
    return nx.freeze(G)


def best(f, repeat=5):
    t = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        f()
        t.append(time.perf_counter() - t0)
    return min(t)


def total_effect_check(G, X, Y, Z, meas):
    """The causal work of ``check`` for a total-effect analysis (linter/rules/facts.py)."""
    valid = is_valid_adjustment(G, X, Y, Z)
    adjustment_exists(G, X, Y, meas)
    if not valid:
        forb = forbidden(G, X, Y)
        confounding_path(G, X, Y, Z)
        if not Z & forb:
            open_noncausal_path(G, X, Y, Z)
        collider_bias_paths(G, X, Y, Z, sorted(Z - forb))
        list(minimal_adjustment_sets(G, X, Y, meas, max_sets=3))
    return valid


def main() -> None:
    import gc

    gc.disable()
    G = random_dag(10_000, 50_000, 1)
    meas = frozenset(G)
    x = "v5000"
    de_x = descendants(G, x)
    # The outcome: the first descendant of x from v7000 on with a child (so a
    # restriction can lie below it) and a child of x among its causes (a mediator).
    y = next(
        v
        for v in sorted(de_x, key=lambda v: int(v[1:]))
        if int(v[1:]) >= 7000
        and any(True for _ in G.successors(v))
        and set(G.successors(x)) & nx.ancestors(G, v) - {x}
    )
    X, Y = {x}, {y}
    anc_y = nx.ancestors(G, y)
    m = min((c for c in G.successors(x) if c in anc_y), key=lambda v: int(v[1:]))
    r = min(G.successors(y), key=lambda v: int(v[1:]))
    a1 = min((c for c in de_x if c in anc_y and c not in (x, m)), key=lambda v: int(v[1:]))
    # A declared set of the size analysts write: a minimal valid set (valid, so the
    # validity search explores everything it can reach before answering).
    Z = set(next(minimal_adjustment_sets(G, X, Y, meas)))
    assert is_valid_adjustment(G, X, Y, Z)
    Zr = Z | {r}
    check = lambda X_, Z_: best(lambda: total_effect_check(G, X_, Y, Z_, meas))  # noqa: E731
    valid = lambda X_, Z_: best(lambda: is_valid_adjustment(G, X_, Y, Z_))  # noqa: E731
    rows = [
        # (question, seconds, the total-effect check of the same analysis, its validity check alone)
        (
            "selection: restricted on an effect of the outcome",
            best(lambda: selection_verdict(G, X, Y, Z, {r}, meas)),
            check(X, Zr),
            valid(X, Zr),
        ),
        (
            "natural effects: three conditions + induced confounders",
            best(lambda: natural_effect_verdict(G, X, {m}, Y, Z)),
            check(X, Z),
            valid(X, Z),
        ),
        (
            "controlled direct effect (joint exposure, sequential if needed)",
            best(lambda: controlled_direct_verdict(G, X, {m}, Y, Z, meas)),
            check(X | {m}, Z - {m}),
            valid(X | {m}, Z - {m}),
        ),
        (
            "sequential: two stages",
            best(lambda: sequential_verdict(G, [(x,), (a1,)], Y, meas)),
            check({x, a1}, Z - {a1}),
            valid({x, a1}, Z - {a1}),
        ),
    ]
    print(
        f"10,000 variables, 50,000 arrows; declared set: a minimal valid set of {len(Z)} variables"
    )
    print("reference 1: the total-effect check of the same analysis (the rules' causal work);")
    print("reference 2: its validity check alone.  Target: within 5x of reference 1.")
    print()
    print(
        f"{'question':64} {'seconds':>8} {'ref 1':>8} {'x ref 1':>8} "
        f"{'ref 2':>8} {'x ref 2':>8}  verdict"
    )
    for name, t, ref1, ref2 in rows:
        verdict = "met" if t / ref1 <= 5 else "MISSED"
        print(
            f"{name:64} {t:8.4f} {ref1:8.4f} {t / ref1:8.1f} {ref2:8.4f} {t / ref2:8.1f}  {verdict}"
        )
    check_path_table(G, x, y, m, r, a1, Z)


def dag_text(G, x, y, Z, extra: list[str], exposures=None) -> str:
    lines = [f"{a} -> {b}" for a, b in G.edges]
    lines += [
        "analysis bench {",
        "  exposure: " + ", ".join(exposures or [x]),
        f"  outcome: {y}",
        "  adjust: " + (", ".join(sorted(Z)) if Z else "none"),
        *extra,
        "}",
    ]
    return "\n".join(lines) + "\n"


def check_path_table(G, x, y, m, r, a1, Z) -> None:
    """The full `check` path through the verdict, per question, beside the plain
    total-effect analysis (same roles and declared set)."""
    from dagward.config import Settings
    from dagward.engine import lint_diagram
    from dagward.syntax import parse_source

    def timed(text: str) -> tuple[float, set[str]]:
        diagram, problem = parse_source(text, "bench.dag")
        assert diagram is not None, problem
        rules: set[str] = set()

        def run():
            rules.clear()
            rules.update(f.rule for f in lint_diagram(diagram, "bench.dag", Settings()).findings)

        return best(run, repeat=3), rules

    total, total_rules = timed(dag_text(G, x, y, Z, []))
    rows = [
        ("total effect (reference)", total, total_rules),
        ("restricted on an effect of the outcome",
         *timed(dag_text(G, x, y, Z, [f"  restricted: {r}"]))),
        ("natural direct effect",
         *timed(dag_text(G, x, y, Z - {m}, ["  effect: natural-direct", f"  mediator: {m}"]))),
        ("natural indirect effect",
         *timed(dag_text(G, x, y, Z - {m}, ["  effect: natural-indirect", f"  mediator: {m}"]))),
        ("controlled direct effect",
         *timed(dag_text(G, x, y, Z - {m}, ["  effect: controlled-direct", f"  mediator: {m}"]))),
        ("two exposures (sequential if needed)",
         *timed(dag_text(G, x, y, Z - {a1}, [], exposures=[x, a1]))),
    ]  # fmt: skip
    print()
    print("the full `check` path through the verdict (lint_diagram, every rule; parsing not timed)")
    print(f"{'analysis':64} {'seconds':>8} {'x total':>8}  verdict  rules fired")
    for name, t, rules in rows:
        verdict = "met" if t / total <= 5 else "MISSED"
        print(
            f"{name:64} {t:8.4f} {t / total:8.1f}  {verdict:7}  {', '.join(sorted(rules)) or '-'}"
        )


if __name__ == "__main__":
    main()
