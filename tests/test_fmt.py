"""`dagward fmt`: the canonical layout, its properties, and the command's behaviour.

Properties (hypothesis): formatting is idempotent, and the formatted text parses
to the same diagram: the same statements in the same order with the same names,
arrows, roles, labels and periods, and the same comments in the same places
(trailing stays trailing). They are checked on generated diagrams written with
random spacing, and on the project's samples and fixtures with their layout
mutated (which must format to exactly what the unmutated file formats to).
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest
from dagward.cli import main
from dagward.fmt import format_source
from dagward.model import (
    Analysis,
    ArrowStatement,
    LabelStatement,
    PeriodStatement,
    TitleStatement,
    UnmeasuredStatement,
)
from dagward.syntax import parse_source
from helpers.examples import examples
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

REPO = Path(__file__).resolve().parents[1]


# --- what a diagram says, independent of layout -------------------------------------------


def meaning(text: str | bytes) -> list[tuple]:
    """Statements and comments in file order, without positions or spacing."""
    diagram, problem = parse_source(text, "x.dag")
    assert problem is None, problem
    items: list[tuple[int, int, tuple]] = []
    for s in diagram.statements:
        if isinstance(s, ArrowStatement):
            what: tuple = (
                "arrows",
                tuple(tuple(n.text for n in g) for g in s.groups),
                s.operators,
                tuple((a.source.text, a.target.text, a.bidirected) for a in s.arrows),
            )
            line = s.span.line
        elif isinstance(s, UnmeasuredStatement):
            what, line = ("unmeasured", tuple(n.text for n in s.names)), s.span.line
        elif isinstance(s, LabelStatement):
            what, line = ("label", s.target.text, s.value), s.span.line
        elif isinstance(s, PeriodStatement):
            what, line = ("period", s.period.text, tuple(n.text for n in s.names)), s.span.line
        elif isinstance(s, TitleStatement):
            what, line = ("title", s.text), s.span.line
        else:
            assert isinstance(s, Analysis)
            entries = tuple(
                (e.key, tuple(n.text for n in e.names), e.is_none, e.value and e.value.text)
                for e in s.entries
            )
            what, line = ("analysis", s.name, s.name_token is None, entries), s.header.line
            items.extend((e.span.line, 1, ("entry", e.key)) for e in s.entries)
            items.append((s.closing_line, 1, ("end", s.name)))
        items.append((line, 0, what))
    for c in diagram.comments:
        # a trailing comment sorts after its statement on the same line
        items.append((c.span.line, 2, ("comment", c.text.rstrip(), c.trailing)))
    items.sort(key=lambda item: (item[0], item[1]))
    return [what for _, _, what in items]


def fmt(text: str | bytes) -> str:
    out, problem = format_source(text, "x.dag")
    assert problem is None, problem
    assert out is not None
    return out


def check_properties(text: str | bytes) -> str:
    once = fmt(text)
    assert fmt(once) == once, "formatting is not idempotent"
    assert meaning(once) == meaning(text), "formatting changed what the diagram says"
    assert once == "" or (once.endswith("\n") and not once.endswith("\n\n"))
    assert "\n\n\n" not in once and not once.startswith("\n")
    assert all(line == line.rstrip() for line in once.split("\n"))
    return once


# --- a worked example ---------------------------------------------------------------------------

MESSY = """\


title   "Soil amendment and crop yield"
# plots were randomised within farms
unmeasured  soil_biota,drainage          # nobody sampled these
label yield "Grain yield (t/ha)"
   period before :rainfall_prior,soil_carbon0



amendment->soil_carbon , soil_biota   # compost feeds the soil
soil_carbon->yield<->drainage
rainfall_prior,  drainage ->yield

analysis total {   # the main question

      exposure:amendment
  # soil carbon is a mediator: do not adjust
  outcome: yield    # per plot
  adjust:   none


}  # end of the main question
analysis {
exposure: soil_carbon
outcome: yield
}


"""

CANONICAL = """\
title "Soil amendment and crop yield"
# plots were randomised within farms
unmeasured soil_biota, drainage  # nobody sampled these
label yield "Grain yield (t/ha)"
period before: rainfall_prior, soil_carbon0

amendment -> soil_carbon, soil_biota  # compost feeds the soil
soil_carbon -> yield <-> drainage
rainfall_prior, drainage -> yield

analysis total {  # the main question
  exposure: amendment
  # soil carbon is a mediator: do not adjust
  outcome: yield  # per plot
  adjust: none
}  # end of the main question
analysis {
  exposure: soil_carbon
  outcome: yield
}
"""


def test_worked_example():
    assert fmt(MESSY) == CANONICAL
    check_properties(MESSY)
    # CRLF line endings and a byte-order mark make no difference to the result
    assert fmt(("\ufeff" + MESSY.replace("\n", "\r\n")).encode("utf-8")) == CANONICAL


def test_empty_and_comment_only_files():
    assert fmt("") == ""
    assert fmt("\n\n\n") == ""
    assert fmt("   # only a note   \n\n\n") == "# only a note\n"
    assert fmt("a->b") == "a -> b\n"  # a final newline is added


# --- generated diagrams -----------------------------------------------------------------------

NAMES = st.sampled_from(
    ["age", "sick_days", "enrolled", "fitness_base", "_hidden", "bmi.baseline", "größe", "x1",
     "canopy", "heat_admissions", "Shift.Work", "nonea", "labels",
     # keywords are names wherever a name is expected (the lexer is contextual)
     "exposure", "outcome", "period", "label", "title", "analysis", "effect", "mediator",
     "restricted", "total", "adjust", "unmeasured"]
)  # fmt: skip
EFFECT_KINDS = st.sampled_from(["total", "controlled-direct", "natural-direct", "natural-indirect"])
SPACE = st.sampled_from(["", " ", "  ", "\t", " \t "])
SPACE1 = st.sampled_from([" ", "  ", "\t", " \t "])  # where a space is required
_TEXT_CHAR = st.characters(
    blacklist_categories=("Cs", "Cc"), blacklist_characters="\u2028\u2029\x85"
)
COMMENT = st.lists(_TEXT_CHAR | st.sampled_from(["#", " ", "->", "\t"]), max_size=12).map(
    lambda pieces: "#" + "".join(pieces)
)
STRING = st.lists(
    _TEXT_CHAR.filter(lambda ch: ch not in '"\\') | st.sampled_from(['\\"', "\\\\", "#"]),
    max_size=10,
).map(lambda pieces: '"' + "".join(pieces) + '"')


@st.composite
def name_list(draw, min_size=1):
    names = draw(st.lists(NAMES, min_size=min_size, max_size=3))
    out = names[0]
    for n in names[1:]:
        out += draw(SPACE) + "," + draw(SPACE) + n
    return out


@st.composite
def trailing(draw):
    if draw(st.booleans()):
        return ""
    return draw(SPACE) + draw(COMMENT)


@st.composite
def arrow_line(draw):
    text = draw(name_list())
    for _ in range(draw(st.integers(1, 3))):
        text += draw(SPACE) + draw(st.sampled_from(["->", "<->"])) + draw(SPACE) + draw(name_list())
    return text


@st.composite
def top_statement(draw):
    kind = draw(
        st.sampled_from(["arrow", "arrow", "arrow", "unmeasured", "label", "period", "title"])
    )
    if kind == "arrow":
        return draw(arrow_line())
    if kind == "unmeasured":
        return "unmeasured" + draw(SPACE1) + draw(name_list())
    if kind == "label":
        return "label" + draw(SPACE1) + draw(NAMES) + draw(SPACE1) + draw(STRING)
    if kind == "period":
        return (
            "period"
            + draw(SPACE1)
            + draw(NAMES)
            + draw(SPACE)
            + ":"
            + draw(SPACE)
            + draw(name_list())
        )
    return "title" + draw(SPACE1) + draw(STRING)


@st.composite
def analysis_block(draw):
    name = draw(st.one_of(st.just(""), NAMES.map(lambda n: " " + n)))
    lines = [draw(SPACE) + "analysis" + name + draw(SPACE) + "{" + draw(trailing())]
    keys = ["exposure", "outcome"] + draw(
        st.lists(st.sampled_from(["adjust", "exposure", "restricted", "mediator"]), max_size=3)
    )
    effect = draw(st.one_of(st.none(), EFFECT_KINDS))
    if effect is not None:
        keys.append("effect")
        if effect != "total" and "mediator" not in keys:
            keys.append("mediator")  # a direct or indirect effect needs its mediators
    keys = draw(st.permutations(keys))
    for key in keys:
        for _ in range(draw(st.integers(0, 2))):
            lines.append(draw(st.sampled_from(["", draw(SPACE) + draw(COMMENT)])))
        if key == "adjust" and draw(st.booleans()):
            value = "none"
        elif key == "effect":
            value = effect
        else:
            value = draw(name_list())
        lines.append(draw(SPACE) + key + draw(SPACE) + ":" + draw(SPACE) + value + draw(trailing()))
    lines += [draw(st.sampled_from(["", "  "])) for _ in range(draw(st.integers(0, 2)))]
    lines.append(draw(SPACE) + "}" + draw(trailing()))
    return "\n".join(lines)


@st.composite
def diagram_text(draw):
    parts = []
    for _ in range(draw(st.integers(0, 12))):
        kind = draw(st.sampled_from(["statement"] * 5 + ["blank", "comment", "analysis"]))
        if kind == "statement":
            parts.append(draw(SPACE) + draw(top_statement()) + draw(trailing()) + draw(SPACE))
        elif kind == "blank":
            parts.append(draw(SPACE))
        elif kind == "comment":
            parts.append(draw(SPACE) + draw(COMMENT))
        else:
            parts.append(draw(analysis_block()))
    ending = draw(st.sampled_from(["\n", "", "\n\n\n"]))
    return "\n".join(parts) + ending


@settings(max_examples=examples(300), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(diagram_text())
def test_generated_diagrams(text):
    diagram, problem = parse_source(text, "x.dag")
    assert problem is None, f"the generator wrote an invalid diagram: {problem}\n{text}"
    check_properties(text)


# --- mutated samples and fixtures ---------------------------------------------------------------


def _parsing_files() -> list[Path]:
    files = sorted(REPO.glob("samples/**/*.dag")) + sorted(REPO.glob("tests/fixtures/**/*.dag"))
    return [p for p in files if parse_source(p.read_bytes(), str(p))[1] is None]


PARSING = _parsing_files()
# Inline files keep the test meaningful even before samples exist.
INLINE_SAMPLES = [MESSY, CANONICAL]


@st.composite
def mutate(draw, text: str):
    """The same diagram with different spacing, indentation and blank lines."""
    out = []
    for line in text.split("\n"):
        code, hash_, comment = line.partition("#")
        if '"' not in line:  # never touch the inside of strings
            code = re.sub(
                r"[ \t]*(<->|->|,|:)[ \t]*",
                lambda m: draw(SPACE) + m.group(1) + draw(SPACE),
                code,
            )
        line = (
            draw(SPACE) + code.strip() + (draw(SPACE) + hash_ + comment if hash_ else draw(SPACE))
        )
        out.append(line)
        if not code.strip() and not hash_:
            # lengthen a run of blank lines (adding one where there was none would
            # rightly show up in the formatted file)
            out.extend([draw(SPACE)] * draw(st.integers(0, 3)))
    mutated = "\n".join(out)
    if draw(st.booleans()):
        mutated = mutated.replace("\n", "\r\n")
    return mutated


def test_there_is_something_to_mutate():
    # the samples exist; a failure here means the property test below lost its corpus
    assert [p.name for p in PARSING if p.parent.name == "samples"], "no parsing samples found"


@pytest.mark.parametrize(
    "source",
    [p.read_bytes().decode("utf-8-sig") for p in PARSING] + INLINE_SAMPLES,
    ids=[str(p.relative_to(REPO)) for p in PARSING] + ["inline-messy", "inline-canonical"],
)
@settings(max_examples=examples(25), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=st.data())
def test_mutated_samples(source, data):
    canonical = check_properties(source)
    mutated = data.draw(mutate(source))
    assert parse_source(mutated, "x.dag")[1] is None, mutated
    assert fmt(mutated) == canonical
    check_properties(mutated)


# --- the command -------------------------------------------------------------------------------


def _files(directory: Path) -> list[str]:
    return sorted(p.name for p in directory.iterdir())


def test_check_reports_and_exits_1(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "messy.dag").write_text(MESSY, "utf-8")
    (tmp_path / "tidy.dag").write_text(CANONICAL, "utf-8")
    assert main(["fmt", "--check", "messy.dag", "tidy.dag"]) == 1
    captured = capsys.readouterr()
    assert captured.out == "messy.dag: layout differs from the canonical one\n"
    assert captured.err == "2 diagram files: 1 not in the canonical layout, 1 already in it\n"
    # our own wording, not a well-known code formatter's
    assert "reformat" not in captured.out + captured.err
    assert (tmp_path / "messy.dag").read_text("utf-8") == MESSY  # untouched
    assert main(["fmt", "--check", "tidy.dag"]) == 0
    assert capsys.readouterr().out == ""


def test_diff_prints_unified_diff(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "m.dag").write_text("a->b\n\n\n\nb ->c # why\n", "utf-8")
    assert main(["fmt", "--diff", "m.dag"]) == 0  # --diff alone only shows
    out = capsys.readouterr().out
    assert out == (
        "--- m.dag (as written)\n+++ m.dag (canonical layout)\n@@ -1,5 +1,3 @@\n"
        "-a->b\n+a -> b\n \n-\n-\n-b ->c # why\n+b -> c  # why\n"
    )
    assert (tmp_path / "m.dag").read_text("utf-8") == "a->b\n\n\n\nb ->c # why\n"
    assert main(["fmt", "--diff", "--check", "m.dag"]) == 1
    assert capsys.readouterr().out == out


def test_rewrite_is_atomic_and_leaves_no_temporary_files(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    target = tmp_path / "soil.dag"
    target.write_text(MESSY, "utf-8")
    os.chmod(target, 0o640)
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "heat.dag").write_text("canopy->heat\n", "utf-8")
    assert main(["fmt"]) == 0  # the current directory, recursively
    captured = capsys.readouterr()
    assert captured.out == (
        "soil.dag: rewritten in the canonical layout\n"
        "sub/heat.dag: rewritten in the canonical layout\n"
    )
    assert captured.err == "2 diagram files: 2 rewritten in the canonical layout, 0 already in it\n"
    assert target.read_text("utf-8") == CANONICAL
    assert (tmp_path / "sub" / "heat.dag").read_text("utf-8") == "canopy -> heat\n"
    assert _files(tmp_path) == ["soil.dag", "sub"] and _files(tmp_path / "sub") == ["heat.dag"]
    assert target.stat().st_mode & 0o777 == 0o640  # the mode is kept
    assert main(["fmt", "--check"]) == 0


def test_syntax_error_file_is_not_modified(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    bad = tmp_path / "bad.dag"
    bad.write_bytes(b"age ->   \nage->sick_days\n")
    before = bad.stat()
    good = tmp_path / "good.dag"
    good.write_text("age->sick_days\n", "utf-8")
    assert main(["fmt", "bad.dag", "good.dag"]) == 1
    err = capsys.readouterr().err
    assert err.splitlines()[0] == (
        "bad.dag:1:10: error [syntax-error] expected a variable name after `->`, "
        "found the end of the line (file left unchanged)"
    )
    assert err.splitlines()[-1] == (
        "2 diagram files: 1 rewritten in the canonical layout, 0 already in it, "
        "1 not read (syntax error, left as it was)"
    )
    assert bad.read_bytes() == b"age ->   \nage->sick_days\n"
    assert bad.stat().st_mtime_ns == before.st_mtime_ns
    assert good.read_text("utf-8") == "age -> sick_days\n"  # the others are still formatted
    assert _files(tmp_path) == ["bad.dag", "good.dag"]


def test_fmt_never_imports_networkx(tmp_path):
    (tmp_path / "a.dag").write_text(MESSY, "utf-8")
    code = (
        "import sys\nfrom dagward.cli import main\n"
        f"rc = main(['fmt', '--check', {str(tmp_path / 'a.dag')!r}])\n"
        "print(rc, 'networkx' in sys.modules)\n"
    )
    env = dict(os.environ, PYTHONPATH=str(REPO))
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env)
    assert done.stdout.strip().splitlines()[-1] == "1 False", done.stderr
