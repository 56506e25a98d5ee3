"""Helpers shared by the command modules: settings, colour, writing output."""

from __future__ import annotations

import os
import sys
from argparse import Namespace

from ..config import Settings, SettingsFinder
from ..findings import SEVERITY_RANK, Finding


def finder_from(args: Namespace) -> SettingsFinder:
    """Per-file settings: `--config`, `--no-config`, or the nearest `[tool.dagward]`."""
    return SettingsFinder(
        args.config,
        getattr(args, "no_config", False),
        args.enable,
        args.disable,
        args.fail_on,
    )


def settings_from(args: Namespace) -> Settings:
    """The settings for a command about one file: those found from that file."""
    where = getattr(args, "file", None)
    if where in (None, "-"):
        where = getattr(args, "stdin_filename", None) or os.path.join(os.getcwd(), "-")
    return finder_from(args).for_file(where)


def same_file(a: str, b: str) -> bool:
    """Whether two paths name one file (through links, `..` and hard links)."""
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.realpath(a) == os.path.realpath(b)


def refuse_overwriting_inputs(outputs: list[str | None], inputs: list[str]) -> None:
    """Exit 2 before anything runs when an output file is one of the input files."""
    from ..errors import UsageProblem

    for out in outputs:
        if not out or out == "-":
            continue
        for given in inputs:
            if given != "-" and os.path.isfile(given) and same_file(out, given):
                raise UsageProblem(
                    f"the output file {out} is one of the inputs ({given}); "
                    "choose another output file (nothing was written)"
                )


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

            raise UsageProblem(f"cannot write {args.output}: {e.strerror or e}") from None
    else:
        sys.stdout.write(text)


def exit_status(findings: list[Finding], fail_on: str) -> int:
    threshold = SEVERITY_RANK[fail_on]
    return 1 if any(SEVERITY_RANK[f.severity] >= threshold for f in findings) else 0


def read_input(path: str) -> bytes:
    """The bytes of a file, or of standard input for `-`."""
    if path == "-":
        return sys.stdin.buffer.read()
    with open(path, "rb") as handle:
        return handle.read()


def load_clean(path: str, settings: Settings):
    """Read and lint one diagram for a command that reasons about it.

    Returns the FileResult; raises UsageProblem when the file is missing and
    DiagramHasErrors (exit 1, errors printed) when structure errors stop the
    causal reasoning. Only the rules that can stop it run (the commands print
    errors, never warnings), so a command costs no more than its own work.
    """
    from ..engine import read_and_lint
    from ..errors import DiagramHasErrors, UsageProblem

    if not os.path.isfile(path):
        raise UsageProblem(f"no such file: {path}")
    result = read_and_lint(path, settings, blocking_only=True)
    if result.diagram is None or not result.causal_ran:
        raise DiagramHasErrors(result)
    return result


def load_for_analysis(args: Namespace, settings: Settings):
    """`load_clean`, then the analyses to report on (`--analysis`, or all)."""
    from ..errors import UsageProblem

    result = load_clean(args.file, settings)
    analyses = result.diagram.analyses
    wanted = getattr(args, "analysis", None)
    if wanted is not None:
        analyses = [a for a in analyses if a.name == wanted]
        if not analyses:
            names = ", ".join(a.name for a in result.diagram.analyses) or "none"
            raise UsageProblem(f"{args.file} has no analysis `{wanted}` (it has: {names})")
    return result, analyses


def emit_analyses(args: Namespace, reports: list[dict], text: str) -> None:
    """Write a per-analysis report: the documented JSON shape, or the given text."""
    if args.format == "json":
        import json

        from ..report.json_report import SCHEMA_VERSION, tool

        doc = {"tool": tool(), "schema": SCHEMA_VERSION, "file": args.file, "analyses": reports}
        emit(args, json.dumps(doc, indent=2, ensure_ascii=False) + "\n")
    else:
        emit(args, text)
