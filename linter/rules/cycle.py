"""cycle: the arrows go round in a circle.

A causal diagram must be acyclic: nothing can cause itself through other
variables. Feedback over time is drawn with one variable per time point. One
finding per strongly connected group of variables, at the arrow of the cycle that
comes last in the file, with the other arrows of the cycle as related locations.

Bad::

    stress -> sleep_loss
    sleep_loss -> stress  # expect: cycle

Good::

    stress_week1 -> sleep_loss_week1 -> stress_week2
"""

from __future__ import annotations

from collections import deque
from collections.abc import Iterator

from ..findings import Finding
from ..model import Arrow
from .base import Context, Rule


def _position(arrow: Arrow) -> tuple[int, int]:
    return (arrow.span.line, arrow.span.column)


def check(ctx: Context) -> Iterator[Finding]:
    diagram = ctx.diagram
    # hidden `<->` parents have no incoming arrows, so they are never on a cycle
    graph = diagram.compact_graph  # networkx's graph is built only for a cycle
    suspects = _not_topologically_sortable(graph)
    if not suspects:
        return
    import networkx as nx  # only for a diagram with a cycle (the import costs 15 MB)

    first_statement: dict[tuple[str, str], Arrow] = {}
    for arrow in diagram.arrows:
        if not arrow.bidirected and arrow.source_text != arrow.target_text:
            first_statement.setdefault((arrow.source_text, arrow.target_text), arrow)
    for component in nx.strongly_connected_components(graph.subgraph(suspects)):
        if len(component) < 2:
            continue
        inside = [a for e, a in first_statement.items() if e[0] in component and e[1] in component]
        last = max(inside, key=_position)
        cycle = _shortest_return(graph, component, last.target_text, last.source_text)
        nodes = [last.source_text, *cycle]  # source -> target -> ... -> source
        arrows = [first_statement[(nodes[i], nodes[i + 1])] for i in range(len(nodes) - 1)]
        spelled = " -> ".join(nodes)
        yield ctx.finding(
            RULE,
            last.span,
            f"the arrows form a cycle {spelled}; a diagram must be acyclic: "
            "remove an arrow or split a variable by time",
            path=tuple(nodes),
            related=tuple(
                ctx.related(a.span, f"arrow {a.describe()}") for a in arrows if a is not last
            ),
        )


def _not_topologically_sortable(graph) -> set[str]:
    """The variables Kahn's topological sort cannot remove (Kahn 1962): every cycle
    lies among them. Usually empty, and much cheaper than finding components."""
    from ..causal.indexed import indexed

    ix = indexed(graph)  # on the integer index: no name look-ups
    succ = ix.succ
    indegree = [len(ps) for ps in ix.pred]
    ready = [v for v, d in enumerate(indegree) if d == 0]
    while ready:
        v = ready.pop()
        for w in succ[v]:
            indegree[w] -= 1
            if indegree[w] == 0:
                ready.append(w)
    names = ix.names
    return {names[v] for v, d in enumerate(indegree) if d > 0}


def _shortest_return(graph, component: set, start: str, goal: str) -> list[str]:
    """Shortest directed path start .. goal inside the component (iterative BFS)."""
    parent = {start: None}
    queue = deque([start])
    while queue:
        node = queue.popleft()
        if node == goal:
            break
        for nxt in graph.succ[node]:
            if nxt in component and nxt not in parent:
                parent[nxt] = node
                queue.append(nxt)
    path = [goal]
    while path[-1] != start:
        path.append(parent[path[-1]])
    path.reverse()
    return path


RULE = Rule(
    name="cycle",
    severity="error",
    summary="The arrows contain a directed cycle.",
    scope="structure",
    check=check,
    doc=__doc__,
)
