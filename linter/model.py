"""The diagram model: what a `.dag` file says, with a source span for every piece.

Data flows one way: `syntax` builds a `Diagram` from text; the causal algorithms,
rules, reporters, formatter and renderer only read it. Nothing here does I/O.
"""

from __future__ import annotations

import weakref
from array import array
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from itertools import accumulate
from typing import TYPE_CHECKING, Literal, NamedTuple

if TYPE_CHECKING:  # networkx is imported lazily: `fmt` never needs it
    import networkx as nx

    from .causal.compact import CompactGraph

# Words that start a statement or an analysis entry. They are keywords only there
# (the grammar's lexer is contextual): anywhere a name is expected they are names,
# since `exposure`, `outcome` or `period` are natural variable names.
KEYWORDS = frozenset(
    "title label unmeasured period analysis exposure outcome adjust none "
    "effect mediator restricted".split()
)
# The one word that can never be a variable name: `adjust: none` is the empty set.
RESERVED_WORDS = frozenset({"none"})

# The effects an analysis may ask for (`effect:`); `total` is the default.
EFFECTS = ("total", "controlled-direct", "natural-direct", "natural-indirect")
DEFAULT_EFFECT = "total"

# The name an analysis gets when the file has exactly one and it is unnamed.
DEFAULT_ANALYSIS = "main"


class Span(NamedTuple):
    """A region of a file: 1-based lines and columns (Unicode code points), end exclusive.

    Span, Name, Comment and Arrow are named tuples rather than dataclasses: the
    parser makes several per line, and tuples are several times cheaper to build.
    """

    line: int
    column: int
    end_line: int
    end_column: int

    @classmethod
    def at(cls, line: int, column: int, length: int = 1) -> Span:
        return cls(line, column, line, column + max(length, 1))


class Name(NamedTuple):
    """One occurrence of a variable (or analysis/period) name in the file."""

    text: str
    span: Span


class Comment(NamedTuple):
    """A `#` comment; `trailing` when it follows a statement on the same line."""

    text: str  # including the leading '#'
    span: Span
    trailing: bool

    @property
    def body(self) -> str:
        return self.text[1:].strip()


class NameRow(Sequence):
    """The names of one list (`period p: a, b, c`, `unmeasured u, v`, ...), read
    as a tuple of `Name`s.

    A period of a large diagram can list tens of thousands of names; as
    `Name`s each would cost about 250 bytes (two tuples and their numbers),
    kept here as its shared string and two 4-byte numbers. A `Name` is built
    when read. A row equals, hashes and adds as the tuple of its names.
    """

    __slots__ = ("texts", "lines", "columns")

    def __init__(self, texts: tuple[str, ...], lines: array, columns: array):
        self.texts, self.lines, self.columns = texts, lines, columns

    @classmethod
    def of(cls, names: Iterable[Name]) -> NameRow:
        names = list(names)
        return cls(
            tuple(n.text for n in names),
            array("i", (n.span.line for n in names)),
            array("i", (n.span.column for n in names)),
        )

    def __len__(self) -> int:
        return len(self.texts)

    def _name(self, i: int) -> Name:
        text, line, column = self.texts[i], self.lines[i], self.columns[i]
        return Name(text, Span(line, column, line, column + len(text)))

    def __getitem__(self, i):
        if isinstance(i, slice):
            return NameRow(self.texts[i], self.lines[i], self.columns[i])
        return self._name(i)

    def __iter__(self) -> Iterator[Name]:
        for i in range(len(self.texts)):
            yield self._name(i)

    def __contains__(self, item: object) -> bool:
        return any(item == n for n in self)

    def __eq__(self, other: object) -> bool:
        if type(other) is NameRow:
            return (self.texts, self.lines, self.columns) == (
                other.texts, other.lines, other.columns
            )  # fmt: skip
        if isinstance(other, tuple):
            return tuple(self) == other
        return NotImplemented

    def __hash__(self) -> int:
        return hash(tuple(self))

    def __add__(self, other: Iterable[Name]) -> NameRow:
        other = other if type(other) is NameRow else NameRow.of(other)
        return NameRow(
            self.texts + other.texts, self.lines + other.lines, self.columns + other.columns
        )

    def __repr__(self) -> str:
        return repr(tuple(self))


NO_NAMES = NameRow((), array("i"), array("i"))


class Variables(Mapping):
    """Each variable's name -> its first occurrence (a `Name`), in order of first
    appearance. Keeps a packed position per variable and builds the `Name` when
    read (a `Name` per variable would cost about 200 bytes)."""

    __slots__ = ("_at",)
    _COLUMN_BITS = 24

    def __init__(self) -> None:
        self._at: dict[str, int] = {}

    def add(self, text: str, line: int, column: int) -> None:
        """Record ``text`` at (line, column) unless it was seen before."""
        if text not in self._at:
            self._at[text] = (line << self._COLUMN_BITS) | column

    def __getitem__(self, text: str) -> Name:
        at = self._at[text]
        line, column = at >> self._COLUMN_BITS, at & ((1 << self._COLUMN_BITS) - 1)
        return Name(text, Span(line, column, line, column + len(text)))

    def __contains__(self, text: object) -> bool:
        return text in self._at

    def __iter__(self) -> Iterator[str]:
        return iter(self._at)

    def __len__(self) -> int:
        return len(self._at)

    def keys(self):  # a real dict view: set operations on it run in C
        return self._at.keys()


class _AsTuple:
    """Compares, hashes, unpacks and prints as the tuple ``_fields()``, named by
    ``_field_names`` (for the slotted classes that replaced named tuples)."""

    __slots__ = ()
    _field_names: tuple[str, ...] = ()

    def _fields(self) -> tuple:
        raise NotImplementedError

    def __iter__(self) -> Iterator:
        return iter(self._fields())

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, type(self)):
            return NotImplemented
        return self._fields() == other._fields()

    def __hash__(self) -> int:
        return hash(self._fields())

    def __repr__(self) -> str:
        pairs = ", ".join(
            f"{k}={v!r}" for k, v in zip(self._field_names, self._fields(), strict=True)
        )
        return f"{type(self).__name__}({pairs})"


class Arrow(_AsTuple):
    """One cause-effect pair. `bidirected` is `A <-> B` (a hidden common cause).

    A large diagram is mostly arrows, so an arrow keeps only what its positions
    are made of: the two names, the line and the two columns (an 80-byte object
    whose name strings are shared with the rest of the model, against about 400
    bytes for named tuples of names and spans). `source`, `target` and `span` are
    built when read. An arrow compares, hashes, orders and unpacks as the tuple
    (source, target, bidirected, span).
    """

    __slots__ = ("source_text", "target_text", "bidirected", "line", "source_column",
                 "target_column")  # fmt: skip

    def __init__(
        self,
        source_text: str,
        target_text: str,
        bidirected: bool,
        line: int,
        source_column: int,
        target_column: int,
    ):
        self.source_text = source_text
        self.target_text = target_text
        self.bidirected = bidirected
        self.line = line
        self.source_column = source_column
        self.target_column = target_column

    @property
    def source(self) -> Name:
        line, column = self.line, self.source_column
        return Name(self.source_text, Span(line, column, line, column + len(self.source_text)))

    @property
    def target(self) -> Name:
        line, column = self.line, self.target_column
        return Name(self.target_text, Span(line, column, line, column + len(self.target_text)))

    @property
    def span(self) -> Span:
        """From the start of the source name to the end of the target name."""
        line = self.line
        return Span(line, self.source_column, line, self.target_column + len(self.target_text))

    def describe(self) -> str:
        op = "<->" if self.bidirected else "->"
        return f"{self.source_text} {op} {self.target_text}"

    @property
    def key(self) -> tuple[str, str, str]:
        """What makes two statements the same arrow: `a <-> b` is `b <-> a`."""
        return arrow_key(self.source_text, self.target_text, self.bidirected)

    _field_names = ("source", "target", "bidirected", "span")

    def _fields(self) -> tuple[Name, Name, bool, Span]:
        return (self.source, self.target, self.bidirected, self.span)

    def __lt__(self, other: Arrow) -> bool:
        return self._fields() < other._fields()


def arrow_key(source: str, target: str, bidirected: bool) -> tuple[str, str, str]:
    """The one key of an arrow, used wherever arrows are matched or compared."""
    if bidirected:
        a, b = sorted((source, target))
        return ("<->", a, b)
    return ("->", source, target)


# --- statements, in file order (the formatter prints them back) -----------------


@dataclass(frozen=True, slots=True)
class TitleStatement:
    text: str  # the string literal as written, quotes included
    span: Span


@dataclass(frozen=True, slots=True)
class UnmeasuredStatement:
    names: NameRow
    span: Span


@dataclass(frozen=True, slots=True)
class LabelStatement:
    target: Name
    text: str  # the string literal as written, quotes included
    span: Span

    @property
    def value(self) -> str:
        return unquote(self.text)


@dataclass(frozen=True, slots=True)
class PeriodStatement:
    period: Name
    names: NameRow
    span: Span


# The arrow operators: one str each, shared by every statement (the parser's too).
OPERATORS = {"->": "->", "<->": "<->"}
_OPERATOR = {False: OPERATORS["->"], True: OPERATORS["<->"]}


class ArrowStatement(_AsTuple):
    """`a, b -> c <-> d`: groups of names joined by arrow operators.

    A line with a single arrow (nearly every line of a large diagram) keeps only
    that arrow, and its groups, operators and span are built when read; other
    lines keep all four. A statement compares, hashes and unpacks as the tuple
    (groups, operators, arrows, span).
    """

    __slots__ = ("_kept",)

    def __init__(
        self,
        groups: tuple[tuple[Name, ...], ...],
        operators: tuple[str, ...],
        arrows: tuple[Arrow, ...],
        span: Span,
    ):
        self._kept: Arrow | tuple = (groups, operators, arrows, span)

    @classmethod
    def single(cls, arrow: Arrow) -> ArrowStatement:
        """The statement of a line that is one arrow, `a -> b` or `a <-> b`."""
        statement = cls.__new__(cls)
        statement._kept = arrow
        return statement

    @property
    def groups(self) -> tuple[tuple[Name, ...], ...]:
        kept = self._kept
        return ((kept.source,), (kept.target,)) if type(kept) is Arrow else kept[0]

    @property
    def operators(self) -> tuple[str, ...]:
        kept = self._kept
        return (_OPERATOR[kept.bidirected],) if type(kept) is Arrow else kept[1]

    @property
    def arrows(self) -> tuple[Arrow, ...]:
        kept = self._kept
        return (kept,) if type(kept) is Arrow else kept[2]

    @property
    def span(self) -> Span:
        kept = self._kept
        return kept.span if type(kept) is Arrow else kept[3]

    _field_names = ("groups", "operators", "arrows", "span")

    def _fields(self) -> tuple:
        return (self.groups, self.operators, self.arrows, self.span)


RoleKey = Literal["exposure", "outcome", "adjust", "effect", "mediator", "restricted"]


@dataclass(frozen=True, slots=True)
class Entry:
    """One `key: value` line inside an analysis block.

    `names` holds the variables of a list key; it is empty for `adjust: none` and
    for `effect:`, whose value (`total`, `controlled-direct`, ...) is `value`, a
    `Name` only for its text and span (it is never a variable).
    """

    key: RoleKey
    key_span: Span
    names: tuple[Name, ...]
    is_none: bool
    span: Span
    value: Name | None = None


@dataclass(frozen=True, slots=True)
class Analysis:
    """One question asked of the diagram."""

    name: str
    name_token: Name | None  # None when the name was omitted
    header: Span  # the `analysis` keyword through the `{`
    entries: tuple[Entry, ...]
    closing_line: int  # the line of the closing `}`

    def _names(self, key: RoleKey) -> list[Name]:
        return [n for e in self.entries if e.key == key for n in e.names]

    @property
    def exposure(self) -> list[Name]:
        return self._names("exposure")

    @property
    def outcome(self) -> list[Name]:
        return self._names("outcome")

    @property
    def adjust(self) -> list[Name] | None:
        """The declared adjustment set, or None when the block has no `adjust` key."""
        if not any(e.key == "adjust" for e in self.entries):
            return None
        return self._names("adjust")

    def entry(self, key: RoleKey) -> Entry | None:
        return next((e for e in self.entries if e.key == key), None)

    @property
    def effect(self) -> str:
        """The effect asked for: `total` (the default), `controlled-direct`,
        `natural-direct` or `natural-indirect` (the first `effect:` line)."""
        entry = self.entry("effect")
        return DEFAULT_EFFECT if entry is None or entry.value is None else entry.value.text

    @property
    def effect_span(self) -> Span | None:
        """Where the effect is named (its value in `effect:`), or None when defaulted."""
        entry = self.entry("effect")
        return None if entry is None or entry.value is None else entry.value.span

    @property
    def mediator(self) -> list[Name]:
        return self._names("mediator")

    @property
    def restricted(self) -> list[Name]:
        return self._names("restricted")

    @property
    def exposure_set(self) -> frozenset[str]:
        return frozenset(n.text for n in self.exposure)

    @property
    def outcome_set(self) -> frozenset[str]:
        return frozenset(n.text for n in self.outcome)

    @property
    def adjust_set(self) -> frozenset[str] | None:
        adjust = self.adjust
        return None if adjust is None else frozenset(n.text for n in adjust)

    @property
    def mediator_set(self) -> frozenset[str]:
        return frozenset(n.text for n in self.mediator)

    @property
    def restricted_set(self) -> frozenset[str]:
        return frozenset(n.text for n in self.restricted)


Statement = (
    TitleStatement
    | UnmeasuredStatement
    | LabelStatement
    | PeriodStatement
    | ArrowStatement
    | Analysis
)


@dataclass(eq=False)
class Diagram:
    """A parsed `.dag` file.

    `statements` and `comments` keep file order (for the formatter); the derived
    views below (variables, arrows, graph, ...) are computed once on first use.
    """

    path: str
    source: str  # the decoded text the positions refer to
    statements: list[Statement] = field(default_factory=list)
    comments: list[Comment] = field(default_factory=list)
    line_count: int = 0

    # -- derived views -------------------------------------------------------------

    def _of_type(self, kind: type) -> Iterator:
        return (s for s in self.statements if isinstance(s, kind))

    @cached_property
    def arrows(self) -> list[Arrow]:
        return [a for s in self._of_type(ArrowStatement) for a in s.arrows]

    @cached_property
    def analyses(self) -> list[Analysis]:
        return list(self._of_type(Analysis))

    @cached_property
    def title(self) -> str | None:
        first = next(self._of_type(TitleStatement), None)
        return None if first is None else unquote(first.text)

    @cached_property
    def labels(self) -> dict[str, str]:
        return {s.target.text: s.value for s in self._of_type(LabelStatement)}

    @cached_property
    def unmeasured(self) -> dict[str, Name]:
        """Variables declared `unmeasured`, with their first declaration."""
        found: dict[str, Name] = {}
        for s in self._of_type(UnmeasuredStatement):
            for n in s.names:
                found.setdefault(n.text, n)
        return found

    @cached_property
    def periods(self) -> list[tuple[Name, NameRow]]:
        """Periods in order of first appearance, each with all its members."""
        order: dict[str, tuple[Name, NameRow]] = {}
        for s in self._of_type(PeriodStatement):
            head, members = order.get(s.period.text, (s.period, NO_NAMES))
            order[s.period.text] = (head, members + s.names)
        return list(order.values())

    @cached_property
    def variables(self) -> Variables:
        """Every variable with its first occurrence, in order of first appearance.

        A variable exists once it appears in an arrow, `unmeasured` or `period`
        statement. Names inside analyses do not create variables, and neither does
        `label`: a label must name an existing variable (rule `unknown-variable`),
        so a misspelt label is reported instead of silently adding a variable.
        """
        found = Variables()
        add = found.add
        for s in self.statements:
            if isinstance(s, ArrowStatement):
                kept = s._kept
                if type(kept) is Arrow:  # a one-arrow line
                    add(kept.source_text, kept.line, kept.source_column)
                    add(kept.target_text, kept.line, kept.target_column)
                    continue
                for group in s.groups:
                    for n in group:
                        add(n.text, n.span.line, n.span.column)
            elif isinstance(s, (UnmeasuredStatement, PeriodStatement)):
                row = s.names
                for text, line, column in zip(row.texts, row.lines, row.columns, strict=True):
                    add(text, line, column)
        return found

    @cached_property
    def measured(self) -> frozenset[str]:
        """Variables that are in the data: all but the `unmeasured` ones."""
        return frozenset(v for v in self.variables if v not in self.unmeasured)

    @cached_property
    def trailing_comments(self) -> dict[int, Comment]:
        """Comments that end a statement line, by line (an arrow's *reason*)."""
        return {c.span.line: c for c in self.comments if c.trailing}

    @cached_property
    def arrow_index(self) -> dict[tuple[str, str, str], Arrow]:
        """Each arrow's first statement, by `arrow_key`."""
        index: dict[tuple[str, str, str], Arrow] = {}
        for arrow in self.arrows:
            index.setdefault(arrow.key, arrow)
        return index

    def first_arrows(
        self, keys: Iterable[tuple[str, str, str]]
    ) -> dict[tuple[str, str, str], Arrow]:
        """The first statement of each of `keys` (`arrow_key`s) the diagram states.

        One pass over the arrows, keeping only the arrows asked for: cheaper than
        `arrow_index` (a key for every arrow of the diagram) when a few are wanted.
        """
        if "arrow_index" in self.__dict__:
            index = self.arrow_index
            return {k: index[k] for k in keys if k in index}
        wanted = set(keys)
        found: dict[tuple[str, str, str], Arrow] = {}
        for arrow in self.arrows:
            if arrow.bidirected:
                key = arrow.key
            else:
                key = ("->", arrow.source_text, arrow.target_text)
            if key in wanted and key not in found:
                found[key] = arrow
        return found

    def analysis(self, name: str) -> Analysis:
        for a in self.analyses:
            if a.name == name:
                return a
        known = ", ".join(a.name for a in self.analyses) or "none"
        raise KeyError(f"no analysis named `{name}` (the file has: {known})")

    @cached_property
    def graph(self) -> nx.DiGraph:
        """The causal graph: variables and arrows, each `A <-> B` as a hidden parent.

        Hidden parents are named by `dagward.causal.graph.hidden_node_name` (a name no
        variable can have) and carry the node attribute `hidden=True`.  The graph is
        frozen (`networkx.freeze`), so the causal searches may keep an index of it;
        copy it to edit.
        """
        import networkx as nx

        from .causal.graph import hidden_node_name
        from .gcpause import collector_paused

        with collector_paused():
            return nx.freeze(self._build_graph(nx, hidden_node_name))

    def _build_graph(self, nx, hidden_node_name) -> nx.DiGraph:
        # Nodes and arrows go in sorted order, so every search (and so every path
        # and set a report shows) is the same whatever the order of the lines.
        g = nx.DiGraph()
        g.add_nodes_from(sorted(self.variables))
        directed = []
        for a in self.arrows:
            if a.bidirected:
                h = hidden_node_name(a.source_text, a.target_text)
                directed.append((h, a.source_text))
                directed.append((h, a.target_text))
            else:
                directed.append((a.source_text, a.target_text))
        hidden = sorted({h for h, _ in directed if h not in g})
        g.add_nodes_from(hidden, hidden=True)
        directed.sort()
        g.add_edges_from(directed)
        return g

    @cached_property
    def compact_graph(self) -> CompactGraph:
        """The causal graph of `graph`, kept only as the integer index the searches
        read (`dagward.causal.compact`), built without networkx: `check` runs on it.

        Variables are numbered in `graph`'s node order and each variable's children
        and parents listed in `graph`'s order, so every search answers exactly as on
        `graph`. Reading what the compact graph does not keep builds `graph` then.
        """
        from .causal.compact import CompactGraph
        from .causal.graph import hidden_node_name
        from .causal.indexed import Indexed, Rows

        arrows = self.arrows
        variables = sorted(self.variables)
        hidden = sorted(
            {hidden_node_name(a.source_text, a.target_text) for a in arrows if a.bidirected}
        )
        names = variables + hidden
        index = {v: i for i, v in enumerate(names)}
        size = len(names)
        # Each row in the order of `graph` (children and parents sorted by name: a
        # hidden parent's name sorts apart from its node number), straight into
        # compressed rows: two passes over the arrows (count, then place).
        rank = array("i", bytes(4 * size))
        for r, i in enumerate(sorted(range(size), key=names.__getitem__)):
            rank[i] = r

        def pairs() -> Iterator[tuple[int, int]]:
            for a in arrows:
                s, t = index[a.source_text], index[a.target_text]
                if a.bidirected:
                    h = index[hidden_node_name(a.source_text, a.target_text)]
                    yield h, s
                    yield h, t
                else:
                    yield s, t

        count = array("i", bytes(4 * (size + 1)))
        for u, _ in pairs():
            count[u + 1] += 1
        at = array("i", accumulate(count))
        flat = array("i", bytes(4 * at[-1]))
        fill = array("i", at)
        for u, v in pairs():
            flat[fill[u]] = v
            fill[u] += 1
        del fill, count
        succ = _sorted_rows(flat, at, rank)
        del flat, at
        # parents: the children rows read in name order give each parent row in
        # name order
        count = array("i", bytes(4 * (size + 1)))
        for v in succ.flat:
            count[v + 1] += 1
        at = array("i", accumulate(count))
        flat = array("i", bytes(4 * at[-1]))
        fill = array("i", at)
        for u in sorted(range(size), key=rank.__getitem__):
            for v in succ[u]:
                flat[fill[v]] = u
                fill[v] += 1
        pred = Rows(flat, at)
        del fill, count
        ix = Indexed.from_rows(names, succ, pred, index)
        diagram = weakref.ref(self)  # no reference cycle through the graph

        def full() -> nx.DiGraph:
            d = diagram()
            assert d is not None
            return d.graph

        return CompactGraph(ix, len(variables), full)

    @cached_property
    def directed_graph_without_hidden(self) -> nx.DiGraph:
        """Only the `->` arrows (used for cycles, periods and pictures)."""
        import networkx as nx

        g = nx.DiGraph()
        g.add_nodes_from(self.variables)
        g.add_edges_from((a.source_text, a.target_text) for a in self.arrows if not a.bidirected)
        return nx.freeze(g)


def unquote(literal: str) -> str:
    """The value of a string literal: strip the quotes, undo `\\"` and `\\\\`."""
    body = literal[1:-1]
    if "\\" not in body:
        return body
    out, i = [], 0
    while i < len(body):
        ch = body[i]
        if ch == "\\" and i + 1 < len(body):
            out.append(body[i + 1])
            i += 2
        else:
            out.append(ch)
            i += 1
    return "".join(out)


def _sorted_rows(flat: array, at: array, rank: array):
    """Compressed rows with each row sorted by ``rank`` and without repeats."""
    from .causal.indexed import Rows

    out, out_at = array("i"), array("i", [0])
    for v in range(len(at) - 1):
        row = flat[at[v] : at[v + 1]]
        if len(row) > 1:
            row = sorted(set(row), key=rank.__getitem__)
        out.extend(row)
        out_at.append(len(out))
    return Rows(out, out_at)
