"""A read-only causal graph kept only as the integer index (no networkx dicts).

`dagward check` of a 100,000-variable diagram spent about 780 bytes a variable
on the networkx graph (a dict of parents, a dict of children and an attribute
dict per variable, an attribute dict per arrow) only to build the integer index
of `indexed.py` from it, which is what the searches read. `CompactGraph` is
made from the index directly and offers what the causal functions read of a
frozen `networkx.DiGraph`: ``_succ``/``_pred``/``succ``/``pred`` (variable ->
its children or parents, in the same order as the networkx graph of the same
diagram), ``nodes[v]`` (``{"hidden": True}`` for the hidden parent of a
``<->``), ``len``, ``in``, iteration, ``number_of_nodes`` and the
``__networkx_cache__`` that holds the index.  Anything else (``copy``,
``subgraph``, a networkx algorithm's own reads) is answered by a networkx
graph built on first need, once, by the function the graph was made with.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping, Sequence
from typing import Any

from .indexed import Indexed

_HIDDEN = {"hidden": True}
_PLAIN: dict = {}


class _Row(Sequence):
    """The children (or parents) of one variable, as names."""

    __slots__ = ("names", "index", "ids")

    def __init__(self, names: list[str], index: dict[str, int], ids: Sequence[int]):
        self.names, self.index, self.ids = names, index, ids

    def __len__(self) -> int:
        return len(self.ids)

    def __getitem__(self, i):
        if isinstance(i, slice):
            return [self.names[j] for j in self.ids[i]]
        return self.names[self.ids[i]]

    def __iter__(self) -> Iterator[str]:
        names = self.names
        return (names[j] for j in self.ids)

    def __contains__(self, name: object) -> bool:
        j = self.index.get(name)  # type: ignore[call-overload]
        return j is not None and j in self.ids


class _ByVariable(Mapping):
    """A mapping from each variable's name, in the index's order."""

    __slots__ = ("names", "index")

    def __init__(self, ix: Indexed):
        self.names, self.index = ix.names, ix.index

    def __iter__(self) -> Iterator[str]:
        return iter(self.names)

    def __len__(self) -> int:
        return len(self.names)

    def __contains__(self, name: object) -> bool:
        return name in self.index


class _Rows(_ByVariable):
    """Variable -> its `_Row` (children or parents)."""

    __slots__ = ("rows",)

    def __init__(self, ix: Indexed, rows: list):
        super().__init__(ix)
        self.rows = rows

    def __getitem__(self, name: str) -> _Row:
        return _Row(self.names, self.index, self.rows[self.index[name]])


class _Nodes(_ByVariable):
    """Variable -> its attributes (only `hidden`)."""

    __slots__ = ("hidden_from",)

    def __init__(self, ix: Indexed, hidden_from: int):
        super().__init__(ix)
        self.hidden_from = hidden_from

    def __getitem__(self, name: str) -> dict:
        return _HIDDEN if self.index[name] >= self.hidden_from else _PLAIN


class CompactGraph:
    """A frozen causal graph over an `Indexed` (see the module docstring).

    The hidden parents are the nodes from position ``hidden_from`` on.
    """

    _graph = None  # not a view of another graph (see indexed.graph_cache)
    frozen = True

    def __init__(self, ix: Indexed, hidden_from: int, full: Callable[[], Any]):
        self._ix = ix
        self.hidden_from = hidden_from
        self._full = full
        self._nx = None
        self.__networkx_cache__ = {"dagward": {"index": ix}}
        self._succ = self.succ = _Rows(ix, ix.succ)
        self._pred = self.pred = _Rows(ix, ix.pred)
        self.nodes = _Nodes(ix, hidden_from)

    def __len__(self) -> int:
        return self._ix.n

    def __iter__(self) -> Iterator[str]:
        return iter(self._ix.names)

    def __contains__(self, name: object) -> bool:
        return name in self._ix.index

    def number_of_nodes(self) -> int:
        return self._ix.n

    def is_directed(self) -> bool:
        return True

    def networkx(self) -> Any:
        """The same graph as a frozen `networkx.DiGraph`, built on first call."""
        if self._nx is None:
            self._nx = self._full()
        return self._nx

    def __getattr__(self, name: str) -> Any:
        if name.startswith("__") or name in ("_nx", "_full", "_ix", "hidden_from"):
            raise AttributeError(name)
        return getattr(self.networkx(), name)
