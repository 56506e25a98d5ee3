"""Minimal separators of many pairs (dagward.causal.separators.PairSeparators),
the search behind `independencies`, against networkx and the definition.

Oracles: networkx.is_d_separator for separation; minimality by dropping each
variable in turn (enough here: the separator lies in An({a, b}), where the sets
that separate are the vertex separators of one moral graph, so a subset of a
non-separator never separates; Lauritzen et al. 1990, from memory); and for
"no separator exists", the fact that if any measured set separates a and b
then the measured variables in An({a, b}) other than a and b do (van der
Zander, Liskiewicz & Textor 2019, "Separators and adjustment sets in causal
graphs", Artificial Intelligence 270:1-40).
"""

from __future__ import annotations

import random

import networkx as nx
from dagward.causal import minimal_separator
from dagward.causal.separators import PairSeparators
from helpers.oracle import random_order_dag


def _case(rng):
    """Invented: 6 to 14 variables in a random order, some of them unmeasured."""
    G = random_order_dag(rng, (6, 15), (0.1, 0.45))
    measured = {v for v in G if rng.random() < 0.75}
    return nx.freeze(G), measured


def test_separators_of_pairs_are_minimal_d_separators_and_exist_when_one_does():
    rng = random.Random(41)
    found = missing = 0
    for _ in range(120):
        G, measured = _case(rng)
        separator = PairSeparators(G, measured)
        names = sorted(measured)
        for i, a in enumerate(names):
            for b in names[i + 1 :]:
                sep = separator(a, b)
                assert sep == minimal_separator(G, a, b, measured)
                if G.has_edge(a, b) or G.has_edge(b, a):
                    assert sep is None
                    continue
                ancestral = (nx.ancestors(G, a) | nx.ancestors(G, b)) & measured
                separable = nx.is_d_separator(G, {a}, {b}, ancestral - {a, b})
                assert (sep is not None) == separable, (a, b, sorted(G.edges))
                if sep is None:
                    missing += 1
                    continue
                found += 1
                assert sep <= measured - {a, b}
                assert nx.is_d_separator(G, {a}, {b}, set(sep))
                for v in sep:
                    assert not nx.is_d_separator(G, {a}, {b}, set(sep) - {v}), (a, b, v)
    assert found > 500 and missing > 20


def test_pairs_of_the_same_or_joined_variables_have_no_separator():
    G = nx.freeze(nx.DiGraph([("a", "b"), ("b", "c")]))
    separator = PairSeparators(G, {"a", "b", "c"})
    assert separator("a", "a") is None
    assert separator("a", "b") is None and separator("b", "a") is None
    assert separator("a", "c") == frozenset({"b"})  # a chain is cut at its middle (common practice)
