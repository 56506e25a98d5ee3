"""dagward fmt: rewrite diagram files in the canonical layout (see `dagward.fmt`).

Messages (our wording): `FILE: rewritten in the canonical layout`, with `--check`
`FILE: layout differs from the canonical one`, and one summary line on stderr,
`3 diagram files: 1 rewritten in the canonical layout, 2 already in it`.

Exit status: 0 when every file is (or now is) in the canonical layout; 1 when
`--check` finds a file whose layout differs, or when a file does not parse (it is reported with
file:line:column and left untouched; the other files are still formatted);
2 for usage and I/O problems. `--diff` alone prints the changes and exits 0;
with `--check` too it exits 1 when there is any change.

`fmt -` reads a diagram from standard input and prints it formatted (editors
format on save this way); with a syntax error it prints nothing, reports the
error on stderr and exits 1. A read-only file is not rewritten: it is named on
stderr and the exit status is 2 once the other files are done. A symbolic link
is written through to its target (see `dagward.fileio`), owner and mode kept.
"""

from __future__ import annotations

import argparse
import difflib
import sys

from ..files import BadEntry, discover_all, os_reason
from ..fmt import format_source
from .common import emit, finder_from, refuse_overwriting_inputs

HELP = (
    "Rewrite diagram files in the canonical layout (spacing, indentation inside analysis "
    "blocks, one final newline), keeping comments and statement order. A directory is "
    "searched recursively for *.dag files; with no PATH, the current directory."
)
FORMATS = ("text",)


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("paths", nargs="*", metavar="PATH", help="files or directories, or - for stdin")
    p.add_argument("--stdin-filename", metavar="NAME", help="with `-`: the file name shown in "
                   "messages")  # fmt: skip
    # `--check` and `--diff` are the contract's names (docs, pre-commit hook, CI
    # recipes); they describe what the options do, as in many unrelated tools.
    p.add_argument(
        "--check",
        action="store_true",
        help="change nothing; name each file whose layout differs and exit 1 if any does",
    )
    p.add_argument(
        "--diff",
        action="store_true",
        help="change nothing; show the layout changes as a unified diff",
    )


def unified_diff(path: str, before: str, after: str) -> str:
    lines = difflib.unified_diff(
        before.splitlines(keepends=True),
        after.splitlines(keepends=True),
        fromfile=f"{path} (as written)",
        tofile=f"{path} (canonical layout)",
    )
    out = []
    for line in lines:
        out.append(line if line.endswith("\n") else line + "\n\\ No newline at end of file\n")
    return "".join(out)


def _format_stdin(args: argparse.Namespace) -> int:
    name = args.stdin_filename or "<stdin>"
    data = sys.stdin.buffer.read()
    formatted, problem = format_source(data, name)
    if problem is not None:
        sys.stderr.write(
            f"{name}:{problem.span.line}:{problem.span.column}: error [syntax-error] "
            f"{problem.message} (not formatted)\n"
        )
        return 1
    assert formatted is not None
    changed = formatted.encode("utf-8") != data
    if args.diff:
        if changed:
            emit(args, unified_diff(name, data.decode("utf-8", errors="replace"), formatted))
    elif not args.check:
        emit(args, formatted)
    return 1 if (args.check and changed) else 0


def run(args: argparse.Namespace) -> int:
    from ..errors import UsageProblem
    from ..fileio import ReadOnlyFile, write_atomic

    if "-" in args.paths:
        if len(args.paths) > 1:
            raise UsageProblem("`-` (standard input) cannot be combined with other paths")
        return _format_stdin(args)
    found = discover_all(args.paths, finder_from(args))
    files = found.paths
    refuse_overwriting_inputs([args.output], files)
    if not files and not found.bad:
        where = ", ".join(args.paths) if args.paths else "the current directory"
        sys.stderr.write(f"dagward: no .dag files found in {where}\n")
    changed: list[str] = []
    broken: list[str] = []
    refused: list[str] = []
    diffs: list[str] = []
    for file in files:
        try:
            with open(file, "rb") as handle:
                data = handle.read()
        except OSError as e:
            found.bad.append(BadEntry(file, f"cannot be read ({os_reason(e)})"))
            continue
        formatted, problem = format_source(data, file)
        if problem is not None:
            # Never rewrite a file we could not read completely: it stays as it is.
            broken.append(file)
            sys.stderr.write(
                f"{file}:{problem.span.line}:{problem.span.column}: error [syntax-error] "
                f"{problem.message} (file left unchanged)\n"
            )
            continue
        assert formatted is not None
        if formatted.encode("utf-8") == data:
            continue
        if args.diff:
            before = data.decode("utf-8", errors="replace")
            diffs.append(unified_diff(file, before, formatted))
        if args.check:
            if not args.diff:
                sys.stdout.write(f"{file}: layout differs from the canonical one\n")
        elif not args.diff:
            try:
                write_atomic(file, formatted)
            except ReadOnlyFile:
                refused.append(file)
                sys.stderr.write(f"dagward: error: {file}: read-only, not reformatted\n")
                continue
            except OSError as e:
                refused.append(file)
                sys.stderr.write(
                    f"dagward: error: {file}: cannot be written ({e.strerror or e}), "
                    "left unchanged\n"
                )
                continue
            if not args.quiet:
                sys.stdout.write(f"{file}: rewritten in the canonical layout\n")
        changed.append(file)
    if args.diff and diffs:
        emit(args, "".join(diffs))
    for entry in found.bad:
        sys.stderr.write(f"dagward: error: {entry.path}: {entry.reason} (not formatted)\n")
    if not args.quiet:
        wrote = not (args.check or args.diff)
        sys.stderr.write(
            summary(len(files), len(changed), len(broken), wrote=wrote, refused=len(refused)) + "\n"
        )
    if found.bad or refused:
        return 2
    if broken or (args.check and changed):
        return 1
    return 0


def summary(total: int, changed: int, broken: int, *, wrote: bool, refused: int = 0) -> str:
    """One line on stderr: how many files were read and what became of them.

    Worded from the diagram's point of view (its layout is part of what the file
    is): `3 diagram files: 1 rewritten in the canonical layout, 2 already in it`.
    """
    canonical = total - changed - broken - refused
    done = "rewritten in the canonical layout" if wrote else "not in the canonical layout"
    parts = [f"{changed} {done}", f"{canonical} already in it"]
    if broken:
        parts.append(f"{broken} not read (syntax error, left as it was)")
    if refused:
        parts.append(f"{refused} not written (read-only or not writable, left as it was)")
    return f"{total} diagram {_files(total)}: " + ", ".join(parts)


def _files(n: int) -> str:
    return "file" if n == 1 else "files"
