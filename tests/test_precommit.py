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


# --- the hook definitions ----------------------------------------------------------


def _hooks() -> list[dict]:
    import yaml

    return yaml.safe_load((CHECKOUT / ".pre-commit-hooks.yaml").read_text("utf-8"))


def test_hook_definitions_match_the_package():
    import re
    import tomllib

    project = tomllib.loads((CHECKOUT / "pyproject.toml").read_text("utf-8"))
    requires_python = project["project"]["requires-python"]
    test_extra = " ".join(project["project"]["optional-dependencies"]["test"])
    tested_pre_commit = re.search(r"pre-commit>=([\d.]+)", test_extra).group(1)
    hooks = _hooks()
    assert [h["id"] for h in hooks] == ["dagward", "dagward-fmt"]
    for hook in hooks:
        assert hook["language"] == "python"
        # the interpreter pre-commit builds the hook with is the one pip accepts
        assert hook["language_version"] == requires_python == ">=3.11"
        assert hook["require_serial"] is True
        # by name only: "types: [text]" would skip a diagram holding a NUL byte
        assert hook["files"] == r"\.dag$"
        assert "types" not in hook and "types_or" not in hook
        # the oldest pre-commit our tests allow is the oldest we claim to support
        claimed = hook["minimum_pre_commit_version"]
        assert _release(claimed) == _release(tested_pre_commit), (claimed, tested_pre_commit)
        assert re.search(hook["files"], "causal/study.dag")
        assert not re.search(hook["files"], "causal/study.dag.bak")


def _release(version: str) -> tuple[int, ...]:
    parts = [int(p) for p in version.split(".")]
    while parts and parts[-1] == 0:
        parts.pop()
    return tuple(parts)


@pytest.mark.slow
def test_binary_diagram_reaches_the_hook(tmp_path):
    """A .dag with a NUL byte is reported by dagward, not skipped by pre-commit."""
    repo = tmp_path / "study"
    repo.mkdir()
    _git(repo, "init", "-q", "-b", "main")
    (repo / "broken.dag").write_bytes(b"income -> canopy\n\x00\n")
    _git(repo, "add", ".")
    env = dict(os.environ, PRE_COMMIT_HOME=str(tmp_path / "pre-commit-home"))
    env.pop("PYTHONPATH", None)
    env.setdefault("PIP_DISABLE_PIP_VERSION_CHECK", "1")
    done = _try_repo(repo, env, "dagward", "--files", "broken.dag")
    output = done.stdout + done.stderr
    assert done.returncode == 1, output
    assert "broken.dag:2:1: error [syntax-error] this looks like a binary file" in output


def _python310() -> str | None:
    import glob
    import shutil

    # on PATH, or a pyenv-installed one (pyenv's shim may point at no version)
    candidates = [
        shutil.which("python3.10"),
        *sorted(glob.glob(os.path.expanduser("~/.pyenv/versions/3.10*/bin/python3.10"))),
    ]
    for found in filter(None, candidates):
        probe = subprocess.run([found, "-c", "import sys; print(sys.version_info[:2])"],
                               capture_output=True, text=True)  # fmt: skip
        if probe.stdout.strip() == "(3, 10)":
            return found
    return None


@pytest.mark.slow
@pytest.mark.skipif(_python310() is None, reason="needs a Python 3.10 interpreter")
def test_pre_commit_on_python_310(tmp_path):
    """pre-commit itself on Python 3.10, as in many research groups' setups.

    With a 3.11+ interpreter on PATH the hook is built with it and works; with
    none, pre-commit stops with a short message naming the requirement instead
    of pip's long refusal. pre-commit for 3.10 is installed from the package index.
    """
    py310 = _python310()
    venv_dir = tmp_path / "pre-commit-310"
    subprocess.run([py310, "-m", "venv", str(venv_dir)], check=True)
    subprocess.run([str(venv_dir / "bin" / "python"), "-m", "pip", "install", "-q",
                    "--disable-pip-version-check", "pre-commit>=4"], check=True,
                   timeout=900)  # fmt: skip
    repo = tmp_path / "study"
    repo.mkdir()
    _git(repo, "init", "-q", "-b", "main")
    (repo / "bad.dag").write_text(BAD, "utf-8")
    _git(repo, "add", ".")

    def run(path: str, home: str) -> subprocess.CompletedProcess:
        env = dict(os.environ, PATH=path, PRE_COMMIT_HOME=str(tmp_path / home))
        env.pop("PYTHONPATH", None)
        env.pop("VIRTUAL_ENV", None)
        return subprocess.run(
            [str(venv_dir / "bin" / "python"), "-m", "pre_commit", "try-repo", str(CHECKOUT),
             "dagward", "--files", "bad.dag", "--color", "never"],
            cwd=repo, env=env, capture_output=True, text=True, timeout=900,
        )  # fmt: skip

    # PATH without any interpreter but 3.10: every other program is linked in
    only_310 = tmp_path / "path-310"
    only_310.mkdir()
    (only_310 / "python3.10").symlink_to(py310)
    for folder in os.environ["PATH"].split(os.pathsep):
        if not os.path.isdir(folder):
            continue
        for entry in os.scandir(folder):
            name = entry.name
            if name.startswith(("python", "pip", "pydoc")) or (only_310 / name).exists():
                continue
            (only_310 / name).symlink_to(entry.path)
    done = run(str(only_310), "home-a")
    output = done.stdout + done.stderr
    assert done.returncode != 0, output
    assert "failed to find interpreter for Builtin discover of python_spec='>=3.11'" in output
    assert "Traceback" not in output
    assert len(output.splitlines()) < 30, output

    # with a 3.11+ interpreter on PATH the hook runs and refuses the cycle
    newer = tmp_path / "path-311"
    newer.mkdir()
    (newer / "python3.11").symlink_to(sys.executable)  # the suite itself runs on 3.11+
    done = run(os.pathsep.join([str(newer), str(only_310)]), "home-b")
    output = done.stdout + done.stderr
    assert done.returncode == 1, output
    assert "bad.dag:2:1: error [cycle]" in output


def test_readme_pre_commit_config_names_our_hooks():
    """The configuration the README offers for copying parses and names hooks that
    exist; it pins a commit (there are no release tags to point at)."""
    import yaml

    readme = (CHECKOUT / "README.md").read_text("utf-8")
    block = readme.split("```yaml\nrepos:\n", 1)[1].split("```", 1)[0]
    config = yaml.safe_load("repos:\n" + block)
    (repo,) = config["repos"]
    assert repo["rev"] == "COMMIT_SHA"
    assert "full 40-character SHA" in readme
    # any version tag the README points at must exist in the repository
    import re

    tags = subprocess.run(["git", "tag"], cwd=CHECKOUT, capture_output=True, text=True)
    named = set(re.findall(r"(?:rev: |dagward@)(v\d+(?:\.\d+)*)", readme))
    assert named <= set(tags.stdout.split()), named
    ids = {h["id"] for h in _hooks()}
    assert {h["id"] for h in repo["hooks"]} == ids
