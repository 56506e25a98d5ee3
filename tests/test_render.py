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
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import networkx as nx
import pytest
from clirunner import ROOT, dagward, in_this_process
from dagward.causal.graph import is_hidden
from dagward.syntax import parse_source

SAMPLES = ["wellness", "tree_canopy", "soil_amendment"]


@pytest.fixture(autouse=True)
def _commands_in_this_process(capsys, monkeypatch):
    """Every `dagward(...)` here runs in this process (see clirunner.in_this_process)."""
    in_this_process(sys.modules[__name__], capsys, monkeypatch)


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
    assert nodes["x"]["label"].startswith("<Shade trees<BR/>planted")


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
    # a marked `<->` keeps its two heads and dash pattern, as the key describes it
    assert {drawn[i] for i in hot} == {("x", "==>", "y"), ("c", "<-.->", "y")}
    for i in hot:
        dashes = ",stroke-dasharray:" if drawn[i][1] == "<-.->" else None
        assert link_styles[i].startswith(f"stroke:{HIGHLIGHT},stroke-width:4px")
        assert (dashes in link_styles[i]) if dashes else link_styles[i].endswith("4px")

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
                if {"node", "exposure"} <= set(g.get("class", "").split())]  # fmt: skip
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
    assert run.code == 2 and ".svg, .png, .pdf, .eps, .dot or .mmd" in run.err
    # a diagram with errors: the errors are printed and the exit status is 1
    run = dagward("render", "samples/broken/cycle.dag", "-o", str(tmp_path / "x.dot"))
    assert run.code == 1 and "samples/broken/cycle.dag:4:1: error [cycle]" in run.err
    assert not (tmp_path / "x.dot").exists()
    assert dagward("render", str(tmp_path / "missing.dag"), "-o", str(tmp_path / "x.dot")).code == 2


# --- formats for papers: PDF, EPS, PNG resolution, no caption, font -------------------

MAGIC = {"pdf": b"%PDF-", "eps": b"%!PS-Adobe-", "png": b"\x89PNG\r\n\x1a\n"}


def png_size(data: bytes) -> tuple[int, int]:
    """Width and height from the IHDR chunk (PNG specification, section 11.2.2)."""
    assert data[:8] == MAGIC["png"] and data[12:16] == b"IHDR"
    return int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")


@pytest.mark.parametrize("suffix", ["pdf", "eps", "png", "svg"])
def test_every_picture_is_what_its_name_says(suffix, tmp_path):
    out = tmp_path / f"figure.{suffix}"
    run = dagward("render", "samples/wellness.dag", "-o", str(out), "-q")
    assert run.code == 0, run.err
    data = out.read_bytes()
    if suffix == "svg":
        assert ET.fromstring(data).tag == "{http://www.w3.org/2000/svg}svg"
    else:
        assert data.startswith(MAGIC[suffix])
    if suffix == "eps":
        assert b"EPSF" in data.splitlines()[0]  # encapsulated, for journals that ask for it


def test_png_dpi_scales_the_raster_and_graphviz_succeeds(tmp_path):
    import subprocess

    sizes = {}
    for dpi in (72, 300):
        out = tmp_path / f"at{dpi}.png"
        run = dagward("render", "samples/wellness.dag", "-o", str(out), "--dpi", str(dpi), "-q")
        assert run.code == 0, run.err
        sizes[dpi] = png_size(out.read_bytes())
    # the same drawing at 300/72 of the resolution (Graphviz rounds to whole pixels)
    for axis in (0, 1):
        assert abs(sizes[300][axis] / sizes[72][axis] - 300 / 72) < 0.05
    assert sizes[72][0] > sizes[72][1] > 100  # a wide picture: periods run left to right
    # Graphviz itself accepts the DOT we write (exit status 0) and draws the same size
    from dagward.render import choose_analysis, layout_for_drawing, picture

    diagram = load_diagram(str(ROOT / "samples" / "wellness.dag"))
    text, options = layout_for_drawing(picture(diagram, choose_analysis(diagram, None)[0]))
    done = subprocess.run(["dot", *options, "-Tpng", "-Gdpi=72"], input=text.encode(),
                          capture_output=True)  # fmt: skip
    assert done.returncode == 0 and png_size(done.stdout) == sizes[72]
    plain = subprocess.run(
        ["dot", "-Tpng"],
        capture_output=True,
        input=render_text("samples/wellness.dag", "--format", "dot").encode(),
    )
    assert plain.returncode == 0 and plain.stdout.startswith(MAGIC["png"])  # .dot output too


def test_output_options_are_usage_errors_when_they_disagree(tmp_path):
    x, y = tmp_path / "x.png", tmp_path / "y.png"
    run = dagward("render", "samples/wellness.dag", "-o", str(x), "--output", str(y))
    assert run.code == 2 and len(run.err.splitlines()) == 1 and "once" in run.err
    run = dagward("render", "samples/wellness.dag", "--format", "svg", "-o", str(x))
    assert run.code == 2 and "does not match" in run.err
    run = dagward("render", "samples/wellness.dag", "-o", str(tmp_path / "x.svg"), "--dpi", "300")
    assert run.code == 2 and "--dpi applies to .png" in run.err
    run = dagward("render", "samples/wellness.dag", "--format", "pdf")
    assert run.code == 2 and "needs -o OUT.pdf" in run.err
    assert list(tmp_path.iterdir()) == []  # nothing written
    # --output alone works like -o
    assert dagward("render", "samples/wellness.dag", "--output", str(y), "-q").code == 0
    assert y.read_bytes().startswith(MAGIC["png"])


def test_no_caption_and_font(bidirected):
    with_caption = render_text(str(bidirected), "--format", "dot")
    assert "hidden common cause" in with_caption
    bare = render_text(str(bidirected), "--format", "dot", "--no-caption")
    assert 'label="' not in bare.splitlines()[1] and "hidden common cause" not in bare
    mmd = render_text(str(bidirected), "--format", "mmd", "--no-caption")
    assert "key[" not in mmd and "hidden common cause" not in mmd
    fonted = render_text(str(bidirected), "--format", "dot", "--font", "DejaVu Sans")
    assert fonted.count('fontname="DejaVu Sans"') == 3  # graph, node and edge defaults
    assert "Helvetica" not in fonted


def test_a_font_that_is_not_installed_is_named(tmp_path):
    if shutil.which("fc-list") is None:
        pytest.skip("fontconfig's fc-list is not installed")
    out = tmp_path / "x.svg"
    run = dagward("render", "samples/wellness.dag", "-o", str(out), "-q",
                  "--font", "No Such Family 123")  # fmt: skip
    assert run.code == 0 and "font `No Such Family 123` is not installed" in run.err
    run = dagward("render", "samples/wellness.dag", "-o", str(out), "-q", "--font", "DejaVu Sans")
    assert run.code == 0 and run.err == ""


def _drawn_line_styles(dot_text: str) -> set[str]:
    """The key entries that the drawn edges call for, read from the DOT (not the caption)."""
    _, edges, _ = read_dot(dot_text)
    wanted = set()
    for attrs_list in edges.values():
        for a in attrs_list:
            if "invis" in styles(a):
                continue
            two_heads = a.get("dir") == "both"
            if two_heads:
                wanted.add("dotted, two heads" if "dotted" in styles(a) else "dashed, two heads")
            elif "dotted" in styles(a):
                wanted.add("dotted")
            if float(a.get("penwidth", "1")) >= 3:
                wanted.add("thick")
    return wanted


@pytest.mark.parametrize("name", [*SAMPLES, "shade"])
def test_caption_key_names_exactly_the_line_styles_drawn(name, bidirected):
    file = bidirected if name == "shade" else ROOT / "samples" / f"{name}.dag"
    dot_text = render_text(str(file), "--format", "dot")
    cap = re.search(r'label="(.*)"\];', dot_text.splitlines()[1]).group(1).split("\\n")
    keyed = {item.split(":")[0] for line in cap[1:] for item in line.split("; ")}
    line_words = {k for k in keyed if k.startswith(("thick", "dotted", "dashed,"))}
    assert line_words == _drawn_line_styles(dot_text)
    if name == "shade":  # one open and one blocked <->: both entries, as drawn
        assert {"dotted, two heads", "dashed, two heads"} <= line_words


def test_period_bands_are_solid_not_dashed():
    _, _, clusters = read_dot(render_text("samples/wellness.dag", "--format", "dot"))
    assert len(clusters) == 3
    for _, _, line in clusters.values():
        style = re.search(r'style="([^"]*)"', line).group(1)
        assert "dashed" not in style and "dotted" not in style  # dashed = unmeasured


def test_long_exposure_label_stays_narrow(tmp_path):
    import subprocess

    long_label = "Participation in the employer-sponsored wellness programme during the study"
    dag = tmp_path / "long.dag"
    dag.write_text(f'label x "{long_label}"\nlabel z "{long_label}"\nx -> y\nz -> y\n'
                   "analysis {\n  exposure: x\n  outcome: y\n}\n")  # fmt: skip
    dot_text = render_text(str(dag), "--format", "dot")
    nodes, _, _ = read_dot(dot_text)
    lines = re.sub(r"<FONT.*", "", nodes["x"]["label"][1:]).split("<BR/>")
    assert all(len(line) <= 18 for line in lines if line)
    plain = subprocess.run(["dot", "-Tplain"], input=dot_text, capture_output=True, text=True)
    widths = {shlex.split(x)[1]: float(shlex.split(x)[4]) for x in plain.stdout.splitlines()
              if x.startswith("node ")}  # fmt: skip
    # the exposure's hexagon (x) against the same label in an ordinary box (z), as laid
    # out by Graphviz: 1.63 times as wide when the label was wrapped like the others
    assert widths["x"] < 1.45 * widths["z"]
    assert widths["z"] < 2.2  # inches; the label on one line would be over 5


# --- Mermaid: the key in the chart, titles kept -------------------------------------------


def _mermaid_unescape(text: str) -> str:
    return re.sub(r"#(\d+);", lambda m: chr(int(m.group(1))), text)


def test_mermaid_key_is_a_node_and_matches_the_dot_caption(bidirected):
    mmd = render_text(str(bidirected), "--format", "mmd")
    key = re.search(r'^  key\["(.*)"\]$', mmd, re.M)
    assert key, mmd
    items = key.group(1).split("<br/>")
    assert items[0] == "Key"
    dot_text = render_text(str(bidirected), "--format", "dot")
    cap = re.search(r'label="(.*)"\];', dot_text.splitlines()[1]).group(1).split("\\n")
    assert items[1:] == [item for line in cap[1:] for item in line.split("; ")]
    assert "%%" not in mmd  # the key is drawn, not hidden in comments


def test_mermaid_keeps_titles_and_labels_with_markup_characters(tmp_path):
    title = 'Dose < 5 mg & "high" > 2'
    dag = tmp_path / "t.dag"
    dag.write_text(f'title "{title.replace(chr(34), chr(92) + chr(34))}"\n'
                   'label a "A & B <b>"\na -> b\n')  # fmt: skip
    mmd = render_text(str(dag), "--format", "mmd")
    lines = mmd.splitlines()
    assert lines[0] == "---" and lines[2] == "---"
    import json

    assert lines[1].startswith("title: ")
    # a YAML double-quoted scalar with only \\ and \" escapes reads like a JSON string
    assert json.loads(lines[1][len("title: ") :]) == title
    label = re.search(r'v0\("(.*)"\)', mmd).group(1)
    assert not set(label.replace("<br/>", "")) & set('<>&"')  # all as entity codes
    assert _mermaid_unescape(label.replace("<br/>", "\n")) == "A & B <b>\n(a)"


# --- band titles: no line through them ------------------------------------------------------


def _layout(dot_text: str, *options: str) -> dict:
    import json
    import subprocess

    done = subprocess.run(["dot", *options, "-Tjson"], input=dot_text, capture_output=True,
                          text=True)  # fmt: skip
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def _pictures():
    """The samples and generated diagrams with four periods (seeded; invented)."""
    import random

    from dagward.render import choose_analysis, picture

    sources = {name: (ROOT / "samples" / f"{name}.dag").read_text() for name in SAMPLES}
    for seed in range(12):
        r = random.Random(seed)
        n = r.randint(6, 12)
        names = [f"v{i}" for i in range(n)]
        cuts = sorted(r.sample(range(1, n), 3))
        bounds = [0, *cuts, n]
        lines = [f"period p{j}: " + ", ".join(names[bounds[j] : bounds[j + 1]]) for j in range(4)]
        lines += [f"{names[i]} -> {names[j]}" for i in range(n) for j in range(i + 1, n)
                  if r.random() < 0.25]  # fmt: skip
        lines += [f"{names[0]} -> {names[-1]}", "analysis {", f"  exposure: {names[cuts[0]]}",
                  f"  outcome: {names[-1]}", "}"]  # fmt: skip
        sources[f"generated {seed}"] = "\n".join(lines) + "\n"
    for name, text in sources.items():
        diagram, problem = parse_source(text.encode(), f"{name}.dag")
        assert problem is None, (name, problem)
        yield name, picture(diagram, choose_analysis(diagram, None)[0])


def _bands(layout: dict) -> dict[str, tuple[float, ...]]:
    return {o["name"]: tuple(map(float, o["bb"].split(","))) for o in layout["objects"]
            if o.get("name", "").startswith("cluster_period_")}  # fmt: skip


def test_bands_are_equal_columns_and_no_line_crosses_a_title():
    """Read back from Graphviz's JSON of what is finally drawn."""
    from dagward.render import band_title_crossings, layout_for_drawing, to_dot

    crossed_before = 0
    for name, pic in _pictures():
        crossed_before += sum(map(bool, band_title_crossings(_layout(to_dot(pic))).values()))
        text, options = layout_for_drawing(pic)
        assert options == ["-Kneato", "-n2"], name  # drawn as laid out, nothing moved
        final = _layout(text, *options)
        assert set(band_title_crossings(final).values()) == {0}, name
        bands = _bands(final)
        assert len(bands) == len(pic.periods)
        assert len({(b[1], b[3]) for b in bands.values()}) == 1, name  # one top, one bottom
        xs = sorted((b[0], b[2]) for b in bands.values())
        assert all(a[1] < b[0] for a, b in zip(xs, xs[1:], strict=False)), name  # no overlap
        # every variable of a period inside its band (positions from the same layout)
        nodes = {o["name"]: tuple(map(float, o["pos"].split(","))) for o in final["objects"]
                 if "pos" in o and "nodes" not in o}  # fmt: skip
        for i, (_, members) in enumerate(pic.periods, start=1):
            x0, y0, x1, y1 = bands[f"cluster_period_{i}"]
            assert all(x0 <= nodes[m][0] <= x1 and y0 <= nodes[m][1] <= y1 for m in members)
    # the premise: with Graphviz's own cluster titles, lines cross some of them
    assert crossed_before >= 3


def test_aligning_bands_moves_no_variable_and_no_line():
    import subprocess

    from dagward.render import layout_for_drawing, to_dot

    for name, pic in list(_pictures())[:6]:
        laid = subprocess.run(["dot", "-Tdot"], input=to_dot(pic), capture_output=True,
                              text=True).stdout  # fmt: skip
        plain = _layout(laid, "-Kneato", "-n2")
        aligned = _layout(*layout_for_drawing(pic)[:1], "-Kneato", "-n2")
        assert [(o["name"], o.get("pos")) for o in aligned["objects"] if "nodes" not in o] == [
            (o["name"], o.get("pos")) for o in plain["objects"] if "nodes" not in o
        ], name
        assert [e.get("pos") for e in aligned["edges"]] == [e.get("pos") for e in plain["edges"]]


def test_a_font_without_a_glyph_the_picture_needs_is_named(tmp_path):
    """fontconfig's own character set of the font decides (fc-match %{charset})."""
    if shutil.which("fc-match") is None:
        pytest.skip("fontconfig's fc-match is not installed")
    import subprocess

    charset = subprocess.run(["fc-match", "-f", "%{family}\n%{charset}", "DejaVu Sans"],
                             capture_output=True, text=True).stdout.splitlines()  # fmt: skip
    if not charset or "DejaVu Sans" not in charset[0]:
        pytest.skip("DejaVu Sans is not installed")
    assert "4e2d" not in charset[1]  # the premise: no CJK in DejaVu Sans
    dag = tmp_path / "g.dag"
    dag.write_text('label a "Dose \u4e2d"\na -> b\n', encoding="utf-8")
    out = tmp_path / "g.svg"
    run = dagward("render", str(dag), "-o", str(out), "--font", "DejaVu Sans")
    assert run.code == 0
    assert run.err == ("dagward: warning: font `DejaVu Sans` has no glyph for \u4e2d (U+4E2D); "
                       "they may show as empty boxes: choose a family that has them with "
                       "--font\n")  # fmt: skip
    plain = tmp_path / "p.dag"
    plain.write_text('label a "Dose, caf\u00e9"\na -> b\n', encoding="utf-8")
    run = dagward("render", str(plain), "-o", str(out), "--font", "DejaVu Sans")
    assert run.code == 0 and run.err == ""


def test_restriction_is_a_trapezium_and_its_path_is_drawn_open():
    """samples/clinic_sample.dag, analysis clinic_data: the data hold clinic patients
    only, and restricting on them opens cycling -> knee_strain -> clinic_patient <-
    back_pain (by hand: clinic_patient is a common effect of knee_strain and
    back_pain), so those arrows are dotted although nothing adjusted is on them."""
    text = render_text("samples/clinic_sample.dag", "--analysis", "clinic_data", "--format", "dot")
    nodes, edges, _ = read_dot(text)
    assert nodes["clinic_patient"]["shape"] == "trapezium"
    assert "restricted" in nodes["clinic_patient"]["class"]
    assert "shape" not in nodes["in_study"] or nodes["in_study"]["shape"] != "trapezium"
    dotted = {k for k, v in edges.items() if "dotted" in styles(v[0])}
    assert {("knee_strain", "clinic_patient"), ("back_pain", "clinic_patient")} <= dotted
    assert "trapezium: the data are restricted on it" in text
    mmd = render_text("samples/clinic_sample.dag", "--analysis", "clinic_data", "--format", "mmd")
    assert '[/"Treated at a<br/>physiotherapy clinic<br/>(clinic_patient)"\\]' in mmd
    assert "trapezium: the data are restricted on it" in mmd


def test_the_structure_that_prevents_identification_is_drawn_and_keyed(tmp_path):
    """The bow arc (x -> y with x <-> y) is not identified (Pearl 2009, Causality,
    ch. 3, from memory): its hedge is drawn in its own colour, named in the key;
    with the confounding measured instead, nothing is marked."""
    from dagward.render import HEDGE_COLOR, picture, to_dot, to_mermaid

    def pic(text):
        diagram, _ = parse_source(text.encode(), "bow.dag")
        return picture(diagram, diagram.analyses[0])

    block = "analysis {\n  exposure: x\n  outcome: y\n}\n"
    bow = pic("z -> x -> y\nx <-> y\n" + block)
    assert {n.name for n in bow.nodes if n.hedge} == {"x", "y"}
    assert [(e.source, e.target) for e in bow.edges if e.hedge] == [("x", "y")]
    dot = to_dot(bow)
    assert f'color="{HEDGE_COLOR}"' in dot and "a hedge" in dot
    assert f"classDef hedge stroke:{HEDGE_COLOR}" in to_mermaid(bow)
    measured = pic("z -> x -> y\nc -> x, y\n" + block)
    assert not any(n.hedge for n in measured.nodes) and "hedge" not in to_dot(measured)
