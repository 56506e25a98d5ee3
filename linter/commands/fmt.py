"""dagward fmt: rewrite diagram files in the canonical layout (see `dagward.fmt`).

Exit status: 0 when every file is (or now is) formatted; 1 when `--check` finds a
file that would change, or when a file does not parse (it is reported with
file:line:column and left untouched; the other files are still formatted);
2 for usage and I/O problems. `--diff` alone prints the changes and exits 0;
with `--check` too it exits 1 when there is any change.
"""

from __future__ import annotations

import argparse
import difflib
import sys

from ..files import discover
from ..fmt import format_source
from .common import emit, settings_from

HELP = (
    "Rewrite diagram files in the canonical layout (spacing, indentation inside analysis "
    "blocks, one final newline), keeping comments and statement order. A directory is "
    "searched recursively for *.dag files; with no PATH, the current directory."
)
FORMATS = ("text",)


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("paths", nargs="*", metavar="PATH", help="files or directories")
    p.add_argument(
        "--check", action="store_true", help="change nothing; exit 1 when a file would change"
    )
    p.add_argument(
        "--diff", action="store_true", help="change nothing; print a unified diff of the changes"
    )


def unified_diff(path: str, before: str, after: str) -> str:
    lines = difflib.unified_diff(
        before.splitlines(keepends=True),
        after.splitlines(keepends=True),
        fromfile=f"{path} (before)",
        tofile=f"{path} (formatted)",
    )
    out = []
    for line in lines:
        out.append(line if line.endswith("\n") else line + "\n\\ No newline at end of file\n")
    return "".join(out)


def run(args: argparse.Namespace) -> int:
    from ..fileio import write_atomic

    settings = settings_from(args)
    files = discover(args.paths, settings)
    if not files:
        where = ", ".join(args.paths) if args.paths else "the current directory"
        sys.stderr.write(f"dagward: no .dag files found in {where}\n")
    changed: list[str] = []
    broken: list[str] = []
    diffs: list[str] = []
    for file in files:
        with open(file, "rb") as handle:
            data = handle.read()
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
        changed.append(file)
        if args.diff:
            before = data.decode("utf-8", errors="replace")
            diffs.append(unified_diff(file, before, formatted))
        if args.check:
            if not args.diff:
                sys.stdout.write(f"{file}: would reformat\n")
        elif not args.diff:
            write_atomic(file, formatted)
            if not args.quiet:
                sys.stdout.write(f"{file}: reformatted\n")
    if args.diff and diffs:
        emit(args, "".join(diffs))
    if not args.quiet:
        verb = "would be reformatted" if (args.check or args.diff) else "reformatted"
        unchanged = len(files) - len(changed) - len(broken)
        summary = f"{len(changed)} {_files(len(changed))} {verb}, {unchanged} unchanged"
        if broken:
            summary += f", {len(broken)} not formatted (syntax error)"
        sys.stderr.write(summary + "\n")
    if broken or (args.check and changed):
        return 1
    return 0


def _files(n: int) -> str:
    return "file" if n == 1 else "files"
