"""A forest plot of independence tests as hand-written SVG.

One row per test: the claim on the left in words (`enrolled and shift_work,
holding fixed fitness_base`), the effect (partial correlation, or the G-test's
bias-corrected Cramér's V) with its 95% interval in the middle, and the figures
on the right in columns (effect, interval, n, Holm p, verdict; numbers
right-aligned so their digits line up). Black and white only; rejection is
shown by the marker's shape and fill (filled square = rejected, open circle =
not rejected, open diamond = G-test effect without interval), so the plot
survives printing and colour blindness. No plotting library is needed.

Every character the plot writes itself is ASCII or Latin-1 (`-` for minus,
`...` for a cut label, `±`, `é`), which every font of `FONT_STACK` covers;
tests/test_stats.py checks the installed ones with fontTools. Variable names
are the user's and are written as they are.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING
from xml.sax.saxutils import escape, quoteattr

from .wording import claim_text

if TYPE_CHECKING:
    from .stats import TestResult

ROW_HEIGHT = 22
LABEL_WIDTH = 300
PLOT_WIDTH = 320
TEXT_WIDTH = 330
MARGIN = 16
HEADER = 56
FOOTER = 52
CHAR_WIDTH = 6.6  # average width of a 12px sans-serif character, for truncation
# Fonts with every glyph the plot uses; the first one installed is used.
FONT_STACK = "DejaVu Sans, Liberation Sans, Arial, Helvetica, sans-serif"
# The right-hand columns: (heading, x offset from the column block, anchor).
# Numbers are right-aligned at their offset ("end"), words start at it.
COLUMNS = (
    ("effect", 44, "end"),
    ("95% interval", 150, "end"),
    ("n", 196, "end"),
    ("Holm p", 250, "end"),
    ("verdict", 260, "start"),
)


def _fmt(value: float | None, digits: int = 2) -> str:
    if value is None or math.isnan(value):
        return "-"
    return f"{value:.{digits}f}"


def _fmt_p(p: float) -> str:
    if math.isnan(p):
        return "-"
    if p < 0.001:
        return "<0.001"
    return f"{p:.3f}"


def _axis_range(results: Sequence[TestResult], min_effect: float | None) -> tuple[float, float]:
    values = [0.0]
    for result in results:
        for value in (result.effect, result.ci_low, result.ci_high):
            if value is not None and not math.isnan(value):
                values.append(value)
    if min_effect:
        values += [-min_effect, min_effect]
    low = max(-1.0, math.floor(min(values) * 10 - 1e-9) / 10)
    high = min(1.0, math.ceil(max(values) * 10 + 1e-9) / 10)
    if high - low < 0.2:
        low, high = max(-1.0, low - 0.1), min(1.0, high + 0.1)
    return low, high


def _ticks(low: float, high: float) -> list[float]:
    span = high - low
    step = 0.1 if span <= 0.6 else 0.25 if span <= 1.2 else 0.5
    first = math.ceil(low / step - 1e-9) * step
    ticks = []
    value = first
    while value <= high + 1e-9:
        ticks.append(round(value, 4))
        value += step
    return ticks


def _truncate(text: str, width: float) -> str:
    limit = max(4, int(width / CHAR_WIDTH))
    return text if len(text) <= limit else text[: limit - 3] + "..."


def forest_plot_svg(
    results: Sequence[TestResult], title: str = "", *, min_effect: float | None = None
) -> str:
    """Return the SVG text of a forest plot of ``results``.

    Each test is a ``<g class="test-row">`` element holding its label text, so
    the picture is searchable and testable. ``min_effect``, when given, draws
    dashed guide lines at plus and minus that effect size.
    """
    labels = [claim_text(r.independence.a, r.independence.b, r.independence.given)
              for r in results]  # fmt: skip
    # The label column grows with the longest claim (up to twice the default), so
    # what is held fixed is seldom cut.
    label_width = max(
        LABEL_WIDTH, min(2 * LABEL_WIDTH, round(max(map(len, labels), default=0) * CHAR_WIDTH) + 16)
    )
    width = MARGIN * 2 + label_width + PLOT_WIDTH + TEXT_WIDTH
    height = HEADER + ROW_HEIGHT * max(len(results), 1) + FOOTER
    plot_left = MARGIN + label_width
    low, high = _axis_range(results, min_effect)

    def xpos(value: float) -> float:
        value = max(low, min(high, value))
        return round(plot_left + 10 + (value - low) / (high - low) * (PLOT_WIDTH - 20), 2)

    top = HEADER
    bottom = HEADER + ROW_HEIGHT * max(len(results), 1)
    out: list[str] = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
        f'viewBox="0 0 {width} {height}" font-family="{FONT_STACK}" font-size="12">',
        f"<title>{escape(title or 'Tests of implied independencies')}</title>",
        f'<rect x="0" y="0" width="{width}" height="{height}" fill="white"/>',
    ]
    if title:
        out.append(
            f'<text x="{MARGIN}" y="20" font-size="15" font-weight="bold">{escape(title)}</text>'
        )
    out.append(
        f'<text x="{MARGIN}" y="{HEADER - 8}" font-weight="bold">'
        "implied independence (pair, what is held fixed)</text>"
    )
    out.append(
        f'<text x="{plot_left + PLOT_WIDTH / 2}" y="{HEADER - 8}" font-weight="bold" '
        f'text-anchor="middle">effect (95% interval)</text>'
    )
    figures_left = plot_left + PLOT_WIDTH + 8
    for heading, offset, anchor in COLUMNS:
        out.append(
            f'<text x="{figures_left + offset}" y="{HEADER - 8}" font-weight="bold" '
            f'text-anchor="{anchor}">{heading}</text>'
        )

    # Zebra stripes make long tables readable in grey scale.
    for index in range(len(results)):
        if index % 2:
            out.append(
                f'<rect x="{MARGIN}" y="{top + index * ROW_HEIGHT}" '
                f'width="{width - 2 * MARGIN}" height="{ROW_HEIGHT}" fill="#eeeeee"/>'
            )

    out.append(
        f'<line x1="{xpos(0.0)}" y1="{top}" x2="{xpos(0.0)}" y2="{bottom}" '
        'stroke="black" stroke-width="1"/>'
    )
    if min_effect:
        for guide in (-min_effect, min_effect):
            if low <= guide <= high:
                out.append(
                    f'<line x1="{xpos(guide)}" y1="{top}" x2="{xpos(guide)}" '
                    f'y2="{bottom}" stroke="black" stroke-width="0.8" '
                    'stroke-dasharray="4 3"/>'
                )

    for index, result in enumerate(results):
        y = top + index * ROW_HEIGHT + ROW_HEIGHT / 2
        label = labels[index]
        out.append(f'<g class="test-row" data-label={quoteattr(label)}>')
        out.append(
            f'<text x="{MARGIN + 4}" y="{y + 4}">'
            f"{escape(_truncate(label, label_width - 12))}</text>"
        )
        effect = result.effect
        cells: list[str] = []
        if result.tested and effect is not None and not math.isnan(effect):
            if result.ci_low is not None and result.ci_high is not None:
                out.append(
                    f'<line x1="{xpos(result.ci_low)}" y1="{y}" x2="{xpos(result.ci_high)}"'
                    f' y2="{y}" stroke="black" stroke-width="1.5"/>'
                )
            cx = xpos(effect)
            if result.rejected:
                out.append(f'<rect x="{cx - 5}" y="{y - 5}" width="10" height="10" fill="black"/>')
            elif result.ci_low is None:
                out.append(
                    f'<path d="M {cx} {y - 6} L {cx + 6} {y} L {cx} {y + 6} '
                    f'L {cx - 6} {y} Z" fill="white" stroke="black" stroke-width="1.5"/>'
                )
            else:
                out.append(
                    f'<circle cx="{cx}" cy="{y}" r="4.5" fill="white" stroke="black" '
                    'stroke-width="1.5"/>'
                )
            if result.ci_low is not None:
                cells = [_fmt(effect), f"[{_fmt(result.ci_low)}, {_fmt(result.ci_high)}]"]
            else:
                cells = [f"V {_fmt(effect)}", f"G {_fmt(result.statistic, 1)}, df {result.df}"]
            cells += [str(result.n), _fmt_p(result.p_adjusted),
                      "rejected" if result.rejected else "not rejected"]  # fmt: skip
            for text, (_, offset, anchor) in zip(cells, COLUMNS, strict=True):
                out.append(
                    f'<text class="figure" x="{figures_left + offset}" y="{y + 4}" '
                    f'text-anchor="{anchor}">{escape(text)}</text>'
                )
        else:
            figures = "not tested: " + (result.note or "no result")
            out.append(
                f'<text x="{figures_left}" y="{y + 4}">'
                f"{escape(_truncate(figures, TEXT_WIDTH - 12))}</text>"
            )
        out.append("</g>")

    # Axis with ticks under the plot column.
    out.append(
        f'<line x1="{xpos(low)}" y1="{bottom}" x2="{xpos(high)}" y2="{bottom}" '
        'stroke="black" stroke-width="1"/>'
    )
    for tick in _ticks(low, high):
        tx = xpos(tick)
        out.append(f'<line x1="{tx}" y1="{bottom}" x2="{tx}" y2="{bottom + 5}" stroke="black"/>')
        out.append(
            f'<text x="{tx}" y="{bottom + 18}" text-anchor="middle">'
            f"{escape(_fmt(tick, 2 if abs(tick * 10 - round(tick * 10)) > 1e-9 else 1))}"
            "</text>"
        )
    legend_y = bottom + 40
    out.append(f'<rect x="{MARGIN + 4}" y="{legend_y - 9}" width="10" height="10" fill="black"/>')
    out.append(f'<text x="{MARGIN + 20}" y="{legend_y}">rejected (Holm-adjusted)</text>')
    out.append(
        f'<circle cx="{MARGIN + 200}" cy="{legend_y - 4}" r="4.5" fill="white" '
        'stroke="black" stroke-width="1.5"/>'
    )
    out.append(f'<text x="{MARGIN + 212}" y="{legend_y}">not rejected</text>')
    out.append(
        f'<path d="M {MARGIN + 330} {legend_y - 10} L {MARGIN + 336} {legend_y - 4} '
        f'L {MARGIN + 330} {legend_y + 2} L {MARGIN + 324} {legend_y - 4} Z" '
        'fill="white" stroke="black" stroke-width="1.5"/>'
    )
    out.append(f'<text x="{MARGIN + 342}" y="{legend_y}">G-test effect (no interval)</text>')
    if min_effect:
        out.append(
            f'<text x="{MARGIN + 540}" y="{legend_y}">dashed: \u00b1{_fmt(min_effect)} '
            "(smallest effect counted)</text>"
        )
    out.append("</svg>")
    return "\n".join(out) + "\n"
