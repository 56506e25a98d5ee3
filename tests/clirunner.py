"""Running the real command line in a subprocess (test helper)."""

from __future__ import annotations

import os
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


@dataclass
class Run:
    code: int
    out: str
    err: str


def dagward(*args: str, cwd: str | Path | None = None, env: dict | None = None,
            stdin: bytes | None = None) -> Run:  # fmt: skip
    full_env = {**os.environ, "PYTHONPATH": str(ROOT), **(env or {})}
    full_env.pop("DAGWARD_DEBUG", None)
    proc = subprocess.run(
        [sys.executable, "-m", "dagward", *args],
        cwd=cwd or ROOT,
        env=full_env,
        input=stdin,
        capture_output=True,
        timeout=600,
    )
    out, err = proc.stdout.decode("utf-8", "replace"), proc.stderr.decode("utf-8", "replace")
    assert "Traceback" not in err, err
    return Run(proc.returncode, out, err)


def in_process(capsys, *args: str) -> Run:
    """The command line run in this process (no interpreter start-up per case);
    ``capsys`` is pytest's fixture that captures what it prints."""
    from dagward.cli import main

    try:
        code = main(list(args))
    except SystemExit as e:  # argparse ends a bad command line this way
        code = e.code
    captured = capsys.readouterr()
    return Run(code, captured.out, captured.err)


def in_this_process(module, capsys, monkeypatch) -> None:
    """Make ``module``'s ``dagward(...)`` run the command line in this process, in
    the same working directory and environment the subprocess would have (for
    test files whose every run would otherwise start an interpreter and import
    the statistics stack; other files keep the real subprocess). Runs given
    standard input or an interpreter setting still start a real interpreter."""

    def run(*args: str, cwd=None, env=None, stdin=None) -> Run:
        if stdin is not None or any(key.startswith("PYTHON") for key in env or {}):
            # standard input, and settings read when an interpreter starts
            # (PYTHONIOENCODING, ...), need the real subprocess
            return dagward(*args, cwd=cwd, env=env, stdin=stdin)
        monkeypatch.chdir(cwd or ROOT)
        for key, value in (env or {}).items():
            monkeypatch.setenv(key, value)
        done = in_process(capsys, *args)
        assert "Traceback" not in done.err, done.err
        return done

    monkeypatch.setattr(module, "dagward", run)
