"""`dagward render`: DOT and Mermaid checked structurally, SVG and PNG through Graphviz.

The styles are checked against oracles written straight from the definitions
(Pearl 2009, *Causality*, section 1.2.3 for open paths; common practice for
"causal path" = every arrow points from exposure towards outcome): all simple
paths of the skeleton are listed with networkx and classified here, not by
the code under test.
"""

from __future__ import annotations

import re
import shlex
import shutil
import xml.etree.ElementTree as ET
from pathlib import Path

import networkx as nx
import pytest
from clirunner import ROOT, dagward
from dagward.causal.graph import is_hidden
from dagward.syntax import parse_source

SAMPLES = ["wellness", "tree_canopy", "soil_amendment"]


def load_diagram(path: str):
    diagram, problem = parse_source(Path(path).read_bytes(), path)
    assert problem is None
    return diagram


BIDIRECTED = """\
title "Heat, shade and a hidden cause"
label x "Shade trees planted"
period before: a, c
period after: x, y
a -> x
c -> x
x -> y
a <-> y
c <-> y
analysis {
  exposure: x
  outcome: y
  adjust: c
}
"""


# --- a small DOT reader (independent of the renderer) ----------------------------

ATTR = re.compile(r'(\w+)=("(?:[^"\\]|\\.)*"|<.*?>(?=, |\]$)|[^,\]\s]+)')
NODE = re.compile(r'^  "((?:[^"\\]|\\.)*)" \[(.*)\];$')
EDGE = re.compile(r'^  "((?:[^"\\]|\\.)*)" -> "((?:[^"\\]|\\.)*)" \[(.*)\];$')
CLUSTER = re.compile(
    r'^  subgraph "cluster_period_(\d+)" \{ label=<<B>(.*?)</B>>;.*class="period";'
    r'(?: rank=same;)? ((?:"[^"]+"; )*)\}$'
)


def attrs(text: str) -> dict[str, str]:
    out = {}
    for key, value in ATTR.findall(text + "]"):
        out[key] = value[1:-1] if value.startswith('"') else value
    return out


def read_dot(text: str):
    nodes, edges, clusters = {}, {}, {}
    for line in text.splitlines():
        if m := CLUSTER.match(line):
            clusters[int(m.group(1))] = (m.group(2), re.findall(r'"([^"]+)"', m.group(3)), line)
        elif m := EDGE.match(line):
            edges.setdefault((m.group(1), m.group(2)), []).append(attrs(m.group(3)))
        elif m := NODE.match(line):
            nodes[m.group(1)] = attrs(m.group(2))
    return nodes, edges, clusters


def styles(a: dict) -> set[str]:
    return set(filter(None, a.get("style", "").split(",")))


# --- oracles -------------------------------------------------------------------------


def oracle_paths(diagram, analysis):
    """(edges on causal paths, edges on open non-causal paths) from the definitions."""
    G = diagram.graph
    X, Y = analysis.exposure_set, analysis.outcome_set
    Z = analysis.adjust_set or frozenset()
    skeleton = G.to_undirected()
    anc_z = set(Z)
    for z in Z:
        anc_z |= nx.ancestors(G, z)
    causal, open_noncausal = set(), set()
    for x in X:
        for y in Y:
            for path in nx.all_simple_paths(skeleton, x, y):
                if any(v in X for v in path[1:]):
                    continue  # not proper
                forward = all(G.has_edge(u, v) for u, v in zip(path, path[1:], strict=False))
                is_open = True
                for i in range(1, len(path) - 1):
                    collider = G.has_edge(path[i - 1], path[i]) and G.has_edge(path[i + 1], path[i])
                    if collider and path[i] not in anc_z or not collider and path[i] in Z:
                        is_open = False
                pairs = list(zip(path, path[1:], strict=False))
                if forward:
                    causal |= set(pairs)
                elif is_open:
                    for i, (u, v) in enumerate(pairs):
                        if is_hidden(G, u):
                            open_noncausal.add(frozenset((path[i - 1], v)))
                        elif not is_hidden(G, v):
                            open_noncausal.add((u, v) if G.has_edge(u, v) else (v, u))
    return causal, open_noncausal


def render_text(*args) -> str:
    run = dagward("render", *args, "-q")
    assert run.code == 0, run.err
    return run.out


@pytest.fixture
def bidirected(tmp_path: Path) -> Path:
    path = tmp_path / "shade.dag"
    path.write_text(BIDIRECTED, encoding="utf-8")
    return path


# --- DOT -----------------------------------------------------------------------------


@pytest.mark.parametrize("name", SAMPLES)
def test_dot_has_every_variable_arrow_and_style(name):
    file = ROOT / "samples" / f"{name}.dag"
    diagram = load_diagram(str(file))
    analysis = diagram.analyses[0]
    nodes, edges, clusters = read_dot(render_text(str(file), "--format", "dot"))
    assert set(diagram.variables) <= set(nodes)
    assert not any(n.startswith("<->") for n in nodes), "hidden parents are not drawn as nodes"
    directed = {(a.source.text, a.target.text) for a in diagram.arrows if not a.bidirected}
    drawn = {k for k, v in edges.items() if any("invis" not in styles(a) for a in v)}
    assert directed <= drawn
    X, Y = analysis.exposure_set, analysis.outcome_set
    Z = analysis.adjust_set or frozenset()
    for v in diagram.variables:
        a = nodes[v]
        assert (a.get("shape") == "hexagon" and a.get("penwidth") == "2.5") == (v in X), v
        assert (a.get("shape") == "box" and a.get("peripheries") == "2") == (v in Y), v
        assert ("dashed" in styles(a)) == (v in diagram.unmeasured), v
        assert ("filled" in styles(a) and "fillcolor" in a) == (v in Z), v
        if v not in X and v not in Y:
            assert "rounded" in styles(a)
        label = diagram.labels.get(v)
        if label:
            # the label text (wrapped) and the name beneath it
            assert " ".join(re.sub(r"<[^>]+>", " ", a["label"][1:-1]).split()).startswith(
                " ".join(label.split())
            )
            assert f">{v}</FONT>" in a["label"]
    causal, open_noncausal = oracle_paths(diagram, analysis)
    for edge in directed:
        (a,) = [x for x in edges[edge] if "invis" not in styles(x)]
        assert (a["penwidth"] == "3.2") == (edge in causal), edge
        assert ("dotted" in styles(a)) == (edge in open_noncausal), edge
    # periods: one band each, in file order, with exactly its members
    assert [clusters[i][0] for i in sorted(clusters)] == [p.text for p, _ in diagram.periods]
    for i, (_, members) in enumerate(diagram.periods, start=1):
        assert clusters[i][1] == list(dict.fromkeys(m.text for m in members))


def test_wellness_styles_by_hand():
    """The same facts read off samples/wellness.dag by hand (analysis total_effect)."""
    nodes, edges, _ = read_dot(render_text("samples/wellness.dag", "--format", "dot"))
    dotted = {k for k, v in edges.items() if "dotted" in styles(v[0])}
    thick = {k for k, v in edges.items() if v[0].get("penwidth") == "3.2"}
    # enrolled <- motivation -> fitness_12m -> sick_days stays open given age, fitness_base
    assert dotted == {
        ("motivation", "enrolled"),
        ("motivation", "fitness_12m"),
        ("fitness_12m", "sick_days"),
    }
    assert thick == {("enrolled", "fitness_12m"), ("fitness_12m", "sick_days")}
    assert edges[("fitness_12m", "sick_days")][0]["class"] == "arrow causal open-noncausal"


def test_other_analysis_and_the_default_note():
    run = dagward("render", "samples/wellness.dag", "--format", "dot")
    assert run.code == 0
    assert "first of 2" in run.err and "fitness_effect" in run.err
    run = dagward(
        "render", "samples/wellness.dag", "--format", "dot", "--analysis", "fitness_effect"
    )
    assert run.code == 0 and run.err == ""
    nodes, _, _ = read_dot(run.out)
    assert nodes["fitness_12m"]["shape"] == "hexagon"
    assert nodes["enrolled"].get("shape") is None
    assert "filled" in styles(nodes["shift_work"]) and "filled" not in styles(nodes["fitness_base"])
    bad = dagward("render", "samples/wellness.dag", "--format", "dot", "--analysis", "nope")
    assert bad.code == 2 and "nope" in bad.err and "total_effect" in bad.err


def test_bidirected_is_a_dashed_two_headed_edge(bidirected):
    diagram = load_diagram(str(bidirected))
    nodes, edges, _ = read_dot(render_text(str(bidirected), "--format", "dot"))
    assert set(nodes) >= {"a", "c", "x", "y"} and not any("<->" in n for n in nodes)
    causal, open_noncausal = oracle_paths(diagram, diagram.analyses[0])
    # a <-> y is on the open path x <- a <-> y; c <-> y is blocked by adjusting for c
    assert frozenset(("a", "y")) in open_noncausal and frozenset(("c", "y")) not in open_noncausal
    a_y, c_y = edges[("a", "y")][0], edges[("c", "y")][0]
    assert a_y["dir"] == c_y["dir"] == "both"
    assert styles(a_y) == {"dotted"} and styles(c_y) == {"dashed"}
    assert "dotted" in styles(edges[("a", "x")][0]) and "dotted" not in styles(edges[("c", "x")][0])
    assert nodes["x"]["label"].startswith("<Shade trees planted")


@pytest.mark.parametrize("name", SAMPLES)
def test_periods_read_left_to_right_after_layout(name):
    """Graphviz's own layout (dot -Tplain) puts each period right of the one before."""
    if shutil.which("dot") is None:
        pytest.fail("Graphviz `dot` is required for this test (apt-get install -y graphviz)")
    import subprocess

    file = ROOT / "samples" / f"{name}.dag"
    dot_text = render_text(str(file), "--format", "dot")
    plain = subprocess.run(["dot", "-Tplain"], input=dot_text, capture_output=True, text=True)
    x = {}
    for line in plain.stdout.splitlines():
        if line.startswith("node "):
            parts = shlex.split(line)  # names with spaces are quoted
            x[parts[1]] = float(parts[2])
    diagram = load_diagram(str(file))
    spans = [[x[m.text] for m in members] for _, members in diagram.periods]
    for before, after in zip(spans, spans[1:], strict=False):
        assert max(before) < min(after)


# --- Mermaid -------------------------------------------------------------------------

MMD_NODE = re.compile(r'^\s+(v\d+)(\{\{|\[\[|\()"(.*)"(\}\}|\]\]|\))$')
MMD_LINK = re.compile(r"^\s+(v\d+) (-->|==>|-\.->|<-\.->|<==>) (v\d+)$")


def read_mermaid(text: str):
    nodes, links, link_styles, classes, subgraphs = {}, [], {}, {}, []
    current = None
    for line in text.splitlines():
        if m := MMD_NODE.match(line):
            nodes[m.group(1)] = (m.group(2), m.group(3))
            if current is not None:
                current[1].append(m.group(1))
        elif m := MMD_LINK.match(line):
            links.append((m.group(1), m.group(2), m.group(3)))
        elif m := re.match(r"^\s+linkStyle (\d+) (.*)$", line):
            link_styles[int(m.group(1))] = m.group(2)
        elif m := re.match(r"^\s+class (\S+) (\w+)$", line):
            classes[m.group(2)] = set(m.group(1).split(","))
        elif m := re.match(r'^\s+subgraph p\d+\["(.*)"\]$', line):
            current = (m.group(1), [])
            subgraphs.append(current)
        elif line.strip() == "end":
            current = None
    return nodes, links, link_styles, classes, subgraphs


@pytest.mark.parametrize("name", SAMPLES)
def test_mermaid_has_every_variable_arrow_and_style(name, tmp_path):
    file = ROOT / "samples" / f"{name}.dag"
    out = tmp_path / "picture.mmd"
    assert dagward("render", str(file), "-o", str(out), "-q").code == 0
    text = out.read_text(encoding="utf-8")
    assert text.splitlines()[3] == "flowchart LR"
    diagram = load_diagram(str(file))
    analysis = diagram.analyses[0]
    nodes, links, link_styles, classes, subgraphs = read_mermaid(text)
    ids = {}
    for node_id, (_, label) in nodes.items():
        name_in_label = re.search(r"\(([^()]*)\)$", label)
        ids[name_in_label.group(1) if name_in_label else label] = node_id
    assert set(ids) == set(diagram.variables)
    X, Y = analysis.exposure_set, analysis.outcome_set
    Z = analysis.adjust_set or frozenset()
    for v, node_id in ids.items():
        shape = nodes[node_id][0]
        assert shape == ("{{" if v in X else "[[" if v in Y else "("), v
        if v in diagram.labels:
            assert nodes[node_id][1].startswith(diagram.labels[v].split()[0])
    assert classes.get("adjusted", set()) == {ids[v] for v in Z}
    assert classes.get("unmeasured", set()) == {ids[v] for v in diagram.unmeasured}
    assert classes["exposure"] == {ids[v] for v in X}
    causal, open_noncausal = oracle_paths(diagram, analysis)
    name_of = {i: v for v, i in ids.items()}
    drawn = {(name_of[a], name_of[b]): (op, idx) for idx, (a, op, b) in enumerate(links)}
    directed = {(a.source.text, a.target.text) for a in diagram.arrows if not a.bidirected}
    assert set(drawn) == directed
    for edge, (op, idx) in drawn.items():
        if edge in open_noncausal:
            assert op == "-.->" and "stroke-dasharray:2 4" in link_styles[idx]
            assert ("stroke-width:4px" in link_styles[idx]) == (edge in causal)
        elif edge in causal:
            assert op == "==>" and "stroke-width:4px" in link_styles[idx]
        else:
            assert op == "-->" and idx not in link_styles
    assert [(p, [name_of[i] for i in members]) for p, members in subgraphs] == [
        (p.text, list(dict.fromkeys(m.text for m in ms))) for p, ms in diagram.periods
    ]


def test_mermaid_bidirected(bidirected):
    nodes, links, link_styles, _, _ = read_mermaid(render_text(str(bidirected), "--format", "mmd"))
    assert len(nodes) == 4
    two_headed = [(i, a, b) for i, (a, op, b) in enumerate(links) if op == "<-.->"]
    assert len(two_headed) == 2
    dashes = sorted(link_styles[i].split(",")[0] for i, _, _ in two_headed)
    assert dashes == ["stroke-dasharray:2 4", "stroke-dasharray:7 4"]  # open one dotted


def test_mermaid_highlighted_arrows(bidirected):
    """`diff` marks arrows by their key; everything else is drawn as `render` draws it."""
    from dagward.model import arrow_key
    from dagward.render import HIGHLIGHT, picture, to_mermaid

    diagram, problem = parse_source(bidirected.read_bytes(), str(bidirected))
    analysis = diagram.analyses[0]
    marked = frozenset({arrow_key("x", "y", False), arrow_key("y", "c", True)})
    plain = to_mermaid(picture(diagram, analysis)).splitlines()
    text = to_mermaid(picture(diagram, analysis, highlight=marked))
    nodes, links, link_styles, _, _ = read_mermaid(text)
    ids = {label.split("(")[-1].rstrip(")"): node for node, (_, label) in nodes.items()}
    name_of = {node: v for v, node in ids.items()}
    hot = {i for i, style in link_styles.items() if f"stroke:{HIGHLIGHT}" in style}
    drawn = [(name_of[a], op, name_of[b]) for a, op, b in links]
    assert {drawn[i] for i in hot} == {("x", "==>", "y"), ("c", "<==>", "y")}
    assert all(link_styles[i] == f"stroke:{HIGHLIGHT},stroke-width:4px" for i in hot)

    # the rest of the picture is unchanged: nodes, keys, classes, the other links
    def others(lines):
        return [x for x in lines if not MMD_LINK.match(x) and "linkStyle" not in x]

    assert others(text.splitlines()) == others(plain)
    _, plain_links, plain_styles, _, _ = read_mermaid("\n".join(plain))
    for i in set(range(len(links))) - hot:
        assert (links[i], link_styles.get(i)) == (plain_links[i], plain_styles.get(i))


# --- SVG and PNG ---------------------------------------------------------------------


@pytest.mark.parametrize("name", SAMPLES)
def test_svg_is_xml_with_every_variable(name, tmp_path):
    out = tmp_path / "picture.svg"
    run = dagward("render", f"samples/{name}.dag", "-o", str(out), "-q")
    assert run.code == 0, run.err
    root = ET.parse(out).getroot()
    ns = {"svg": "http://www.w3.org/2000/svg"}
    titles = {
        g.find("svg:title", ns).text
        for g in root.iter("{http://www.w3.org/2000/svg}g")
        if "node" in g.get("class", "").split()
    }
    diagram = load_diagram(str(ROOT / "samples" / f"{name}.dag"))
    assert set(diagram.variables) <= titles
    exposure = [g for g in root.iter("{http://www.w3.org/2000/svg}g")
                if g.get("class") == "node exposure"]  # fmt: skip
    assert [g.find("svg:title", ns).text for g in exposure] == [
        n.text for n in diagram.analyses[0].exposure
    ]


def test_png_signature_and_atomic_overwrite(tmp_path):
    out = tmp_path / "picture.png"
    out.write_bytes(b"old")
    assert dagward("render", "samples/wellness.dag", "-o", str(out), "-q").code == 0
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert [p.name for p in tmp_path.iterdir()] == ["picture.png"]  # no temporary left


@pytest.mark.parametrize("suffix", ["svg", "png"])
def test_missing_graphviz_says_how_to_install(tmp_path, suffix):
    empty = tmp_path / "empty"
    empty.mkdir()
    out = tmp_path / f"picture.{suffix}"
    out.write_bytes(b"old")
    run = dagward("render", "samples/wellness.dag", "-o", str(out), env={"PATH": str(empty)})
    assert run.code == 2
    last = run.err.strip().splitlines()[-1]
    assert last.startswith("dagward: error: Graphviz's `dot` program")
    for advice in ("apt-get install graphviz", "brew install graphviz",
                   "conda install -c conda-forge graphviz", "winget install graphviz"):  # fmt: skip
        assert advice in last
    assert out.read_bytes() == b"old"
    # .dot and .mmd need nothing
    dot_out = tmp_path / "picture.dot"
    assert dagward("render", "samples/wellness.dag", "-o", str(dot_out), "-q",
                   env={"PATH": str(empty)}).code == 0  # fmt: skip
    assert dot_out.read_text().startswith("digraph")


def test_usage_problems(tmp_path):
    assert dagward("render", "samples/wellness.dag").code == 2
    run = dagward("render", "samples/wellness.dag", "-o", str(tmp_path / "x.jpg"))
    assert run.code == 2 and ".svg, .png, .dot or .mmd" in run.err
    # a diagram with errors: the errors are printed and the exit status is 1
    run = dagward("render", "samples/broken/cycle.dag", "-o", str(tmp_path / "x.dot"))
    assert run.code == 1 and "samples/broken/cycle.dag:4:1: error [cycle]" in run.err
    assert not (tmp_path / "x.dot").exists()
    assert dagward("render", str(tmp_path / "missing.dag"), "-o", str(tmp_path / "x.dot")).code == 2
