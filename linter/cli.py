"""Command line: arguments, exit codes, dispatch. Formatting lives in `report/`.

Each command is a module in `linter/commands/` with `HELP`, `FORMATS`,
`add_arguments(parser)` and `run(args) -> int`; it is imported only when used, so
`dagward fmt` never imports networkx and `dagward check` never imports numpy.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys

from .version import __version__

COMMANDS: dict[str, tuple[str, str]] = {
    "check": ("dagward.commands.check", "lint diagram files (the pre-commit and CI entry point)"),
    "adjustment": ("dagward.commands.adjustment", "valid and minimal adjustment sets per analysis"),
    "independencies": (
        "dagward.commands.independencies",
        "independencies the diagram implies, optionally tested against data",
    ),
    "identify": (
        "dagward.commands.identify",
        "whether each effect is identified at all, by what formula, and the instruments",
    ),
    "paths": ("dagward.commands.paths", "every path between exposure and outcome, and its status"),
    "diff": ("dagward.commands.diff", "what a change to the diagrams means, between git revisions"),
    "render": ("dagward.commands.render", "draw a diagram (.dot, .mmd, .svg, .png, .pdf, .eps)"),
    "fmt": ("dagward.commands.fmt", "rewrite diagram files in the canonical layout"),
    "covariates": (
        "dagward.commands.covariates",
        "check the covariates of a model formula or list against an analysis",
    ),
    "explain": (
        "dagward.commands.explain",
        "a rule's documentation, with a bad and a good example",
    ),
    "language-server": ("dagward.commands.language_server", "LSP server over stdio for editors"),
}


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # one line, exit 2, never the usage block
        sys.stderr.write(f"dagward: error: {message} (see `{self.prog} --help`)\n")
        raise SystemExit(2)


def _common(formats: tuple[str, ...]) -> argparse.ArgumentParser:
    common = _Parser(add_help=False)
    g = common.add_argument_group("common options")
    g.add_argument("--format", choices=formats, default=formats[0], help="output format")
    g.add_argument("--output", metavar="FILE", help="write the report to FILE (atomically)")
    g.add_argument("--config", metavar="FILE", help="TOML file with a [tool.dagward] table")
    g.add_argument(
        "--no-config",
        action="store_true",
        help="use no configuration file (defaults and command-line options only)",
    )
    g.add_argument("--enable", metavar="RULE", action="append", default=[], help="turn a rule on")
    g.add_argument("--disable", metavar="RULE", action="append", default=[], help="turn a rule off")
    g.add_argument(
        "--fail-on",
        choices=("error", "warning", "info"),
        default=None,
        help="lowest severity that makes the exit status 1 (default: error)",
    )
    g.add_argument("--no-color", action="store_true", help="no colour (NO_COLOR is honoured too)")
    g.add_argument("-q", "--quiet", action="store_true", help="print findings only")
    return common


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    parser = _Parser(
        prog="dagward",
        description="Lint causal diagrams (.dag files) kept next to analysis code.",
    )
    parser.add_argument("--version", action="version", version=f"dagward {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name, (module_name, help_text) in COMMANDS.items():
        if name != command:
            # only the chosen command's module is imported
            sub.add_parser(name, help=help_text)
            continue
        module = importlib.import_module(module_name)
        p = sub.add_parser(
            name, help=help_text, description=module.HELP, parents=[_common(module.FORMATS)]
        )
        module.add_arguments(p)
        p.set_defaults(run=module.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    command = next((a for a in argv if a in COMMANDS), None)
    parser = build_parser(command)
    if not argv or command is None:
        if any(a in ("-h", "--help", "--version") for a in argv):
            parser.parse_args(argv)
        parser.print_help(sys.stderr if argv else sys.stdout)
        return 2 if argv else 0
    args = parser.parse_args(argv)
    from .errors import DiagramHasErrors, UsageProblem

    try:
        from .commands.common import refuse_overwriting_inputs

        refuse_overwriting_inputs(
            [getattr(args, "output", None), getattr(args, "short_output", None),
             getattr(args, "plot", None)],
            [getattr(args, "file", None) or "-", *getattr(args, "paths", []),
             getattr(args, "data", None) or "-"],
        )  # fmt: skip
        return args.run(args)
    except DiagramHasErrors as e:
        from .report import Report, reporter

        errors = [f for f in e.result.findings if f.severity == "error"]
        sys.stderr.write(f"dagward: {e.result.file} has errors; fix them first:\n")
        sys.stderr.write(reporter("text")(Report(errors, 1)))
        return 1
    except UsageProblem as e:
        sys.stderr.write(f"dagward: error: {e}\n")
        return 2
    except OSError as e:
        where = f": {e.filename}" if e.filename else ""
        sys.stderr.write(f"dagward: error: {e.strerror or e}{where}\n")
        return 2
    except KeyboardInterrupt:
        sys.stderr.write("dagward: interrupted\n")
        return 130
    except Exception as e:  # a bug: one line for the user, the trace on request
        if os.environ.get("DAGWARD_DEBUG"):
            raise
        sys.stderr.write(
            f"dagward: internal error: {type(e).__name__}: {e} "
            "(please report it; set DAGWARD_DEBUG=1 for details)\n"
        )
        return 2


def run() -> None:
    """Console-script entry point."""
    import gc

    # A short-lived process whose data (the model, the graph, search states) form
    # no reference cycles, and reference counting frees them: the cycle collector
    # would only rescan a large diagram's millions of objects again and again
    # (a second of a 100,000-variable check; see linter/gcpause.py). Peak memory
    # was the same with and without it on that check (about 450 MB).
    gc.disable()
    try:
        code = main()
        sys.stdout.flush()
    except BrokenPipeError:  # `dagward check | head`
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        code = 1
    raise SystemExit(code)
