"""Syntax errors a practitioner reads: what the message says, and where.

Also the contextual keywords (`exposure -> outcome` is an arrow between two
variables) and the keys of the questions beyond the total effect.
"""

from __future__ import annotations

import pytest
from dagward.fmt import format_source
from dagward.syntax import parse_source


def problem(text: str):
    diagram, found = parse_source(text, "t.dag")
    assert diagram is None and found is not None, "expected a syntax error"
    return found


def block(*entries: str) -> str:
    body = "".join(f"  {e}\n" for e in entries)
    return f"bike_commute -> sick_days\nanalysis {{\n{body}}}\n"


@pytest.mark.parametrize(
    ("text", "line", "column", "joined", "listed"),
    [
        (block("exposure: Bike commute", "outcome: sick_days"), 3, 18, "Bike_commute",
         "Bike, commute"),
        (block("exposure: bike_commute", "outcome: sick_days", "adjust: age incom"), 5, 15,
         "age_incom", "age, incom"),
        # the second word a keyword: still one name with a space
        (block("exposure: bike_commute", "outcome: sick_days", "adjust: age period"), 5, 15,
         "age_period", "age, period"),
    ],
)  # fmt: skip
def test_a_space_inside_an_analysis_entry(text, line, column, joined, listed):
    p = problem(text)
    assert (p.span.line, p.span.column) == (line, column)
    assert "inside an analysis entry" in p.message
    assert "cannot contain a space" in p.message and "commas" in p.message
    assert f"`{joined}`" in p.message and f"`{listed}`" in p.message
    # the old wording pointed at arrows, which have nothing to do with it
    assert "->" not in p.message


@pytest.mark.parametrize("text", ["unmeasured a b\n", "a b -> c\n", "period p: a b\n"])
def test_a_space_in_other_lists(text):
    p = problem(text)
    assert "cannot contain a space" in p.message and "`a, b`" in p.message
    assert "analysis entry" not in p.message


def test_keywords_are_names_where_a_name_is_expected():
    text = (
        "exposure -> outcome\n"
        "period -> outcome  # a variable called period\n"
        "label, effect, mediator -> outcome\n"
        "unmeasured restricted, title\n"
        "restricted, title -> exposure\n"
        "period baseline: period, label\n"
        'label outcome "The outcome"\n'
        "analysis analysis {\n"
        "  exposure: exposure\n"
        "  outcome: outcome\n"
        "  adjust: period, label, restricted\n"
        "  effect: natural-direct\n"
        "  mediator: mediator\n"
        "  restricted: effect\n"
        "}\n"
    )
    diagram, p = parse_source(text, "t.dag")
    assert p is None, p
    assert list(diagram.variables) == [
        "exposure", "outcome", "period", "label", "effect", "mediator", "restricted", "title",
    ]  # fmt: skip
    a = diagram.analysis("analysis")
    assert a.exposure_set == {"exposure"} and a.outcome_set == {"outcome"}
    assert a.adjust_set == {"period", "label", "restricted"}
    assert a.effect == "natural-direct" and a.mediator_set == {"mediator"}
    assert a.restricted_set == {"effect"}
    assert diagram.labels == {"outcome": "The outcome"}
    # the formatter keeps it, and its output parses to the same names
    formatted, p = format_source(text, "t.dag")
    assert p is None and "  effect: natural-direct\n" in formatted
    again, p = parse_source(formatted, "t.dag")
    assert p is None and list(again.variables) == list(diagram.variables)


@pytest.mark.parametrize(
    "text",
    ["none -> b\n", "a -> b\nunmeasured none\n", block("exposure: none", "outcome: sick_days")],
)
def test_none_stays_reserved(text):
    p = problem(text)
    assert "`none` is a reserved word" in p.message


def test_adjust_none_is_still_the_empty_set():
    diagram, p = parse_source(
        block("exposure: bike_commute", "outcome: sick_days", "adjust: none"), "t.dag"
    )
    assert p is None and diagram.analyses[0].adjust_set == frozenset()


def test_an_analysis_key_outside_a_block_says_where_it_goes():
    p = problem("a -> b\nexposure: a\n")
    assert (p.span.line, p.span.column) == (2, 1)
    assert "inside an analysis block" in p.message


def test_a_malformed_line_that_starts_with_a_keyword_points_at_the_real_error():
    # well formed, `period -> x` is an arrow line; here the error is the `3x`
    p = problem("period -> 3x\n")
    assert (p.span.line, p.span.column) == (1, 11)
    assert "cannot start with a digit" in p.message


def test_an_arrow_inside_a_block():
    p = problem(block("exposure: bike_commute", "outcome: sick_days", "age -> sick_days"))
    assert p.span.line == 5 and "arrows go outside analysis blocks" in p.message


def test_unknown_key_lists_every_key():
    p = problem(block("exposure: bike_commute", "outcome: sick_days", "covariates: age"))
    assert "unknown key `covariates`" in p.message
    for key in ("exposure", "outcome", "adjust", "effect", "mediator", "restricted"):
        assert f"`{key}:`" in p.message


# --- the keys of the questions beyond the total effect ---------------------------------------


@pytest.mark.parametrize(
    "kind", ["total", "controlled-direct", "natural-direct", "natural-indirect"]
)
def test_effect_kinds_parse_with_their_spans(kind):
    text = block("exposure: bike_commute", "outcome: sick_days", f"effect: {kind}",
                 "mediator: fitness, age", "restricted: in_survey")  # fmt: skip
    diagram, p = parse_source(text, "t.dag")
    assert p is None
    a = diagram.analyses[0]
    assert a.effect == kind
    assert a.effect_span is not None and (a.effect_span.line, a.effect_span.column) == (5, 11)
    assert [n.text for n in a.mediator] == ["fitness", "age"]
    assert [(n.span.line, n.span.column) for n in a.mediator] == [(6, 13), (6, 22)]
    assert a.mediator_set == {"fitness", "age"} and a.restricted_set == {"in_survey"}
    assert [(n.span.line, n.span.column) for n in a.restricted] == [(7, 15)]
    # effect values never become variables
    assert kind not in diagram.variables


def test_effect_defaults_to_total():
    diagram, p = parse_source(block("exposure: bike_commute", "outcome: sick_days"), "t.dag")
    a = diagram.analyses[0]
    assert a.effect == "total" and a.effect_span is None
    assert a.mediator_set == frozenset() and a.restricted_set == frozenset()


@pytest.mark.parametrize(
    ("entry", "words"),
    [
        ("effect: direct", "`effect:` takes one of `total`, `controlled-direct`"),
        ("effect: natural direct", "`effect:` takes one of"),
        ("effect: natural-direct, total", "a single effect"),
        ("effect:", "`effect:` takes one of"),
    ],
)
def test_bad_effect_values(entry, words):
    p = problem(block("exposure: bike_commute", "outcome: sick_days", entry, "mediator: m"))
    assert words in p.message and p.span.line == 5


def test_a_direct_effect_needs_a_mediator_line():
    p = problem(block("effect: controlled-direct", "exposure: bike_commute", "outcome: sick_days"))
    assert (p.span.line, p.span.column) == (3, 11)
    assert "controlled direct effect" in p.message and "`mediator:`" in p.message


# --- huge input ------------------------------------------------------------------------------


def test_a_huge_bad_line_is_not_echoed_in_full():
    text = "a -> b\n" + "x, " * 200_000 + "-> 3y\n"
    p = problem(text)
    assert p.span.line == 2
    # the excerpt is the part of the line around the column, with a caret under it
    first, caret = p.excerpt.split("\n")
    assert len(first) < 200 and first.startswith("...") and first.endswith("x, -> 3y")
    assert first[caret.index("^") :] == "-> 3y"
    assert len(p.message) < 300


def test_a_huge_name_is_cut_in_the_message():
    text = "a -> " + "x" * 1_000_000 + " y\n"
    p = problem(text)
    assert len(p.message) < 400 and "1,000,002 characters" in p.message
    assert len(p.excerpt) < 300


def test_the_excerpt_of_a_long_line_keeps_the_caret_under_the_column():
    line = "a, " * 100 + "b c -> d"
    p = problem(line + "\n")
    first, caret = p.excerpt.split("\n")
    at = caret.index("^")
    assert first[at] == "c"
    assert first.startswith("...") and len(first) < 140


def test_a_long_string_literal_parses_and_an_unclosed_one_is_cut():
    diagram, p = parse_source('title "' + "x" * 1_000_000 + '"\na -> b\n', "t.dag")
    assert p is None and len(diagram.title) == 1_000_000
    p = problem('label a "' + "x" * 1_000_000 + "\na -> b\n")
    assert "string is not closed" in p.message and len(p.excerpt) < 300
