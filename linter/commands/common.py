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


def load_one(path: str, settings: Settings):
    """Read and parse one diagram for the commands that need a clean diagram.

    Returns (diagram, findings); exits via UsageProblem when the file is missing.
    """
    from ..engine import read_and_lint
    from ..errors import UsageProblem

    if not os.path.isfile(path):
        raise UsageProblem(f"no such file: {path}")
    result = read_and_lint(path, settings)
    return result
