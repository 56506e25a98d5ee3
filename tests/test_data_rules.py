"""The data rules `missing-column` and `independence-rejected`: their docstring
examples (linted with the `Data::` table), positions through `check --data`, and
bad data files (exit 2 with one line)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from clirunner import ROOT, dagward, in_process, in_this_process
from dagward.config import Settings
from dagward.data import table_from_csv_text
from dagward.engine import lint_source
from dagward.rules import DATA_RULES
from expectations import expectations_in
from helpers.docblocks import block, data_for

CONSISTENT = "samples/data/wellness_consistent.csv"
EXTRA_ARROW = "samples/data/wellness_extra_arrow.csv"


@pytest.fixture(autouse=True)
def _commands_in_this_process(capsys, monkeypatch):
    """Every `dagward(...)` here runs in this process (see clirunner.in_this_process)."""
    in_this_process(sys.modules[__name__], capsys, monkeypatch)


@pytest.mark.parametrize("rule", DATA_RULES, ids=lambda r: r.name)
def test_docstring_examples_with_their_data(rule):
    doc = rule.doc
    assert doc.startswith(f"{rule.name}: ")
    kwargs = data_for(doc)
    assert kwargs, "a data rule's docstring carries a Data:: table"
    settings = Settings().with_overrides(enable=[rule.name])
    bad, good = block(doc, "Bad"), block(doc, "Good")
    expected, _ = expectations_in(bad)
    lines = sorted({line for line, name in expected if name == rule.name})
    assert lines
    found = [f for f in lint_source(bad, "bad.dag", settings, **kwargs).findings
             if f.rule == rule.name]  # fmt: skip
    assert sorted({f.line for f in found}) == lines
    assert not [f for f in lint_source(good, "good.dag", settings, **kwargs).findings
                if f.rule == rule.name]  # fmt: skip
    # without data the data rules stay silent (check without --data)
    assert not [f for f in lint_source(bad, "bad.dag", settings).findings if f.rule == rule.name]


@pytest.fixture
def json_findings(capsys, monkeypatch):
    """`check ARGS --format json` in this process (each run would otherwise start an
    interpreter and import the statistics stack): (exit status, findings)."""
    monkeypatch.chdir(ROOT)

    def run(*args: str) -> tuple[int, list[dict]]:
        done = in_process(capsys, "check", *args, "--format", "json")
        return done.code, json.loads(done.out)["findings"]

    return run


def test_check_data_reports_the_rejection_at_the_analysis_header(json_findings):
    code, findings = json_findings("samples/wellness.dag", "--data", EXTRA_ARROW)
    assert code == 0  # a warning; fail-on error
    (f,) = [f for f in findings if f["rule"] == "independence-rejected"]
    lines = (ROOT / "samples/wellness.dag").read_text().splitlines()
    header = next(i for i, x in enumerate(lines, start=1) if x.startswith("analysis "))
    assert (f["line"], f["column"], f["severity"]) == (header, 1, "warning") == (27, 1, "warning")
    assert f["analysis"] == "total_effect"
    msg = f["message"]
    for part in ("`enrolled` and `shift_work` are independent given `fitness_base`",
                 "partial correlation 0.27 (95% interval 0.23 to 0.31)", "n = 2000",
                 "Holm-adjusted p < 0.001", "arrow between", "common cause"):  # fmt: skip
        assert part in msg, part
    assert [(r["line"], r["column"]) for r in f["related"]] == [(13, 19), (12, 23)]
    code, findings = json_findings("samples/wellness.dag", "--data", CONSISTENT)
    assert code == 0 and not [f for f in findings if f["rule"].startswith(("independence",
                                                                          "missing"))]  # fmt: skip


def test_rejection_can_be_allowed_at_the_header(tmp_path, json_findings):
    text = (ROOT / "samples/wellness.dag").read_text()
    allow = "  # dagward: allow independence-rejected"
    text = text.replace("analysis total_effect {", "analysis total_effect {" + allow)
    (tmp_path / "w.dag").write_text(text)
    _, findings = json_findings(str(tmp_path / "w.dag"), "--data", str(ROOT / EXTRA_ARROW))
    assert not [f for f in findings if f["rule"] == "independence-rejected"]


def test_missing_column_at_first_appearance_with_suggestion(tmp_path):
    original = (ROOT / CONSISTENT).read_text().splitlines()
    renamed = tmp_path / "renamed.csv"
    renamed.write_text("\n".join([original[0].replace("fitness_base", "Fitness_Base"),
                                  *original[1:]]) + "\n")  # fmt: skip
    run = dagward("check", "samples/wellness.dag", "--data", str(renamed))
    assert run.code == 1
    (line,) = [x for x in run.out.splitlines() if "[missing-column]" in x]
    # `period baseline: age, shift_work, fitness_base, motivation` is line 12
    assert line.startswith("samples/wellness.dag:12:35: error [missing-column] `fitness_base`")
    assert "did you mean `Fitness_Base`?" in line
    # the rest still runs: no test needing the column is reported as rejected
    assert "[independence-rejected]" not in run.out


def test_file_without_analysis(tmp_path, json_findings):
    diagram = tmp_path / "plain.dag"
    diagram.write_text("# no analysis here\nage -> enrolled\nshift_work -> enrolled\n")
    data = tmp_path / "d.csv"
    rows = ["age,shift_work,enrolled"] + [f"{i},{100 - 2 * i + (i % 3)},{i % 7}" for i in range(40)]
    data.write_text("\n".join(rows) + "\n")
    code, findings = json_findings(str(diagram), "--data", str(data))
    (f,) = [f for f in findings if f["rule"] == "independence-rejected"]
    assert (f["line"], f["column"]) == (1, 1) and "analysis" not in f
    data.write_text("age,enrolled\n1,2\n3,4\n5,7\n")
    code, findings = json_findings(str(diagram), "--data", str(data))
    (f,) = [f for f in findings if f["rule"] == "missing-column"]
    assert (f["line"], f["column"]) == (3, 1) and "`shift_work`" in f["message"]
    assert code == 1


@pytest.mark.parametrize(
    "content, expected",
    [
        (None, "no such file"),
        ("dir", "is a directory"),
        (b"\xff\xfe\x00bad", "not UTF-8"),
        (b"", "empty file"),
        (b"age,age\n1,2\n", "appears twice"),
        (b"age,sick_days\n", "no data rows"),
    ],
)
def test_unreadable_data_is_exit_2_with_one_line(tmp_path, content, expected):
    path = tmp_path / "data.csv"
    if content == "dir":
        path.mkdir()
    elif content is not None:
        path.write_bytes(content)
    run = dagward("check", "samples/wellness.dag", "--data", str(path))
    assert run.code == 2
    assert run.out == ""
    assert len(run.err.strip().splitlines()) == 1 and expected in run.err
    assert run.err.startswith("dagward: error: ")


def test_check_without_data_never_imports_the_statistics_stack():
    code = (
        "import sys\n"
        "from dagward.cli import main\n"
        "main(['check', 'samples/wellness.dag', '-q'])\n"
        "print(sorted(m for m in ('numpy', 'pandas', 'scipy') if m in sys.modules))\n"
    )
    proc = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                          env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"})  # fmt: skip
    assert proc.stdout.strip().splitlines()[-1] == "[]", proc.stderr


def test_options_are_checked(capsys, monkeypatch):
    monkeypatch.chdir(ROOT)  # in this process: each run imports the statistics stack
    for args in (("--alpha", "0"), ("--alpha", "1.5"), ("--min-effect", "-0.1")):
        run = in_process(capsys, "check", "samples/wellness.dag", "--data", CONSISTENT, *args)
        assert run.code == 2 and args[0] in run.err
    run = in_process(
        capsys, "check", "samples/wellness.dag", "--data", EXTRA_ARROW, "--method", "spearman"
    )
    assert run.code == 0 and "[independence-rejected]" in run.out


def test_table_from_text_matches_the_file_loader():
    from dagward.data import load_data

    text = Path(ROOT / CONSISTENT).read_text()
    a, b = table_from_csv_text(text), load_data(str(ROOT / CONSISTENT))
    assert a.columns() == b.columns() and a.n_rows == b.n_rows == 2000
