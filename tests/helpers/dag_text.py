"""Random test graphs written back as `.dag` text (shared by the property tests)."""

from __future__ import annotations

import networkx as nx
from dagward.causal import is_hidden


def to_dag_text(
    G: nx.DiGraph, names, measured, X, Y, Z, effect=None, mediator=(), restricted=()
) -> str:
    """The case as `.dag` text; `effect`, `mediator` and `restricted` add those keys."""
    # one period holding every variable declares the ones without arrows too
    lines = ["period all: " + ", ".join(names)]
    unmeasured = sorted(set(names) - set(measured))
    if unmeasured:
        lines.append("unmeasured " + ", ".join(unmeasured))
    for a, b in sorted(G.edges):
        if not is_hidden(G, a):
            lines.append(f"{a} -> {b}")
    for h in sorted(n for n in G if is_hidden(G, n)):
        a, b = sorted(G.successors(h))
        lines.append(f"{a} <-> {b}")
    lines += [
        "analysis question {",
        "  exposure: " + ", ".join(sorted(X)),
        "  outcome: " + ", ".join(sorted(Y)),
        "  adjust: " + (", ".join(sorted(Z)) if Z else "none"),
    ]
    if effect is not None:
        lines.append(f"  effect: {effect}")
    if mediator:
        lines.append("  mediator: " + ", ".join(sorted(mediator)))
    if restricted:
        lines.append("  restricted: " + ", ".join(sorted(restricted)))
    lines.append("}")
    return "\n".join(lines) + "\n"
