"""Which files to check: explicit paths, and `*.dag` files found under directories."""

from __future__ import annotations

import errno
import os
import re
import stat
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path

from .config import Settings, SettingsFinder
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
    # The folder is resolved, the file name is not: a link is matched where it
    # lies (a dangling one or a loop too), not where it points.
    where = Path(os.path.realpath(path.parent)) / path.name
    try:
        return where.relative_to(settings.root.resolve()).as_posix()
    except ValueError:  # outside the root
        return path.as_posix()


@dataclass(frozen=True)
class BadEntry:
    """A file in a checked folder that could not be read; reported, the rest still checked."""

    path: str
    reason: str


@dataclass
class Discovery:
    """What `discover` found: files to check (with their settings) and what went wrong."""

    files: list[tuple[str, Settings]] = field(default_factory=list)
    bad: list[BadEntry] = field(default_factory=list)
    excluded: int = 0  # files matching `include` that `exclude` removed
    excluded_by: set[str] = field(default_factory=set)  # the settings files that did
    # (settings source, pattern) for include patterns that matched no file
    unmatched: list[tuple[str, str]] = field(default_factory=list)

    @property
    def paths(self) -> list[str]:
        return [f for f, _ in self.files]


def _settings_for(where: str, settings: Settings | SettingsFinder) -> Settings:
    if isinstance(settings, SettingsFinder):
        return settings.for_file(where)
    return settings


def discover_all(paths: list[str], settings: Settings | SettingsFinder) -> Discovery:
    """Files to check, as the user will see them (relative stays relative).

    A file named on the command line is always checked (pre-commit passes the
    staged files); a directory is searched recursively for files matching
    `include` and not `exclude` of the settings that apply to each file. A bad
    entry in a directory (a dangling link, a link loop, an unreadable file or
    folder) is recorded in `bad` and the search goes on.
    """
    out = Discovery()
    used: dict[int, Settings] = {}
    matched: set[tuple[int, str]] = set()
    tops: list[Path] = []
    for arg in paths or ["."]:
        p = Path(arg)
        if p.is_file():
            out.files.append((arg, _settings_for(arg, settings)))
            continue
        if p.is_symlink():
            raise PathProblem(f"{_link_problem(arg)}: {arg}")
        if not p.exists():
            raise PathProblem(f"no such file or directory: {arg}")
        if not p.is_dir():
            raise PathProblem(f"not a regular file or directory: {arg}")
        if not os.access(p, os.R_OK | os.X_OK):
            raise PathProblem(f"directory cannot be read: {arg}")
        tops.append(p.resolve())
        _walk(arg, settings, out, used, matched)
    for key, s in used.items():
        # A pattern can only be said to match nothing when the whole folder it
        # applies to was searched (checking one subfolder says nothing of others).
        root = s.root.resolve()
        if not any(top == root or top in root.parents for top in tops):
            continue
        for pattern in s.include:
            if (key, pattern) not in matched:
                out.unmatched.append((s.source or "the defaults", pattern))
    return out


def discover(paths: list[str], settings: Settings | SettingsFinder) -> list[str]:
    """The file paths of `discover_all`; raises PathProblem on the first bad entry."""
    found = discover_all(paths, settings)
    if found.bad:
        raise PathProblem(f"{found.bad[0].path}: {found.bad[0].reason}")
    return found.paths


def os_reason(e: OSError) -> str:
    """The system's reason in the middle of our sentence: "permission denied"."""
    text = e.strerror or type(e).__name__
    return text[:1].lower() + text[1:]


def _link_problem(path: str) -> str:
    try:
        os.stat(path)
    except OSError as e:
        if e.errno == errno.ELOOP:
            return "symbolic link loop"
        if e.errno == errno.ENOENT:
            return "symbolic link to a file that does not exist"
        return f"cannot be read ({os_reason(e)})"
    return "cannot be read"


def _entry_problem(path: str) -> str | None:
    """Why a directory entry that looks like a diagram cannot be checked, or None."""
    try:
        st = os.stat(path)
    except OSError as e:
        if os.path.islink(path):
            return _link_problem(path)
        return f"cannot be read ({os_reason(e)})"
    if not stat.S_ISREG(st.st_mode):
        return "not a regular file"
    if not os.access(path, os.R_OK):
        return "cannot be read (permission denied)"
    return None


def _walk(
    top: str,
    settings: Settings | SettingsFinder,
    out: Discovery,
    used: dict[int, Settings],
    matched: set[tuple[int, str]],
) -> None:
    errors: list[OSError] = []
    for directory, subdirs, filenames in os.walk(top, onerror=errors.append):
        subdirs[:] = sorted(d for d in subdirs if d not in SKIPPED_DIRECTORIES)
        here = _settings_for(os.path.join(directory, "x"), settings)
        used.setdefault(id(here), here)
        # os.walk lists a link to a directory among `subdirs` and does not follow
        # it; a dangling or looping link is listed among the files.
        for name in sorted(filenames):
            full = os.path.join(directory, name)
            if top == "." and full.startswith("./"):
                full = full[2:]
            relative = _relative_to_root(Path(full), here)
            hits = [p for p in here.include if _glob_regex(p).match(relative)]
            if not hits:
                continue
            matched.update((id(here), p) for p in hits)
            if matches(relative, here.exclude):
                out.excluded += 1
                out.excluded_by.add(here.source or "the defaults")
                continue
            problem = _entry_problem(full)
            if problem is not None:
                out.bad.append(BadEntry(full, problem))
            else:
                out.files.append((full, here))
    for e in errors:
        out.bad.append(BadEntry(e.filename or top, f"folder cannot be read ({os_reason(e)})"))
