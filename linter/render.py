"""Pictures of a diagram: Graphviz DOT, Mermaid, and SVG/PNG through Graphviz's `dot`.

The visual scheme (ours; it works in black and white, on paper and for readers
who do not tell colours apart -- only one shade of grey is used):

| what | drawn as |
| --- | --- |
| ordinary measured variable | rounded box, thin solid outline |
| exposure | hexagon with a thick outline |
| outcome | square-cornered box with a double outline |
| unmeasured variable | dashed outline |
| adjusted variable (in the analysis's `adjust:`) | light grey fill |
| arrow | thin solid line |
| arrow on a causal path from exposure to outcome | thick solid line |
| arrow on an open non-causal path (given `adjust:`) | dotted line |
| arrow on both kinds of path | thick dotted line |
| `a <-> b` (hidden common cause) | dashed line with a head at both ends; no node |
| arrow new or reversed in a `diff` picture (Mermaid) | thick orange line (the one colour) |
| label | the `label` text, with the variable's name in small type beneath |
| periods | columns from left to right in file order, headed by the period's name |

Thickness says "causal", the dot pattern says "open non-causal", so the two
channels combine without ambiguity. A caption under the picture repeats the key
for the features present.

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
from collections.abc import Iterable
from dataclasses import dataclass

from .errors import UsageProblem
from .model import Analysis, Diagram

PATH_LIMIT = 5000
ENUMERATE_MAX_VARIABLES = 300
WITNESS_ROUNDS = 50
LABEL_WIDTH = 22  # characters per line of a label: keeps boxes narrow and legible
ADJUSTED_FILL = "#d4d4d4"
HIGHLIGHT = "#e8590c"  # the one colour: arrows a caller marks (`diff`: changed arrows)

INSTALL_GRAPHVIZ = (
    "Graphviz's `dot` program is needed for .svg and .png but was not found on PATH; "
    "install Graphviz (Debian/Ubuntu: sudo apt-get install graphviz; macOS: brew install "
    "graphviz; conda: conda install -c conda-forge graphviz; Windows: winget install "
    "graphviz), or write .dot or .mmd, which need nothing"
)

FORMATS = ("dot", "mmd", "svg", "png")


@dataclass(frozen=True)
class NodeStyle:
    name: str
    label: str | None
    exposure: bool = False
    outcome: bool = False
    unmeasured: bool = False
    adjusted: bool = False

    @property
    def classes(self) -> tuple[str, ...]:
        kinds = ("exposure", "outcome", "unmeasured", "adjusted")
        return tuple(k for k in kinds if getattr(self, k))


@dataclass(frozen=True)
class EdgeStyle:
    source: str
    target: str
    bidirected: bool = False
    causal: bool = False  # on a proper causal path from the exposure to the outcome
    open_noncausal: bool = False  # on a proper non-causal path open given `adjust:`
    highlighted: bool = False  # marked by the caller (`diff`: new or reversed arrows)

    @property
    def classes(self) -> tuple[str, ...]:
        out = ["bidirected" if self.bidirected else "arrow"]
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
        paths, complete = _open_noncausal_paths(diagram, X, Y, Z)
        for path in paths:
            open_paths.append(_display_path(diagram, path))
            for u, v in zip(path, path[1:], strict=False):
                if _hidden(diagram, u) or _hidden(diagram, v):
                    continue
                open_directed.add((u, v) if G.has_edge(u, v) else (v, u))
            for i in range(1, len(path) - 1):
                if _hidden(diagram, path[i]):
                    open_bidirected.add(frozenset((path[i - 1], path[i + 1])))
    labels = diagram.labels
    nodes = tuple(
        NodeStyle(
            name=v,
            label=labels.get(v),
            exposure=v in X,
            outcome=v in Y,
            unmeasured=v in diagram.unmeasured,
            adjusted=v in Z,
        )
        for v in diagram.variables
    )
    edges: list[EdgeStyle] = []
    seen: set[tuple] = set()
    for arrow in diagram.arrows:
        a, b = arrow.source.text, arrow.target.text
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


def _wrap(text: str) -> list[str]:
    return textwrap.wrap(text, LABEL_WIDTH, break_long_words=False) or [text]


def _dot_node(node: NodeStyle) -> str:
    attrs: list[str] = []
    if node.label:
        lines = "<BR/>".join(_html(line) for line in _wrap(node.label))
        attrs.append(f'label=<{lines}<BR/><FONT POINT-SIZE="9">{_html(node.name)}</FONT>>')
    style = []
    if node.exposure:
        attrs += ["shape=hexagon", "penwidth=2.5"]
    elif node.outcome:
        attrs += ["shape=box", "peripheries=2", "penwidth=1.4"]
    else:
        style.append("rounded")
    if node.unmeasured:
        style.append("dashed")
    if node.adjusted:
        style.append("filled")
        attrs.append(f'fillcolor="{ADJUSTED_FILL}"')
    attrs.append(f'style="{",".join(style)}"')
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
    attrs.append(f'class="{" ".join(edge.classes)}"')
    return f"  {_dot_id(edge.source)} -> {_dot_id(edge.target)} [{', '.join(attrs)}];"


def caption(pic: Picture) -> list[str]:
    """The title line and the key to the features the picture shows."""
    head = pic.title or ""
    if pic.analysis:
        head = f"{head} (analysis {pic.analysis})" if head else f"analysis {pic.analysis}"
    roles = []
    if any(n.exposure for n in pic.nodes):
        roles.append("hexagon: exposure")
    if any(n.outcome for n in pic.nodes):
        roles.append("double box: outcome")
    if any(n.adjusted for n in pic.nodes):
        roles.append("grey: adjusted")
    if any(n.unmeasured for n in pic.nodes):
        roles.append("dashed outline: unmeasured")
    lines_key = []
    if any(e.causal for e in pic.edges):
        lines_key.append("thick: causal path")
    if any(e.open_noncausal for e in pic.edges):
        cut = "" if pic.paths_complete else " (some shown)"
        lines_key.append(f"dotted: open non-causal path{cut}")
    if any(e.bidirected for e in pic.edges):
        lines_key.append("dashed, two heads: hidden common cause")
    return [line for line in (head, "; ".join(roles), "; ".join(lines_key)) if line]


def to_dot(pic: Picture) -> str:
    """Graphviz DOT text: periods are ranks from left to right (rankdir=LR)."""
    out = [f"digraph {_dot_id(pic.title or 'diagram')} {{"]
    cap = "\\n".join(line.replace("\\", "\\\\").replace('"', '\\"') for line in caption(pic))
    out.append(
        f'  graph [rankdir=LR, newrank=true, nodesep=0.3, ranksep=0.7, fontname="Helvetica", '
        f'fontsize=11, labelloc=b, label="{cap}"];'
    )
    out.append('  node [shape=box, fontname="Helvetica", fontsize=11, margin="0.12,0.06"];')
    out.append("  edge [arrowsize=0.8];")
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
            f'labelloc=t; style="dashed,rounded"; color="#9a9a9a"; class="period";{same} {ids} }}'
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
    return text.replace('"', "#quot;").replace("<", "#lt;").replace(">", "#gt;")


def to_mermaid(pic: Picture) -> str:
    """A Mermaid flowchart (left to right); periods become labelled subgraphs."""
    ids = {node.name: f"v{i}" for i, node in enumerate(pic.nodes)}
    out: list[str] = []
    if pic.title:
        out += ["---", f'title: "{pic.title.replace(chr(34), chr(39))}"', "---"]
    out.append("flowchart LR")
    for line in caption(pic)[1:]:
        out.append(f"  %% key: {line}")

    def node_line(node: NodeStyle) -> str:
        text = _mmd_text(node.name)
        if node.label:
            text = "<br/>".join(_mmd_text(x) for x in _wrap(node.label)) + f"<br/>({text})"
        if node.exposure:
            shape = '{{"%s"}}'
        elif node.outcome:
            shape = '[["%s"]]'
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
        if edge.highlighted:
            # a thick link in the highlight colour, whatever else it is
            out.append(f"  {a} {'<==>' if edge.bidirected else '==>'} {b}")
            styles.append(f"  linkStyle {index} stroke:{HIGHLIGHT},stroke-width:4px")
        elif edge.bidirected:
            out.append(f"  {a} <-.-> {b}")
            dash = "2 4" if edge.open_noncausal else "7 4"
            width = "2px" if edge.open_noncausal else "1.5px"
            styles.append(f"  linkStyle {index} stroke-dasharray:{dash},stroke-width:{width}")
        elif edge.open_noncausal:
            out.append(f"  {a} -.-> {b}")
            width = "4px" if edge.causal else "2px"
            styles.append(f"  linkStyle {index} stroke-dasharray:2 4,stroke-width:{width}")
        elif edge.causal:
            out.append(f"  {a} ==> {b}")
            styles.append(f"  linkStyle {index} stroke-width:4px")
        else:
            out.append(f"  {a} --> {b}")
    out += styles
    out.append("  classDef exposure stroke-width:3px")
    out.append("  classDef outcome stroke-width:3px")
    out.append("  classDef unmeasured stroke-dasharray:6 4")
    out.append(f"  classDef adjusted fill:{ADJUSTED_FILL}")
    for kind in ("exposure", "outcome", "unmeasured", "adjusted"):
        members = [ids[n.name] for n in pic.nodes if getattr(n, kind)]
        if members:
            out.append(f"  class {','.join(members)} {kind}")
    return "\n".join(out) + "\n"


# --- Graphviz programs ---------------------------------------------------------------


class GraphvizMissing(UsageProblem):
    """`dot` is not on PATH."""


def run_graphviz(dot_text: str, fmt: str) -> bytes:
    """SVG or PNG bytes from DOT text via Graphviz's `dot` program."""
    if fmt not in ("svg", "png"):
        raise ValueError(fmt)
    program = shutil.which("dot")
    if program is None:
        raise GraphvizMissing(INSTALL_GRAPHVIZ)
    command = [program, f"-T{fmt}"]
    if fmt == "png":
        command.append("-Gdpi=144")  # sharp enough for slides and reviews
    try:
        proc = subprocess.run(
            command, input=dot_text.encode("utf-8"), capture_output=True, timeout=300
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


def render(diagram: Diagram, analysis: Analysis | None, fmt: str) -> bytes:
    """The picture in one of FORMATS, as bytes ready to write."""
    pic = picture(diagram, analysis)
    if fmt == "mmd":
        return to_mermaid(pic).encode("utf-8")
    dot_text = to_dot(pic)
    if fmt == "dot":
        return dot_text.encode("utf-8")
    return run_graphviz(dot_text, fmt)


def format_from_path(path: str, choices: Iterable[str] = FORMATS) -> str | None:
    suffix = path.rsplit(".", 1)[-1].lower() if "." in path else ""
    return suffix if suffix in choices else None
