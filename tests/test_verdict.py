"""The one verdict per analysis, against brute-force oracles written from the definitions.

Oracles (tests/helpers/oracle.py) enumerate every simple path: d-separation
as defined by Pearl (1988, "Probabilistic Reasoning in Intelligent Systems",
ch. 3) and the adjustment criterion of Shpitser, VanderWeele & Robins (2010) /
Perkovic et al. (2018). The rule semantics are those of rules.md:

* open-biasing-path fires when the declared set leaves open a proper non-causal
  path without colliders that has a *fixable* variable on it (measured, not
  forbidden, not an exposure or outcome), whether or not a valid set exists;
* collider-adjusted fires for z when some proper non-causal path open given Z
  has a collider that is z or an ancestor of z.
"""

from __future__ import annotations

import random

from dagward.api import check_covariates
from dagward.commands.adjustment import report_for
from dagward.engine import lint_source
from dagward.syntax import parse_source
from dagward.verdict import VALIDITY_RULES, Verdict, verdict_of
from helpers.dag_text import to_dag_text
from helpers.examples import examples
from helpers.oracle import (
    analysis_case,
    blocked,
    causal,
    collider_reaching,
    is_collider,
    oracle_forbidden,
    oracle_valid,
    simple_paths,
)
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

MANY = settings(
    max_examples=examples(1500), deadline=None, suppress_health_check=[HealthCheck.too_slow]
)


def _verdict(case):
    text = to_dag_text(case.G, case.observed, case.measured, case.X, case.Y, case.Z)
    diagram, problem = parse_source(text, "random.dag")
    assert problem is None
    return text, diagram, Verdict(diagram, diagram.analyses[0])


@MANY
@given(analysis_case(max_nodes=8, max_roles=2))
def test_verdict_matches_the_oracles(case):
    text, diagram, verdict = _verdict(case)
    G = diagram.graph
    X, Y, Z = set(case.X), set(case.Y), set(case.Z)
    paths = simple_paths(G, X, Y)  # every proper path, enumerated once
    forbidden = oracle_forbidden(G, X, Y)
    fixable = set(case.measured) - forbidden - X - Y
    open_paths = [p for p in paths if not causal(G, p) and not blocked(G, p, Z)]
    confounding = [
        p for p in open_paths if not any(is_collider(G, p, i) for i in range(1, len(p) - 1))
    ]

    # validity: the verdict's problems are empty exactly for a valid set
    valid = Z <= case.measured and not Z & forbidden and not open_paths
    assert valid == oracle_valid(G, X, Y, Z)  # the shortcut above is the definition
    assert verdict.declared_valid == valid
    assert valid == (not verdict.problems), (text, verdict.problems)
    assert {p.rule for p in verdict.problems} <= set(VALIDITY_RULES)
    assert not {p.rule for p in verdict.notes} & set(VALIDITY_RULES)

    # open-biasing-path: a fixable confounding path is open
    expected = any(set(p[1:-1]) & fixable for p in confounding)
    found = verdict.problems_of("open-biasing-path")
    assert bool(found) == expected, text
    for problem in found:
        path = list(problem.path)
        assert path in confounding, (text, path)
        assert problem.fixable and set(problem.fixable) <= fixable & set(path[1:-1])
        for v in problem.fixable:  # each variable it names closes the printed path
            assert blocked(G, path, Z | {v}), (text, v)

    # collider-adjusted: exact on small diagrams
    expected_z = {z for z in Z if any(collider_reaching(G, p, z) for p in open_paths)}
    colliders = {p.variable: p for p in verdict.problems_of("collider-adjusted")}
    assert set(colliders) == expected_z, text
    for z, problem in colliders.items():
        assert list(problem.path) in open_paths
        assert problem.collider in collider_reaching(G, list(problem.path), z)

    # and `check` reports exactly what the verdict says
    fired = lint_source(text, "random.dag").findings
    for rule in VALIDITY_RULES:
        assert len([f for f in fired if f.rule == rule]) == len(verdict.problems_of(rule))


def _shuffled(text: str, seed: int) -> str:
    """The same diagram with its statement lines (not the analysis block) shuffled."""
    lines = text.splitlines()
    cut = next(i for i, line in enumerate(lines) if line.startswith("analysis"))
    head = lines[:cut]
    random.Random(seed).shuffle(head)
    return "\n".join(head + lines[cut:]) + "\n"


def _what(text: str):
    return sorted(
        (f.rule, f.analysis, f.message, f.path, f.suggested_sets)
        for f in lint_source(text, "random.dag").findings
    )


@settings(max_examples=examples(400), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(analysis_case(max_nodes=8, max_roles=2), st.integers(0, 2**32))
def test_findings_do_not_depend_on_the_order_of_lines(case, seed):
    text = to_dag_text(case.G, case.observed, case.measured, case.X, case.Y, case.Z)
    assert _what(text) == _what(_shuffled(text, seed))


@settings(max_examples=examples(300), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(analysis_case(max_nodes=8, max_roles=2))
def test_check_adjustment_and_the_api_speak_the_same_verdict(tmp_path_factory, case):
    text, diagram, verdict = _verdict(case)
    findings = lint_source(text, "random.dag").findings
    check_valid = not ({f.rule for f in findings} & set(VALIDITY_RULES))
    report = report_for(diagram, diagram.analyses[0], 20)
    path = tmp_path_factory.mktemp("api") / "random.dag"
    path.write_text(text, "utf-8")
    api = check_covariates(path, "question", sorted(case.Z))
    api_valid = not ({f.rule for f in api} & set(VALIDITY_RULES))
    assert check_valid == report["declared_valid"] == api_valid == verdict.declared_valid
    assert report["problems"] == [p.to_dict(diagram.graph) for p in verdict.problems]


def _finding_messages(path: str) -> dict[str, list[str]]:
    from dagward.engine import read_and_lint

    out: dict[str, list[str]] = {}
    for f in read_and_lint(path, __import__("dagward.config").config.Settings()).findings:
        out.setdefault(f.rule, []).append(f.message)
    return out


def test_instrument_message_names_the_adjusted_variables_it_relies_on():
    messages = _finding_messages("tests/fixtures/verdict/instrument_given_other.dag")
    (text,) = messages["instrument-adjusted"]
    assert text.startswith("given `deprivation`, `urban` is related to the outcome only through")


def test_mediator_witness_is_a_proper_causal_path():
    messages = _finding_messages("tests/fixtures/verdict/mediator_of_two_exposures.dag")
    (text,) = messages["adjusted-mediator"]
    assert "x1 -> m -> w -> v -> y" in text and "x2 -> y" not in text


def test_unmeasured_confounding_does_not_silence_a_closable_path():
    messages = _finding_messages("tests/fixtures/verdict/confounder_beside_unmeasured.dag")
    (text,) = messages["open-biasing-path"]
    assert "cycling <- commute_distance -> sick_days" in text
    assert "adjusting for `commute_distance` would close it" in text
    (warning,) = messages["unmeasured-confounding"]
    assert "the best that adjustment can do is {commute_distance}" in warning


@settings(max_examples=examples(600), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(analysis_case(max_nodes=9, max_roles=2))
def test_the_linear_search_for_large_diagrams_is_sound(case):
    """Above the exact bound a sound search is used: whatever path it returns is
    an open confounding path with a fixable variable on it (oracle check)."""
    from dagward.causal import fixable_confounding_path

    G = case.G
    X, Y, Z = set(case.X), set(case.Y), set(case.Z)
    fixable = set(case.measured) - oracle_forbidden(G, X, Y) - X - Y
    path = fixable_confounding_path(G, X, Y, Z, fixable)
    confounding = [
        p
        for p in simple_paths(G, X, Y)
        if not causal(G, p)
        and not blocked(G, p, Z)
        and not any(is_collider(G, p, i) for i in range(1, len(p) - 1))
    ]
    if path is not None:  # (its miss rate is measured by tests/bench_verdict.py)
        assert path in confounding and set(path[1:-1]) & fixable


# unmeasured-confounding says whether the effect is identified another way
# (issue: the identification algorithm is complete, so "not identified" is a proof).
# Structures from memory: the bow arc and the instrument (Pearl 2009, Causality,
# ch. 3); the front-door graph (Pearl 1995, Biometrika 82:669-688); the napkin
# graph (Pearl & Mackenzie 2018; Shpitser & Pearl 2006).
ROUTES = {
    "bow": ("x -> y\nx <-> y\n", "not-identified", "not identified from the measured"),
    "front-door": (
        "unmeasured u\nu -> x, y\nx -> m -> y\n",
        "front-door",
        "the front-door criterion holds for {m}",
    ),
    "napkin": (
        "w1 -> z -> x -> y\nw1 <-> x\nw1 <-> y\n",
        "general",
        "by a formula other than adjustment",
    ),
}


def _analysis_text(arrows: str) -> str:
    return arrows + "analysis {\n  exposure: x\n  outcome: y\n}\n"


def test_unmeasured_confounding_says_how_the_effect_is_still_identified():
    for name, (arrows, route, words) in ROUTES.items():
        text = _analysis_text(arrows)
        diagram, problem = parse_source(text, f"{name}.dag")
        assert problem is None
        verdict = Verdict(diagram, diagram.analyses[0])
        assert verdict.route == route, name
        assert verdict.to_dict()["route"] == route
        (finding,) = [
            f
            for f in lint_source(text, f"{name}.dag").findings
            if f.rule == "unmeasured-confounding"
        ]
        assert words in finding.message, (name, finding.message)


def test_unmeasured_confounding_names_the_instruments():
    text = _analysis_text("z -> x -> y\nx <-> y\n")
    (finding,) = [
        f for f in lint_source(text, "iv.dag").findings if f.rule == "unmeasured-confounding"
    ]
    assert "instruments for the exposure: `z`" in finding.message
    assert "not identified" in finding.message


def test_the_route_is_adjustment_whenever_a_valid_set_exists():
    text = _analysis_text("c -> x, y\nx -> y\n")
    diagram, _ = parse_source(text, "c.dag")
    verdict = Verdict(diagram, diagram.analyses[0])
    assert verdict.route == "adjustment" and verdict.identification is None


@settings(max_examples=examples(60), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    analysis_case(max_nodes=8, max_roles=1, density=0.5),
    st.lists(st.integers(1, 6), min_size=1, max_size=4),
)
def test_one_listing_continued_gives_the_sets_a_fresh_listing_gives(case, limits):
    """`check` lists a few minimal sets and `adjustment` continues that listing:
    whatever the sequence of limits, each answer is that of a fresh verdict, and
    against the brute-force oracle it is all the minimal sets, or `limit` of them
    with the cut flagged."""
    from helpers.oracle import oracle_minimal_valid_sets

    text, diagram, _ = _verdict(case)
    analysis = diagram.analyses[0]
    shared = verdict_of(diagram, analysis)
    G, X, Y = diagram.graph, shared.exposure, shared.outcome
    every = set(oracle_minimal_valid_sets(G, X, Y, sorted(diagram.measured - X - Y)))
    for limit in limits:
        sets, cut = shared.list_minimal_sets(limit)
        fresh_diagram, _ = parse_source(text, "fresh.dag")
        assert (sets, cut) == Verdict(fresh_diagram, fresh_diagram.analyses[0]).list_minimal_sets(
            limit
        )
        assert cut == (len(every) > limit)
        assert {frozenset(s) for s in sets} <= every
        assert len(sets) == min(limit, len(every))


def test_a_listing_continued_in_steps_on_many_minimal_sets():
    """k confounding routes enrolled <- a_i -> b_i -> fitness, each closed by a_i or
    by b_i: 2^k minimal sets (common practice: independent choices multiply). The
    listing is continued in steps up and down and checked against the oracle."""
    from helpers.oracle import oracle_minimal_valid_sets

    k = 4
    lines = ["enrolled -> fitness"]
    for i in range(k):
        lines += [f"a{i} -> enrolled", f"a{i} -> b{i}", f"b{i} -> fitness"]
    lines += ["analysis main {", "  exposure: enrolled", "  outcome: fitness", "}"]
    text = "\n".join(lines) + "\n"
    diagram, _ = parse_source(text, "routes.dag")
    shared = verdict_of(diagram, diagram.analyses[0])
    every = set(oracle_minimal_valid_sets(diagram.graph, {"enrolled"}, {"fitness"},
                                          sorted(diagram.measured - {"enrolled", "fitness"})))  # fmt: skip
    assert len(every) == 2**k
    for limit in (1, 3, 2, 10, 16, 17, 5):
        sets, cut = shared.list_minimal_sets(limit)
        fresh, _ = parse_source(text, "fresh.dag")
        assert (sets, cut) == Verdict(fresh, fresh.analyses[0]).list_minimal_sets(limit)
        assert cut == (limit < 2**k) and len(sets) == min(limit, 2**k)
        assert {frozenset(s) for s in sets} <= every


def test_every_command_reads_the_verdict_check_judged():
    """One verdict per analysis: the rules of `check` and `adjustment`'s report
    share one (on the compact graph), the API and a second look-up share one (on
    networkx's graph); both judge the same, and nothing is judged twice."""
    from dagward.api import CheckedDiagram

    text = "\n".join(
        ["age -> enrolled", "age -> fitness", "enrolled -> fitness",
         "analysis main {", "  exposure: enrolled", "  outcome: fitness", "  adjust: age", "}"]
    ) + "\n"  # fmt: skip
    result = lint_source(text, "one.dag")
    diagram = result.diagram
    analysis = diagram.analyses[0]
    judged = verdict_of(diagram, analysis, compact=True)
    assert judged is verdict_of(diagram, analysis, compact=True)
    assert judged.__dict__.get("problems") is not None  # the rules already asked it
    report = report_for(diagram, analysis, 20)
    assert report["minimal_sets"] == [["age"]] and report["declared_valid"] is True
    assert judged.__dict__.get("_listing") is not None  # the report listed from it
    shared = verdict_of(diagram, analysis)
    assert shared is not judged and CheckedDiagram(diagram).verdict("main") is shared
    assert shared.to_dict(20) == report
    # a new parse of the same text is a new diagram with a verdict of its own
    again, _ = parse_source(text, "one.dag")
    assert verdict_of(again, again.analyses[0]) is not shared
