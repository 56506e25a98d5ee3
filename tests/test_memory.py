"""What keeps `check` and `fmt` small on large diagrams, held without timing:
names shared, arrows kept as names and numbers, the parser keeping nothing,
and `check` answering from the compact graph without building networkx's.
The figures themselves are printed by `python tests/bench_check.py`."""

from __future__ import annotations

import random

import pytest
from dagward import syntax
from dagward.causal.indexed import indexed
from dagward.config import Settings
from dagward.engine import lint_source
from dagward.model import Arrow, ArrowStatement, Name, NameRow, Span
from dagward.verdict import Verdict

NAMES = ["age", "Age", "sleep.h", "x_1", "zeta", "ümit", "b", "a2", "mood", "q"]


def random_diagram(seed: int) -> str:
    """Arrows between randomly named variables in a random order (acyclic:
    arrows follow a random ranking), with `<->`, repeated arrows, lines of
    several arrows, a variable without arrows and one analysis."""
    rng = random.Random(seed)
    names = rng.sample(NAMES, rng.randint(4, len(NAMES)))
    lines = []
    for _ in range(rng.randint(3, 14)):
        i, j = sorted(rng.sample(range(len(names)), 2))
        kind = rng.random()
        if kind < 0.2:
            lines.append(f"{names[j]} <-> {names[i]}")
        elif kind < 0.35 and j + 1 < len(names):
            lines.append(f"{names[i]}, {names[i + 1]} -> {names[j + 1]}  # two")
        elif kind < 0.45 and j + 1 < len(names):
            lines.append(f"  {names[i]} -> {names[j]} <-> {names[j + 1]}")
        else:
            lines.append(f"{names[i]} -> {names[j]}")
    lines.append(rng.choice(lines))  # a repeated arrow
    rng.shuffle(lines)
    lines.append("unmeasured lonely")
    used = sorted({n for line in lines for n in names if f"{n} " in f"{line.strip()} "})
    x, y = used[0], used[-1]
    lines += ["analysis {", f"  exposure: {x}", f"  outcome: {y}", "  adjust: none", "}"]
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("seed", range(40))
def test_the_compact_graph_is_networkx_graph_of_the_diagram(seed):
    # Outside source: networkx's own DiGraph of the diagram (Diagram.graph).
    text = random_diagram(seed)
    diagram, problem = syntax.parse_source(text, "t.dag")
    assert problem is None
    compact, G = diagram.compact_graph, diagram.graph
    assert list(compact) == list(G) and len(compact) == len(G)
    for v in G:
        assert list(compact.succ[v]) == list(G.succ[v])
        assert list(compact.pred[v]) == list(G.pred[v])
        assert compact.nodes[v].get("hidden", False) == G.nodes[v].get("hidden", False)
        assert v in compact and v in compact.succ
    assert "not-a-node" not in compact
    a, b = indexed(compact), indexed(G)
    assert a.names == b.names and a.succ == b.succ and a.pred == b.pred
    analysis = diagram.analyses[0]
    on_compact = Verdict(diagram, analysis, graph=compact).to_dict()
    assert on_compact == Verdict(diagram, analysis).to_dict()


def test_check_never_builds_the_networkx_graph():
    text = random_diagram(3)
    result = lint_source(text, "t.dag", Settings())
    assert result.causal_ran
    assert "compact_graph" in vars(result.diagram)
    assert "graph" not in vars(result.diagram)
    # asking for it still gives networkx's graph, frozen
    G = result.diagram.graph
    assert type(G).__module__.startswith("networkx") and G.frozen


def test_a_cycle_still_gets_its_networkx_subgraph():
    result = lint_source("a -> b\nb -> c\nc -> a\n", "t.dag", Settings())
    (cycle,) = [f for f in result.findings if f.rule == "cycle"]
    assert cycle.path == ("c", "a", "b", "c")


def test_every_occurrence_of_a_name_is_one_str():
    text = "".join(f"node_{i} -> node_{i + 1}\nnode_{i}, x -> y_{i} <-> z\n" for i in range(50))
    text += "period early: node_3\nanalysis {\n  exposure: node_3\n  outcome: node_40\n}\n"
    diagram, _ = syntax.parse_source(text, "t.dag")
    seen: dict[str, str] = {}
    names = [n for s in diagram.statements for g in getattr(s, "groups", ()) for n in g]
    names += [n for _, members in diagram.periods for n in members]
    names += [n for a in diagram.analyses for e in a.entries for n in e.names]
    texts = [n.text for n in names] + [
        t for a in diagram.arrows for t in (a.source_text, a.target_text)
    ]
    assert len(texts) > 500
    for t in texts:
        assert seen.setdefault(t, t) is t  # the same object as every earlier occurrence
    # the arrow operators too
    ops = [op for s in diagram.statements for op in getattr(s, "operators", ())]
    assert len({id(op) for op in ops}) == 2


def test_a_one_arrow_line_keeps_only_names_and_numbers():
    diagram, _ = syntax.parse_source('title "t"\n  sleep -> mood  # why\n', "t.dag")
    (statement,) = [s for s in diagram.statements if isinstance(s, ArrowStatement)]
    kept = statement._kept
    assert type(kept) is Arrow
    assert (kept.source_text, kept.target_text, kept.line) == ("sleep", "mood", 2)
    assert not any(isinstance(getattr(kept, f), tuple) for f in Arrow.__slots__)
    # what is built when read is what the named tuples held
    assert kept.source == Name("sleep", Span(2, 3, 2, 8))
    assert kept.target == Name("mood", Span(2, 12, 2, 16))
    assert kept.span == Span(2, 3, 2, 16) == statement.span
    assert statement.groups == ((kept.source,), (kept.target,))
    assert statement.operators == ("->",) and statement.arrows == (kept,)
    source, target, bidirected, span = kept
    assert (source.text, target.text, bidirected, span) == ("sleep", "mood", False, kept.span)


def test_the_parser_keeps_nothing_of_a_file():
    syntax.parse_source("a -> b  # reason\nc <-> d\n", "t.dag")
    _, builder = syntax._parser()
    assert builder.texts == {} and builder.comments == []


def test_a_long_run_of_arrow_lines_is_read_in_bounded_tokens():
    # 2,500 arrow lines: more than one ARROW_LINE token holds (1,000 lines each);
    # every arrow is read, with its line.
    text = "".join(f"v{i} -> v{i + 1}\n" for i in range(2500))
    diagram, problem = syntax.parse_source(text, "t.dag")
    assert problem is None
    assert [a.line for a in diagram.arrows] == list(range(1, 2501))
    assert diagram.arrows[1234].describe() == "v1234 -> v1235"


def test_a_list_of_names_keeps_strings_and_numbers_and_reads_as_names():
    text = "period early:  sleep,   mood\nunmeasured grit\nperiod early: diet\nsleep -> mood\n"
    diagram, problem = syntax.parse_source(text, "t.dag")
    assert problem is None
    first = diagram.statements[0]
    assert isinstance(first.names, NameRow) and first.names.texts == ("sleep", "mood")
    # the Names read are where the names are in the text (line and column counted by hand)
    expected = (Name("sleep", Span(1, 16, 1, 21)), Name("mood", Span(1, 25, 1, 29)))
    assert first.names == expected and tuple(first.names) == expected
    assert hash(first.names) == hash(expected) and first.names[1:] == expected[1:]
    ((head, members),) = diagram.periods
    assert head.text == "early" and [n.text for n in members] == ["sleep", "mood", "diet"]
    assert members[2] == Name("diet", Span(3, 15, 3, 19))


def test_the_variables_are_first_occurrences_built_when_read():
    text = "b -> a\nperiod p: c, a\nunmeasured d\nb, c -> e <-> f\n"
    diagram, _ = syntax.parse_source(text, "t.dag")
    # oracle: the first Name of each text over the statements, written out directly
    first: dict[str, Name] = {}
    for s in diagram.statements:
        groups = getattr(s, "groups", None) or (s.names,)
        for group in groups:
            for n in group:
                first.setdefault(n.text, n)
    assert dict(diagram.variables) == first
    assert list(diagram.variables) == ["b", "a", "c", "d", "e", "f"]
    assert diagram.variables["e"] == Name("e", Span(4, 9, 4, 10))
    assert "z" not in diagram.variables and diagram.variables.get("z") is None


@pytest.mark.parametrize("seed", range(60))
def test_repeated_arrows_are_found_with_or_without_the_shortcut(seed):
    # `duplicate-arrow` skips its key per arrow when the counts show no repeat;
    # the oracle is the definition: an arrow whose key an earlier arrow had.
    rng = random.Random(seed)
    names = NAMES[: rng.randint(2, 6)]
    lines = []
    for _ in range(rng.randint(1, 12)):
        a, b = rng.choice(names), rng.choice(names)
        op = rng.choice(["->", "<->"]) if a != b or rng.random() < 0.2 else "->"
        lines.append(f"{a} {op} {b}")
    text = "\n".join(lines) + "\n"
    diagram, problem = syntax.parse_source(text, "t.dag")
    assert problem is None
    seen, expected = set(), []
    for arrow in diagram.arrows:
        a, b = arrow.source_text, arrow.target_text
        key = ("<->", *sorted((a, b))) if arrow.bidirected else ("->", a, b)
        if key in seen:
            expected.append(arrow.line)
        seen.add(key)
    result = lint_source(text, "t.dag", Settings())
    found = [f.line for f in result.findings if f.rule == "duplicate-arrow"]
    assert found == sorted(expected), text


@pytest.mark.parametrize("seed", range(30))
def test_the_moral_rows_worked_out_on_demand_are_the_kept_ones(seed):
    # _moral_row (used for adjustment sets) against _moral_ids (the rows kept as
    # arrays, used for instruments): the same neighbours for every vertex.
    from dagward.causal.dsep import ancestor_mask
    from dagward.causal.separators import _moral_ids, _moral_row

    diagram, _ = syntax.parse_source(random_diagram(seed), "t.dag")
    ix = indexed(diagram.graph)
    seeds = {ix.names[0], ix.names[-1]}
    kept, _ = _moral_ids(ix, seeds)
    row, family = _moral_row(ix, ancestor_mask(ix, seeds, None), None)
    anc = ancestor_mask(ix, seeds, None)
    for v in range(ix.n):
        if anc[v]:
            assert sorted(row(v)) == sorted(kept[v])
            assert family[v] == bool(kept[ix.n + v])
            if family[v]:
                assert sorted(row(ix.n + v)) == sorted(kept[ix.n + v])
