"""dagward render: draw a diagram to .dot, .mmd (Mermaid), .svg, .png, .pdf or .eps.

The output format follows the extension of `-o` (or `--output`; giving both is a
usage error); `--format` may say it instead, and must agree with the extension
when both are given, so a file is always what its name says. With `--format
dot` or `--format mmd` and no `-o` the text is printed. `.svg`, `.png`, `.pdf`
and `.eps` run Graphviz's `dot`; when it is missing the command exits 2 and
says how to install it. `--dpi` sets the resolution of a PNG, `--font` the font
family, `--no-caption` leaves the title and key out (for a journal's figure
legend). The visual scheme is described in `dagward.render`. Files are written
atomically.
"""

from __future__ import annotations

import argparse
import sys

from ..errors import UsageProblem
from .common import load_clean, settings_from

HELP = (
    "Draw a diagram: roles by shape and outline, adjusted variables shaded, restricted "
    "ones as trapezia, causal paths thick, open non-causal paths dotted, periods as "
    "columns from left to right. "
    "Writes .dot and .mmd (Mermaid) itself; .svg, .png, .pdf and .eps need Graphviz's `dot`."
)
FORMATS = ("auto", "dot", "mmd", "svg", "png", "pdf", "eps")
SUPPORTED = ".svg, .png, .pdf, .eps, .dot or .mmd"


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE", help="the diagram to draw")
    p.add_argument("--analysis", metavar="NAME", help="the analysis whose roles and paths "
                   "are drawn (default: the first)")  # fmt: skip
    p.add_argument("-o", dest="short_output", metavar="OUT",
                   help=f"the picture to write, named {SUPPORTED} (as --output)")  # fmt: skip
    p.add_argument("--dpi", type=int, default=None, metavar="N",
                   help="resolution of a .png in dots per inch (default 144)")  # fmt: skip
    p.add_argument("--font", metavar="FAMILY", default=None,
                   help="font family for every text in the picture (default Helvetica); choose "
                   "one that has every character of your labels")  # fmt: skip
    p.add_argument("--no-caption", action="store_true",
                   help="leave the title and key out (for a figure legend)")  # fmt: skip


def _output(args: argparse.Namespace) -> str | None:
    if args.short_output and args.output:
        raise UsageProblem(
            f"give the picture's name once: -o {args.short_output} and --output {args.output} "
            "are the same option"
        )
    return args.short_output or args.output


def _options(args: argparse.Namespace, fmt: str):
    from ..render import DEFAULT_DPI, DEFAULT_FONT, RenderOptions

    if args.dpi is not None:
        if fmt != "png":
            raise UsageProblem(f"--dpi applies to .png pictures only, not .{fmt}")
        if not 10 <= args.dpi <= 2400:
            raise UsageProblem(f"--dpi must be between 10 and 2400 (got {args.dpi})")
    font = DEFAULT_FONT if args.font is None else args.font.strip()
    if not font or any(ch < " " for ch in font):
        raise UsageProblem("--font needs a font family name, such as `DejaVu Sans`")
    return RenderOptions(caption=not args.no_caption, font=font,
                         dpi=args.dpi if args.dpi is not None else DEFAULT_DPI)  # fmt: skip


def _warn_about_font(args, options, diagram) -> None:
    """Say when the font is not installed, or lacks a glyph the picture needs
    (Graphviz would draw an empty box); fontconfig answers both."""
    from ..render import diagram_text, font_installed, missing_glyphs

    if args.font is not None and font_installed(options.font) is False:
        sys.stderr.write(
            f"dagward: warning: font `{options.font}` is not installed here; Graphviz will "
            "measure and draw the text with a substitute (see `fc-list : family`)\n"
        )
    found = missing_glyphs(options.font, diagram_text(diagram))
    if found and found[1]:
        used, missing = found
        listed = ", ".join(f"{ch} (U+{ord(ch):04X})" for ch in missing[:8])
        more = f" and {len(missing) - 8} more" if len(missing) > 8 else ""
        sys.stderr.write(
            f"dagward: warning: font `{used}` has no glyph for {listed}{more}; they may show "
            "as empty boxes: choose a family that has them with --font\n"
        )


def run(args: argparse.Namespace) -> int:
    from ..render import (
        BINARY_FORMATS,
        GRAPHVIZ_FORMATS,
        choose_analysis,
        format_from_path,
        render,
    )

    output = _output(args)
    fmt = args.format
    named = format_from_path(output) if output else None
    if output and named is None:
        raise UsageProblem(f"cannot tell the picture format from `{output}`: name it {SUPPORTED}")
    if fmt == "auto":
        if not output:
            raise UsageProblem(f"render needs -o OUT (one of {SUPPORTED})")
        fmt = named
    elif output and fmt != named:
        raise UsageProblem(
            f"--format {fmt} does not match the name `{output}`: a .{named} file must hold "
            f"{named.upper()}; drop --format or name the file .{fmt}"
        )
    if fmt in BINARY_FORMATS + ("svg",) and not output:
        raise UsageProblem(f"--format {fmt} needs -o OUT.{fmt} (pictures are not printed)")
    options = _options(args, fmt)
    result = load_clean(args.file, settings_from(args))
    analysis, note = choose_analysis(result.diagram, args.analysis)
    if note and not args.quiet:
        sys.stderr.write(f"dagward: {note}\n")
    if fmt in GRAPHVIZ_FORMATS:
        _warn_about_font(args, options, result.diagram)
    data = render(result.diagram, analysis, fmt, options)
    if output:
        from ..fileio import write_atomic

        try:
            write_atomic(output, data)
        except OSError as e:
            raise UsageProblem(f"cannot write {output}: {e.strerror or e}") from None
    else:
        sys.stdout.write(data.decode("utf-8"))
    return 0
