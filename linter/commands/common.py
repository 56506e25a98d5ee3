"""Helpers shared by the command modules: settings, colour, writing output."""

from __future__ import annotations

import os
import sys
from argparse import Namespace

from ..config import Settings, load_settings
from ..findings import SEVERITY_RANK, Finding


def settings_from(args: Namespace) -> Settings:
    settings = load_settings(args.config)
    return settings.with_overrides(args.enable, args.disable, args.fail_on)


def use_color(args: Namespace) -> bool:
    if args.no_color or os.environ.get("NO_COLOR") or args.output:
        return False
    return sys.stdout.isatty()


def emit(args: Namespace, text: str) -> None:
    """Print, or write atomically to --output."""
    if args.output:
        from ..fileio import write_atomic

        try:
            write_atomic(args.output, text)
        except OSError as e:
            from ..errors import UsageProblem

            raise UsageProblem(f"cannot write {args.output}: {e.strerror}") from None
    else:
        sys.stdout.write(text)


def exit_status(findings: list[Finding], fail_on: str) -> int:
    threshold = SEVERITY_RANK[fail_on]
    return 1 if any(SEVERITY_RANK[f.severity] >= threshold for f in findings) else 0


def load_for_analysis(args: Namespace, settings: Settings):
    """Lint one file for the commands that reason about its analyses.

    Returns (FileResult, analyses to report on), or raises UsageProblem for a
    missing file or an unknown `--analysis`. When the structure rules found an
    error the causal algorithms cannot run: the caller prints the findings.
    """
    from ..engine import read_and_lint
    from ..errors import UsageProblem

    if not os.path.isfile(args.file):
        raise UsageProblem(f"no such file: {args.file}")
    result = read_and_lint(args.file, settings)
    analyses = result.diagram.analyses if result.diagram is not None else []
    wanted = getattr(args, "analysis", None)
    if wanted is not None and result.diagram is not None:
        analyses = [a for a in analyses if a.name == wanted]
        if not analyses:
            names = ", ".join(a.name for a in result.diagram.analyses) or "none"
            raise UsageProblem(f"{args.file} has no analysis `{wanted}` (it has: {names})")
    return result, analyses


def print_blocking_errors(result, args: Namespace) -> int:
    """The file has errors that stop the causal reasoning: show them, exit 1."""
    from ..report import Report, reporter

    errors = [f for f in result.findings if f.severity == "error"]
    sys.stderr.write(
        f"dagward: {result.file} has errors; fix them before asking about adjustment:\n"
    )
    sys.stderr.write(reporter("text")(Report(errors, 1, color=False)))
    return 1
