"""The canonical layout of a diagram file, printed back from the parsed model.

The formatter never edits text: it parses the file and prints every statement
and comment again from the `Diagram`, in file order. It needs no graph and never
imports networkx.

The canonical layout:

* one statement a line, no indentation at the top level;
* names in lists separated by `, `, one space either side of `->` and `<->`:
  `age, fitness_base -> enrolled <-> motivation`;
* `period name: a, b`, `unmeasured a, b`, `label a "text"`, `title "text"`
  (string literals are kept exactly as written, escapes included);
* `analysis name {` (or `analysis {` when the name was omitted), its entries
  `key: a, b` (`effect: natural-direct`, `mediator: m`, `restricted: r` alike)
  indented by two spaces in the order written, and `}` alone on its line;
* a comment at the end of a statement stays there, at least two spaces after
  it; the trailing comments of consecutive lines (no blank line, no line without
  such a comment between them, same indentation) start in one column, two
  spaces after the longest statement of the run;
  a comment on a line of its own stays on its own line, in place (indented by
  two spaces inside an analysis block); comment text is kept as written, with
  trailing white space removed;
* runs of blank lines become one blank line; no blank line at the start of the
  file, right after `{` or right before `}`, or at the end of the file;
* LF line endings and exactly one final newline (a byte-order mark is dropped).

Formatting is idempotent, and the formatted file parses to the same diagram
(same statements, names, roles and comments); tests/test_fmt.py checks both
with generated diagrams.
"""

from __future__ import annotations

import heapq
from collections.abc import Iterator
from dataclasses import dataclass

from .model import (
    Analysis,
    ArrowStatement,
    Comment,
    Diagram,
    Entry,
    LabelStatement,
    Name,
    PeriodStatement,
    Statement,
    TitleStatement,
    UnmeasuredStatement,
)
from .syntax import SyntaxProblem, parse_source

INDENT = "  "
COMMENT_GAP = "  "  # between a statement and its trailing comment


@dataclass(frozen=True, slots=True)
class _Line:
    """One output line, placed by the source line it came from."""

    source_line: int
    depth: int  # 0 at the top level, 1 inside an analysis block
    text: str
    opens_block: bool = False
    closes_block: bool = False
    comment: str | None = None  # a trailing comment, aligned by format_diagram


def _names(names: tuple[Name, ...]) -> str:
    return ", ".join(n.text for n in names)


def statement_text(statement: Statement | Entry) -> str:
    """One statement (or analysis entry) in the canonical layout, without comments."""
    if isinstance(statement, ArrowStatement):
        parts = [_names(statement.groups[0])]
        for op, group in zip(statement.operators, statement.groups[1:], strict=True):
            parts.append(f"{op} {_names(group)}")
        return " ".join(parts)
    if isinstance(statement, UnmeasuredStatement):
        return f"unmeasured {_names(statement.names)}"
    if isinstance(statement, PeriodStatement):
        return f"period {statement.period.text}: {_names(statement.names)}"
    if isinstance(statement, LabelStatement):
        return f"label {statement.target.text} {statement.text}"
    if isinstance(statement, TitleStatement):
        return f"title {statement.text}"
    if isinstance(statement, Entry):
        if statement.value is not None:  # `effect: natural-direct`
            return f"{statement.key}: {statement.value.text}"
        return f"{statement.key}: {'none' if statement.is_none else _names(statement.names)}"
    if isinstance(statement, Analysis):
        return f"analysis {statement.name_token.text} {{" if statement.name_token else "analysis {"
    raise TypeError(f"not a statement: {statement!r}")


def _layout(diagram: Diagram) -> Iterator[_Line]:
    """The output lines in file order, one at a time (a large diagram's lines are
    never all held as objects)."""
    # (header line, closing line) of each analysis
    blocks = [
        (s.header.line, s.closing_line) for s in diagram.statements if isinstance(s, Analysis)
    ]
    trailing: dict[int, Comment] = {c.span.line: c for c in diagram.comments if c.trailing}

    def statement_lines() -> Iterator[_Line]:
        for s in diagram.statements:
            if isinstance(s, Analysis):
                yield _Line(s.header.line, 0, statement_text(s), opens_block=True)
                yield from (_Line(e.span.line, 1, statement_text(e)) for e in s.entries)
                yield _Line(s.closing_line, 0, "}", closes_block=True)
            else:
                yield _Line(s.span.line, 0, statement_text(s))

    def comment_lines() -> Iterator[_Line]:
        for c in diagram.comments:
            if not c.trailing:
                inside = any(start < c.span.line < end for start, end in blocks)
                yield _Line(c.span.line, 1 if inside else 0, c.text.rstrip())

    # Each source line holds at most one statement (statements end at the end of
    # a line), and both runs are in line order, so merging them by line (the
    # statement first on a tie) restores file order.
    for item in heapq.merge(statement_lines(), comment_lines(), key=_source_line):
        comment = trailing.get(item.source_line)
        if comment is not None and not item.text.startswith("#"):
            item = _Line(
                item.source_line,
                item.depth,
                item.text,
                item.opens_block,
                item.closes_block,
                comment.text.rstrip(),
            )
        yield item


def _source_line(item: _Line) -> int:
    return item.source_line


def format_diagram(diagram: Diagram) -> str:
    """The canonical text of a parsed diagram (always ends with one newline)."""
    rows: list[tuple[str, str | None]] = []  # (code, trailing comment); ("", None) = blank
    previous: _Line | None = None
    for item in _layout(diagram):
        if (
            previous is not None
            and item.source_line > previous.source_line + 1
            and not previous.opens_block
            and not item.closes_block
        ):
            rows.append(("", None))  # a run of blank lines in the source becomes one
        rows.append((INDENT * item.depth + item.text, item.comment))
        previous = item
    lines = _aligned(rows)
    del rows
    return "\n".join(lines) + "\n" if lines else ""


def _aligned(rows: list[tuple[str, str | None]]) -> list[str]:
    """Put the trailing comments of each run of consecutive lines in one column."""
    out: list[str] = []
    i = 0
    while i < len(rows):
        code, comment = rows[i]
        if comment is None:
            out.append(code)
            i += 1
            continue
        indent = len(code) - len(code.lstrip(" "))
        j = i
        while (
            j < len(rows)
            and rows[j][1] is not None
            and len(rows[j][0]) - len(rows[j][0].lstrip(" ")) == indent
        ):
            j += 1
        column = max(len(c) for c, _ in rows[i:j]) + len(COMMENT_GAP)
        out.extend(c.ljust(column) + t for c, t in rows[i:j])  # type: ignore[operator]
        i = j
    return out


def format_source(data: bytes | str, path: str) -> tuple[str | None, SyntaxProblem | None]:
    """Parse and format; (formatted text, None) or (None, the syntax problem)."""
    diagram, problem = parse_source(data, path)
    if problem is not None:
        return None, problem
    assert diagram is not None
    return format_diagram(diagram), None
