"""Which files to check: explicit paths, and `*.dag` files found under directories."""

from __future__ import annotations

import os
import re
from functools import lru_cache
from pathlib import Path

from .config import Settings
from .errors import UsageProblem

# Directories that never hold a project's own diagrams (common practice for linters).
SKIPPED_DIRECTORIES = {".git", ".hg", ".svn", ".venv", "venv", "node_modules", "__pycache__",
                       ".tox", ".nox", ".mypy_cache", ".pytest_cache", ".ruff_cache"}  # fmt: skip


class PathProblem(UsageProblem):
    """A command-line path that does not exist or cannot be read (exit status 2)."""


@lru_cache(maxsize=256)
def _glob_regex(pattern: str) -> re.Pattern:
    """`**` spans directories, `*` and `?` stay inside one path segment."""
    out, i = [], 0
    while i < len(pattern):
        if pattern.startswith("**/", i):
            out.append("(?:.*/)?")
            i += 3
        elif pattern.startswith("**", i):
            out.append(".*")
            i += 2
        elif pattern[i] == "*":
            out.append("[^/]*")
            i += 1
        elif pattern[i] == "?":
            out.append("[^/]")
            i += 1
        else:
            out.append(re.escape(pattern[i]))
            i += 1
    return re.compile("".join(out) + r"\Z")


def matches(relative: str, patterns: tuple[str, ...]) -> bool:
    return any(_glob_regex(p).match(relative) for p in patterns)


def _relative_to_root(path: Path, settings: Settings) -> str:
    try:
        return path.resolve().relative_to(settings.root.resolve()).as_posix()
    except ValueError:
        return path.as_posix()


def discover(paths: list[str], settings: Settings) -> list[str]:
    """Files to check, as the user will see them (relative stays relative).

    A file named on the command line is always checked (pre-commit passes the
    staged files); a directory is searched recursively for files matching
    `include` and not `exclude`.
    """
    found: list[str] = []
    for arg in paths or ["."]:
        p = Path(arg)
        if p.is_file():
            found.append(arg)
            continue
        if not p.exists():
            raise PathProblem(f"no such file or directory: {arg}")
        if not p.is_dir():
            raise PathProblem(f"not a regular file or directory: {arg}")
        if not os.access(p, os.R_OK | os.X_OK):
            raise PathProblem(f"directory cannot be read: {arg}")
        found.extend(_walk(arg, settings))
    return found


def _walk(top: str, settings: Settings) -> list[str]:
    out = []
    errors: list[OSError] = []
    for directory, subdirs, filenames in os.walk(top, onerror=errors.append):
        subdirs[:] = sorted(d for d in subdirs if d not in SKIPPED_DIRECTORIES)
        for name in sorted(filenames):
            full = os.path.join(directory, name)
            if top == "." and full.startswith("./"):
                full = full[2:]
            relative = _relative_to_root(Path(full), settings)
            if matches(relative, settings.include) and not matches(relative, settings.exclude):
                out.append(full)
    if errors:
        raise PathProblem(f"cannot read {errors[0].filename}: {errors[0].strerror}")
    return out
