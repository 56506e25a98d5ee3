"""Pictures of a diagram: Graphviz DOT, Mermaid, and SVG, PNG, PDF or EPS through `dot`.

The visual scheme (ours; it works in black and white, on paper and for readers
who do not tell colours apart -- only one shade of grey is used):

| what | drawn as |
| --- | --- |
| ordinary measured variable | rounded box, thin solid outline |
| exposure | hexagon with a thick outline |
| outcome | square-cornered box with a double outline |
| unmeasured variable | dashed outline |
| adjusted variable (in the analysis's `adjust:`) | light grey fill |
| variable the data are restricted on (`restricted:`) | trapezium outline |
| arrow | thin solid line |
| arrow on a causal path from exposure to outcome | thick solid line |
| arrow on an open non-causal path (given `adjust:`) | dotted line |
| arrow on both kinds of path | thick dotted line |
| `a <-> b` (hidden common cause) | dashed line with a head at both ends; no node |
| `a <-> b` on an open non-causal path | dotted line with a head at both ends |
| arrow new or reversed in a `diff` picture (Mermaid) | thick orange line (the one colour) |
| variable or `a <-> b` in the structure that prevents identification (`identify`'s hedge) | dark red outline or line |
| label | the `label` text, wrapped, with the variable's name in small type beneath |
| periods | columns left to right in file order, thin solid grey bands headed by name |

Thickness says "causal", the dot pattern says "open non-causal", so the two
channels combine without ambiguity. A caption under the picture (a key node in
Mermaid) repeats the key for the features present, in the words of this table;
`RenderOptions.caption=False` leaves it out (a journal wants the key in the
figure legend). Period bands have a solid outline so they are never taken for
the dashed outline of an unmeasured variable; for drawn formats they are made
equal columns whose titles stand above every line (`layout_for_drawing`).

Open non-causal paths: for diagrams of up to `ENUMERATE_MAX_VARIABLES`
variables the proper paths from exposure to outcome are listed (at most
`PATH_LIMIT`, by `dagward.causal.enumerate_paths`) and each is classified with
`describe_path`. When the listing is cut, or the diagram is larger, witness
paths are added: `open_noncausal_path` is asked repeatedly, each time with the
last arrow of the previous witness removed (removing arrows never opens a path,
so every witness is open in the full diagram too, and each is checked again).
`Picture.paths_complete` says whether every open non-causal path is drawn.
Nothing here is used by `check`.
"""

from __future__ import annotations

import shutil
import subprocess
import textwrap
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from .errors import UsageProblem
from .model import Analysis, Diagram

PATH_LIMIT = 5000
ENUMERATE_MAX_VARIABLES = 300
WITNESS_ROUNDS = 50
LABEL_WIDTH = 22  # characters per line of a label: keeps boxes narrow and legible
# A hexagon grows in width about twice as fast as its text: the exposure's label
# is wrapped narrower so a long label does not make the exposure dominate.
EXPOSURE_LABEL_WIDTH = 18
ADJUSTED_FILL = "#d4d4d4"
BAND_COLOR = "#8c8c8c"  # period bands: thin, solid, mid grey (unmeasured is dashed black)
DEFAULT_FONT = "Helvetica"
DEFAULT_DPI = 144  # sharp enough for slides and reviews; journals often ask for 300-600
# what prevents identification (`identify`'s hedge): one dark red, never used otherwise
HEDGE_COLOR = "#a61e4d"
HIGHLIGHT = "#e8590c"  # the one colour: arrows a caller marks (`diff`: changed arrows)

INSTALL_GRAPHVIZ = (
    "Graphviz's `dot` program is needed for .svg, .png, .pdf and .eps but was not found on "
    "PATH; "
    "install Graphviz (Debian/Ubuntu: sudo apt-get install graphviz; macOS: brew install "
    "graphviz; conda: conda install -c conda-forge graphviz; Windows: winget install "
    "graphviz), or write .dot or .mmd, which need nothing"
)

FORMATS = ("dot", "mmd", "svg", "png", "pdf", "eps")
GRAPHVIZ_FORMATS = ("svg", "png", "pdf", "eps")  # drawn by Graphviz's `dot`
BINARY_FORMATS = ("png", "pdf", "eps")  # never printed to a terminal


@dataclass(frozen=True)
class RenderOptions:
    """How a picture is drawn, beyond what the diagram says."""

    caption: bool = True  # the title and key under the picture
    font: str = DEFAULT_FONT  # a font family name that fontconfig (or the viewer) resolves
    dpi: int = DEFAULT_DPI  # PNG only


@dataclass(frozen=True)
class NodeStyle:
    name: str
    label: str | None
    exposure: bool = False
    outcome: bool = False
    unmeasured: bool = False
    adjusted: bool = False
    restricted: bool = False
    hedge: bool = False  # in the structure that prevents identification (`identify`)

    @property
    def classes(self) -> tuple[str, ...]:
        kinds = ("exposure", "outcome", "unmeasured", "adjusted", "restricted", "hedge")
        return tuple(k for k in kinds if getattr(self, k))


@dataclass(frozen=True)
class EdgeStyle:
    source: str
    target: str
    bidirected: bool = False
    causal: bool = False  # on a proper causal path from the exposure to the outcome
    open_noncausal: bool = False  # on a proper non-causal path open given `adjust:`
    highlighted: bool = False  # marked by the caller (`diff`: new or reversed arrows)
    hedge: bool = False  # a `<->` of the structure that prevents identification

    @property
    def classes(self) -> tuple[str, ...]:
        out = ["bidirected" if self.bidirected else "arrow"]
        if self.hedge:
            out.append("hedge")
        if self.causal:
            out.append("causal")
        if self.open_noncausal:
            out.append("open-noncausal")
        if self.highlighted:
            out.append("highlighted")
        return tuple(out)


@dataclass(frozen=True)
class Picture:
    """Everything a drawing shows, independent of the output format."""

    title: str | None
    analysis: str | None
    nodes: tuple[NodeStyle, ...]
    edges: tuple[EdgeStyle, ...]
    periods: tuple[tuple[str, tuple[str, ...]], ...]
    open_paths: tuple[tuple[str, ...], ...]  # variable names; hidden parents as "<->"
    paths_complete: bool


def choose_analysis(diagram: Diagram, name: str | None) -> tuple[Analysis | None, str | None]:
    """The analysis to draw and a note for the user when the choice was implicit.

    With no name: the only analysis, or the first of several (the note says so).
    """
    if name is not None:
        try:
            return diagram.analysis(name), None
        except KeyError as e:
            raise UsageProblem(str(e.args[0])) from None
    analyses = diagram.analyses
    if not analyses:
        return None, None
    if len(analyses) > 1:
        others = ", ".join(a.name for a in analyses[1:])
        return analyses[0], (
            f"drawing analysis `{analyses[0].name}`, the first of {len(analyses)} "
            f"(choose another with --analysis: {others})"
        )
    return analyses[0], None


def picture(
    diagram: Diagram,
    analysis: Analysis | None,
    highlight: frozenset[tuple[str, str, str]] = frozenset(),
) -> Picture:
    """Work out the style of every variable and arrow for one analysis (or none);
    arrows whose `model.arrow_key` is in `highlight` are marked `highlighted`."""
    X = analysis.exposure_set if analysis else frozenset()
    Y = analysis.outcome_set if analysis else frozenset()
    Z = (analysis.adjust_set or frozenset()) if analysis else frozenset()
    R = analysis.restricted_set if analysis else frozenset()
    causal_edges: set[tuple[str, str]] = set()
    open_directed: set[tuple[str, str]] = set()
    open_bidirected: set[frozenset[str]] = set()
    open_paths: list[tuple[str, ...]] = []
    complete = True
    if analysis is not None and X and Y:
        from .causal import proper_causal_nodes

        G = diagram.graph
        cn = proper_causal_nodes(G, X, Y)
        for u, v in diagram.directed_graph_without_hidden.edges:
            if (u in X or u in cn) and v in cn:
                causal_edges.add((u, v))
        # the data are conditioned on the restriction too (a restriction on an
        # exposure or an outcome is the design and is left out)
        paths, complete = _open_noncausal_paths(diagram, X, Y, Z | (R - X - Y))
        for path in paths:
            open_paths.append(_display_path(diagram, path))
            for u, v in zip(path, path[1:], strict=False):
                if _hidden(diagram, u) or _hidden(diagram, v):
                    continue
                open_directed.add((u, v) if G.has_edge(u, v) else (v, u))
            for i in range(1, len(path) - 1):
                if _hidden(diagram, path[i]):
                    open_bidirected.add(frozenset((path[i - 1], path[i + 1])))
    hedge_nodes, hedge_arcs = _hedge(diagram, analysis)
    labels = diagram.labels
    nodes = tuple(
        NodeStyle(
            name=v,
            label=labels.get(v),
            exposure=v in X,
            outcome=v in Y,
            unmeasured=v in diagram.unmeasured,
            adjusted=v in Z,
            restricted=v in R,
            hedge=v in hedge_nodes,
        )
        for v in diagram.variables
    )
    edges: list[EdgeStyle] = []
    seen: set[tuple] = set()
    for arrow in diagram.arrows:
        a, b = arrow.source_text, arrow.target_text
        if arrow.bidirected:
            key: tuple = ("<->", *sorted((a, b)))
            if key in seen:
                continue
            seen.add(key)
            edges.append(
                EdgeStyle(
                    a,
                    b,
                    bidirected=True,
                    open_noncausal=frozenset((a, b)) in open_bidirected,
                    highlighted=arrow.key in highlight,
                    hedge=frozenset((a, b)) in hedge_arcs,
                )
            )
        else:
            key = ("->", a, b)
            if key in seen:
                continue
            seen.add(key)
            edges.append(
                EdgeStyle(
                    a,
                    b,
                    causal=(a, b) in causal_edges,
                    open_noncausal=(a, b) in open_directed,
                    highlighted=arrow.key in highlight,
                )
            )
    periods = tuple(
        (head.text, tuple(dict.fromkeys(n.text for n in members)))
        for head, members in diagram.periods
    )
    return Picture(
        title=diagram.title,
        analysis=analysis.name if analysis else None,
        nodes=nodes,
        edges=tuple(edges),
        periods=periods,
        open_paths=tuple(open_paths),
        paths_complete=complete,
    )


def _hedge(diagram: Diagram, analysis: Analysis | None):
    """The variables and `<->` pairs of the structure that prevents identification
    (the hedge of the identification algorithm), read from the verdict; empty when
    the effect is identified or no analysis is drawn."""
    if analysis is None or not analysis.exposure_set or not analysis.outcome_set:
        return frozenset(), frozenset()
    from .verdict import verdict_of

    verdict = verdict_of(diagram, analysis)
    if verdict.route != "not-identified" or verdict.identification.hedge is None:
        return frozenset(), frozenset()
    hedge = verdict.identification.hedge
    nodes = frozenset(hedge.outer) | frozenset(hedge.unmeasured)
    arcs = frozenset(frozenset(pair) for pair in hedge.arcs)
    return nodes, arcs


def _hidden(diagram: Diagram, node: str) -> bool:
    return bool(diagram.graph.nodes[node].get("hidden", False))


def _display_path(diagram: Diagram, path: list[str]) -> tuple[str, ...]:
    return tuple("<->" if _hidden(diagram, v) else v for v in path)


def _open_noncausal_paths(
    diagram: Diagram, X: frozenset[str], Y: frozenset[str], Z: frozenset[str]
) -> tuple[list[list[str]], bool]:
    """Proper non-causal paths from X to Y open given Z, and whether that is all of them."""
    from .causal import describe_path, enumerate_paths, open_noncausal_path

    G = diagram.graph
    found: dict[tuple[str, ...], list[str]] = {}

    def keep(path: list[str]) -> None:
        info = describe_path(G, path, X, Z)
        if info.open and not info.causal:
            found.setdefault(tuple(path), path)

    complete = False
    if len(diagram.variables) <= ENUMERATE_MAX_VARIABLES:
        paths, cut = enumerate_paths(G, X, Y, PATH_LIMIT)
        for path in paths:
            keep(path)
        complete = not cut
    if not complete:
        # Repeated witnesses: drop the last arrow of each one found, ask again.
        H = G.copy()
        for _ in range(WITNESS_ROUNDS):
            witness = open_noncausal_path(H, X, Y, Z)
            if not witness:
                break
            keep(witness)
            u, v = witness[-2], witness[-1]
            if H.has_edge(u, v):
                H.remove_edge(u, v)
            else:
                H.remove_edge(v, u)
    return list(found.values()), complete


# --- Graphviz DOT ------------------------------------------------------------------


def _dot_id(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _html(text: str) -> str:
    return (
        text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;").replace('"', "&quot;")
    )


def _wrap(text: str, width: int = LABEL_WIDTH) -> list[str]:
    # A single word longer than the width is cut too (break_long_words): an
    # unbroken 60-character label must not stretch its shape across the page.
    return textwrap.wrap(text, width, break_long_words=True, break_on_hyphens=True) or [text]


def _dot_node(node: NodeStyle) -> str:
    attrs: list[str] = []
    width = EXPOSURE_LABEL_WIDTH if node.exposure else LABEL_WIDTH
    if node.label:
        lines = "<BR/>".join(_html(line) for line in _wrap(node.label, width))
        attrs.append(f'label=<{lines}<BR/><FONT POINT-SIZE="9">{_html(node.name)}</FONT>>')
    style = []
    if node.exposure:
        attrs += ["shape=hexagon", "penwidth=2.5", 'margin="0.02,0.04"']
    elif node.outcome:
        attrs += ["shape=box", "peripheries=2", "penwidth=1.4"]
    elif node.restricted:
        attrs += ["shape=trapezium", "penwidth=1.4"]
    else:
        style.append("rounded")
    if node.unmeasured:
        style.append("dashed")
    if node.adjusted:
        style.append("filled")
        attrs.append(f'fillcolor="{ADJUSTED_FILL}"')
    attrs.append(f'style="{",".join(style)}"')
    if node.hedge:
        attrs += [f'color="{HEDGE_COLOR}"', "penwidth=2.5"]
    if node.classes:
        attrs.append(f'class="{" ".join(node.classes)}"')
    return f"  {_dot_id(node.name)} [{', '.join(attrs)}];"


def _dot_edge(edge: EdgeStyle) -> str:
    attrs: list[str] = []
    if edge.bidirected:
        # constraint=false: a hidden common cause says nothing about time order
        attrs += ["dir=both", "constraint=false"]
        attrs.append(f'style="{"dotted" if edge.open_noncausal else "dashed"}"')
        attrs.append("penwidth=2" if edge.open_noncausal else "penwidth=1.2")
    else:
        if edge.open_noncausal:
            attrs.append('style="dotted"')
        attrs.append("penwidth=3.2" if edge.causal else "penwidth=2" if edge.open_noncausal
                     else "penwidth=1.1")  # fmt: skip
    if edge.hedge:
        attrs.append(f'color="{HEDGE_COLOR}"')
    attrs.append(f'class="{" ".join(edge.classes)}"')
    return f"  {_dot_id(edge.source)} -> {_dot_id(edge.target)} [{', '.join(attrs)}];"


def caption_head(pic: Picture) -> str:
    """The title line: the diagram's title and the analysis drawn."""
    head = pic.title or ""
    if pic.analysis:
        head = f"{head} (analysis {pic.analysis})" if head else f"analysis {pic.analysis}"
    return head


def key_items(pic: Picture) -> tuple[list[str], list[str]]:
    """The key to what the picture shows: (shapes and fills, lines), in drawing order.

    Each entry names the style exactly as `_dot_node`, `_dot_edge` and
    `to_mermaid` draw it (tests/test_render.py checks the two against each other).
    """
    roles = []
    if any(n.exposure for n in pic.nodes):
        roles.append("hexagon: exposure")
    if any(n.outcome for n in pic.nodes):
        roles.append("double box: outcome")
    if any(n.adjusted for n in pic.nodes):
        roles.append("grey: adjusted")
    if any(n.restricted and not n.exposure and not n.outcome for n in pic.nodes):
        roles.append("trapezium: the data are restricted on it")
    if any(n.unmeasured for n in pic.nodes):
        roles.append("dashed outline: unmeasured")
    if any(n.hedge for n in pic.nodes):
        roles.append("dark red outline: what prevents identifying the effect (a hedge)")
    lines_key = []
    if any(e.causal for e in pic.edges):
        lines_key.append("thick: causal path")
    if any(e.open_noncausal for e in pic.edges):
        cut = "" if pic.paths_complete else " (some shown)"
        lines_key.append(f"dotted: open non-causal path{cut}")
    if any(e.bidirected and not e.open_noncausal for e in pic.edges):
        lines_key.append("dashed, two heads: hidden common cause")
    if any(e.bidirected and e.open_noncausal for e in pic.edges):
        lines_key.append("dotted, two heads: hidden common cause on an open non-causal path")
    if any(e.hedge for e in pic.edges):
        lines_key.append("dark red, two heads: a hidden common cause in that structure")
    return roles, lines_key


def caption(pic: Picture) -> list[str]:
    """The title line and the key to the features the picture shows."""
    roles, lines_key = key_items(pic)
    return [line for line in (caption_head(pic), "; ".join(roles), "; ".join(lines_key)) if line]


def to_dot(pic: Picture, options: RenderOptions = RenderOptions()) -> str:
    """Graphviz DOT text: periods are ranks from left to right (rankdir=LR).

    For drawing, `layout_for_drawing` turns the bands into equal columns.
    """
    out = [f"digraph {_dot_id(pic.title or 'diagram')} {{"]
    font = _dot_id(options.font)
    label = ""
    if options.caption:
        cap = "\\n".join(line.replace("\\", "\\\\").replace('"', '\\"') for line in caption(pic))
        label = f', labelloc=b, label="{cap}"'
    out.append(
        f"  graph [rankdir=LR, newrank=true, nodesep=0.3, ranksep=0.7, fontname={font}, "
        f"fontsize=11{label}];"
    )
    out.append(f'  node [shape=box, fontname={font}, fontsize=11, margin="0.12,0.06"];')
    out.append(f"  edge [arrowsize=0.8, fontname={font}];")
    inner = {(e.source, e.target) for e in pic.edges if not e.bidirected}
    for i, (period, members) in enumerate(pic.periods, start=1):
        # A period is a labelled band; its variables share one rank unless an
        # arrow joins two of them (then that arrow runs left to right inside it).
        member_set = set(members)
        flat = not any(a in member_set and b in member_set for a, b in inner)
        ids = " ".join(f"{_dot_id(m)};" for m in members)
        same = " rank=same;" if flat else ""
        out.append(
            f"  subgraph {_dot_id(f'cluster_period_{i}')} {{ label=<<B>{_html(period)}</B>>; "
            f'labelloc=t; style="rounded"; color="{BAND_COLOR}"; penwidth=0.8; margin=12; '
            f'class="period";{same} {ids} }}'
        )
    for i, ((_, before), (_, after)) in enumerate(
        zip(pic.periods, pic.periods[1:], strict=False), start=1
    ):
        # An invisible, weightless gate between consecutive periods: every
        # variable of the earlier period lies left of it, every one of the
        # later period at or right of it, so the periods read left to right.
        gate = _dot_id(f"#gate {i}")
        out.append(f'  {gate} [shape=point, style=invis, width=0, height=0, label=""];')
        for m in before:
            out.append(f"  {_dot_id(m)} -> {gate} [style=invis, weight=0];")
        for m in after:
            out.append(f"  {gate} -> {_dot_id(m)} [style=invis, weight=0, minlen=0];")
    for node in pic.nodes:
        out.append(_dot_node(node))
    for edge in pic.edges:
        out.append(_dot_edge(edge))
    out.append("}")
    return "\n".join(out) + "\n"


# --- Mermaid -----------------------------------------------------------------------


def _mmd_text(text: str) -> str:
    """Text inside a quoted Mermaid label: the characters that Mermaid or HTML would
    read as markup become Mermaid's numeric entity codes (`#60;` is `<`)."""
    codes = {"&": "#38;", '"': "#34;", "<": "#60;", ">": "#62;", "#": "#35;"}
    return "".join(codes.get(ch, ch) for ch in text)


def _yaml_string(text: str) -> str:
    """A YAML double-quoted scalar holding `text` exactly (for the front-matter title)."""
    escaped = text.replace("\\", "\\\\").replace('"', '\\"')
    return '"' + "".join(ch if ch >= " " else f"\\x{ord(ch):02x}" for ch in escaped) + '"'


def to_mermaid(pic: Picture, options: RenderOptions = RenderOptions()) -> str:
    """A Mermaid flowchart (left to right); periods become labelled subgraphs.

    The key is a node of its own (`key`), so it shows in the rendered chart.
    """
    ids = {node.name: f"v{i}" for i, node in enumerate(pic.nodes)}
    out: list[str] = []
    if pic.title:
        out += ["---", f"title: {_yaml_string(pic.title)}", "---"]
    out.append("flowchart LR")

    def node_line(node: NodeStyle) -> str:
        text = text_name = _mmd_text(node.name)
        if node.label:
            width = EXPOSURE_LABEL_WIDTH if node.exposure else LABEL_WIDTH
            text = "<br/>".join(_mmd_text(x) for x in _wrap(node.label, width))
            text += f"<br/>({text_name})"
        if node.exposure:
            shape = '{{"%s"}}'
        elif node.outcome:
            shape = '[["%s"]]'
        elif node.restricted:
            shape = '[/"%s"\\]'
        else:
            shape = '("%s")'
        return f"  {ids[node.name]}{shape % text}"

    in_period: set[str] = set()
    by_name = {n.name: n for n in pic.nodes}
    for i, (period, members) in enumerate(pic.periods, start=1):
        out.append(f'  subgraph p{i}["{_mmd_text(period)}"]')
        for m in members:
            out.append("  " + node_line(by_name[m]))
            in_period.add(m)
        out.append("  end")
    for node in pic.nodes:
        if node.name not in in_period:
            out.append(node_line(node))
    styles: list[str] = []
    for index, edge in enumerate(pic.edges):
        a, b = ids[edge.source], ids[edge.target]
        if edge.highlighted and not edge.bidirected:
            # a thick link in the highlight colour, whatever else it is
            out.append(f"  {a} ==> {b}")
            styles.append(f"  linkStyle {index} stroke:{HIGHLIGHT},stroke-width:4px")
        elif edge.bidirected:
            # a `<->` keeps its two heads and its dash pattern (as the key says),
            # thick and in the highlight colour when marked
            out.append(f"  {a} <-.-> {b}")
            dash = "2 4" if edge.open_noncausal else "7 4"
            if edge.highlighted:
                styles.append(
                    f"  linkStyle {index} stroke:{HIGHLIGHT},stroke-width:4px,stroke-dasharray:{dash}"
                )
                continue
            width = "2px" if edge.open_noncausal else "1.5px"
            colour = f"stroke:{HEDGE_COLOR}," if edge.hedge else ""
            styles.append(
                f"  linkStyle {index} {colour}stroke-dasharray:{dash},stroke-width:{width}"
            )
        elif edge.open_noncausal:
            out.append(f"  {a} -.-> {b}")
            width = "4px" if edge.causal else "2px"
            styles.append(f"  linkStyle {index} stroke-dasharray:2 4,stroke-width:{width}")
        elif edge.causal:
            out.append(f"  {a} ==> {b}")
            styles.append(f"  linkStyle {index} stroke-width:4px")
        else:
            out.append(f"  {a} --> {b}")
    key_lines = [item for part in key_items(pic) for item in part] if options.caption else []
    if key_lines:
        # An unlinked node drawn like a note: the key, visible in the chart.
        text = "<br/>".join(_mmd_text(line) for line in ["Key", *key_lines])
        out.append(f'  key["{text}"]')
    out += styles
    if key_lines:
        out.append("  classDef key fill:#ffffff,stroke:#8c8c8c,text-align:left")
        out.append("  class key key")
    out.append("  classDef exposure stroke-width:3px")
    out.append("  classDef outcome stroke-width:3px")
    out.append("  classDef unmeasured stroke-dasharray:6 4")
    out.append(f"  classDef adjusted fill:{ADJUSTED_FILL}")
    if any(n.hedge for n in pic.nodes):
        out.append(f"  classDef hedge stroke:{HEDGE_COLOR},stroke-width:3px")
    for kind in ("exposure", "outcome", "unmeasured", "adjusted", "hedge"):
        members = [ids[n.name] for n in pic.nodes if getattr(n, kind)]
        if members:
            out.append(f"  class {','.join(members)} {kind}")
    return "\n".join(out) + "\n"


# --- Graphviz programs ---------------------------------------------------------------


class GraphvizMissing(UsageProblem):
    """`dot` is not on PATH."""


def run_graphviz(
    dot_text: str, fmt: str, dpi: int = DEFAULT_DPI, layout_options: Sequence[str] = ()
) -> bytes:
    """SVG, PNG, PDF or EPS bytes from DOT text via Graphviz's `dot` program."""
    if fmt not in GRAPHVIZ_FORMATS:
        raise ValueError(fmt)
    options = [*layout_options, f"-T{fmt}"] + ([f"-Gdpi={dpi}"] if fmt == "png" else [])
    data = _graphviz_bytes(dot_text, options)
    _check_magic(data, fmt)
    return data


def _graphviz_bytes(dot_text: str, options: list[str]) -> bytes:
    program = shutil.which("dot")
    if program is None:
        raise GraphvizMissing(INSTALL_GRAPHVIZ)
    try:
        proc = subprocess.run(
            [program, *options], input=dot_text.encode("utf-8"), capture_output=True, timeout=300
        )
    except OSError as e:
        raise UsageProblem(f"cannot run Graphviz `dot` ({program}): {e.strerror or e}") from None
    except subprocess.TimeoutExpired:
        raise UsageProblem("Graphviz `dot` took more than 300 seconds; try .dot or .mmd") from None
    if proc.returncode != 0 or not proc.stdout:
        message = proc.stderr.decode("utf-8", "replace").strip().splitlines()
        first = message[0] if message else f"exit status {proc.returncode}"
        raise UsageProblem(f"Graphviz `dot` failed: {first}")
    return proc.stdout


# The first bytes of each binary format: a file is only written when it is what
# its name says (a Graphviz built without a renderer may print something else).
MAGIC = {"png": b"\x89PNG\r\n\x1a\n", "pdf": b"%PDF-", "eps": b"%!PS-Adobe-"}


def _check_magic(data: bytes, fmt: str) -> None:
    magic = MAGIC.get(fmt)
    if fmt == "svg":
        ok = b"<svg" in data[:4096]
    else:
        ok = magic is not None and data.startswith(magic)
    if not ok:
        raise UsageProblem(
            f"Graphviz `dot` did not produce {fmt.upper()} (this Graphviz may lack the "
            f"renderer for -T{fmt}); try .svg, .dot or .mmd"
        )


def _bezier_points(points: list[list[float]], steps: int = 24):
    """Points along the cubic Bezier pieces of a Graphviz spline (common practice)."""
    for i in range(0, len(points) - 3, 3):
        (x0, y0), (x1, y1), (x2, y2), (x3, y3) = points[i : i + 4]
        for k in range(steps + 1):
            t = k / steps
            u = 1 - t
            yield (
                u**3 * x0 + 3 * u * u * t * x1 + 3 * u * t * t * x2 + t**3 * x3,
                u**3 * y0 + 3 * u * u * t * y1 + 3 * u * t * t * y2 + t**3 * y3,
            )


def band_title_crossings(layout: dict) -> dict[int, int]:
    """For each period band of a Graphviz JSON layout: how many sampled points of
    drawn lines fall inside its title's box (tests use it; 0 is the aim)."""
    boxes: dict[int, tuple[float, float, float, float]] = {}
    for obj in layout.get("objects", []):
        name = obj.get("name", "")
        if not name.startswith("cluster_period_") or "lp" not in obj:
            continue
        x, y = map(float, obj["lp"].split(","))
        half_w = float(obj.get("lwidth", 0)) * 72 / 2 + 2
        half_h = float(obj.get("lheight", 0)) * 72 / 2 + 1
        boxes[int(name.rsplit("_", 1)[1])] = (x - half_w, x + half_w, y - half_h, y + half_h)
    hits = dict.fromkeys(boxes, 0)
    for px, py in _line_points(layout):
        for i, (bx0, bx1, by0, by1) in boxes.items():
            if bx0 <= px <= bx1 and by0 <= py <= by1:
                hits[i] += 1
    return hits


def _line_points(layout: dict):
    for edge in layout.get("edges", []):
        if "invis" in edge.get("style", ""):
            continue
        for op in edge.get("_draw_", []) + edge.get("_hdraw_", []) + edge.get("_tdraw_", []):
            if op.get("op") in ("b", "B"):
                yield from _bezier_points(op["points"])
            elif op.get("op") in ("p", "P", "L"):
                yield from (tuple(p) for p in op["points"])


BAND_TITLE_GAP = 6.0  # points between the highest line or shape and a band's title


def align_bands(laid_out: str, layout: dict) -> str | None:
    """Equal period bands, titles above every line: edits Graphviz's own layout.

    `laid_out` is `dot -Tdot` output (positions included), `layout` the same as
    JSON. Every band gets the same top and bottom (the extremes of all bands),
    and the top is raised above the highest node, line or arrowhead of the
    whole picture, so the titles sit on one line that nothing crosses. Nodes
    and lines keep their places; `neato -n2` draws the result as it is.
    None when the layout has no bands to align.
    """
    import re

    bands = [o for o in layout.get("objects", [])
             if o.get("name", "").startswith("cluster_period_") and "bb" in o]  # fmt: skip
    if not bands:
        return None
    tops = [float(o["bb"].split(",")[3]) for o in bands]
    bottom = min(float(o["bb"].split(",")[1]) for o in bands)
    for obj in layout.get("objects", []):
        if "pos" in obj and "height" in obj and not obj.get("style") == "invis":
            tops.append(float(obj["pos"].split(",")[1]) + float(obj["height"]) * 72 / 2)
    tops += [y for _, y in _line_points(layout)]
    title_h = max(float(o.get("lheight", 0)) * 72 for o in bands)
    title_y = max(tops) + BAND_TITLE_GAP + title_h / 2
    band_top = title_y + title_h / 2 + BAND_TITLE_GAP

    def band(match: re.Match) -> str:
        body = match.group(2)
        x0, _, x1, _ = body.split('bb="', 1)[1].split('"', 1)[0].split(",")
        body = re.sub(r'bb="[^"]*"', f'bb="{x0},{bottom:.2f},{x1},{band_top:.2f}"', body, count=1)
        body = re.sub(r'lp="([^,"]*),[^"]*"', rf'lp="\1,{title_y:.2f}"', body, count=1)
        return match.group(1) + body + match.group(3)

    text, count = re.subn(
        r"(subgraph cluster_period_\d+ \{\s*graph \[)(.*?)(\];)", band, laid_out, flags=re.S
    )
    if count != len(bands):
        return None

    def whole(match: re.Match) -> str:
        x0, y0, x1, y1 = (float(v) for v in match.group(1).split(","))
        return f'bb="{x0},{y0},{x1},{max(y1, band_top + 8):.2f}"'

    return re.sub(r'bb="([^"]*)"', whole, text, count=1)


def layout_for_drawing(
    pic: Picture, options: RenderOptions = RenderOptions()
) -> tuple[str, list[str]]:
    """The DOT text that Graphviz draws for .svg, .png, .pdf and .eps, and the
    layout options to draw it with (the bands come already laid out)."""
    import json

    dot_text = to_dot(pic, options)
    if not pic.periods:
        return dot_text, []
    try:
        laid_out = _graphviz_bytes(dot_text, ["-Tdot"]).decode("utf-8")
        layout = json.loads(_graphviz_bytes(laid_out, [*PRESET_LAYOUT, "-Tjson"]))
    except (UsageProblem, ValueError, UnicodeDecodeError):
        return dot_text, []
    aligned = align_bands(laid_out, layout)
    return (aligned, list(PRESET_LAYOUT)) if aligned else (dot_text, [])


# Draw the positions already in the DOT text (neato's -n2), laying out nothing.
PRESET_LAYOUT = ("-Kneato", "-n2")


def render(
    diagram: Diagram,
    analysis: Analysis | None,
    fmt: str,
    options: RenderOptions = RenderOptions(),
) -> bytes:
    """The picture in one of FORMATS, as bytes ready to write."""
    pic = picture(diagram, analysis)
    if fmt == "mmd":
        return to_mermaid(pic, options).encode("utf-8")
    if fmt == "dot":  # needs no Graphviz: the titles stay centred
        return to_dot(pic, options).encode("utf-8")
    dot_text, layout_options = layout_for_drawing(pic, options)
    return run_graphviz(dot_text, fmt, options.dpi, layout_options)


def _fc_match(family: str) -> tuple[str, str] | None:
    """(the family fontconfig picks for `family`, its character set), or None
    when fontconfig's `fc-match` is not available."""
    program = shutil.which("fc-match")
    if program is None:
        return None
    try:
        proc = subprocess.run(
            [program, "-f", "%{family}\\n%{charset}\\n", family], capture_output=True, timeout=30
        )
    except (OSError, subprocess.TimeoutExpired):
        return None
    lines = proc.stdout.decode("utf-8", "replace").splitlines()
    if proc.returncode != 0 or len(lines) < 2:
        return None
    return lines[0], lines[1]


def font_installed(family: str) -> bool | None:
    """Whether fontconfig has the family itself, not a substitute (None: cannot tell)."""
    found = _fc_match(family)
    if found is None:
        return None
    names = {n.strip().casefold() for n in found[0].split(",")}
    return family.strip().casefold() in names


def missing_glyphs(family: str, text: str) -> tuple[str, list[str]] | None:
    """(the family fontconfig uses for `family`, the characters of `text` it has no
    glyph for), read from fontconfig's character set; None when it cannot tell."""
    found = _fc_match(family)
    if found is None:
        return None
    ranges = []
    for part in found[1].split():
        low, _, high = part.partition("-")
        try:
            ranges.append((int(low, 16), int(high or low, 16)))
        except ValueError:
            return None
    wanted = sorted({ch for ch in text if not ch.isspace()})
    missing = [ch for ch in wanted if not any(lo <= ord(ch) <= hi for lo, hi in ranges)]
    return found[0].split(",")[0], missing


def diagram_text(diagram: Diagram) -> str:
    """Every text of the user's that a picture may show: names, labels, period names
    and the title (the key's own words are ASCII)."""
    parts = [*diagram.variables, *diagram.labels.values(), *(h.text for h, _ in diagram.periods)]
    return "\n".join([*parts, diagram.title or ""])


def format_from_path(path: str, choices: Iterable[str] = FORMATS) -> str | None:
    suffix = path.rsplit(".", 1)[-1].lower() if "." in path else ""
    return suffix if suffix in choices else None
