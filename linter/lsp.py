"""The language server (`dagward language-server`): LSP over stdio, built on pygls.

Only `commands/language_server.py` imports this module, so no other command
needs pygls. The editor features read the same things the command line does:

* diagnostics are `engine.lint_source` on the buffer text, with the settings
  `config` finds for the file, re-run a short while after the last keystroke;
* hover, definition and rename work on the occurrences of a name in the parsed
  `Diagram` (every name token carries its span), never on a text search, so a
  name inside a comment or a label string is left alone;
* formatting is `fmt.format_source`.

The pure functions (occurrences, hover text, rename edits, completion items) take
a `Diagram` and plain positions and are tested directly; the server wires them
to the protocol (pygls 2, lsprotocol types).
"""

from __future__ import annotations

import asyncio
import re
import weakref
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from urllib.parse import unquote, urlparse

from lsprotocol import types
from pygls.exceptions import JsonRpcException
from pygls.lsp.server import LanguageServer

from .engine import FileResult, lint_source
from .findings import Finding
from .gcpause import collector_paused
from .model import (
    RESERVED_WORDS,
    Analysis,
    ArrowStatement,
    Diagram,
    LabelStatement,
    PeriodStatement,
    Span,
    UnmeasuredStatement,
)
from .version import __version__

# Seconds of quiet after an edit before the buffer is linted again: long enough
# not to lint every keystroke, short enough to feel immediate (common practice
# in editors is a few hundred milliseconds).
DEBOUNCE_SECONDS = 0.3

# The name syntax of grammar/diagram.lark (NAME), for rename.
NAME_PATTERN = re.compile(r"[^\W\d][\w.]*")

# Listing the paths through a variable enumerates paths, which grows
# exponentially with the diagram; above this size the hover shows the one open
# path the linear search finds instead (as `check` does).
PATH_LISTING_MAX_VARIABLES = 60
PATH_LISTING_LIMIT = 200
PATHS_SHOWN = 5

ENTRY_KEYS = ("exposure", "outcome", "adjust", "effect", "mediator", "restricted")
STATEMENT_KEYWORDS = ("title", "label", "unmeasured", "period", "analysis")

SEVERITY_TO_LSP = {
    "error": types.DiagnosticSeverity.Error,
    "warning": types.DiagnosticSeverity.Warning,
    "info": types.DiagnosticSeverity.Information,
}


# --- occurrences of names -----------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Occurrence:
    """One place a variable name is written: `kind` says in what statement."""

    name: str
    span: Span
    kind: str  # "arrow", "unmeasured", "period", "label", or the analysis key


def occurrences(diagram: Diagram) -> list[Occurrence]:
    """Every occurrence of a variable name, in file order.

    Period and analysis names are not variables and are not listed.
    """
    out: list[Occurrence] = []
    for s in diagram.statements:
        if isinstance(s, ArrowStatement):
            out.extend(Occurrence(n.text, n.span, "arrow") for g in s.groups for n in g)
        elif isinstance(s, UnmeasuredStatement):
            out.extend(Occurrence(n.text, n.span, "unmeasured") for n in s.names)
        elif isinstance(s, PeriodStatement):
            out.extend(Occurrence(n.text, n.span, "period") for n in s.names)
        elif isinstance(s, LabelStatement):
            out.append(Occurrence(s.target.text, s.target.span, "label"))
        elif isinstance(s, Analysis):
            for e in s.entries:
                out.extend(Occurrence(n.text, n.span, e.key) for n in e.names)
    return out


@dataclass(frozen=True)
class NameIndex:
    """The occurrences of one parsed buffer by line and by name, built once, so
    a hover or a rename on a large diagram does not walk the whole file again."""

    by_line: dict[int, tuple[Occurrence, ...]]
    by_name: dict[str, tuple[Span, ...]]


_INDEXES: weakref.WeakKeyDictionary[Diagram, NameIndex] = weakref.WeakKeyDictionary()


def name_index(diagram: Diagram) -> NameIndex:
    found = _INDEXES.get(diagram)
    if found is None:
        by_line: dict[int, list[Occurrence]] = {}
        by_name: dict[str, list[Span]] = {}
        with collector_paused():  # many small objects, no cycles (see linter/gcpause.py)
            for o in occurrences(diagram):
                by_line.setdefault(o.span.line, []).append(o)
                by_name.setdefault(o.name, []).append(o.span)
            found = NameIndex(
                {k: tuple(v) for k, v in by_line.items()},
                {k: tuple(v) for k, v in by_name.items()},
            )
        _INDEXES[diagram] = found
    return found


def occurrence_at(diagram: Diagram, line: int, column: int) -> Occurrence | None:
    """The variable name at a 1-based line and column (the end of a name counts,
    so a cursor just after the last letter still finds it)."""
    for o in name_index(diagram).by_line.get(line, ()):
        if o.span.column <= column <= o.span.end_column:
            return o
    return None


def definition(diagram: Diagram, name: str) -> Span | None:
    """The variable's first appearance: where it enters the diagram (an arrow,
    `unmeasured` or `period` statement; a `label` does not create a variable),
    as the rules and README define it. None for a name that is no variable."""
    first = diagram.variables.get(name)
    return None if first is None else first.span


class RenameRefused(ValueError):
    """The new name is not allowed; the message says why."""


def rename_spans(diagram: Diagram, old: str, new: str) -> list[Span]:
    """Every span to rewrite to rename `old` to `new`; refuses names the file
    could not hold or that would merge two variables."""
    if not NAME_PATTERN.fullmatch(new):
        raise RenameRefused(
            f"`{new}` is not a variable name: it must start with a letter or `_` "
            "and go on with letters, digits, `_` or `.`"
        )
    if new in RESERVED_WORDS:
        raise RenameRefused(f"`{new}` is a reserved keyword of the diagram language")
    if new != old and new in diagram.variables:
        raise RenameRefused(f"`{new}` is already a variable of this diagram")
    return list(name_index(diagram).by_name.get(old, ()))


# --- hover --------------------------------------------------------------------------


def analysis_facts(diagram: Diagram, analysis: Analysis) -> Any:
    """The verdict on the analysis (the object `check` and every command read)."""
    from .verdict import verdict_of

    return verdict_of(diagram, analysis)


def _roles(name: str, analysis: Analysis, facts: Any) -> list[str]:
    roles = []
    if name in analysis.exposure_set:
        roles.append("exposure")
    if name in analysis.outcome_set:
        roles.append("outcome")
    if name not in analysis.exposure_set and name not in analysis.outcome_set:
        if name in facts.mediators:
            roles.append("mediator (on a causal path from the exposure to the outcome)")
        elif name in facts.forbidden:
            roles.append("affected by the exposure")
    declared = analysis.adjust_set
    if declared is None:
        roles.append("no adjustment set declared")
    elif name in declared:
        roles.append("adjusted")
    elif name not in analysis.exposure_set and name not in analysis.outcome_set:
        roles.append("not adjusted")
    return roles


def _open_paths_through(
    name: str, diagram: Diagram, analysis: Analysis, facts: Any
) -> tuple[list[str], str | None]:
    """Open paths between exposure and outcome (given the declared set) that pass
    through `name`, spelt out; and a note when the listing is incomplete."""
    from .causal import describe_path, enumerate_paths
    from .wording import spell_path

    adjust = analysis.adjust_set or frozenset()
    graph = diagram.graph
    inner = lambda path: name in path[1:-1]  # noqa: E731
    if len(diagram.variables) > PATH_LISTING_MAX_VARIABLES:
        witnesses = [p.path for p in facts.problems if p.path and inner(p.path)]
        shown = [f"{spell_path(graph, w)} (not causal)" for w in witnesses[:PATHS_SHOWN]]
        note = (
            f"the diagram has over {PATH_LISTING_MAX_VARIABLES} variables, so only the open "
            "non-causal path `check` reports is looked at; `dagward paths` lists them all"
        )
        return shown, note
    paths, cut = enumerate_paths(graph, analysis.exposure_set, analysis.outcome_set,
                                 PATH_LISTING_LIMIT)  # fmt: skip
    shown = []
    for path in paths:
        if not inner(path):
            continue
        info = describe_path(graph, path, analysis.exposure_set, adjust)
        if info.open:
            shown.append(f"{spell_path(graph, path)} ({'causal' if info.causal else 'not causal'})")
    note = None
    if len(shown) > PATHS_SHOWN:
        note = f"{len(shown) - PATHS_SHOWN} more; `dagward paths` lists them all"
        shown = shown[:PATHS_SHOWN]
    elif cut:
        note = f"only the first {PATH_LISTING_LIMIT} paths were looked at"
    return shown, note


def hover_markdown(result: FileResult, name: str) -> str:
    """What the editor shows on a variable: label, roles, open paths (Markdown)."""
    diagram = result.diagram
    assert diagram is not None
    lines = [f"**`{name}`**"]
    label = diagram.labels.get(name)
    if label:
        lines.append(f"\n{label}")
    if name not in diagram.variables:
        lines.append(
            "\nNot a variable of this diagram (no arrow, `unmeasured` or `period` names it)."
        )
        return "\n".join(lines)
    lines.append("\nunmeasured" if name in diagram.unmeasured else "\nmeasured")
    if not result.causal_ran:
        lines.append("\nRoles and paths are shown once the structure errors are fixed.")
        return "\n".join(lines)
    for analysis in diagram.analyses:
        if not analysis.exposure_set or not analysis.outcome_set:
            continue
        facts = analysis_facts(diagram, analysis)
        lines.append(
            f"\n**analysis `{analysis.name}`:** {', '.join(_roles(name, analysis, facts))}"
        )
        if name in analysis.exposure_set or name in analysis.outcome_set:
            continue
        shown, note = _open_paths_through(name, diagram, analysis, facts)
        if shown:
            lines.append("\nopen paths through it, given the declared adjustment set:")
            lines.extend(f"- `{p}`" for p in shown)
        else:
            lines.append("\nno open path between exposure and outcome passes through it")
        if note:
            lines.append(f"\n({note})")
    return "\n".join(lines)


# --- completion ---------------------------------------------------------------------

_WORD = re.compile(r"[^\W\d][\w.]*")


def _in_analysis_block(text_before: str) -> bool:
    """Whether the cursor is inside `analysis ... { }` (comments and strings aside)."""
    depth = 0
    for line in text_before.split("\n"):
        code = _code_part(line)
        depth += code.count("{") - code.count("}")
    return depth > 0


def _code_part(line: str) -> str:
    out, in_string, i = [], False, 0
    while i < len(line):
        ch = line[i]
        if in_string:
            if ch == "\\":
                i += 1
            elif ch == '"':
                in_string = False
        elif ch == '"':
            in_string = True
        elif ch == "#":
            break
        else:
            out.append(ch)
        i += 1
    return "".join(out)


def completion_words(text: str, line: int, column: int, known: list[str]) -> list[tuple[str, str]]:
    """(word, kind) pairs to offer at a 1-based position: the entry keys inside an
    analysis block at the start of an entry, statement keywords at the start of a
    top-level line, and variable names elsewhere. `known` are the variables of the
    last version of the buffer that parsed (the text being typed rarely does)."""
    lines = text.split("\n")
    current = lines[line - 1] if line - 1 < len(lines) else ""
    before_cursor = current[: column - 1]
    text_before = "\n".join(lines[: line - 1] + [before_cursor])
    at_line_start = _WORD.fullmatch(before_cursor.strip()) is not None or not before_cursor.strip()
    inside = _in_analysis_block(text_before)
    out: list[tuple[str, str]] = []
    if at_line_start and ":" not in before_cursor:
        keys = ENTRY_KEYS if inside else STATEMENT_KEYWORDS
        out.extend((k, "keyword") for k in keys)
        if inside:
            return out
    names = dict.fromkeys(known)
    # names typed since the last good parse; a keyword counts only once it is a
    # variable of the diagram (keywords are names wherever a name fits)
    keywords = set(ENTRY_KEYS) | set(STATEMENT_KEYWORDS) | RESERVED_WORDS
    for raw in lines:
        for word in _WORD.findall(_code_part(raw)):
            if word not in keywords or word in names:
                names.setdefault(word)
    typing = re.search(r"[\w.]*$", before_cursor).group(0)  # the word being typed
    out.extend((n, "variable") for n in names if n != typing or n in known)
    return out


# --- the server ---------------------------------------------------------------------


def path_of(uri: str) -> str:
    parsed = urlparse(uri)
    if parsed.scheme == "file":
        return unquote(parsed.path)
    return uri  # an unsaved buffer: its URI stands for the file name


def is_diagram(uri: str, language_id: str | None) -> bool:
    """A `.dag` file, or any buffer the editor calls `dag` (an unsaved one, say)."""
    return language_id == "dag" or path_of(uri).endswith(".dag")


@dataclass(frozen=True)
class Options:
    """The server's command-line options, applied as `check` applies them."""

    config: str | None = None
    enable: tuple[str, ...] = ()
    disable: tuple[str, ...] = ()


def settings_for(path: str, options: Options = Options()):
    """The settings `check` would use for this file: `--config`, or the nearest
    configuration upwards from the file's folder; then --enable/--disable."""
    from .config import load_settings

    folder = Path(path).parent if Path(path).parent.is_dir() else Path.cwd()
    settings = load_settings(options.config, cwd=folder)
    return settings.with_overrides(list(options.enable), list(options.disable))


class DiagramServer(LanguageServer):
    """Keeps the last lint result of each open document."""

    def __init__(self, options: Options = Options()) -> None:
        super().__init__("dagward", __version__)
        self.options = options
        self.results: dict[str, FileResult] = {}
        self.last_good: dict[str, Diagram] = {}
        self.pending: dict[str, asyncio.TimerHandle] = {}
        self.ignored: set[str] = set()  # open documents that are not diagrams
        self.linted_version: dict[str, int | None] = {}

    # positions: our spans are 1-based code points; the client counts in its
    # negotiated encoding (UTF-16 unless it asked otherwise)
    def to_range(self, uri: str, span: Span) -> types.Range:
        doc = self.workspace.get_text_document(uri)
        lines = doc.lines
        codec = doc.position_codec
        start = codec.position_to_client_units(
            lines, types.Position(line=span.line - 1, character=span.column - 1)
        )
        end = codec.position_to_client_units(
            lines, types.Position(line=span.end_line - 1, character=span.end_column - 1)
        )
        return types.Range(start=start, end=end)

    def from_position(self, uri: str, position: types.Position) -> tuple[int, int]:
        doc = self.workspace.get_text_document(uri)
        p = doc.position_from_client_units(position)
        return p.line + 1, p.character + 1

    def lint(self, uri: str) -> None:
        """Lint the document as it is now and publish the findings (blocking)."""
        doc = self.workspace.get_text_document(uri)
        self.publish(uri, doc.version, *compute(uri, doc.source, self.options))

    def lint_in_background(self, uri: str) -> None:
        """Lint in a worker thread, so a large diagram does not hold up hover or
        completion; the findings are dropped if the text changed meanwhile."""
        doc = self.workspace.get_text_document(uri)
        version, source = doc.version, doc.source
        loop = asyncio.get_running_loop()
        future = loop.run_in_executor(None, compute, uri, source, self.options)

        def done(f: asyncio.Future) -> None:
            if f.cancelled():
                return
            if f.exception() is not None:  # a bug: say so in the editor's log
                self.window_log_message(
                    types.LogMessageParams(
                        type=types.MessageType.Error,
                        message=f"dagward: internal error while linting {uri}: {f.exception()!r}",
                    )
                )
                return
            if uri in self.workspace.text_documents and self.current_version(uri) == version:
                self.publish(uri, version, *f.result())

        future.add_done_callback(done)

    def current_version(self, uri: str) -> int | None:
        return self.workspace.get_text_document(uri).version

    def publish(self, uri: str, version: int | None, result: FileResult, problem: str | None):
        diagnostics: list[types.Diagnostic] = []
        if problem is not None:
            diagnostics.append(
                types.Diagnostic(
                    range=types.Range(
                        start=types.Position(line=0, character=0),
                        end=types.Position(line=0, character=1),
                    ),
                    message=f"configuration problem, default settings used: {problem}",
                    severity=types.DiagnosticSeverity.Warning,
                    source="dagward",
                )
            )
        self.results[uri] = result
        self.linted_version[uri] = version
        if result.diagram is not None:
            self.last_good[uri] = result.diagram
        diagnostics.extend(self.diagnostic(uri, f) for f in result.findings)
        self.text_document_publish_diagnostics(
            types.PublishDiagnosticsParams(uri=uri, diagnostics=diagnostics, version=version)
        )

    def diagnostic(self, uri: str, finding: Finding) -> types.Diagnostic:
        related = [
            types.DiagnosticRelatedInformation(
                location=types.Location(uri=uri, range=self.to_range(uri, r.span)),
                message=r.message,
            )
            for r in finding.related
            if r.file == finding.file
        ]
        return types.Diagnostic(
            range=self.to_range(uri, finding.span),
            message=finding.message,
            severity=SEVERITY_TO_LSP[finding.severity],
            code=finding.rule,
            source="dagward",
            related_information=related or None,
        )

    def schedule(self, uri: str) -> None:
        """Lint after DEBOUNCE_SECONDS without a further edit."""
        handle = self.pending.pop(uri, None)
        if handle is not None:
            handle.cancel()
        loop = asyncio.get_running_loop()
        self.pending[uri] = loop.call_later(DEBOUNCE_SECONDS, self._lint_now, uri)

    def _lint_now(self, uri: str) -> None:
        self.pending.pop(uri, None)
        if uri in self.workspace.text_documents:
            self.lint_in_background(uri)


def compute(uri: str, source: str, options: Options) -> tuple[FileResult, str | None]:
    """What `check` finds in this text, with the file's configuration; a broken
    configuration is reported and the defaults used. Touches no server state, so
    it may run in a worker thread."""
    from .config import ConfigError

    path = path_of(uri)
    problem = None
    try:
        settings = settings_for(path, options)
    except ConfigError as e:
        settings, problem = None, str(e)
    with collector_paused():
        result = lint_source(source, path, settings)
    if result.diagram is not None:
        name_index(result.diagram)  # ready before the first hover
    return result, problem


def build_server(options: Options = Options()) -> DiagramServer:
    server = DiagramServer(options)

    @server.feature(types.TEXT_DOCUMENT_DID_OPEN)
    def did_open(ls: DiagramServer, params: types.DidOpenTextDocumentParams) -> None:
        doc = params.text_document
        if is_diagram(doc.uri, doc.language_id):
            ls.lint(doc.uri)
        else:  # an editor set up with a broad file type sends other files too
            ls.ignored.add(doc.uri)

    @server.feature(types.TEXT_DOCUMENT_DID_CHANGE)
    def did_change(ls: DiagramServer, params: types.DidChangeTextDocumentParams) -> None:
        if params.text_document.uri not in ls.ignored:
            ls.schedule(params.text_document.uri)

    @server.feature(types.TEXT_DOCUMENT_DID_SAVE)
    def did_save(ls: DiagramServer, params: types.DidSaveTextDocumentParams) -> None:
        if params.text_document.uri not in ls.ignored:
            ls.lint(params.text_document.uri)

    @server.feature(types.TEXT_DOCUMENT_DID_CLOSE)
    def did_close(ls: DiagramServer, params: types.DidCloseTextDocumentParams) -> None:
        uri = params.text_document.uri
        if uri in ls.ignored:
            ls.ignored.discard(uri)
            return
        handle = ls.pending.pop(uri, None)
        if handle is not None:
            handle.cancel()
        ls.results.pop(uri, None)
        ls.last_good.pop(uri, None)
        ls.linted_version.pop(uri, None)
        ls.text_document_publish_diagnostics(
            types.PublishDiagnosticsParams(uri=uri, diagnostics=[])
        )

    def current(ls: DiagramServer, uri: str) -> FileResult | None:
        """The lint result of the buffer as it is now (an edit not yet linted is
        linted here, so positions always refer to the text the client sees)."""
        handle = ls.pending.pop(uri, None)
        if handle is not None:
            handle.cancel()
        if uri not in ls.results or ls.linted_version.get(uri) != ls.current_version(uri):
            ls.lint(uri)
        return ls.results.get(uri)

    def name_at(ls: DiagramServer, uri: str, position: types.Position):
        if uri in ls.ignored:
            return None, None
        result = current(ls, uri)
        if result is None or result.diagram is None:
            return result, None
        line, column = ls.from_position(uri, position)
        return result, occurrence_at(result.diagram, line, column)

    @server.feature(types.TEXT_DOCUMENT_HOVER)
    def hover(ls: DiagramServer, params: types.HoverParams) -> types.Hover | None:
        uri = params.text_document.uri
        result, found = name_at(ls, uri, params.position)
        if found is None:
            return None
        return types.Hover(
            contents=types.MarkupContent(
                kind=types.MarkupKind.Markdown, value=hover_markdown(result, found.name)
            ),
            range=ls.to_range(uri, found.span),
        )

    @server.feature(types.TEXT_DOCUMENT_DEFINITION)
    def goto_definition(ls: DiagramServer, params: types.DefinitionParams):
        uri = params.text_document.uri
        result, found = name_at(ls, uri, params.position)
        if found is None:
            return None
        span = definition(result.diagram, found.name)
        if span is None:
            return None
        return types.Location(uri=uri, range=ls.to_range(uri, span))

    @server.feature(types.TEXT_DOCUMENT_PREPARE_RENAME)
    def prepare_rename(ls: DiagramServer, params: types.PrepareRenameParams):
        _, found = name_at(ls, params.text_document.uri, params.position)
        if found is None:
            return None
        return ls.to_range(params.text_document.uri, found.span)

    @server.feature(types.TEXT_DOCUMENT_RENAME)
    def rename(ls: DiagramServer, params: types.RenameParams) -> types.WorkspaceEdit | None:
        uri = params.text_document.uri
        result, found = name_at(ls, uri, params.position)
        if result is not None and result.diagram is None:
            raise RenameRefusedError("the file does not parse; fix the syntax error first")
        if found is None:
            return None
        try:
            spans = rename_spans(result.diagram, found.name, params.new_name)
        except RenameRefused as e:
            raise RenameRefusedError(str(e)) from None
        edits = [types.TextEdit(range=ls.to_range(uri, s), new_text=params.new_name) for s in spans]
        return types.WorkspaceEdit(changes={uri: edits})

    @server.feature(
        types.TEXT_DOCUMENT_COMPLETION,
        types.CompletionOptions(trigger_characters=[",", ":", " "]),
    )
    def completion(ls: DiagramServer, params: types.CompletionParams) -> types.CompletionList:
        uri = params.text_document.uri
        if uri in ls.ignored:
            return types.CompletionList(is_incomplete=False, items=[])
        doc = ls.workspace.get_text_document(uri)
        line, column = ls.from_position(uri, params.position)
        good = ls.last_good.get(uri)
        known = list(good.variables) if good is not None else []
        items = []
        for word, kind in completion_words(doc.source, line, column, known):
            if kind == "keyword":
                items.append(
                    types.CompletionItem(
                        label=word,
                        kind=types.CompletionItemKind.Keyword,
                        insert_text=f"{word}: " if word in ENTRY_KEYS else f"{word} ",
                    )
                )
            else:
                label = good.labels.get(word) if good is not None else None
                items.append(
                    types.CompletionItem(
                        label=word, kind=types.CompletionItemKind.Variable, detail=label
                    )
                )
        return types.CompletionList(is_incomplete=False, items=items)

    @server.feature(types.TEXT_DOCUMENT_FORMATTING)
    def formatting(ls: DiagramServer, params: types.DocumentFormattingParams):
        from .fmt import format_source

        uri = params.text_document.uri
        if uri in ls.ignored:
            return None
        doc = ls.workspace.get_text_document(uri)
        formatted, problem = format_source(doc.source, path_of(uri))
        if problem is not None or formatted is None:
            return None  # the syntax error is already a diagnostic
        if formatted == doc.source:
            return []
        lines = doc.lines
        end = types.Position(line=len(lines), character=0)
        whole = types.Range(start=types.Position(line=0, character=0), end=end)
        return [types.TextEdit(range=whole, new_text=formatted)]

    return server


class RenameRefusedError(JsonRpcException):
    """Sent back to the editor as the rename request's error message."""

    CODE = -32803  # LSP `RequestFailed`: the request was valid but could not be done


def serve(options: Options = Options()) -> None:
    build_server(options).start_io()
