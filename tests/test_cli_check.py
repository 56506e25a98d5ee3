"""`dagward check` end to end: formats, exit codes, colour, configuration."""

from __future__ import annotations

import json
import sys

import jsonschema
import pytest
from clirunner import ROOT, dagward, in_this_process

SCHEMA = json.loads((ROOT / "tests" / "schemas" / "check-output.schema.json").read_text())
BROKEN = ROOT / "samples" / "broken"


@pytest.fixture(autouse=True)
def _commands_in_this_process(capsys, monkeypatch):
    """Every `dagward(...)` here runs in this process (see clirunner.in_this_process)."""
    in_this_process(sys.modules[__name__], capsys, monkeypatch)


QUESTION_SAMPLES = {"clinic_sample.dag", "walking_group.dag", "reading_support.dag"}


def test_samples_check_clean_of_errors():
    # the samples of the questions beyond the total effect show their errors on
    # purpose (their `# expect:` lines, tests/test_fixtures.py); the others are clean
    run = dagward("check", "samples")
    assert run.code == 1, run.out + run.err
    errors = {line.split(":", 1)[0] for line in run.out.splitlines() if ": error [" in line}
    assert {e.rsplit("/", 1)[-1] for e in errors} == QUESTION_SAMPLES
    *_, summary, hint = run.out.strip().splitlines()
    assert summary.endswith("in 6 files")
    # the one pointer to `explain`, after the summary, naming a rule that was found
    rule = hint.rsplit(" ", 1)[-1]
    assert hint == f"what a rule means and how to fix it: dagward explain {rule}"
    assert f"[{rule}]" in run.out


def test_text_output_has_position_rule_and_related_lines():
    run = dagward("check", "samples/broken/cycle.dag")
    assert run.code == 1
    lines = run.out.splitlines()
    assert lines[0].startswith("samples/broken/cycle.dag:4:1: error [cycle] ")
    assert "fatigue -> stress -> sleep_loss -> fatigue" in lines[0]
    assert lines[1] == "    samples/broken/cycle.dag:2:1: arrow stress -> sleep_loss"
    assert lines[2] == "    samples/broken/cycle.dag:3:1: arrow sleep_loss -> fatigue"
    assert lines[-2:] == [
        "1 error, 0 warnings in 1 file",
        "what a rule means and how to fix it: dagward explain cycle",
    ]


def test_syntax_error_shows_line_and_caret():
    run = dagward("check", "samples/broken/syntax_error.dag")
    assert run.code == 1
    first, excerpt, caret = run.out.splitlines()[:3]
    assert first.startswith("samples/broken/syntax_error.dag:3:15: error [syntax-error] ")
    assert "expected a variable name after `->`" in first
    assert excerpt == "    enrolled ->   # expect: syntax-error"
    assert caret == "    " + " " * 14 + "^"


@pytest.mark.parametrize("path", sorted(BROKEN.glob("*.dag")), ids=lambda p: p.name)
def test_json_output_validates_against_the_schema(path):
    run = dagward("check", "--format", "json", str(path.relative_to(ROOT)), "--enable",
                  "arrow-without-reason")  # fmt: skip
    doc = json.loads(run.out)
    jsonschema.validate(doc, SCHEMA)
    assert doc["findings"], "every broken sample has findings"
    assert doc["summary"]["files"] == 1
    for f in doc["findings"]:
        assert f["file"] == str(path.relative_to(ROOT))


def test_json_shape_of_one_finding():
    doc = json.loads(dagward("check", "--format", "json", "samples/broken/cycle.dag").out)
    (f,) = doc["findings"]
    assert f["rule"] == "cycle" and f["severity"] == "error"
    assert (f["line"], f["column"], f["end_line"], f["end_column"]) == (4, 1, 4, 18)
    assert f["path"] == ["fatigue", "stress", "sleep_loss", "fatigue"]
    assert f["related"][0] == {
        "file": "samples/broken/cycle.dag", "line": 2, "column": 1,
        "message": "arrow stress -> sleep_loss",
    }  # fmt: skip
    assert doc["summary"] == {"files": 1, "error": 1, "warning": 0, "info": 0}


def test_missing_path_exits_2_with_one_line():
    run = dagward("check", "no/such/file.dag")
    assert run.code == 2
    assert run.err.strip() == "dagward: error: no such file or directory: no/such/file.dag"


def test_bad_option_exits_2_with_one_line():
    run = dagward("check", "--fail-on", "sometimes")
    assert run.code == 2
    assert len(run.err.strip().splitlines()) == 1


def test_unknown_rule_on_command_line_exits_2():
    run = dagward("check", "samples", "--disable", "cycles")
    assert run.code == 2
    assert "unknown rule `cycles`" in run.err and "did you mean `cycle`?" in run.err


def test_directory_without_diagrams(tmp_path):
    (tmp_path / "notes.txt").write_text("nothing here")
    run = dagward("check", str(tmp_path))
    assert run.code == 0
    assert "no .dag files found" in run.err
    assert run.out.strip() == "no problems in 0 files"


def test_fail_on_warning_and_disable(tmp_path):
    f = tmp_path / "d.dag"
    f.write_text("age -> sick_days\nage -> sick_days\n")
    assert dagward("check", str(f)).code == 0
    assert dagward("check", str(f), "--fail-on", "warning").code == 1
    run = dagward("check", str(f), "--fail-on", "warning", "--disable", "duplicate-arrow")
    assert run.code == 0 and run.out.strip() == "no problems in 1 file"


def test_colour_only_when_asked_and_no_color_honoured(tmp_path):
    # output is a pipe here, so no colour at all
    run = dagward("check", "samples/broken/cycle.dag")
    assert "\033[" not in run.out


def test_colour_on_a_terminal_and_no_color(tmp_path):
    import os
    import pty
    import subprocess
    import sys

    def on_tty(env_extra):
        master, slave = pty.openpty()
        env = {**os.environ, "PYTHONPATH": str(ROOT), **env_extra}
        env.pop("NO_COLOR", None) if "NO_COLOR" not in env_extra else None
        proc = subprocess.run([sys.executable, "-m", "dagward", "check", "samples/broken/cycle.dag"],
                              cwd=ROOT, env=env, stdout=slave, stderr=subprocess.PIPE, timeout=120)  # fmt: skip
        os.close(slave)
        data = b""
        while True:
            try:
                chunk = os.read(master, 65536)
            except OSError:
                break
            if not chunk:
                break
            data += chunk
        os.close(master)
        return proc.returncode, data.decode()

    code, text = on_tty({})
    assert code == 1 and "\033[31;1merror" in text
    code, text = on_tty({"NO_COLOR": "1"})
    assert code == 1 and "\033[" not in text


def test_output_file_is_written(tmp_path):
    out = tmp_path / "report.json"
    run = dagward("check", "samples/broken/cycle.dag", "--format", "json", "--output", str(out))
    assert run.code == 1 and run.out == ""
    assert json.loads(out.read_text())["summary"]["error"] == 1


def test_pyproject_settings_are_used_and_validated(tmp_path):
    (tmp_path / "causal").mkdir()
    (tmp_path / "causal" / "a.dag").write_text("age -> sick_days\nage -> sick_days\n")
    (tmp_path / "old").mkdir()
    (tmp_path / "old" / "b.dag").write_text("x -> x\n")
    (tmp_path / "pyproject.toml").write_text(
        '[tool.dagward]\nexclude = ["old/**"]\nfail-on = "warning"\n'
        '[tool.dagward.severity]\nduplicate-arrow = "error"\n'
    )
    run = dagward("check", cwd=tmp_path)
    assert run.code == 1
    assert "causal/a.dag:2:1: error [duplicate-arrow]" in run.out
    assert "old/b.dag" not in run.out
    (tmp_path / "pyproject.toml").write_text('[tool.dagward]\nfail_on = "warning"\n')
    run = dagward("check", cwd=tmp_path)
    assert run.code == 2
    assert "unknown key `fail_on`" in run.err and "pyproject.toml" in run.err
    (tmp_path / "pyproject.toml").write_text('[tool.dagward]\nfail-on = "sometimes"\n')
    assert dagward("check", cwd=tmp_path).code == 2
    (tmp_path / "pyproject.toml").write_text('[tool.dagward.severity]\ncycles = "error"\n')
    run = dagward("check", cwd=tmp_path)
    assert run.code == 2 and "unknown rule `cycles`" in run.err


def test_config_option_points_at_a_toml_file(tmp_path):
    cfg = tmp_path / "lint.toml"
    cfg.write_text('[tool.dagward]\ndisable = ["self-loop"]\n')
    run = dagward("check", "samples/broken/self_loop.dag", "--config", str(cfg))
    assert run.code == 0
    run = dagward("check", "samples/broken/self_loop.dag", "--config", str(tmp_path / "nope.toml"))
    assert run.code == 2 and "configuration file not found" in run.err
    cfg.write_text("[tool.dagward\n")
    run = dagward("check", "samples/broken/self_loop.dag", "--config", str(cfg))
    assert run.code == 2 and "not valid TOML" in run.err


def test_python_dash_m_and_version():
    import clirunner

    run = clirunner.dagward("--version")  # the real `python -m dagward`, not in this process
    assert run.code == 0 and run.out.startswith("dagward 0.")
