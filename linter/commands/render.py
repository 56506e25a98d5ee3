"""dagward render: draw a diagram to .dot, .mmd (Mermaid), .svg or .png.

The output format follows the extension of `-o` (or `--output`); `--format`
overrides it, and with `--format dot` or `--format mmd` and no `-o` the text is
printed. `.svg` and `.png` run Graphviz's `dot`; when it is missing the command
exits 2 and says how to install it. The visual scheme is described in
`dagward.render`. Files are written atomically.
"""

from __future__ import annotations

import argparse
import sys

from ..errors import UsageProblem
from .common import load_clean, settings_from

HELP = (
    "Draw a diagram: roles by shape and outline, adjusted variables shaded, causal paths "
    "thick, open non-causal paths dotted, periods as columns from left to right. "
    "Writes .dot and .mmd (Mermaid) itself; .svg and .png need Graphviz's `dot`."
)
FORMATS = ("auto", "dot", "mmd", "svg", "png")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE", help="the diagram to draw")
    p.add_argument("--analysis", metavar="NAME", help="the analysis whose roles and paths "
                   "are drawn (default: the first)")  # fmt: skip
    p.add_argument("-o", dest="output", metavar="OUT", help="OUT.svg, OUT.png, OUT.dot or OUT.mmd")


def run(args: argparse.Namespace) -> int:
    from ..render import choose_analysis, format_from_path, render

    fmt = args.format
    if fmt == "auto":
        if not args.output:
            raise UsageProblem("render needs -o OUT.svg, OUT.png, OUT.dot or OUT.mmd")
        fmt = format_from_path(args.output)
        if fmt is None:
            raise UsageProblem(
                f"cannot tell the picture format from `{args.output}`: use .svg, .png, .dot or "
                ".mmd, or give --format"
            )
    if fmt in ("svg", "png") and not args.output:
        raise UsageProblem(f"--format {fmt} needs -o OUT.{fmt} (binary pictures are not printed)")
    result = load_clean(args.file, settings_from(args))
    analysis, note = choose_analysis(result.diagram, args.analysis)
    if note and not args.quiet:
        sys.stderr.write(f"dagward: {note}\n")
    data = render(result.diagram, analysis, fmt)
    if args.output:
        from ..fileio import write_atomic

        try:
            write_atomic(args.output, data)
        except OSError as e:
            raise UsageProblem(f"cannot write {args.output}: {e.strerror or e}") from None
    else:
        sys.stdout.write(data.decode("utf-8"))
    return 0
