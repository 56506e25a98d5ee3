"""Instruments and conditional instruments for each exposure.

Definition used (after van der Zander, Textor & Liskiewicz 2015,
"Efficiently finding conditional instruments for causal inference", IJCAI;
their conditions from memory, the restrictions marked below are ours).
For an exposure x, outcomes Y and cn = cn({x}, Y) (the variables outside x
on proper causal paths from x to Y, dagward.causal.adjustment), a measured
variable z is an *instrument for x given W*, W a set of measured variables,
when

1. z is not x, not an outcome, not a descendant of x (an instrument comes
   before the exposure: common practice, and the project's rule
   ``instrument-adjusted`` uses the same condition);
2. W contains no exposure, outcome or z, and no descendant of cn (so no
   descendant of an outcome or of a mediator);
3. z and x are d-connected given W in G (z is related to the exposure);
4. z and Y are d-separated given W in G_c, the diagram without the first
   arrow x -> c (c in cn) of every proper causal path: given W, z is
   related to the outcomes only through the exposure.

With W empty, z is an (unconditional) instrument.  W is sought among the
ancestors of x, Y and z (an *ancestral* instrument, the kind van der Zander
et al. search for; a set W that works only by conditioning on a common
effect of z and x outside these ancestors is not sought).

Finding W (the nearest-separator idea of van der Zander et al.): take the
minimal separator of Y and z closest to Y in the moral graph of G_c over
An(Y ∪ z), drawn from the allowed variables, and likewise over
An(x ∪ Y ∪ z); each candidate is then checked against conditions 3 and 4
with the d-separation routines, so every answer is true by construction.
Closest to Y leaves z the largest possible part of the graph on its side
of the separator, which is what keeps it connected to x.  That these two
candidates find a W whenever one exists among the ancestors is not proved
here: the tests compare them with a brute-force search over every subset
on thousands of random diagrams (no miss found).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING

from .adjustment import _cn_cached, _descendants_cached, _roles, proper_backdoor_skip
from .dsep import ancestor_mask, d_separated_cut
from .indexed import indexed
from .separators import _close_to, _moral_ids

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx


@dataclass(frozen=True, order=True)
class Instrument:
    """``variable`` is an instrument for ``exposure`` given ``given`` (empty: unconditional)."""

    exposure: str
    variable: str
    given: frozenset[str]

    def to_json(self) -> dict:
        return {"exposure": self.exposure, "variable": self.variable, "given": sorted(self.given)}


def instrument_given(
    G: nx.DiGraph,
    x: str,
    Y: Iterable[str],
    measured: Iterable[str],
    z: str,
    _cache: dict | None = None,
) -> frozenset[str] | None:
    """A set W for which z is an instrument for x (see the module docstring), or None."""
    X, Y = _roles(G, {x}, Y)
    measured = frozenset(measured)
    if z not in measured or z in X or z in Y or z in _descendants_cached(G, X):
        return None
    cn = _cn_cached(G, X, Y)
    cut = proper_backdoor_skip(X, cn)
    ix = indexed(G)
    names = ix.names
    cache = {} if _cache is None else _cache
    key = (x, frozenset(Y), measured)
    if cache.get("key") != key:
        # the moral graphs depend on z only through An(z); when z is an
        # ancestor of Y (or of x and Y) they are shared by every such z
        forb = _descendants_cached(G, set(cn)) if cn else frozenset()
        allowed = bytearray(ix.n)
        for name in measured - X - Y - forb:
            allowed[ix.index[name]] = 1
        cache.clear()
        cache.update(
            key=key,
            allowed=allowed,
            graphs={},
            an_y=ancestor_mask(ix, Y, cut),
            an_xy=ancestor_mask(ix, X | Y, cut),
        )
    zi = ix.index[z]
    tried: set[frozenset[str]] = set()
    for seeds, shared in ((Y | {z}, "an_y"), (X | Y | {z}, "an_xy")):
        gkey = frozenset(seeds - {z}) if cache[shared][zi] else frozenset(seeds)
        got = cache["graphs"].get(gkey)
        if got is None:
            nbrs, vertices = _moral_ids(ix, gkey, cut)
            removable = bytearray(len(nbrs))  # family hubs (past n) are never removable
            allowed = cache["allowed"]
            for v in vertices:
                removable[v] = allowed[v]
            got = (nbrs, removable)
            if gkey != frozenset(seeds) or len(cache["graphs"]) < 2:
                cache["graphs"][gkey] = got
        nbrs, base = got
        removable = bytearray(base)
        removable[zi] = 0
        sep = _close_to(nbrs, ix.ids(Y), [zi], removable)
        if sep is None:
            continue
        W = frozenset(names[v] for v in sep)
        if W in tried:
            continue
        tried.add(W)
        if not d_separated_cut(G, {z}, Y, set(W), cut, proper=False):
            continue
        if not d_separated_cut(G, {z}, X, set(W), None, proper=False):
            return W
    return None


def instruments(
    G: nx.DiGraph, exposures: Iterable[str], outcomes: Iterable[str], measured: Iterable[str]
) -> list[Instrument]:
    """Every measured instrument of each exposure, with a conditioning set W
    (empty when z is an instrument without conditioning), sorted."""
    X, Y = _roles(G, exposures, outcomes)
    measured = frozenset(measured)
    out = []
    cache: dict = {}
    for x in sorted(X):
        # the other exposures are neither candidates nor conditioned on
        usable = measured - (X - {x})
        for z in sorted(usable - {x} - Y):
            if z not in G._succ:
                continue
            if _unconditional(G, x, Y, z):
                out.append(Instrument(x, z, frozenset()))
                continue
            W = instrument_given(G, x, Y, usable, z, cache)
            if W is not None:
                out.append(Instrument(x, z, W))
    return out


def _unconditional(G: nx.DiGraph, x: str, Y: set[str], z: str) -> bool:
    """z is an instrument for x with W empty (preferred when it holds)."""
    X = {x}
    if z in _descendants_cached(G, X):
        return False
    cn = _cn_cached(G, X, set(Y))
    if not d_separated_cut(G, {z}, set(Y), set(), proper_backdoor_skip(X, cn), proper=False):
        return False
    return not d_separated_cut(G, {z}, X, set(), None, proper=False)


__all__ = ["Instrument", "instrument_given", "instruments"]
