"""Graph conventions and basic reachability for causal diagrams.

A diagram is a ``networkx.DiGraph`` whose nodes are variable names.  Every
bidirected edge ``A <-> B`` is represented by a hidden node named
``hidden_node_name(A, B)`` with attribute ``hidden=True`` and arrows into A
and B (the usual latent-projection reading of a bidirected edge).

All walks are iterative, because diagrams may hold 100,000 variables, and
run over the integer index of dagward.causal.indexed.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx


HIDDEN_PREFIX = "<-> "


def hidden_node_name(a: str, b: str) -> str:
    """Name of the hidden common parent that stands for ``a <-> b``."""
    return f"{HIDDEN_PREFIX}{a} {b}"


def is_hidden(G: nx.DiGraph, node: str) -> bool:
    """True when ``node`` is a hidden parent made from a ``<->`` edge."""
    return bool(G.nodes[node].get("hidden", False))


def _as_set(G: nx.DiGraph, nodes: Iterable[str] | str) -> set[str]:
    """Normalise a node or an iterable of nodes and check they exist."""
    if isinstance(nodes, str):
        nodes = {nodes}
    result = set(nodes)
    missing = [v for v in result if v not in G._succ]
    if missing:
        raise ValueError(f"not variables of the diagram: {sorted(missing)}")
    return result


def ancestors(G: nx.DiGraph, nodes: Iterable[str] | str) -> set[str]:
    """``nodes`` together with every variable that has a directed path into one of them."""
    return _reachable(G, nodes, upwards=True)


def descendants(G: nx.DiGraph, nodes: Iterable[str] | str) -> set[str]:
    """``nodes`` together with every variable reachable from them along arrows."""
    return _reachable(G, nodes, upwards=False)


def _reachable(G: nx.DiGraph, nodes: Iterable[str] | str, upwards: bool) -> set[str]:
    from .indexed import closure, indexed

    ix = indexed(G)
    found = closure(ix.pred if upwards else ix.succ, ix.ids(_as_set(G, nodes)), bytearray(ix.n))
    names = ix.names
    return {names[i] for i in found}
