"""dagward diff: what a change to the diagrams means (see `dagward.diff`).

Exit status: 0 whatever changed (the report is informational; use `check` to
gate); 2 with a one-line message when the revisions or files cannot be read
(not a git repository, an unknown revision, a missing file).
"""

from __future__ import annotations

import argparse
import os

from .common import emit, settings_from

HELP = (
    "Show what a change to the diagrams means: arrows, variables and roles added or "
    "removed, and per analysis the declared set's verdict, the minimal adjustment sets "
    "and the implied independencies before and after. Compares the merge base of HEAD "
    "with the default branch (origin/HEAD, main or master) against the working tree, or "
    "with --base REV the merge base of REV and HEAD (or --head) against the working tree "
    "(or --head); the first line names the commit compared. Or two files: "
    "`dagward diff OLD.dag NEW.dag`. "
    "Always exits 0 unless the input cannot be read (2)."
)
FORMATS = ("text", "json", "markdown")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "paths",
        nargs="*",
        metavar="PATH",
        help="limit the comparison to these paths; two files and no --base/--head: compare them",
    )
    p.add_argument(
        "--base",
        metavar="REV",
        help="the old side: its merge base with --head (or HEAD) is compared "
        "(default: the default branch)",
    )
    p.add_argument("--head", metavar="REV", help="the new revision (default: the working tree)")
    p.add_argument(
        "--max",
        type=int,
        default=10,
        metavar="N",
        help="minimal adjustment sets to list (default 10)",
    )


def run(args: argparse.Namespace) -> int:
    from ..diff import diff_files, diff_revisions
    from ..errors import UsageProblem
    from ..report.diff import render_json, render_markdown, render_text

    if args.max < 1:
        raise UsageProblem("--max must be at least 1")
    settings = settings_from(args)
    two_files = (
        len(args.paths) == 2
        and args.base is None
        and args.head is None
        and all(os.path.isfile(p) for p in args.paths)
    )
    if two_files:
        report = diff_files(args.paths[0], args.paths[1], settings, args.max)
    else:
        report = diff_revisions(settings, args.base, args.head, args.paths, max_sets=args.max)
    renderer = {"json": render_json, "markdown": render_markdown}.get(args.format, render_text)
    emit(args, renderer(report))
    return 0
