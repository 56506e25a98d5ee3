"""Integer-indexed adjacency: the representation the causal searches run on.

networkx keeps a graph as dicts of dicts keyed by variable names.  A search
that walks 100,000 variables through them mostly waits on memory: each
neighbour is a pointer to a string in a heap of hundreds of megabytes, so the
time per visited variable grew about twofold from 10,000 to 100,000 variables.
Here variable i's parents and children are ``array('i')`` of indices and the
visited marks are ``bytearray``s: each search is about three times faster, and
the cost per visited variable grows 1.4x over that range (and not at all for
d-separation on graphs with many arrows per variable: see ``Indexed.rows``).

The index is built once per graph and kept in the graph's
``__networkx_cache__``, the dict networkx (3.3 and later) empties whenever
the graph's nodes or arrows change through its methods, so an edited graph
gets a fresh index.  (A view of a graph, a graph whose adjacency dicts are
edited directly, or one whose ``__networkx_cache__`` is set to None, is
indexed anew on every call.)
The model freezes every diagram's graph (``networkx.freeze``).
"""

from __future__ import annotations

from array import array
from collections.abc import Callable, Iterable, Iterator, Sequence, Set
from itertools import accumulate, chain, compress
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # networkx is imported only where it is used
    import networkx as nx


# bytes.translate tables over marks holding bit flags
WALL_UNLESS_2 = bytes(i if i & 2 else i | 1 for i in range(256))  # bit 1 set where bit 2 is not
AS_WALLS = bytes(3 if i else 0 for i in range(256))  # any mark -> both bits (a wall for bit 2)


class Rows(Sequence):
    """The children (or parents) of every variable in two arrays: variable v's
    are ``flat[at[v]:at[v + 1]]`` (compressed rows). Reads as a list of
    ``array('i')`` rows, with a slice made per read; a row per variable would
    cost an 80-byte array object each."""

    __slots__ = ("flat", "at")

    def __init__(self, flat: array, at: array):
        self.flat, self.at = flat, at

    def __len__(self) -> int:
        return len(self.at) - 1

    def __getitem__(self, v):
        at = self.at
        try:
            return self.flat[at[v] : at[v + 1]]
        except TypeError:  # a slice of rows
            return [self[i] for i in range(*v.indices(len(self)))]

    def __iter__(self) -> Iterator[array]:
        flat, at = self.flat, self.at
        return (flat[at[v] : at[v + 1]] for v in range(len(at) - 1))

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Sequence):
            return NotImplemented
        return len(self) == len(other) and all(a == b for a, b in zip(self, other, strict=True))

    __hash__ = None  # type: ignore[assignment]


class Indexed:
    """Variables numbered 0..n-1 in the graph's node order, with parent/child arrays."""

    __slots__ = ("names", "index", "succ", "pred", "n", "_masks", "_rows")

    def __init__(self, G: nx.DiGraph):
        self.names: list[str] = list(G._succ)
        self.index: dict[str, int] = {v: i for i, v in enumerate(self.names)}
        get = self.index.__getitem__
        self.succ = [array("i", map(get, G._succ[v])) for v in self.names]
        self.pred = [array("i", map(get, G._pred[v])) for v in self.names]
        self.n = len(self.names)
        # Marks of frozensets that the callers keep (cn, forb(X, Y), an ArrowCut's
        # sets), by identity; the frozenset is held so its id stays its own.
        self._masks: dict[int, tuple[frozenset, bytes]] = {}
        self._rows: tuple | None = None

    @classmethod
    def from_rows(
        cls,
        names: list[str],
        succ: Sequence[Sequence[int]],
        pred: Sequence[Sequence[int]],
        index: dict[str, int],
    ) -> Indexed:
        """An index made directly from numbered variables (``index``: name ->
        number) and their children and parents (each row in the order the
        searches visit them)."""
        ix = cls.__new__(cls)
        ix.names = names
        ix.index = index
        ix.succ, ix.pred, ix.n = succ, pred, len(names)
        ix._masks, ix._rows = {}, None
        return ix

    def rows(self) -> tuple[Callable[[int], Sequence[int]], Callable[[int], Sequence[int]]]:
        """(children of v, parents of v) as functions, for the hottest loops.

        On a large graph with many arrows per variable they read compressed
        rows: all children in one array, variable v's from position at[v] to
        at[v + 1] (likewise parents).  Four arrays instead of 2n small ones
        take a few megabytes that stay in the processor's cache, so the time
        per visited variable does not grow with the graph (measured: about the
        same on 10,000 and 100,000 variables with ten arrows each, against
        1.4-2x more with one array per variable).  Reading a row costs a
        slice, which does not pay with few arrows per variable (a
        100,000-variable diagram with two arrows each was 10-15% slower), so
        below four arrows per variable ``self.succ[v]`` and ``self.pred[v]``
        are read directly.  The choice depends on the graph's shape only, so
        graphs of one shape and different sizes use the same layout.
        """
        if self._rows is None:
            if type(self.succ) is Rows and type(self.pred) is Rows:
                sf, so, pf, po = self.succ.flat, self.succ.at, self.pred.flat, self.pred.at
                self._rows = (lambda v: sf[so[v] : so[v + 1]], lambda v: pf[po[v] : po[v + 1]])
                return self._rows
            arrows = sum(map(len, self.succ))
            if arrows >= 4 * self.n:
                sf, so = _compressed(self.succ)
                pf, po = _compressed(self.pred)
                self._rows = (lambda v: sf[so[v] : so[v + 1]], lambda v: pf[po[v] : po[v + 1]])
            else:
                self._rows = (self.succ.__getitem__, self.pred.__getitem__)
        return self._rows

    def ids(self, nodes: Iterable[str]) -> list[int]:
        if type(nodes) is NodeSet and nodes.ix is self:
            return list(compress(range(self.n), nodes.marks))
        index = self.index
        return [index[v] for v in nodes]

    def mask(self, nodes: Iterable[str]) -> bytearray:
        """A bytearray with 1 at each of ``nodes`` (names); a new one every call."""
        if type(nodes) is NodeSet and nodes.ix is self:
            return bytearray(nodes.marks)
        if type(nodes) is frozenset and len(nodes) > 64:
            kept = self._masks.get(id(nodes))
            if kept is None or kept[0] is not nodes:
                if len(self._masks) > 256:
                    self._masks.clear()
                kept = self._masks[id(nodes)] = (nodes, bytes(self._fresh_mask(nodes)))
            return bytearray(kept[1])
        return self._fresh_mask(nodes)

    def _fresh_mask(self, nodes: Iterable[str]) -> bytearray:
        m = bytearray(self.n)
        index = self.index
        for v in nodes:
            m[index[v]] = 1
        return m

    def names_in(self, mask: bytes | bytearray) -> set[str]:
        """The names whose mark is not zero."""
        return set(compress(self.names, mask))


def combine(keep: bytes | bytearray, *drop: bytes | bytearray) -> bytearray:
    """Marks set in ``keep`` and in none of ``drop`` (0/1 marks; computed on whole
    integers, so in C rather than byte by byte)."""
    result = int.from_bytes(keep, "little")
    for d in drop:
        result &= ~int.from_bytes(d, "little")
    return bytearray(result.to_bytes(len(keep), "little"))


def _compressed(lists: list[array]) -> tuple[array, array]:
    flat = array("i", chain.from_iterable(lists))
    at = array("i", [0, *accumulate(map(len, lists))])
    return flat, at


def both(a: bytes | bytearray, b: bytes | bytearray) -> bytearray:
    """Marks set in both (0/1 marks)."""
    n = len(a)
    return bytearray(
        (int.from_bytes(a, "little") & int.from_bytes(b, "little")).to_bytes(n, "little")
    )


def graph_cache(G: nx.DiGraph) -> dict | None:
    """dagward's part of ``G.__networkx_cache__`` (emptied by networkx when G
    changes), or None when the graph has no such cache."""
    cache = getattr(G, "__networkx_cache__", None)
    if cache is None or getattr(G, "_graph", None) is not None:
        # A view (subgraph, reverse, ...) changes with the graph under it, and
        # nothing empties the view's own cache then: never keep anything for it.
        return None
    return cache.setdefault("dagward", {})


def indexed(G: nx.DiGraph) -> Indexed:
    """The index of G, built once per version of the graph (see the module docstring)."""
    cache = graph_cache(G)
    if cache is None:
        return Indexed(G)
    ix = cache.get("index")
    if ix is None or ix.n != len(G._succ):  # the count guards against direct edits
        ix = cache["index"] = Indexed(G)
    return ix


def closure(
    adjacency: list[array], seeds: Iterable[int], mark: bytearray, bit: int = 1
) -> list[int]:
    """Set ``bit`` in ``mark`` on everything reachable from ``seeds`` along
    ``adjacency`` without entering a variable whose mark already has ``bit``
    (pre-marked variables act as walls).  Iterative; returns the variables
    newly marked, seeds included."""
    stack = []
    for s in seeds:
        if not mark[s] & bit:
            mark[s] |= bit
            stack.append(s)
    visited = list(stack)
    # compressed rows are sliced here rather than through a call per row
    flat, at = (adjacency.flat, adjacency.at) if type(adjacency) is Rows else (None, None)
    while stack:
        v = stack.pop()
        for w in adjacency[v] if flat is None else flat[at[v] : at[v + 1]]:
            if not mark[w] & bit:
                mark[w] |= bit
                stack.append(w)
                visited.append(w)
    return visited


def distances(n: int, row: Callable[[int], Iterable[int]], seeds: Iterable[int]) -> array:
    """Breadth-first number of steps along ``row`` from the nearest of ``seeds``
    for each of the ``n`` variables (``n`` where none leads). One pass."""
    dist = array("i", [n]) * n
    frontier = []
    for s in seeds:
        if dist[s]:
            dist[s] = 0
            frontier.append(s)
    d = 0
    while frontier:
        d += 1
        nxt = []
        for v in frontier:
            for w in row(v):
                if dist[w] > d:
                    dist[w] = d
                    nxt.append(w)
        frontier = nxt
    return dist


def closure_rows(
    row: Callable[[int], Sequence[int]], seeds: Iterable[int], mark: bytearray
) -> bytearray:
    """:func:`closure` (bit 1) along ``row`` (one of :meth:`Indexed.rows`)."""
    stack = []
    for s in seeds:
        if not mark[s]:
            mark[s] = 1
            stack.append(s)
    while stack:
        for w in row(stack.pop()):
            if not mark[w]:
                mark[w] = 1
                stack.append(w)
    return mark


class MaskView:
    """Read a mark array as a set of names (``name in view``), for the
    definitional path checks that take name sets."""

    __slots__ = ("index", "mask")

    def __init__(self, ix: Indexed, mask: bytes | bytearray):
        self.index, self.mask = ix.index, mask

    def __contains__(self, name: object) -> bool:
        i = self.index.get(name)  # type: ignore[call-overload]
        return i is not None and bool(self.mask[i])


class NodeSet(Set):
    """A read-only set of variable names kept as marks over an `Indexed`.

    On a large diagram the sets an analysis is judged by (the variables on
    causal paths, the forbidden ones, the measured ones, the ones an
    adjustment set may hold) hold most of its variables; as a frozenset of
    names each costs 30-60 bytes a member, as marks one byte a variable of the
    diagram, and the searches read the marks directly (``Indexed.mask``).
    It answers as a frozenset does (``in``, iteration in the index's order,
    ``len``, comparisons, hashing, ``-``, ``&``, ``|`` with any set); a result
    is again marks when it can hold many members, a frozenset when it is
    bounded by a set of names given with it.
    """

    __slots__ = ("ix", "marks", "_len", "_hash")

    def __init__(self, ix: Indexed, marks: bytes | bytearray):
        self.ix = ix
        self.marks = bytes(marks)
        self._len: int | None = None
        self._hash: int | None = None

    @classmethod
    def of_ids(cls, ix: Indexed, ids: Iterable[int]) -> NodeSet:
        m = bytearray(ix.n)
        for i in ids:
            m[i] = 1
        return cls(ix, m)

    def _same(self, other: object) -> bool:
        return type(other) is NodeSet and other.ix is self.ix

    def __contains__(self, name: object) -> bool:
        i = self.ix.index.get(name)  # type: ignore[call-overload]
        return i is not None and bool(self.marks[i])

    def __iter__(self) -> Iterator[str]:
        return compress(self.ix.names, self.marks)

    def __len__(self) -> int:
        if self._len is None:
            self._len = self.ix.n - self.marks.count(0)
        return self._len

    def __bool__(self) -> bool:
        return any(self.marks)

    def __repr__(self) -> str:
        return f"NodeSet({sorted(self)!r})"

    def __hash__(self) -> int:
        if self._hash is None:
            self._hash = hash(frozenset(self))  # equal to an equal frozenset's
        return self._hash

    def __eq__(self, other: object) -> bool:
        if self._same(other):
            return self.marks == other.marks  # type: ignore[attr-defined]
        if not isinstance(other, Set):
            return NotImplemented
        return len(self) == len(other) and all(v in self for v in other)

    def __le__(self, other: object) -> bool:
        if self._same(other):
            return not any(combine(self.marks, other.marks))  # type: ignore[attr-defined]
        if not isinstance(other, Set):
            return NotImplemented
        return len(self) <= len(other) and all(v in other for v in self)

    def __ge__(self, other: object) -> bool:
        if self._same(other):
            return other <= self
        if not isinstance(other, Set):
            return NotImplemented
        return all(v in self for v in other)

    def __lt__(self, other: object) -> bool:
        return self <= other and self != other

    def __gt__(self, other: object) -> bool:
        return self >= other and self != other

    def isdisjoint(self, other: Iterable) -> bool:
        if self._same(other):
            return not any(both(self.marks, other.marks))  # type: ignore[attr-defined]
        return not any(v in self for v in other)

    def _marks_of(self, other: Iterable) -> bytearray:
        if self._same(other):
            return bytearray(other.marks)  # type: ignore[attr-defined]
        m = bytearray(self.ix.n)
        index = self.ix.index
        for v in other:
            i = index.get(v)
            if i is not None:
                m[i] = 1
        return m

    def __sub__(self, other: Iterable) -> NodeSet:
        if not isinstance(other, Iterable):
            return NotImplemented
        return NodeSet(self.ix, combine(self.marks, self._marks_of(other)))

    def __rsub__(self, other: Iterable) -> frozenset:
        if not isinstance(other, Iterable):
            return NotImplemented
        return frozenset(v for v in other if v not in self)

    def __and__(self, other: Iterable) -> NodeSet | frozenset:
        if self._same(other):
            return NodeSet(self.ix, both(self.marks, other.marks))  # type: ignore[attr-defined]
        if not isinstance(other, Iterable):
            return NotImplemented
        return frozenset(v for v in other if v in self)

    __rand__ = __and__

    def __or__(self, other: Iterable) -> NodeSet | frozenset:
        if not isinstance(other, Iterable):
            return NotImplemented
        index = self.ix.index
        if self._same(other) or all(v in index for v in other):
            m = self._marks_of(other)
            return NodeSet(
                self.ix,
                (int.from_bytes(m, "little") | int.from_bytes(self.marks, "little")).to_bytes(
                    self.ix.n, "little"
                ),
            )
        return frozenset(self) | frozenset(other)

    __ror__ = __or__

    def __xor__(self, other: Iterable) -> frozenset:
        return frozenset(self) ^ frozenset(other)

    __rxor__ = __xor__

    def union(self, *others: Iterable) -> NodeSet | frozenset:
        out: NodeSet | frozenset = self
        for o in others:
            out = out | o
        return out

    def intersection(self, *others: Iterable) -> NodeSet | frozenset:
        out: NodeSet | frozenset = self
        for o in others:
            out = out & o
        return out

    def difference(self, *others: Iterable) -> NodeSet | frozenset:
        out: NodeSet | frozenset = self
        for o in others:
            out = out - o
        return out

    def issubset(self, other: Iterable) -> bool:
        return self <= (other if isinstance(other, Set) else frozenset(other))

    def issuperset(self, other: Iterable) -> bool:
        return all(v in self for v in other)

    def copy(self) -> NodeSet:
        return self


def frozen(nodes: Iterable[str]) -> frozenset[str]:
    """``nodes`` as a read-only set: a `NodeSet` stays one (marks, not names)."""
    return nodes if type(nodes) is NodeSet else frozenset(nodes)  # type: ignore[return-value]
