"""Text -> `Diagram`: decoding, the lark LALR parser, and syntax errors in words.

The grammar lives in `grammar/diagram.lark` (shipped inside the package as
`linter/grammar/diagram.lark`). The model is built *while* parsing (an inline
lark Transformer), so no parse tree is ever kept. Syntax errors become a single
`syntax-error` finding that says in words what was expected, never lark's token
names.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from pathlib import Path

from lark import Lark, Token, Transformer
from lark.exceptions import UnexpectedCharacters, UnexpectedInput, UnexpectedToken

from .gcpause import collector_paused
from .model import (
    DEFAULT_ANALYSIS,
    DEFAULT_EFFECT,
    KEYWORDS,
    RESERVED_WORDS,
    Analysis,
    Arrow,
    ArrowStatement,
    Comment,
    Diagram,
    Entry,
    LabelStatement,
    Name,
    NameRow,
    PeriodStatement,
    Span,
    TitleStatement,
    UnmeasuredStatement,
)
from .model import (
    OPERATORS as _OPERATORS,
)


@dataclass(frozen=True)
class SyntaxProblem(Exception):
    """A syntax error at a place, with a message in words and the source excerpt."""

    message: str
    span: Span
    excerpt: str


def grammar_text() -> str:
    """The grammar, from the installed package or, in a source checkout, from grammar/."""
    try:
        return resources.files("dagward.grammar").joinpath("diagram.lark").read_text("utf-8")
    except (ModuleNotFoundError, FileNotFoundError, OSError):
        here = Path(__file__).resolve().parent.parent / "grammar" / "diagram.lark"
        return here.read_text("utf-8")


# --- building the model while parsing ---------------------------------------------

_ARROW_LINE_PIECE = re.compile(r"[^\W\d][\w.]*|<->|->|,|#[^\n]*")
# the most common line, `a -> b  # reason`, in one match
_SINGLE_ARROW = re.compile(
    r"[ \t]*([^\W\d][\w.]*)[ \t]*(<?->)[ \t]*([^\W\d][\w.]*)[ \t]*(#[^\n]*)?\n"
)


class _ReservedName(Exception):
    def __init__(self, token: Name):
        self.name = token


def _span(tok: Token) -> Span:
    return Span(tok.line, tok.column, tok.end_line, tok.end_column)


def _name(tok: Token) -> Name:
    return Name(str(tok), Span(tok.line, tok.column, tok.line, tok.end_column))


def _join(first: Span, last: Span) -> Span:
    return Span(first.line, first.column, last.end_line, last.end_column)


def _make_arrows(groups: list[tuple[Name, ...]], operators: list[str]) -> tuple[Arrow, ...]:
    arrows = []
    for i, op in enumerate(operators):
        bidirected = op == "<->"
        for src in groups[i]:
            for dst in groups[i + 1]:
                arrows.append(
                    Arrow(src.text, dst.text, bidirected, src.span.line, src.span.column,
                          dst.span.column)
                )  # fmt: skip
    return tuple(arrows)


class _Builder(Transformer):
    """Inline transformer: lark calls these as it reduces, bottom-up."""

    def __init__(self) -> None:
        super().__init__(visit_tokens=False)
        self.comments: list[Comment] = []
        self.reset()

    def reset(self) -> None:
        """Forget the previous file (called before every parse)."""
        self.comments = []
        # Every occurrence of a name shares one str (a variable is named on
        # several lines); the dict lives for one parse only.
        self.texts: dict[str, str] = {}

    def _name(self, tok: Token) -> Name:
        text = str(tok)
        text = self.texts.setdefault(text, text)
        return Name(text, Span(tok.line, tok.column, tok.line, tok.end_column))

    # statements -------------------------------------------------------------
    def names(self, children):
        # The contextual lexer reads `none` as a name where only names fit
        # (`exposure: none`); it is reserved for `adjust: none`.
        names = tuple(self._name(t) for t in children if t.type == "NAME")
        for n in names:
            if n.text in RESERVED_WORDS:
                raise _ReservedName(n)
        return names

    def title(self, children):
        kw, string = children
        return TitleStatement(str(string), _join(_span(kw), _span(string)))

    def unmeasured(self, children):
        kw, names = children
        return UnmeasuredStatement(NameRow.of(names), _join(_span(kw), names[-1].span))

    def label(self, children):
        kw, target, string = children
        return LabelStatement(self._name(target), str(string), _join(_span(kw), _span(string)))

    def period(self, children):
        kw, period, _colon, names = children
        return PeriodStatement(
            self._name(period), NameRow.of(names), _join(_span(kw), names[-1].span)
        )

    def arrows(self, children):
        groups = children[0::2]
        operators = [_OPERATORS[t] for t in children[1::2]]
        arrows = _make_arrows(groups, operators)
        if len(arrows) == 1:
            return ArrowStatement.single(arrows[0])
        return ArrowStatement(
            tuple(groups),
            tuple(operators),
            arrows,
            _join(groups[0][0].span, groups[-1][-1].span),
        )

    def arrow_line(self, children):
        """One ARROW_LINE token: a run of well-formed arrow lines, each at column 1."""
        (tok,) = children
        if tok.count("\n") == 1:
            return [self._arrow_statement(tok, tok.line, tok.column)]
        # one line at a time (a list of every line of a long run would be as
        # large as the text again, all at once)
        out, start, line, arrow_statement = [], 0, tok.line, self._arrow_statement
        while start < len(tok):
            end = tok.index("\n", start) + 1
            out.append(arrow_statement(tok[start:end], line, 1))
            start, line = end, line + 1
        return out

    def _arrow_statement(self, tok: str, line: int, col0: int) -> ArrowStatement:
        """Split one arrow line (with its newline) into names and operators.

        This runs once per line of a large diagram, so it builds the tuples
        directly rather than through helpers.
        """
        single = _SINGLE_ARROW.fullmatch(tok)
        if single is not None:
            src, op, dst, comment = single.groups()
            if src not in RESERVED_WORDS and dst not in RESERVED_WORDS:
                texts = self.texts
                if comment is not None:
                    c4 = col0 + single.start(4)
                    self.comments.append(
                        Comment(comment, Span(line, c4, line, c4 + len(comment)), True)
                    )
                # the one-arrow statement keeps only the arrow, which keeps only
                # the shared name strings, the line and the columns
                return ArrowStatement.single(
                    Arrow(texts.setdefault(src, src), texts.setdefault(dst, dst), op == "<->",
                          line, col0 + single.start(1), col0 + single.start(3))
                )  # fmt: skip
        groups: list[tuple[Name, ...]] = []
        current: list[Name] = []
        operators: list[str] = []
        for m in _ARROW_LINE_PIECE.finditer(tok):
            piece = m.group()
            ch = piece[0]
            if ch == ",":
                continue
            if ch == "-" or ch == "<":
                operators.append(_OPERATORS[piece])
                groups.append(tuple(current))
                current = []
            elif ch == "#":
                col = col0 + m.start()
                self.comments.append(Comment(piece, Span(line, col, line, col + len(piece)), True))
            else:
                if piece in RESERVED_WORDS:
                    col = col0 + m.start()
                    raise _ReservedName(Name(piece, Span(line, col, line, col + len(piece))))
                col = col0 + m.start()
                piece = self.texts.setdefault(piece, piece)
                current.append(Name(piece, Span(line, col, line, col + len(piece))))
        groups.append(tuple(current))
        first, last = groups[0][0].span, groups[-1][-1].span
        arrows = _make_arrows(groups, operators)
        if len(arrows) == 1:
            return ArrowStatement.single(arrows[0])
        return ArrowStatement(
            tuple(groups), tuple(operators), arrows, Span(line, first.column, line, last.end_column)
        )

    def entry(self, children):
        key, _colon, value = children
        if isinstance(value, Token):
            if value.type == "EFFECT_KIND":  # `effect: natural-direct`
                return Entry(str(key), _span(key), (), False, _join(_span(key), _span(value)),
                             _name(value))  # fmt: skip
            # `adjust: none`
            return Entry(str(key), _span(key), (), True, _join(_span(key), _span(value)))
        return Entry(str(key), _span(key), value, False, _join(_span(key), value[-1].span))

    def analysis(self, children):
        kw = children[0]
        name_token = None
        i = 1
        if isinstance(children[1], Token) and children[1].type == "NAME":
            name_token = self._name(children[1])
            i = 2
        brace = children[i]
        entries = []
        last_statement_line = brace.line
        for item in children[i + 1 : -1]:
            if isinstance(item, Entry):
                entries.append(item)
                last_statement_line = item.span.line
            else:  # an EOL token, maybe with a comment
                self._eol(item, last_statement_line)
        closing = children[-1]
        return Analysis(
            name=name_token.text if name_token else DEFAULT_ANALYSIS,
            name_token=name_token,
            header=_join(_span(kw), _span(brace)),
            entries=tuple(entries),
            closing_line=closing.line,
        )

    def _eol(self, tok: Token, statement_line: int) -> None:
        if tok[0] == "#":
            text = tok.rstrip("\n")
            self.comments.append(
                Comment(text, Span.at(tok.line, tok.column, len(text)), tok.line == statement_line)
            )

    def start(self, children):
        statements = []
        last_line = 0
        for item in children:
            if isinstance(item, Token):  # EOL
                self._eol(item, last_line)
            elif isinstance(item, list):  # arrow_line: a run of arrow statements
                statements.extend(item)
                last_line = item[-1].span.line
            else:
                statements.append(item)
                last_line = item.closing_line if isinstance(item, Analysis) else item.span.end_line
        return statements


@lru_cache(maxsize=1)
def _parser() -> tuple[Lark, _Builder]:
    # The builder is bound once (binding per parse would rebuild the parse table);
    # its per-file state is reset before every parse. Not thread-safe, by design.
    builder = _Builder()
    lark = Lark(
        grammar_text(),
        parser="lalr",
        lexer="contextual",
        transformer=builder,
        maybe_placeholders=False,
    )
    return lark, builder


@lru_cache(maxsize=1)
def _token_lexer() -> Lark:
    """The same grammar with the basic lexer, to re-lex a line when explaining an error
    (the contextual lexer needs a parser state). Built on the first syntax error only."""
    return Lark(grammar_text(), parser="lalr", lexer="basic", maybe_placeholders=False)


def _parse_statements(text: str) -> tuple[list, list[Comment]]:
    lark, builder = _parser()
    builder.reset()
    try:
        with collector_paused():  # see linter/gcpause.py
            statements = lark.parse(text)
        comments = sorted(builder.comments, key=lambda c: (c.span.line, c.span.column))
    finally:
        builder.reset()  # the builder keeps nothing of this file
    return statements, comments


# --- decoding ----------------------------------------------------------------------


def decode(data: bytes, path: str) -> tuple[str | None, SyntaxProblem | None]:
    """Bytes -> text: UTF-8 (a leading BOM dropped), CRLF -> LF; problems as findings."""
    nul = data.find(b"\x00")
    if nul >= 0:
        line, col = _byte_position(data, nul)
        return None, SyntaxProblem(
            "this looks like a binary file, not a diagram: it contains a NUL byte",
            Span.at(line, col),
            "",
        )
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as e:
        line, col = _byte_position(data, e.start)
        return None, SyntaxProblem(
            f"the file is not UTF-8 text: byte 0x{data[e.start]:02x} cannot be decoded; "
            "save it as UTF-8",
            Span.at(line, col),
            "",
        )
    if text.startswith("\ufeff"):
        text = text[1:]
    return text.replace("\r\n", "\n"), None


def _byte_position(data: bytes, offset: int) -> tuple[int, int]:
    line_start = data.rfind(b"\n", 0, offset) + 1
    line = data.count(b"\n", 0, offset) + 1
    prefix = data[line_start:offset].decode("utf-8", errors="replace")
    return line, len(prefix) + 1


# --- the entry point -----------------------------------------------------------------


def parse_source(data: bytes | str, path: str) -> tuple[Diagram | None, SyntaxProblem | None]:
    """Parse a diagram. Returns (diagram, None) or (None, the syntax problem)."""
    if isinstance(data, bytes):
        text, problem = decode(data, path)
        if problem is not None:
            return None, problem
    else:
        text = data.removeprefix("\ufeff").replace("\r\n", "\n")
    assert text is not None
    parse_text = text if text.endswith("\n") else text + "\n"
    try:
        statements, comments = _parse_statements(parse_text)
    except _ReservedName as e:
        return None, _problem(parse_text, e.name.span, _reserved_message(e.name.text))
    except UnexpectedInput as e:
        return None, _explain(parse_text, e)
    for statement in statements:
        if isinstance(statement, Analysis):
            for key in ("exposure", "outcome"):
                if statement.entry(key) is None:
                    return None, _problem(
                        parse_text,
                        statement.header,
                        f"analysis `{statement.name}` has no `{key}:` line; "
                        "an analysis needs an exposure and an outcome",
                    )
            if statement.effect != DEFAULT_EFFECT and statement.entry("mediator") is None:
                assert statement.effect_span is not None
                return None, _problem(
                    parse_text,
                    statement.effect_span,
                    f"analysis `{statement.name}` asks for the {_EFFECT_WORDS[statement.effect]}"
                    " but has no `mediator:` line; name the variables the effect is taken "
                    "through, for example `mediator: fitness_12m`",
                )
    return (
        Diagram(
            path=path,
            source=text,
            statements=statements,
            comments=comments,
            line_count=parse_text.count("\n"),
        ),
        None,
    )


# --- syntax errors in words ------------------------------------------------------------

_KEYWORDS = {w.upper(): w for w in KEYWORDS}
_EFFECT_WORDS = {
    "controlled-direct": "controlled direct effect",
    "natural-direct": "natural direct effect",
    "natural-indirect": "natural indirect effect",
}
_ENTRY_KEYS = ("EXPOSURE", "OUTCOME", "ADJUST", "EFFECT", "MEDIATOR", "RESTRICTED")
_ENTRY_KEY_NAMES = frozenset(k.lower() for k in _ENTRY_KEYS)
_ENTRY_KEY_WORDS = "`exposure:`, `outcome:`, `adjust:`, `effect:`, `mediator:` or `restricted:`"
_WORDS = {
    "NAME": "a variable name",
    "ARROW": "`->` or `<->`",
    "COMMA": "`,`",
    "COLON": "`:`",
    "STRING": 'a quoted string such as "text"',
    "EOL": "the end of the line",
    "LBRACE": "`{`",
    "RBRACE": "`}`",
    "ARROW_LINE": "an arrow statement",
    "EFFECT_KIND": "`total`, `controlled-direct`, `natural-direct` or `natural-indirect`",
    "$END": "the end of the file",
}
# Terminals that can start a top-level statement; when they are what is expected,
# say "a statement" instead of listing them.
_STATEMENT_STARTERS = {"TITLE", "UNMEASURED", "LABEL", "PERIOD", "ANALYSIS", "ARROW_LINE"}
_ORDER = [
    "NAME", "ARROW", "COMMA", "COLON", "STRING", "LBRACE", "RBRACE", "NONE",
    "EXPOSURE", "OUTCOME", "ADJUST", "EFFECT", "MEDIATOR", "RESTRICTED", "EFFECT_KIND", "EOL",
]  # fmt: skip
# Longest piece of the user's text quoted inside a message, and the width of the
# excerpt around the error column: a 5 MB line is never echoed in full.
_QUOTE_LIMIT = 40
_EXCERPT_HALF = 60
_NAME_RE = re.compile(r"[^\W\d][\w.]*")


def _quote(text: str, limit: int = _QUOTE_LIMIT) -> str:
    """The text for a message, cut in the middle when long."""
    text = text.rstrip("\n")
    if len(text) <= limit:
        return text
    half = (limit - 3) // 2
    return f"{text[:half]}...{text[-half:]} ({len(text):,} characters)"


def _reserved_message(word: str) -> str:
    return (
        f"`{word}` is a reserved word and cannot be a variable name; "
        f"rename the variable (for example `{word}_var`)"
    )


def _line_text(text: str, number: int) -> str:
    """Line `number` (1-based) without splitting the whole text (it may be huge)."""
    start = 0
    for _ in range(number - 1):
        start = text.find("\n", start) + 1
        if start == 0:
            return ""
    end = text.find("\n", start)
    return text[start:] if end < 0 else text[start:end]


def _excerpt(text: str, span: Span) -> str:
    line = _line_text(text, span.line) if span.line > 0 else ""
    column = span.column
    if len(line) > 2 * _EXCERPT_HALF + 1:
        # a long line: the part around the column, the cuts marked with `...`
        lo = max(0, column - 1 - _EXCERPT_HALF)
        hi = min(len(line), column - 1 + _EXCERPT_HALF)
        head = "..." if lo > 0 else ""
        line = head + line[lo:hi] + ("..." if hi < len(line) else "")
        column = column - lo + len(head)
    # keep tabs so the caret lines up under the offending character in a terminal
    pad = "".join(ch if ch == "\t" else " " for ch in line[: column - 1])
    return f"{line}\n{pad}^"


def _problem(text: str, span: Span, message: str) -> SyntaxProblem:
    return SyntaxProblem(message, span, _excerpt(text, span))


def _describe_found(tok: Token) -> str:
    if tok.type == "$END":
        return "the end of the file"
    if tok.type == "EOL":
        return "the end of the line" if tok[0] != "#" else "a comment"
    if tok.type == "ARROW_LINE":
        return "an arrow statement"
    if tok.type == "STRING":
        return f"the string {_quote(tok)}"
    return f"`{_quote(tok)}`"


def _alternatives(expected: set[str]) -> str:
    if _STATEMENT_STARTERS & expected and "NAME" in expected:
        return (
            "a statement (an arrow such as `a -> b`, or one of `title`, `unmeasured`, "
            "`label`, `period`, `analysis`)"
        )
    words = []
    if set(_ENTRY_KEYS) <= expected:
        words.append(_ENTRY_KEY_WORDS)
        expected = expected - set(_ENTRY_KEYS)
    for term in _ORDER:
        if term in expected:
            words.append(_WORDS.get(term) or f"`{_KEYWORDS.get(term, term.lower())}`")
    if not words:
        words = ["something else"]
    if len(words) == 1:
        return words[0]
    return ", ".join(words[:-1]) + " or " + words[-1]


def _previous_tokens(text: str, upto: int, from_line_start: bool = True) -> list[Token]:
    """Re-lex the text before the error (errors only; costs nothing on good files).

    Statements are lines, so the tokens of the error's own line are enough, except
    when looking for an unclosed `{` (then the whole text before the error).
    """
    lark = _token_lexer()
    start = text.rfind("\n", 0, upto) + 1 if from_line_start else 0
    if from_line_start and upto - start > 4096:
        # a huge line: the last few thousand characters, cut at a space, suffice
        start = max(start, text.rfind(" ", 0, upto - 4096) + 1)
    out = []
    try:
        for tok in lark.lex(text[start:upto]):
            out.append(tok)
    except UnexpectedInput:
        pass
    # positions in the file, not in the slice
    line_start = text.rfind("\n", 0, start) + 1
    lines_before = text.count("\n", 0, start)
    for tok in out:
        if tok.line == 1:
            tok.column += start - line_start
            tok.end_column += start - line_start
        tok.line += lines_before
        tok.end_line += lines_before
    return out


def _end_span(text: str) -> Span:
    lines = text.rstrip("\n").split("\n")
    return Span.at(len(lines), len(lines[-1]) + 1)


def _explain(text: str, e: UnexpectedInput) -> SyntaxProblem:
    if isinstance(e, UnexpectedCharacters):
        span = Span.at(e.line, e.column)
        ch = e.char
        if ch == '"':
            msg = 'this string is not closed: end it with `"` on the same line'
        elif ch.isdigit():
            msg = f"a name cannot start with a digit (`{ch}`): start it with a letter or `_`"
        elif ch in "<-=>":
            msg = (
                f"unexpected `{ch}`: arrows are written `->` (cause) or `<->` (shared hidden cause)"
            )
        elif ch == ";":
            msg = "unexpected `;`: statements end at the end of the line, without `;`"
        else:
            msg = (
                f"unexpected character `{ch}`: names use letters, digits, `_` and `.`, "
                "and start with a letter or `_`"
            )
        return _problem(text, span, msg)

    tok: Token = e.token if isinstance(e, UnexpectedToken) else Token("$END", "")
    expected = set(getattr(e, "expected", ()) or ())
    if tok.type == "$END" or tok.line is None:
        start = len(text)
        span = _end_span(text)
    else:
        start = tok.start_pos
        first_line = str(tok).split("\n", 1)[0]  # an ARROW_LINE token may span lines
        span = Span(tok.line, tok.column, tok.line, tok.column + max(len(first_line), 1))
    before = _previous_tokens(text, start)
    prev = next((t for t in reversed(before)), None)

    if tok.type == "$END" and "RBRACE" in expected:
        whole = _previous_tokens(text, start, from_line_start=False)
        opening = next((t for t in reversed(whole) if t.type == "LBRACE"), None)
        if opening is not None:
            return _problem(
                text,
                _span(opening),
                "this `{` opens an analysis block that is never closed: "
                "add a line with `}` after its entries",
            )
    line_tokens = [t for t in before if t.type != "EOL"]
    first = line_tokens[0] if line_tokens else None
    in_entry = first is not None and first.type in _ENTRY_KEYS
    if tok.type == "NONE" and "NAME" in expected and "NONE" not in expected:
        return _problem(text, span, _reserved_message(str(tok)))
    if "EFFECT_KIND" in expected:
        return _problem(
            text,
            span,
            f"`effect:` takes one of {_WORDS['EFFECT_KIND']}, found {_describe_found(tok)}",
        )
    if first is not None and first.type == "EFFECT" and tok.type != "EOL":
        return _problem(text, span, "`effect:` takes a single effect; end the line after it")
    if (
        prev is not None
        and (prev.type == "NAME" or (prev is not first and _NAME_RE.fullmatch(str(prev))))
        and _NAME_RE.fullmatch(str(tok)) is not None
        and expected & {"COMMA", "ARROW"}
    ):
        # `exposure: Bike commute`, `adjust: age incom`, `unmeasured a b`, `a b -> c`
        joined = f"{prev}_{tok}"
        listed = f"{prev}, {tok}"
        where = "inside an analysis entry, " if in_entry else ""
        return _problem(
            text,
            span,
            f"{where}a name cannot contain a space, and the names of a list are separated "
            f"by commas: write `{_quote(joined)}` for one variable or `{_quote(listed)}` "
            "for two",
        )
    if tok.type == "ARROW_LINE" and "RBRACE" in expected:
        return _problem(
            text, span, "arrows go outside analysis blocks: close the block with `}` first"
        )
    if tok.type in ("NAME", *_KEYWORDS) and set(_ENTRY_KEYS) <= expected:
        rest = _line_text(text, span.line)[span.column - 1 :]
        if "->" in rest:
            return _problem(
                text, span, "arrows go outside analysis blocks: close the block with `}` first"
            )
        return _problem(
            text,
            span,
            f"unknown key `{_quote(tok)}`: an analysis block holds {_ENTRY_KEY_WORDS} lines, "
            "and ends with `}`",
        )
    if (
        first is not None
        and prev is first
        and first.type in _STATEMENT_STARTERS
        and tok.type in ("ARROW", "COMMA")
    ):
        # `period -> x` is an arrow line (ARROW_LINE) when well formed; this one is not,
        # so find its error with the word read as a plain name.
        line = _line_text(text, first.line)
        cut = first.column - 1
        stand_in = line[:cut] + "v" * len(first) + line[cut + len(first) :]
        _, inner = parse_source(stand_in, "<line>")
        if inner is not None:
            where = Span(first.line, inner.span.column, first.line, inner.span.end_column)
            return _problem(text, where, inner.message)
    if (
        tok.type == "COLON"
        and prev is not None
        and prev is first
        and str(prev) in _ENTRY_KEY_NAMES
        and "ARROW" in expected
    ):
        # `exposure: smoking` outside an analysis block
        return _problem(
            text,
            _span(prev),
            f"`{prev}:` lines go inside an analysis block: "
            f"`analysis {{`, then `{prev}: ...` and the other keys, then `}}`",
        )
    found = _describe_found(tok)
    alternatives = _alternatives(expected)
    if prev is None or prev.type == "EOL" or prev.type == "ARROW_LINE":
        msg = f"expected {alternatives}, found {found}"
    else:
        msg = f"expected {alternatives} after `{_quote(str(prev))}`, found {found}"
    return _problem(text, span, msg)
