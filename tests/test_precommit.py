"""The real pre-commit runs our hooks (`.pre-commit-hooks.yaml`) in a throwaway repository.

pre-commit installs this checkout with pip into its own environment (setuptools
comes from the package index), so this test needs the network and takes a while.
`try-repo` uses the checkout's tracked files including uncommitted edits.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

CHECKOUT = Path(__file__).resolve().parents[1]

GOOD = """\
title "Urban tree canopy and heat admissions"
income -> canopy, heat_admissions  # richer districts plant more trees
canopy -> surface_temp -> heat_admissions

analysis canopy_effect {
  exposure: canopy
  outcome: heat_admissions
  adjust: income
}
"""
BAD = """\
canopy -> surface_temp
surface_temp -> canopy
"""
MESSY = "income->canopy\ncanopy  ->heat_admissions\n"


def _git(repo: Path, *args: str) -> None:
    subprocess.run(
        ["git", "-c", "user.name=test", "-c", "user.email=test@example.invalid", *args],
        cwd=repo,
        check=True,
        capture_output=True,
    )


def _try_repo(repo: Path, env: dict, *args: str) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "pre_commit", "try-repo", str(CHECKOUT), *args, "--color", "never"],
        cwd=repo,
        env=env,
        capture_output=True,
        text=True,
        timeout=900,
    )


@pytest.mark.slow
def test_hooks_refuse_bad_diagram_and_pass_good_one(tmp_path):
    assert (CHECKOUT / ".pre-commit-hooks.yaml").is_file()
    repo = tmp_path / "study"
    repo.mkdir()
    _git(repo, "init", "-q", "-b", "main")
    (repo / "good.dag").write_text(GOOD, "utf-8")
    (repo / "bad.dag").write_text(BAD, "utf-8")
    (repo / "messy.dag").write_text(MESSY, "utf-8")
    (repo / "notes.txt").write_text("canopy -> canopy\n", "utf-8")  # not a diagram
    _git(repo, "add", ".")
    env = dict(os.environ, PRE_COMMIT_HOME=str(tmp_path / "pre-commit-home"))
    env.pop("PYTHONPATH", None)  # the hook must run from its own installed environment
    env.setdefault("PIP_DISABLE_PIP_VERSION_CHECK", "1")

    # the check hook alone: the bad diagram is refused with its finding printed
    done = _try_repo(repo, env, "dagward", "--files", "good.dag", "bad.dag", "notes.txt")
    output = done.stdout + done.stderr
    assert done.returncode == 1, output
    assert "dagward check (causal diagrams)" in output and "Failed" in output
    assert "bad.dag:2:1: error [cycle] the arrows form a cycle" in output
    assert "good.dag" not in output.split("Failed", 1)[1]  # no finding for the good file
    assert "notes.txt" not in output.split("Failed", 1)[1]

    # the good diagram passes both hooks
    done = _try_repo(repo, env, "--files", "good.dag")
    output = done.stdout + done.stderr
    assert done.returncode == 0, output
    assert output.count("Passed") == 2, output

    # the layout hook rewrites the messy file and stops the commit
    done = _try_repo(repo, env, "dagward-fmt", "--files", "messy.dag")
    output = done.stdout + done.stderr
    assert done.returncode == 1, output
    assert "files were modified by this hook" in output
    assert (repo / "messy.dag").read_text("utf-8") == (
        "income -> canopy\ncanopy -> heat_admissions\n"
    )
