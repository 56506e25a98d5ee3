"""Git access for `dagward diff`: the repository root, the base and head revisions,
the changed `.dag` files between them, and a file's bytes at a revision.

Everything goes through the `git` program (no library), with arguments as a list
and a timeout; a failure becomes a one-line `UsageProblem` (exit 2).

The base of a comparison is the *merge base* of the base revision and the head
(what `git diff A...B` compares): on a branch behind `main`, the commits made on
`main` since the branch left it are not the branch's changes and must not show
as removed by it. The label of the base says which commit was used.
"""

from __future__ import annotations

import os
import subprocess
from dataclasses import dataclass
from pathlib import Path

from .errors import UsageProblem

WORKING_TREE = "working tree"
DEFAULT_BRANCHES = ("origin/HEAD", "main", "master")


@dataclass(frozen=True)
class Revision:
    """One side of a comparison: a commit (None: the working tree) and how to name it."""

    commit: str | None
    label: str


@dataclass(frozen=True)
class Change:
    status: str  # added, deleted, renamed, modified
    old_path: str | None  # relative to the repository root
    new_path: str | None


def _git(args: list[str], cwd: str | Path) -> subprocess.CompletedProcess:
    try:
        return subprocess.run(["git", *args], cwd=cwd, capture_output=True, timeout=120)
    except FileNotFoundError:
        raise UsageProblem(
            "git is not installed; to compare two files: dagward diff OLD.dag NEW.dag"
        ) from None


def repository_root(cwd: str | Path) -> Path:
    done = _git(["rev-parse", "--show-toplevel"], cwd)
    if done.returncode != 0:
        raise UsageProblem(
            f"{os.path.abspath(cwd)} is not inside a git repository; "
            "to compare two files: dagward diff OLD.dag NEW.dag"
        )
    return Path(done.stdout.decode().strip())


def commit_of(rev: str, root: Path) -> str | None:
    """The full commit id a revision names, or None."""
    done = _git(["rev-parse", "--verify", "--quiet", f"{rev}^{{commit}}"], root)
    return done.stdout.decode().strip() if done.returncode == 0 else None


def merge_base(a: str, b: str, root: Path) -> str | None:
    """The best common ancestor of two commits (`git merge-base`), or None."""
    done = _git(["merge-base", a, b], root)
    return done.stdout.decode().strip() if done.returncode == 0 else None


def resolve_head(root: Path, head: str | None) -> Revision:
    if head is None:
        return Revision(None, WORKING_TREE)
    commit = commit_of(head, root)
    if commit is None:
        raise UsageProblem(f"head revision `{head}` not found in this repository")
    return Revision(commit, f"{head} ({commit[:7]})")


def resolve_base(root: Path, base: str | None, head: str | None = None) -> Revision:
    """The merge base of `base` (default: the first of DEFAULT_BRANCHES that exists)
    and `head` (default: HEAD), labelled with the commit used."""
    head_name = head or "HEAD"
    head_commit = commit_of(head_name, root)
    if base is not None:
        tip = commit_of(base, root)
        if tip is None:
            raise UsageProblem(f"base revision `{base}` not found in this repository")
        common = merge_base(tip, head_commit, root) if head_commit else None
        if common is None:
            # unrelated histories (or no commit on HEAD yet): only the tip is left
            return Revision(tip, f"{base} ({tip[:7]}; no common history with {head_name})")
        if common == tip:
            return Revision(tip, f"{base} ({tip[:7]})")
        return Revision(
            common,
            f"{common[:7]} (merge base of {head_name} and {base}; {base} is at {tip[:7]})",
        )
    if head_commit is None:
        raise UsageProblem("the repository has no commits yet; nothing to compare with")
    for branch in DEFAULT_BRANCHES:
        tip = commit_of(branch, root)
        if tip is None:
            continue
        common = merge_base(head_commit, tip, root)
        if common is not None:
            return Revision(common, f"{common[:7]} (merge base of {head_name} and {branch})")
    raise UsageProblem(
        f"no base revision: none of {', '.join(DEFAULT_BRANCHES)} shares history with "
        f"{head_name}; give one with --base REV"
    )


_STATUS = {
    "A": "added",
    "D": "deleted",
    "M": "modified",
    "T": "modified",
    "R": "renamed",
    "C": "added",
}


def changed_files(
    root: Path, base: str, head: str | None, pathspecs: list[str], cwd: str | Path
) -> list[Change]:
    """Changed `.dag` files between base and head (None: the working tree, untracked
    files included), with renames found by git (`--name-status -M`).

    `pathspecs` (relative to `cwd`) keep the changes whose old or new path lies
    under one of them; git is asked about the whole tree so that a file renamed
    into or out of those paths is still seen as a rename.
    """
    # --no-relative: paths from the repository root even when run from a subdirectory
    args = ["diff", "--name-status", "-z", "-M", "--no-ext-diff", "--no-relative", base]
    if head is not None:
        args.append(head)
    done = _git(args, root)
    if done.returncode != 0:
        raise UsageProblem(f"git diff failed: {done.stderr.decode(errors='replace').strip()}")
    fields = done.stdout.decode("utf-8", errors="surrogateescape").split("\0")
    out: list[Change] = []
    i = 0
    while i < len(fields) and fields[i]:
        code = fields[i][0]
        old: str | None
        if code in "RC":
            old, new = fields[i + 1], fields[i + 2]
            i += 3
            if code == "C":
                old = None  # a copy: the new file is new
        else:
            old = new = fields[i + 1]
            i += 2
        status = _STATUS.get(code, "modified")
        out.append(
            Change(
                status,
                None if status == "added" else old,
                None if status == "deleted" else new,
            )
        )
    if head is None:
        untracked = _git(["ls-files", "-z", "--others", "--exclude-standard", "--full-name"], root)
        for path in untracked.stdout.decode("utf-8", errors="surrogateescape").split("\0"):
            if path:
                out.append(Change("added", None, path))
    prefixes = [_root_relative(p, root, cwd) for p in pathspecs]

    def wanted(path: str | None) -> bool:
        if path is None or not path.endswith(".dag"):
            return False
        return not prefixes or any(
            p == "" or path == p or path.startswith(p + "/") for p in prefixes
        )

    return [c for c in out if wanted(c.old_path) or wanted(c.new_path)]


def _root_relative(path: str, root: Path, cwd: str | Path) -> str:
    """A command-line path as a POSIX path from the repository root ("" for the root)."""
    absolute = Path(os.path.abspath(os.path.join(cwd, path))).resolve()
    try:
        relative = absolute.relative_to(root.resolve()).as_posix()
    except ValueError:
        raise UsageProblem(f"{path} is outside the repository {root}") from None
    return "" if relative == "." else relative


def read_revision(root: Path, rev: str | None, path: str) -> bytes:
    """A file's bytes at a commit, or on disk when `rev` is None (the working tree)."""
    if rev is None:
        try:
            return (root / path).read_bytes()
        except OSError as e:
            raise UsageProblem(f"cannot read {path}: {e.strerror or e}") from None
    done = _git(["show", f"{rev}:{path}"], root)
    if done.returncode != 0:
        raise UsageProblem(
            f"cannot read {path} at {rev[:12]}: {done.stderr.decode(errors='replace').strip()}"
        )
    return done.stdout
