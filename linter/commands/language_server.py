"""dagward language-server: the Language Server Protocol over stdio (see `dagward.lsp`).

pygls and lsprotocol are an extra (`lsp`); without them the command exits 2 with a
one-line message saying how to install them.
"""

from __future__ import annotations

import argparse
import os
import sys

HELP = (
    "Run a Language Server Protocol server over stdin/stdout for editors: the findings "
    "of `check` as you type, hover on a variable (its label, its roles in each analysis, "
    "whether it is adjusted, the open paths through it), go to a variable's first "
    "appearance, rename a variable everywhere in the file, completion of variable names "
    "and keys, and formatting as `fmt` does. Needs the `lsp` extra (pygls, lsprotocol)."
)
FORMATS = ("text",)  # no report: --config, --enable and --disable apply to the findings


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--stdio",
        action="store_true",
        help="talk over stdin/stdout (the default and only transport; accepted because "
        "editors often pass it)",
    )


def run(args: argparse.Namespace) -> int:
    from ..errors import UsageProblem

    try:
        from ..lsp import Options, serve
    except ImportError as e:
        raise UsageProblem(
            f"the language server needs pygls and lsprotocol ({e.name} is missing); "
            "install dagward with the `lsp` extra, e.g. pip install -e '.[lsp]' in a clone"
        ) from None
    # `dagward` turns the cycle collector off for its short runs (linter/cli.py);
    # a server runs for hours, and its protocol objects do form cycles
    import gc

    gc.enable()
    options = Options(args.config, tuple(args.enable), tuple(args.disable))
    if args.config is not None or args.enable or args.disable:
        # a bad option is a usage error now, not a diagnostic in every file later
        from ..config import load_settings

        load_settings(args.config).with_overrides(args.enable, args.disable)
    serve(options)
    if sys.stdout.closed:  # the server closes the pipe on `exit`; the CLI flushes after us
        sys.stdout = open(os.devnull, "w")  # noqa: SIM115
    return 0
