"""`dagward language-server` end to end: a real server process driven by an LSP
client (pytest-lsp), the way an editor drives it.

The diagram is an invented scenario (a school breakfast programme). The
findings the server publishes are compared with what `dagward check --format
json` prints for the same text saved to disk, so "the same findings as check"
is checked against the command line, not against the server's own code.
"""

from __future__ import annotations

import asyncio
import json
import subprocess
import sys
from pathlib import Path

import pytest

pytest.importorskip("pygls", reason="the `lsp` extra is not installed")
import pytest_lsp  # noqa: E402
from dagward.lsp import RenameRefused, completion_words, occurrences, rename_spans  # noqa: E402
from dagward.syntax import parse_source  # noqa: E402
from lsprotocol import types  # noqa: E402
from pytest_lsp import ClientServerConfig, LanguageClient  # noqa: E402

DIAGRAM = """\
title "School breakfast and test scores"
label breakfast "Takes part in the breakfast club"
unmeasured household_routine
income -> breakfast, scores        # poorer families use the club more
household_routine -> breakfast     # organised households get children there on time
household_routine -> attendance    # and to school at all
breakfast -> attendance -> scores  # fed children keep up attendance
breakfast -> concentration -> scores
household_routine -> sleep -> scores  # routines bring regular sleep

analysis club_effect {
  exposure: breakfast
  outcome: scores
  adjust: income, attendance
}
"""

ADJUST = DIAGRAM.splitlines().index("  adjust: income, attendance")  # 0-based line

PYPROJECT = """\
[tool.dagward]
enable = ["arrow-without-reason"]
[tool.dagward.severity]
adjusted-mediator = "warning"
"""


@pytest_lsp.fixture(
    config=ClientServerConfig(server_command=[sys.executable, "-m", "dagward", "language-server"])
)
async def client(lsp_client: LanguageClient):
    await lsp_client.initialize_session(
        types.InitializeParams(capabilities=types.ClientCapabilities())
    )
    yield
    await lsp_client.shutdown_session()


@pytest_lsp.fixture(
    config=ClientServerConfig(
        server_command=[
            sys.executable, "-m", "dagward", "language-server",
            "--enable", "arrow-without-reason", "--disable", "adjusted-mediator",
        ]
    )
)  # fmt: skip
async def client_with_options(lsp_client: LanguageClient):
    await lsp_client.initialize_session(
        types.InitializeParams(capabilities=types.ClientCapabilities())
    )
    yield
    await lsp_client.shutdown_session()


@pytest.mark.asyncio
async def test_command_line_rule_options_apply(client_with_options: LanguageClient, tmp_path):
    client = client_with_options
    uri = (tmp_path / "breakfast.dag").as_uri()  # no configuration file anywhere above
    got = await _next_diagnostics(client, lambda: _open(client, uri, DIAGRAM))
    codes = {d.code for d in got.diagnostics}
    assert "arrow-without-reason" in codes  # opt-in rule turned on
    assert "adjusted-mediator" not in codes  # and a default one off


def _check_json(path: Path) -> list[tuple]:
    done = subprocess.run(
        [sys.executable, "-m", "dagward", "check", "--format", "json", path.name],
        cwd=path.parent,
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode in (0, 1), done.stderr
    return sorted(
        (f["rule"], f["line"] - 1, f["column"] - 1, f["message"])
        for f in json.loads(done.stdout)["findings"]
    )


def _published(diagnostics) -> list[tuple]:
    return sorted(
        (d.code, d.range.start.line, d.range.start.character, d.message) for d in diagnostics
    )


async def _next_diagnostics(client: LanguageClient, send) -> types.PublishDiagnosticsParams:
    future = client.protocol.wait_for_notification(types.TEXT_DOCUMENT_PUBLISH_DIAGNOSTICS)
    send()
    return await asyncio.wait_for(asyncio.wrap_future(future), timeout=60)


def _open(client: LanguageClient, uri: str, text: str) -> None:
    client.text_document_did_open(
        types.DidOpenTextDocumentParams(
            text_document=types.TextDocumentItem(uri=uri, language_id="dag", version=1, text=text)
        )
    )


def _replace_line(client: LanguageClient, uri: str, version: int, line: int, old: str, new: str):
    client.text_document_did_change(
        types.DidChangeTextDocumentParams(
            text_document=types.VersionedTextDocumentIdentifier(uri=uri, version=version),
            content_changes=[
                types.TextDocumentContentChangePartial(
                    range=types.Range(
                        start=types.Position(line=line, character=0),
                        end=types.Position(line=line, character=len(old)),
                    ),
                    text=new,
                )
            ],
        )
    )


@pytest.mark.asyncio
async def test_diagnostics_follow_the_edits_and_match_check(client: LanguageClient, tmp_path):
    study = tmp_path / "study"
    (study / "causal").mkdir(parents=True)
    (study / "pyproject.toml").write_text(PYPROJECT, "utf-8")
    path = study / "causal" / "breakfast.dag"
    path.write_text(DIAGRAM, "utf-8")
    uri = path.as_uri()

    opened = await _next_diagnostics(client, lambda: _open(client, uri, DIAGRAM))
    assert opened.uri == uri
    got = _published(opened.diagnostics)
    assert got == _check_json(path)
    rules = {d.code: d for d in opened.diagnostics}
    # the study's own configuration was found from the file: an opt-in rule is on
    # (the last arrow has no reason) and a severity was changed
    assert "arrow-without-reason" in rules
    assert rules["adjusted-mediator"].severity == types.DiagnosticSeverity.Warning
    assert rules["adjusted-mediator"].range.start.line == ADJUST  # `adjust: income, attendance`

    # three quick edits: fix the adjustment set in two steps, then break a line;
    # only the text after the last one is linted (version 4)
    old = "  adjust: income, attendance"

    def burst():
        _replace_line(client, uri, 2, ADJUST, old, "  adjust: income")
        _replace_line(
            client, uri, 3, ADJUST, "  adjust: income", "  adjust: income, household_routine"
        )
        _replace_line(client, uri, 4, 7, "breakfast -> concentration -> scores",
                      "breakfast -> -> scores")  # fmt: skip

    edited = await _next_diagnostics(client, burst)
    versions = [edited.version]
    while edited.version != 4:  # a very slow machine may lint an in-between text
        edited = await _next_diagnostics(client, lambda: None)
        versions.append(edited.version)
    # debounced: the three edits arrive within a few milliseconds, well inside the
    # quiet time, so not every one of them is linted
    assert len(versions) < 3, versions
    assert [(d.code, d.range.start.line) for d in edited.diagnostics] == [("syntax-error", 7)]
    assert edited.diagnostics[0].severity == types.DiagnosticSeverity.Error

    # repair the line: the same findings as `check` on the saved final text
    final = DIAGRAM.replace(old, "  adjust: income, household_routine")
    repaired = await _next_diagnostics(
        client,
        lambda: _replace_line(
            client, uri, 5, 7, "breakfast -> -> scores", "breakfast -> concentration -> scores"
        ),  # fmt: skip
    )
    path.write_text(final, "utf-8")
    assert repaired.version == 5
    assert _published(repaired.diagnostics) == _check_json(path)
    assert "adjusted-unmeasured" in {d.code for d in repaired.diagnostics}


@pytest.mark.asyncio
async def test_hover_definition_rename_completion_formatting(client: LanguageClient, tmp_path):
    path = tmp_path / "breakfast.dag"
    path.write_text(DIAGRAM, "utf-8")
    uri = path.as_uri()
    await _next_diagnostics(client, lambda: _open(client, uri, DIAGRAM))
    doc = types.TextDocumentIdentifier(uri=uri)

    # hover on `attendance` in `breakfast -> attendance -> scores` (0-based line 6):
    # a mediator, adjusted; adjusting for it also opens the path on which it is a
    # collider (breakfast -> attendance <- household_routine), worked out by hand
    line6 = DIAGRAM.splitlines()[6]
    at = types.Position(line=6, character=line6.index("attendance") + 3)
    hover = await client.text_document_hover_async(
        types.HoverParams(text_document=doc, position=at)
    )
    assert hover is not None
    text = hover.contents.value
    assert "**analysis `club_effect`:** mediator" in text
    assert "adjusted" in text and "not adjusted" not in text
    shown = [line for line in text.splitlines() if line.startswith("- ")]
    assert shown == [
        "- `breakfast -> attendance <- household_routine -> sleep -> scores (not causal)`"
    ]
    assert hover.range.start == types.Position(line=6, character=line6.index("attendance"))

    # `sleep` lies on the open back door through the unmeasured household routine
    # and on the collider path above; no other path passes through it (by hand)
    line8 = DIAGRAM.splitlines()[8]
    hover = await client.text_document_hover_async(
        types.HoverParams(
            text_document=doc, position=types.Position(line=8, character=line8.index("sleep"))
        )
    )
    text = hover.contents.value
    assert "not adjusted" in text
    shown = [line for line in text.splitlines() if line.startswith("- ")]
    assert sorted(shown) == [
        "- `breakfast -> attendance <- household_routine -> sleep -> scores (not causal)`",
        "- `breakfast <- household_routine -> sleep -> scores (not causal)`",
    ]

    # hover on the exposure shows its label
    line3 = DIAGRAM.splitlines()[3]
    hover = await client.text_document_hover_async(
        types.HoverParams(
            text_document=doc, position=types.Position(line=3, character=line3.index("breakfast"))
        )
    )
    assert "Takes part in the breakfast club" in hover.contents.value
    assert "exposure" in hover.contents.value

    # nothing to show on a keyword or inside a comment
    assert (
        await client.text_document_hover_async(
            types.HoverParams(text_document=doc, position=types.Position(line=0, character=2))
        )
        is None
    )
    assert (
        await client.text_document_hover_async(
            types.HoverParams(
                text_document=doc, position=types.Position(line=3, character=len(line3) - 3)
            )
        )
        is None
    )

    # go to definition from the analysis block: the first appearance is the first
    # arrow naming it (a `label` line does not create a variable)
    exposure = DIAGRAM.splitlines()[ADJUST - 2]
    where = await client.text_document_definition_async(
        types.DefinitionParams(
            text_document=doc,
            position=types.Position(line=ADJUST - 2, character=exposure.index("breakfast")),
        )
    )
    assert where.uri == uri
    assert where.range.start == types.Position(line=3, character=line3.index("breakfast"))
    assert DIAGRAM.splitlines()[1].startswith("label breakfast")  # earlier, not a definition
    # and for `scores` the first arrow naming it
    outcome = DIAGRAM.splitlines()[ADJUST - 1]
    where = await client.text_document_definition_async(
        types.DefinitionParams(
            text_document=doc,
            position=types.Position(line=ADJUST - 1, character=outcome.index("scores")),
        )
    )
    assert where.range.start == types.Position(line=3, character=line3.index("scores"))

    # rename `attendance` everywhere: 3 names; the word in a comment stays
    edit = await client.text_document_rename_async(
        types.RenameParams(text_document=doc, position=at, new_name="days_present")
    )
    edits = edit.changes[uri]
    assert len(edits) == 3 == DIAGRAM.count("attendance") - 1  # one is in a comment
    renamed = _apply(DIAGRAM, edits)
    assert renamed.count("attendance") == 1
    assert "# fed children keep up attendance" in renamed
    assert renamed.count("days_present") == 3
    assert parse_source(renamed, "x.dag")[1] is None

    # refused names: the one reserved word, an invalid name, an existing variable
    for bad in ("none", "2nd_visit", "income"):
        with pytest.raises(Exception) as caught:
            await client.text_document_rename_async(
                types.RenameParams(text_document=doc, position=at, new_name=bad)
            )
        assert bad in str(caught.value)

    # completion: entry keys at the start of an analysis line, variable names after `:`
    items = await client.text_document_completion_async(
        types.CompletionParams(text_document=doc, position=types.Position(line=ADJUST, character=2))
    )
    assert {i.label for i in items.items} == {
        "exposure",
        "outcome",
        "adjust",
        "effect",
        "mediator",
        "restricted",
    }
    items = await client.text_document_completion_async(
        types.CompletionParams(
            text_document=doc, position=types.Position(line=ADJUST, character=len("  adjust: "))
        )
    )
    labels = {i.label for i in items.items}
    assert {"income", "household_routine", "concentration", "breakfast"} <= labels
    assert not labels & {"exposure", "analysis", "label"}

    # formatting returns the canonical layout as one edit
    messy = "income->breakfast\nbreakfast   -> scores\nincome ->scores\n"
    messy_path = tmp_path / "messy.dag"
    messy_uri = messy_path.as_uri()
    await _next_diagnostics(client, lambda: _open(client, messy_uri, messy))
    edits = await client.text_document_formatting_async(
        types.DocumentFormattingParams(
            text_document=types.TextDocumentIdentifier(uri=messy_uri),
            options=types.FormattingOptions(tab_size=2, insert_spaces=True),
        )
    )
    messy_path.write_text(messy, "utf-8")
    subprocess.run([sys.executable, "-m", "dagward", "fmt", str(messy_path)], check=True,
                   capture_output=True)  # fmt: skip
    assert _apply(messy, edits) == messy_path.read_text("utf-8")
    # an already formatted buffer needs no edit
    edits = await client.text_document_formatting_async(
        types.DocumentFormattingParams(
            text_document=doc, options=types.FormattingOptions(tab_size=2, insert_spaces=True)
        )
    )
    assert edits is not None and len(edits) == 0


@pytest.mark.asyncio
async def test_other_files_are_left_alone_and_unsaved_diagrams_are_linted(
    client: LanguageClient, tmp_path
):
    notes = (tmp_path / "notes.txt").as_uri()
    client.text_document_did_open(
        types.DidOpenTextDocumentParams(
            text_document=types.TextDocumentItem(
                uri=notes, language_id="plaintext", version=1, text="a -> b\nb -> a\n"
            )
        )
    )
    # an unsaved buffer the editor calls `dag`: linted under its own name
    untitled = "untitled:Untitled-1"
    got = await _next_diagnostics(
        client,
        lambda: client.text_document_did_open(
            types.DidOpenTextDocumentParams(
                text_document=types.TextDocumentItem(
                    uri=untitled, language_id="dag", version=1, text="a -> b\nb -> a\n"
                )
            )
        ),
    )
    # notifications arrive in order: had notes.txt been linted, it would have come first
    assert got.uri == untitled
    assert [d.code for d in got.diagnostics] == ["cycle"]
    assert notes not in client.diagnostics
    hover = await client.text_document_hover_async(
        types.HoverParams(
            text_document=types.TextDocumentIdentifier(uri=notes),
            position=types.Position(line=0, character=0),
        )
    )
    assert hover is None


@pytest.mark.asyncio
async def test_a_broken_configuration_is_reported_and_the_defaults_used(
    client: LanguageClient, tmp_path
):
    (tmp_path / "pyproject.toml").write_text('[tool.dagward]\nfail_on = "error"\n', "utf-8")
    uri = (tmp_path / "loop.dag").as_uri()
    got = await _next_diagnostics(client, lambda: _open(client, uri, "a -> b\nb -> a\n"))
    codes = [d.code for d in got.diagnostics]
    assert codes[0] is None and codes[1:] == ["cycle"]
    assert got.diagnostics[0].message.startswith("configuration problem, default settings used:")
    assert "unknown key `fail_on`" in got.diagnostics[0].message


@pytest.mark.asyncio
async def test_positions_are_counted_in_utf16_units(client: LanguageClient, tmp_path):
    """LSP counts columns in UTF-16 code units unless the client asks otherwise; a
    letter outside the Basic Multilingual Plane (here U+1D465, a mathematical x) is
    two units but one character of ours."""
    text = "\U0001d465\U0001d465 -> yy, yy\n"  # the second yy repeats an arrow
    path = tmp_path / "astral.dag"
    uri = path.as_uri()
    got = await _next_diagnostics(client, lambda: _open(client, uri, text))
    (dup,) = [d for d in got.diagnostics if d.code == "duplicate-arrow"]
    # the repeated arrow ends after the second yy: 12 characters, 14 units; the
    # first statement of it ends after the first yy: 8 characters, 10 units
    assert (dup.range.start.character, dup.range.end.character) == (0, 14)
    (first,) = dup.related_information
    assert (first.location.range.start.character, first.location.range.end.character) == (0, 10)
    edit = await client.text_document_rename_async(
        types.RenameParams(
            text_document=types.TextDocumentIdentifier(uri=uri),
            position=types.Position(line=0, character=9),  # inside the first yy
            new_name="zz",
        )
    )
    starts = sorted(e.range.start.character for e in edit.changes[uri])
    assert starts == [8, 12]


def _apply(text: str, edits: list[types.TextEdit]) -> str:
    """Apply LSP edits (ASCII text, so UTF-16 units are characters), last first."""
    lines = text.split("\n")
    offsets = [0]
    for line in lines:
        offsets.append(offsets[-1] + len(line) + 1)

    def offset(p: types.Position) -> int:
        return offsets[p.line] + p.character if p.line < len(lines) else len(text)

    for e in sorted(
        edits, key=lambda e: (e.range.start.line, e.range.start.character), reverse=True
    ):
        text = text[: offset(e.range.start)] + e.new_text + text[offset(e.range.end) :]
    return text


# --- the pieces the server is built from, on their own -------------------------------


def test_rename_spans_cover_every_role_and_skip_comments_and_strings():
    diagram, _ = parse_source(DIAGRAM, "x.dag")
    spans = rename_spans(diagram, "breakfast", "club")
    kinds = sorted(o.kind for o in occurrences(diagram) if o.name == "breakfast")
    assert kinds == ["arrow", "arrow", "arrow", "arrow", "exposure", "label"]
    assert len(spans) == 6
    with pytest.raises(RenameRefused, match="keyword"):
        rename_spans(diagram, "breakfast", "none")
    with pytest.raises(RenameRefused, match="not a variable name"):
        rename_spans(diagram, "breakfast", "with space")


def test_completion_offers_statement_keywords_at_top_level_and_names_being_typed():
    text = "income -> breakfast\nnew_thing -> sco\n"
    words = completion_words(text, 2, 1, ["income", "breakfast"])
    assert ("analysis", "keyword") in words and ("exposure", "keyword") not in words
    words = completion_words(text, 2, len("new_thing -> sco") + 1, ["income", "breakfast"])
    names = [w for w, kind in words if kind == "variable"]
    # names typed since the last good parse are offered, the half-typed word is not
    assert names == ["income", "breakfast", "new_thing"]


def test_hover_paths_match_a_brute_force_oracle():
    """The open paths the hover lists through a variable, against every simple path
    of small random diagrams judged straight from the definition of a blocked path
    (Pearl 1988, Probabilistic Reasoning in Intelligent Systems, ch. 3, from memory:
    a path is blocked by a non-collider in Z, or by a collider that is not in Z and
    has no descendant in Z)."""
    import random

    import networkx as nx
    from dagward.engine import lint_source
    from dagward.lsp import PATHS_SHOWN, hover_markdown

    rng = random.Random(20261202)
    checked = with_paths = 0
    for _ in range(60):
        n = rng.randint(5, 8)
        names = [f"v{i}" for i in range(n)]
        arrows = [
            (a, b) for i, a in enumerate(names) for b in names[i + 1 :] if rng.random() < 0.35
        ]
        if not arrows:
            continue
        x, y = rng.sample(names, 2)
        x, y = sorted((x, y), key=names.index)  # exposure before outcome in the order
        rest = [v for v in names if v not in (x, y)]
        adjust = rng.sample(rest, rng.randint(0, 2))
        # the period line makes every name a variable, also one without arrows
        lines = [f"{a} -> {b}" for a, b in arrows] + [f"period all: {', '.join(names)}"]
        text = "\n".join(lines) + "\n"
        text += f"analysis a {{\n  exposure: {x}\n  outcome: {y}\n"
        text += f"  adjust: {', '.join(adjust) if adjust else 'none'}\n}}\n"
        result = lint_source(text, "random.dag")
        if not result.causal_ran:
            continue
        g = nx.DiGraph(arrows)
        g.add_nodes_from(names)
        z = set(adjust)

        every = list(nx.all_simple_paths(g.to_undirected(), x, y))
        for v in rest:
            expected = sorted(
                f"- `{_spell(g, p)} ({'causal' if _causal(g, p) else 'not causal'})`"
                for p in every
                if v in p[1:-1] and _path_open(g, p, z)
            )
            shown = sorted(
                line for line in hover_markdown(result, v).splitlines() if line.startswith("- ")
            )
            if len(expected) <= PATHS_SHOWN:
                assert shown == expected, (text, v)
            else:
                assert len(shown) == PATHS_SHOWN and set(shown) <= set(expected), (text, v)
            checked += 1
            with_paths += bool(expected)
    assert checked > 100 and with_paths > 50


def _path_open(g, path: list[str], z: set[str]) -> bool:
    """The definition of an open path (see the oracle test's docstring)."""
    import networkx as nx

    for i in range(1, len(path) - 1):
        a, v, b = path[i - 1], path[i], path[i + 1]
        if g.has_edge(a, v) and g.has_edge(b, v):  # a collider
            if v not in z and not (nx.descendants(g, v) & z):
                return False
        elif v in z:
            return False
    return True


def _causal(g, path: list[str]) -> bool:
    return all(g.has_edge(a, b) for a, b in zip(path, path[1:], strict=False))


def _spell(g, path: list[str]) -> str:
    out = path[0]
    for a, b in zip(path, path[1:], strict=False):
        out += f" -> {b}" if g.has_edge(a, b) else f" <- {b}"
    return out


def test_without_the_lsp_extra_the_command_says_how_to_install_it():
    # a fresh interpreter in which pygls cannot be imported (as without the extra)
    code = (
        "import sys; sys.modules['pygls'] = None; sys.argv = ['dagward', 'language-server']; "
        "from dagward.cli import run; run()"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 2
    assert done.stdout == ""
    assert done.stderr.count("\n") == 1
    assert "pygls" in done.stderr and "`lsp` extra" in done.stderr
    assert "Traceback" not in done.stderr
