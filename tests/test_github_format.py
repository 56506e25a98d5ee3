"""`--format github`: workflow commands, escaped as GitHub's runner requires.

The escaping rules are those of the GitHub Actions toolkit (`command.ts`):
data `%` `\\r` `\\n`; properties additionally `:` and `,`.
"""

from __future__ import annotations

import subprocess

from dagward.cli import main
from dagward.findings import Finding, Related
from dagward.model import Span
from dagward.report import Report
from dagward.report.github import escape_data, escape_property, render


def test_escape_data():
    assert escape_data("100% sure\r\nnext: a, b") == "100%25 sure%0D%0Anext: a, b"
    # `%` first, so an escape is never escaped twice
    assert escape_data("%0A") == "%250A"


def test_escape_property():
    assert escape_property("dir,with:odd%name\n") == "dir%2Cwith%3Aodd%25name%0A"


def _finding(**kw) -> Finding:
    base = dict(
        rule="cycle",
        severity="error",
        file="models/a,b:c.dag",
        span=Span(3, 5, 3, 12),
        message="loop: a -> b -> a, 100%\nfix it",
    )
    base.update(kw)
    return Finding(**base)


def test_command_shape_and_escaping(tmp_path):
    f = _finding(related=(Related("models/a,b:c.dag", Span(1, 1, 1, 7), "arrow a -> b"),))
    out = render(Report([f], 1, repository_root=str(tmp_path)))
    # the file lies outside tmp_path (relative to the test's cwd), so it is kept as given
    assert out == (
        "::error file=models/a%2Cb%3Ac.dag,line=3,col=5,endLine=3,endColumn=11,title=cycle"
        "::loop: a -> b -> a, 100%25%0Afix it%0Amodels/a,b:c.dag:1:1: arrow a -> b\n"
    )


def test_severities_and_multiline_span(tmp_path):
    findings = [
        _finding(severity="warning", rule="isolated-variable", message="w"),
        _finding(severity="info", rule="arrow-without-reason", message="i", span=Span(2, 1, 4, 3)),
    ]
    lines = render(Report(findings, 1, repository_root=str(tmp_path))).splitlines()
    assert lines[0].startswith("::warning file=models/a%2Cb%3Ac.dag,line=3,col=5,")
    assert lines[0].endswith(",title=isolated-variable::w")
    # a span over several lines gets endLine but no endColumn
    assert lines[1] == (
        "::notice file=models/a%2Cb%3Ac.dag,line=2,col=1,endLine=4,title=arrow-without-reason::i"
    )


def test_cli_paths_relative_to_repository_root(tmp_path, monkeypatch, capsys):
    subprocess.run(["git", "init", "-q", str(tmp_path)], check=True)
    sub = tmp_path / "causal"
    sub.mkdir()
    (sub / "heat.dag").write_text("canopy -> heat_admissions\nheat_admissions -> canopy\n", "utf-8")
    monkeypatch.chdir(sub)
    assert main(["check", "heat.dag", "--format", "github"]) == 1
    out = capsys.readouterr().out.splitlines()
    assert out == [
        "::error file=causal/heat.dag,line=2,col=1,endLine=2,endColumn=25,title=cycle::"
        "the arrows form a cycle heat_admissions -> canopy -> heat_admissions; a diagram must "
        "be acyclic: remove an arrow or split a variable by time"
        "%0Acausal/heat.dag:1:1: arrow canopy -> heat_admissions"
    ]
