"""Bad input gets a finding or a clean exit 2, never a traceback or a hang."""

from __future__ import annotations

import random
import sys

from clirunner import ROOT, dagward
from dagward.engine import lint_source
from helpers.examples import examples
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st


def _only(findings, rule):
    assert [f.rule for f in findings] == [rule], findings
    return findings[0]


def test_invalid_utf8_is_a_syntax_error_with_position():
    data = b"age -> sick_days\nshift -> caf\xe9\n"
    f = _only(lint_source(data, "x.dag").findings, "syntax-error")
    assert (f.line, f.column) == (2, 13)
    assert "not UTF-8" in f.message and "0xe9" in f.message


def test_binary_file_is_a_syntax_error():
    data = bytes(range(256)) * 4
    f = _only(lint_source(data, "x.dag").findings, "syntax-error")
    assert "binary" in f.message and f.line == 1


def test_binary_file_through_cli(tmp_path):
    p = tmp_path / "image.dag"
    p.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR")
    run = dagward("check", str(p))
    assert run.code == 1 and "[syntax-error]" in run.out


def test_empty_and_comment_only_files_are_clean():
    assert lint_source(b"", "x.dag").findings == []
    assert lint_source(b"# nothing yet\n\n", "x.dag").findings == []
    assert lint_source(b"\xef\xbb\xbf", "x.dag").findings == []


def test_one_megabyte_line():
    names = " -> ".join(f"v{i}" for i in range(120_000))
    assert len(names) > 1_000_000
    result = lint_source(names + "\n", "x.dag")
    assert result.findings == []
    assert len(result.diagram.arrows) == 119_999
    # and a megabyte of garbage on one line: one syntax error at its first character
    f = _only(lint_source("$" * 1_000_000, "x.dag").findings, "syntax-error")
    assert (f.line, f.column) == (1, 1)


def test_one_megabyte_broken_line():
    names = " -> ".join(f"v{i}" for i in range(120_000)) + " ->\n"
    f = _only(lint_source(names, "x.dag").findings, "syntax-error")
    assert f.line == 1 and f.column == len(names)


# 30 times Python's default recursion limit (1,000): a recursive walk fails long
# before this depth (the benchmarks run 100,000-variable diagrams)
DEEP = 30_000


def test_deep_chain_on_one_line_and_as_lines():
    n = DEEP
    chain = " -> ".join(f"v{i}" for i in range(n + 1))
    analysis = f"\nanalysis {{\n  exposure: v0\n  outcome: v{n}\n  adjust: none\n}}\n"
    limit = sys.getrecursionlimit()
    result = lint_source(chain + analysis, "chain.dag")
    assert sys.getrecursionlimit() == limit
    assert [f.rule for f in result.findings if f.severity == "error"] == []
    lines = "".join(f"v{i} -> v{i + 1}  # step {i}\n" for i in range(n))
    result = lint_source(lines + analysis, "lines.dag")
    assert [f.rule for f in result.findings if f.severity == "error"] == []
    assert result.diagram.line_count == n + 6


def test_deep_cycle_is_found_without_recursion():
    n = DEEP
    lines = "".join(f"v{i} -> v{i + 1}\n" for i in range(n)) + f"v{n} -> v0\n"
    f = _only(lint_source(lines, "x.dag").findings, "cycle")
    assert f.line == n + 1 and len(f.related) == n


def test_unreadable_directory_exits_2(tmp_path):
    import os

    if os.geteuid() == 0:  # root reads everything; use a path that is not a directory instead
        run = dagward("check", "/dev/null")
        assert run.code == 2 and "not a regular file or directory" in run.err
        return
    d = tmp_path / "locked"
    d.mkdir()
    d.chmod(0)
    run = dagward("check", str(d))
    assert run.code == 2


# --- hypothesis: random text and mutated samples ---------------------------------

SAMPLES = [p.read_text("utf-8") for p in sorted((ROOT / "samples").rglob("*.dag"))]
ALPHABET = st.sampled_from(list("ab_ .,:{}#\"\\-<>\n\t\r\u00e4\u2603\x00") + ["->", "<->",
    "analysis", "exposure:", "outcome:", "adjust:", "none", "period", "label", "title",
    "unmeasured"])  # fmt: skip


def _assert_clean(data):
    result = lint_source(data, "fuzz.dag")
    for f in result.findings:
        assert f.span.line >= 1 and f.span.column >= 1
        assert f.message
    syntax = [f for f in result.findings if f.rule == "syntax-error"]
    assert len(syntax) <= 1


@settings(max_examples=examples(400), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(ALPHABET, max_size=60).map("".join))
def test_random_token_soup_never_crashes(text):
    _assert_clean(text)


@settings(max_examples=examples(200), deadline=None)
@given(st.binary(max_size=200))
def test_random_bytes_never_crash(data):
    _assert_clean(data)


@settings(max_examples=examples(300), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.integers(0, len(SAMPLES) - 1), st.integers(0, 2**32 - 1), st.integers(1, 6))
def test_mutated_samples_never_crash(which, seed, edits):
    rng = random.Random(seed)
    text = list(SAMPLES[which])
    for _ in range(edits):
        op = rng.randrange(3)
        pos = rng.randrange(len(text) + 1)
        if op == 0 and text:
            del text[min(pos, len(text) - 1)]
        elif op == 1:
            text.insert(pos, rng.choice(["-", ">", "{", "}", ",", ":", "#", '"', "\n", "x", "<"]))
        elif text:
            i, j = sorted(rng.randrange(len(text)) for _ in range(2))
            text[i:j] = text[i:j][::-1]
    _assert_clean("".join(text))


def test_cli_on_mutated_samples_exits_0_1_or_2(tmp_path):
    rng = random.Random(7)
    for k in range(15):
        text = list(SAMPLES[k % len(SAMPLES)])
        for _ in range(3):
            del text[rng.randrange(len(text))]
        p = tmp_path / f"m{k}.dag"
        p.write_text("".join(text))
    run = dagward("check", str(tmp_path))
    assert run.code in (0, 1)
    summary = [line for line in run.out.splitlines() if not line.startswith("what a rule")][-1]
    assert summary.endswith("in 15 files")
