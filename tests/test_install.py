"""The package installs from its own files (not editable) and works from elsewhere:
the grammar must ship inside the wheel."""

from __future__ import annotations

import shutil
import subprocess
import venv
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


@pytest.mark.slow
def test_wheel_install_into_fresh_venv_runs_check_from_another_directory(tmp_path):
    env_dir = tmp_path / "venv"
    venv.EnvBuilder(with_pip=True).create(env_dir)
    py = env_dir / "bin" / "python"
    # copy the source so the build cannot pick up anything from the work tree's state
    src = tmp_path / "src"
    shutil.copytree(ROOT, src, ignore=shutil.ignore_patterns(
        ".git", "__pycache__", "*.egg-info", "build", ".venv", ".pytest_cache", ".hypothesis"))  # fmt: skip
    install = subprocess.run(
        [str(py), "-m", "pip", "install", "-q", str(src)], capture_output=True, text=True,
        timeout=900,
    )  # fmt: skip
    assert install.returncode == 0, install.stderr[-3000:]
    shutil.rmtree(src)  # nothing may still point at the source tree

    work = tmp_path / "elsewhere"
    work.mkdir()
    shutil.copy(ROOT / "samples" / "wellness.dag", work / "wellness.dag")
    shutil.copy(ROOT / "samples" / "broken" / "cycle.dag", work / "cycle.dag")
    dagward = env_dir / "bin" / "dagward"
    run = subprocess.run([str(dagward), "check", "."], cwd=work, capture_output=True, text=True,
                         timeout=300)  # fmt: skip
    assert "Traceback" not in run.stderr
    assert run.returncode == 1, run.stdout + run.stderr
    assert "cycle.dag:4:1: error [cycle]" in run.stdout
    assert "wellness.dag:27:1: warning [unmeasured-confounding]" in run.stdout
    assert "\n1 error, 1 warning in 2 files\n" in run.stdout

    # the grammar is inside the installed package, and python -m dagward works too
    probe = subprocess.run(
        [str(py), "-c", "import importlib.resources as r; "
         "print(r.files('dagward.grammar').joinpath('diagram.lark').is_file())"],
        cwd=work, capture_output=True, text=True,
    )  # fmt: skip
    assert probe.stdout.strip() == "True", probe.stderr
    run = subprocess.run([str(py), "-m", "dagward", "check", "wellness.dag"], cwd=work,
                         capture_output=True, text=True)  # fmt: skip
    assert run.returncode == 0 and "1 warning in 1 file" in run.stdout
    # the import package is `dagward`; no generic `linter` package is installed
    names = subprocess.run(
        [str(py), "-c", "import importlib.util as u, dagward, pathlib; "
         "print(u.find_spec('linter') is None, "
         "(pathlib.Path(dagward.__file__).parent / 'py.typed').is_file())"],
        cwd=work, capture_output=True, text=True,
    )  # fmt: skip
    assert names.stdout.split() == ["True", "True"], names.stderr


def test_the_version_is_the_same_in_pyproject_and_the_package():
    import tomllib

    from dagward import __version__

    with open(ROOT / "pyproject.toml", "rb") as handle:
        assert tomllib.load(handle)["project"]["version"] == __version__
