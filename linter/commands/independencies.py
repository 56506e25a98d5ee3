"""dagward independencies: the conditional independencies a diagram implies.

One statement per pair of measured variables that no arrow (and no `<->`)
joins and that some set of measured variables d-separates, with an
inclusion-minimal such set (`dagward.causal.minimal_separator`). The text is a
table of our own design, in words rather than symbols:

    Independencies implied by samples/wellness.dag (6), fewest variables held fixed first:

    pair                        holding fixed
    --------------------------  ------------------------------
    age and fitness_base        nothing
    enrolled and shift_work     fitness_base
    ...

Rows are ordered by how many variables each claim holds fixed (then by name):
a claim that holds more variables fixed is a weaker test, since every one of
them must be measured and modelled well. With `--data FILE.csv` each claim is
tested (see `dagward.stats`) and the same table gains the figures: n,
statistic, p, Holm p, effect [95% interval] and the verdict (`rejected`,
`small` = significant but below --min-effect, `consistent`); claims that could
not be tested follow in a second table with the reason. `--plot OUT.svg`
writes a forest plot of the effects. The exit status is 1 when an independence
is rejected and `independence-rejected` is at or above --fail-on (by default
it is a warning, so 0), or when a needed column is missing (`missing-column`,
an error).

`--max N` stops after N claims (pairs are examined in name order) and says so;
on a terminal, stderr shows how many pairs have been examined.

JSON (`--format json`):

    {
      "tool": {"name": "dagward", "version": "..."},
      "schema": 1,
      "file": "samples/wellness.dag",
      "measured": ["age", "enrolled", ...],           # sorted
      "independencies": [
        {"a": "age", "b": "fitness_12m", "given": ["enrolled", "fitness_base"],
         "test": {...}}                               # "test" only with --data
      ],
      "truncated": false,                             # true when --max stopped the search
      "data": null | {"file": "...", "rows": 2000, "method": "pearson",
                      "alpha": 0.05, "min_effect": 0.1, "rejected": 1}
    }

`a` < `b` by name; `given` is sorted. A "test" holds `method`
("pearson", "spearman" or "g-test"), `statistic`, `df` (G-test only, else
null), `n`, `p`, `p_adjusted` (Holm), `effect`, `ci_low`, `ci_high` (null
for the G-test), `rejected`, `note` (why a test could not run, or null) and
`verdict`. Numbers that could not be computed are null.
"""

from __future__ import annotations

import argparse
import json
import sys
from dataclasses import dataclass

from ..errors import UsageProblem
from ..version import __version__
from .common import emit, load_clean, settings_from

HELP = (
    "List the conditional independencies among measured variables that the diagram "
    "implies (one per non-adjacent pair, with a minimal separating set), and with --data "
    "test each against a CSV file."
)
FORMATS = ("text", "json")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE", help="the diagram")
    p.add_argument("--data", metavar="CSV", help="test each independence against this data")
    p.add_argument("--alpha", type=float, default=0.05, metavar="A",
                   help="level for Holm-adjusted p values (default 0.05)")  # fmt: skip
    p.add_argument("--min-effect", type=float, default=0.1, metavar="R",
                   help="smallest |effect| that counts as a rejection (default 0.1)")  # fmt: skip
    p.add_argument("--method", choices=("pearson", "spearman"), default="pearson",
                   help="correlation for numeric columns: pearson (linear) or spearman "
                   "(ranks; default pearson)")  # fmt: skip
    p.add_argument(
        "--plot", metavar="OUT.svg", help="write a forest plot of the effects (with --data)"
    )
    p.add_argument("--max", type=int, default=None, metavar="N",
                   help="stop after N independencies (default: all); the output says when it "
                   "was cut")  # fmt: skip
    # The table is plain ASCII now; --ascii stays accepted so old scripts still run.
    p.add_argument("--ascii", action="store_true", help=argparse.SUPPRESS)
    from ..data import add_reading_arguments

    add_reading_arguments(p)


PROGRESS_EVERY = 0.2  # seconds between two progress updates on a terminal


def pair_text(a: str, b: str) -> str:
    """How the table names a pair: `age and shift_work`."""
    return f"{a} and {b}"


def held_fixed_text(given: tuple[str, ...] | list[str]) -> str:
    """What a claim holds fixed: `age, fitness_base`, or `nothing`."""
    return ", ".join(given) if given else "nothing"


def reading_order(items, key=lambda item: item):
    """Fewest variables held fixed first (the strongest tests), then by name."""
    return sorted(items, key=lambda item: (len(key(item).given), key(item).a, key(item).b))


@dataclass(frozen=True)
class Listing:
    """The implied independencies found, and whether `--max` cut the search."""

    independencies: list
    cut: bool
    pairs_examined: int
    pairs_total: int


def find_independencies(diagram, limit: int | None = None, progress=None) -> Listing:
    """The implied independencies in name order (as `dagward.data.implied`), at most `limit`.

    `progress(examined, total, found)` is called now and then, and once at the end.
    A pair costs the size of the ancestors of its two variables
    (`dagward.causal.separators.PairSeparators`), an adjacent pair one lookup;
    pairs that no measured set separates cost their search without a claim.
    """
    import time

    from ..causal.separators import PairSeparators
    from ..stats import Independence

    names = sorted(diagram.measured)
    separator = PairSeparators(diagram.graph, names)
    total = len(names) * (len(names) - 1) // 2
    found: list = []
    examined = 0
    last = time.monotonic()
    cut = False
    for i, a in enumerate(names):
        for b in names[i + 1 :]:
            if limit is not None and len(found) >= limit:
                cut = True
                break
            examined += 1
            sep = separator(a, b)  # None for adjacent pairs, at once
            if sep is not None:
                found.append(Independence(a, b, tuple(sorted(sep))))
            if progress is not None and time.monotonic() - last >= PROGRESS_EVERY:
                last = time.monotonic()
                progress(examined, total, len(found))
        if cut:
            break
    if progress is not None:
        progress(examined, total, len(found))
    return Listing(found, cut, examined, total)


def _terminal_progress(examined: int, total: int, found: int) -> None:
    sys.stderr.write(
        f"\rlooking for implied independencies: {examined:,} of {total:,} pairs examined, "
        f"{found:,} found"
    )
    sys.stderr.flush()


def _stderr_is_terminal() -> bool:
    try:
        return sys.stderr.isatty()
    except (AttributeError, ValueError):
        return False


def run(args: argparse.Namespace) -> int:
    settings = settings_from(args)
    if args.plot and not args.data:
        raise UsageProblem("--plot needs --data (the plot shows the tests' effects)")
    if args.plot and not args.plot.lower().endswith(".svg"):
        # Only SVG is drawn: never write SVG bytes under another format's name.
        raise UsageProblem(
            f"the forest plot is drawn as SVG only, so name it OUT.svg, not `{args.plot}` "
            "(a browser or vector editor converts SVG to PNG or PDF)"
        )
    result = load_clean(args.file, settings)
    diagram = result.diagram
    from ..data import DataOptions

    if args.max is not None and args.max < 1:
        raise UsageProblem("--max must be at least 1")
    show = _terminal_progress if _stderr_is_terminal() and not args.quiet else None
    try:
        listing = find_independencies(diagram, args.max, show)
    finally:
        if show is not None:
            sys.stderr.write("\r\033[K")
            sys.stderr.flush()
    independencies = listing.independencies
    options = table = results = None
    findings = []
    rejected_severity = None
    if args.data:
        from ..data import load_data, reading_options, run_tests
        from ..rules import independence_rejected, missing_column
        from ..rules.base import Context

        options = DataOptions(args.alpha, args.min_effect, args.method, args.data)
        table = load_data(args.data, reading_options(args, settings))
        # missing-column gives its messages here; the rejections are read from the
        # results below (running the rule would test everything twice).
        if settings.is_enabled(missing_column.RULE):
            ctx = Context(diagram=diagram, file=args.file, data=table, data_options=options)
            severity = settings.severity_of(missing_column.RULE)
            findings = [f.with_severity(severity) for f in missing_column.check(ctx)]
        results = run_tests(table, independencies, options)
        if settings.is_enabled(independence_rejected.RULE) and any(r.rejected for r in results):
            rejected_severity = settings.severity_of(independence_rejected.RULE)
    if args.format == "json":
        text = _json(args, diagram, independencies, results, options, table, listing)
    else:
        text = _text(args, independencies, results, options, listing)
        if not args.output and not _stdout_can_write(text):
            # a terminal that cannot show a name: \x.. escapes, never a crash
            encoding = getattr(sys.stdout, "encoding", None) or "ascii"
            text = text.encode(encoding, "backslashreplace").decode(encoding)
    emit(args, text)
    if not args.quiet:
        _notes(args, independencies, results, findings, diagram, listing)
    if args.plot and results is not None:
        _plot(args, diagram, results, options)
    from ..findings import SEVERITY_RANK

    severities = [f.severity for f in findings] + ([rejected_severity] if rejected_severity else [])
    threshold = SEVERITY_RANK[settings.fail_on]
    return 1 if any(SEVERITY_RANK[s] >= threshold for s in severities) else 0


def _notes(args, independencies, results, findings, diagram, listing) -> None:
    if not independencies:
        sys.stderr.write(
            f"dagward: {args.file} implies no independence among its "
            f"{len(diagram.measured)} measured variables\n"
        )
    if listing.cut:
        sys.stderr.write(
            f"dagward: stopped at --max {args.max}: {listing.pairs_examined:,} of "
            f"{listing.pairs_total:,} pairs examined\n"
        )
    for f in findings:
        if f.rule == "missing-column":
            sys.stderr.write(f"{f.file}:{f.line}:{f.column}: {f.severity} [{f.rule}] {f.message}\n")
    if results is not None:
        rejected = sum(r.rejected for r in results)
        untested = sum(not r.tested for r in results)
        tail = f", {untested} not tested" if untested else ""
        sys.stderr.write(
            f"dagward: {rejected} of {len(results)} implied independencies rejected "
            f"(Holm-adjusted p < {args.alpha} and |effect| >= {args.min_effect}){tail}\n"
        )


def _grid(header: tuple[str, ...], rows: list[tuple[str, ...]], right: set[int]) -> list[str]:
    """Columns padded to their widest cell, a rule of dashes under the header.

    Columns in `right` (figures) are right-aligned, the others left-aligned.
    """
    widths = [max(len(row[i]) for row in [header, *rows]) for i in range(len(header))]

    def line(cells) -> str:
        out = [c.rjust(w) if i in right else c.ljust(w)
               for i, (c, w) in enumerate(zip(cells, widths, strict=True))]  # fmt: skip
        return "  ".join(out).rstrip()

    return [line(header), line(tuple("-" * w for w in widths)), *(line(r) for r in rows)]


WEAKER_TEST_NOTE = (
    "A claim that holds more variables fixed is a weaker test: each of them must be "
    "measured and modelled well."
)


def _cut_note(args, listing) -> str:
    if not listing.cut:
        return ""
    return (
        f" (cut at --max {args.max}: {listing.pairs_examined:,} of {listing.pairs_total:,} "
        "pairs examined, in name order)"
    )


def _text(args, independencies, results, options, listing) -> str:
    """The table(s) a reader sees: see the module docstring."""
    if not independencies:
        return ""
    cut = _cut_note(args, listing)
    if results is None:
        ordered = reading_order(independencies)
        rows = [(pair_text(i.a, i.b), held_fixed_text(i.given)) for i in ordered]
        lines = [
            *_prose(
                f"Independencies implied by {args.file} ({len(rows)}){cut}, "
                "fewest variables held fixed first:"
            ),
            "",
            *_grid(("pair", "holding fixed"), rows, set()),
            "",
            *_prose(WEAKER_TEST_NOTE),
        ]
        return "\n".join(lines) + "\n"
    from ..data import format_effect, format_p, format_statistic, verdict

    tested = reading_order([r for r in results if r.tested], key=lambda r: r.independence)
    untested = reading_order([r for r in results if not r.tested], key=lambda r: r.independence)
    lines = [
        *_prose(
            f"Independencies implied by {args.file}, tested on {args.data} "
            f"({len(tested)} tested){cut}, fewest variables held fixed first:"
        ),
        "",
    ]
    header = ("pair", "holding fixed", "n", "statistic", "p", "Holm p",
              "effect [95% interval]", "verdict")  # fmt: skip
    rows = [
        (
            pair_text(r.independence.a, r.independence.b),
            held_fixed_text(r.independence.given),
            str(r.n),
            format_statistic(r),
            format_p(r.p),
            format_p(r.p_adjusted),
            format_effect(r),
            verdict(r, options),
        )
        for r in tested
    ]
    if rows:
        lines += _grid(header, rows, {2, 3, 4, 5, 6})
    else:
        lines.append("(none could be tested)")
    if untested:
        lines += ["", f"Not tested ({len(untested)}):", ""]
        lines += _grid(
            ("pair", "holding fixed", "reason"),
            [
                (
                    pair_text(r.independence.a, r.independence.b),
                    held_fixed_text(r.independence.given),
                    r.note or "no result",
                )
                for r in untested
            ],
            set(),
        )
    lines += [
        "",
        *_prose(
            f"Verdicts: rejected = Holm p < {options.alpha} and |effect| >= "
            f"{options.min_effect}; small = Holm p < {options.alpha} but |effect| < "
            f"{options.min_effect}; consistent = not rejected (which does not confirm the claim)."
        ),
        *_prose(WEAKER_TEST_NOTE),
    ]
    return "\n".join(lines) + "\n"


def _prose(text: str) -> list[str]:
    import textwrap

    return textwrap.wrap(text, 88, break_long_words=False, break_on_hyphens=False)


def _json(args, diagram, independencies, results, options, table, listing) -> str:
    from ..data import verdict

    items = []
    for i, ind in enumerate(independencies):
        item = {"a": ind.a, "b": ind.b, "given": list(ind.given)}
        if results is not None:
            test = results[i].to_dict()
            for key in ("a", "b", "given"):
                test.pop(key, None)
            test["verdict"] = verdict(results[i], options)
            item["test"] = test
        items.append(item)
    data = None
    if results is not None:
        data = {
            "file": args.data,
            "rows": table.n_rows,
            "method": options.method,
            "alpha": options.alpha,
            "min_effect": options.min_effect,
            "rejected": sum(r.rejected for r in results),
        }
    out = {
        "tool": {"name": "dagward", "version": __version__},
        "schema": 1,
        "file": args.file,
        "measured": sorted(diagram.measured),
        "independencies": items,
        "truncated": listing.cut,
        "data": data,
    }
    # \u escapes when asked, or when stdout cannot write the names as they are
    ascii_only = args.ascii or (not args.output and not _stdout_can_write("\u00e9\u2212"))
    return json.dumps(out, indent=2, ensure_ascii=ascii_only) + "\n"


def _stdout_can_write(text: str) -> bool:
    encoding = getattr(sys.stdout, "encoding", None) or "ascii"
    try:
        text.encode(encoding)
    except (UnicodeEncodeError, LookupError):
        return False
    return True


def _plot(args, diagram, results, options) -> None:
    from ..fileio import write_atomic
    from ..forest import forest_plot_svg

    title = f"Implied independencies of {diagram.title or args.file} tested on {args.data}"
    svg = forest_plot_svg(results, title, min_effect=options.min_effect)
    try:
        write_atomic(args.plot, svg)
    except OSError as e:
        raise UsageProblem(f"cannot write {args.plot}: {e.strerror or e}") from None
