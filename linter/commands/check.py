"""dagward check: lint diagram files."""

from __future__ import annotations

import argparse
import sys

from ..engine import read_and_lint
from ..files import discover
from ..report import Report, reporter
from .common import emit, exit_status, settings_from, use_color

HELP = (
    "Lint diagram files. A directory is searched recursively for *.dag files "
    "(honouring `include` and `exclude`); with no PATH, the current directory."
)
FORMATS = ("text", "json", "sarif", "github")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("paths", nargs="*", metavar="PATH", help="files or directories")
    p.add_argument("--data", metavar="CSV", help="also test the implied independencies on data")
    p.add_argument("--alpha", type=float, default=0.05, help="significance level (with --data)")
    p.add_argument("--min-effect", type=float, default=0.1, help="smallest |partial correlation| "
                   "worth reporting (with --data)")  # fmt: skip
    p.add_argument("--method", choices=("pearson", "spearman"), default="pearson")
    from ..data import add_reading_arguments

    add_reading_arguments(p)


def run(args: argparse.Namespace) -> int:
    settings = settings_from(args)
    files = discover(args.paths, settings)
    if not files:
        where = ", ".join(args.paths) if args.paths else "the current directory"
        sys.stderr.write(f"dagward: no .dag files found in {where}\n")
    table, options = None, None
    if args.data:
        from ..data import DataOptions, load_data, reading_options

        table = load_data(args.data, reading_options(args, settings))
        options = DataOptions(args.alpha, args.min_effect, args.method, args.data)
    findings = []
    for file in files:
        result = read_and_lint(file, settings, table=table, data_options=options)
        findings.extend(result.findings)
    report = Report(findings, len(files), color=use_color(args), quiet=args.quiet)
    emit(args, reporter(args.format)(report))
    return exit_status(findings, settings.fail_on)
