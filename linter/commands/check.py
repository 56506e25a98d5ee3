"""dagward check: lint diagram files.

Each file is checked with the settings of the nearest `[tool.dagward]` above it
(`--config` and `--no-config` override that; see `dagward.config`). `-` reads a
diagram from standard input; `--stdin-filename` gives the name used in the
findings and for finding the settings (editors lint unsaved buffers this way).

A bad entry in a checked folder (a dangling link, a link loop, an unreadable
file) is reported as one line on stderr; everything else is still checked and
the exit status is 2 at the end.
"""

from __future__ import annotations

import argparse
import sys

from ..engine import lint_source
from ..files import BadEntry, discover_all, os_reason
from ..findings import SEVERITY_RANK
from ..report import Report, reporter
from .common import emit, finder_from, read_input, refuse_overwriting_inputs, use_color

HELP = (
    "Lint diagram files. A directory is searched recursively for *.dag files "
    "(honouring `include` and `exclude`); with no PATH, the current directory; "
    "`-` reads standard input."
)
FORMATS = ("text", "json", "sarif", "github", "line")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("paths", nargs="*", metavar="PATH", help="files or directories, or - for stdin")
    p.add_argument("--stdin-filename", metavar="NAME", help="with `-`: the file name shown in "
                   "findings and used to find the settings")  # fmt: skip
    p.add_argument("--data", metavar="CSV", help="also test the implied independencies on data")
    p.add_argument("--alpha", type=float, default=0.05, metavar="A",
                   help="level for Holm-adjusted p values (with --data; default 0.05)")  # fmt: skip
    p.add_argument("--min-effect", type=float, default=0.1, metavar="R",
                   help="smallest |effect| that counts as a rejection (with --data; "
                   "default 0.1)")  # fmt: skip
    p.add_argument("--method", choices=("pearson", "spearman"), default="pearson",
                   help="correlation for numeric columns: pearson (linear) or spearman "
                   "(ranks; with --data; default pearson)")  # fmt: skip
    from ..data import add_reading_arguments

    add_reading_arguments(p)


def _warn(message: str) -> None:
    sys.stderr.write(f"dagward: {message}\n")


def run(args: argparse.Namespace) -> int:
    from ..errors import UsageProblem

    finder = finder_from(args)
    from_stdin = "-" in args.paths
    if from_stdin and len(args.paths) > 1:
        raise UsageProblem("`-` (standard input) cannot be combined with other paths")
    if args.stdin_filename and not from_stdin:
        raise UsageProblem("--stdin-filename applies only when reading standard input (`-`)")
    bad = []
    if from_stdin:
        name = args.stdin_filename or "<stdin>"
        files = [(name, finder.for_file(args.stdin_filename or "-"))]
    else:
        found = discover_all(args.paths, finder)
        files, bad = found.files, found.bad
        refuse_overwriting_inputs([args.output], found.paths)
        where = ", ".join(args.paths) if args.paths else "the current directory"
        for source, pattern in found.unmatched:
            _warn(f"the include pattern `{pattern}` ({source}) matches no file in {where}")
        if not files and not bad:
            if found.excluded:
                which = "the only one" if found.excluded == 1 else f"all {found.excluded}"
                _warn(
                    f"no .dag files to check in {where}: `exclude` in "
                    f"{', '.join(sorted(found.excluded_by))} leaves out {which}"
                )
            else:
                _warn(f"no .dag files found in {where}")
    table, options = None, None
    if args.data:
        from ..data import DataOptions, load_data, reading_options

        # the [tool.dagward.data] table that applies where the data file lies
        table = load_data(args.data, reading_options(args, finder.for_file(args.data)))
        options = DataOptions(args.alpha, args.min_effect, args.method, args.data)
    findings = []
    failing = False
    checked = 0
    sources: dict[str, bytes] = {}
    for file, settings in files:
        try:
            data = read_input("-" if from_stdin else file)
        except OSError as e:  # it changed since discovery: report it like a bad entry
            bad.append(BadEntry(file, f"cannot be read ({os_reason(e)})"))
            continue
        checked += 1
        if from_stdin:
            sources[file] = data  # the buffer, not what is on disk under that name
        result = lint_source(data, file, settings, table=table, data_options=options)
        findings.extend(result.findings)
        threshold = SEVERITY_RANK[settings.fail_on]
        failing |= any(SEVERITY_RANK[f.severity] >= threshold for f in result.findings)
    report = Report(
        findings, checked, color=use_color(args), quiet=args.quiet, sources=sources or None
    )
    emit(args, reporter(args.format)(report))
    for entry in bad:
        sys.stderr.write(f"dagward: error: {entry.path}: {entry.reason} (not checked)\n")
    if bad:
        return 2
    return 1 if failing else 0
