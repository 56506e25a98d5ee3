"""dagward independencies: the conditional independencies a diagram implies.

One statement per pair of measured variables that no arrow (and no `<->`)
joins and that some set of measured variables d-separates, with an
inclusion-minimal such set (`linter.causal.implied_independencies`). Text
output, one a line:

    age ⫫ shift_work
    enrolled ⫫ shift_work | fitness_base

`--ascii` (or a stdout whose encoding cannot write ⫫) prints
`enrolled indep shift_work given fitness_base` instead.

With `--data FILE.csv` each statement is tested (see `linter.stats`) and a
table is printed: independence, n, statistic, p, Holm p, effect [95% interval],
verdict (`rejected`, `small` = significant but below --min-effect,
`consistent`, or `not tested` with the reason). `--plot OUT.svg` writes a
forest plot of the effects. The exit status is 1 when an independence is
rejected and `independence-rejected` is at or above --fail-on (by default it
is a warning, so 0), or when a needed column is missing (`missing-column`, an
error).

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

from ..errors import UsageProblem
from ..version import __version__
from .common import emit, load_clean, settings_from

HELP = (
    "List the conditional independencies among measured variables that the diagram "
    "implies (one per non-adjacent pair, with a minimal separating set), and with --data "
    "test each against a CSV file."
)
FORMATS = ("text", "json")

SIGN = "\u2aeb"


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE", help="the diagram")
    p.add_argument("--data", metavar="CSV", help="test each independence against this data")
    p.add_argument("--alpha", type=float, default=0.05,
                   help="level for Holm-adjusted p values (default 0.05)")  # fmt: skip
    p.add_argument("--min-effect", type=float, default=0.1,
                   help="smallest |effect| that counts as a rejection (default 0.1)")  # fmt: skip
    p.add_argument("--method", choices=("pearson", "spearman"), default="pearson",
                   help="correlation for numeric columns (default pearson)")  # fmt: skip
    p.add_argument(
        "--plot", metavar="OUT.svg", help="write a forest plot of the effects (with --data)"
    )
    p.add_argument("--ascii", action="store_true", help="write `a indep b given c` instead of ⫫")
    from ..data import add_reading_arguments

    add_reading_arguments(p)


def statement(a: str, b: str, given: tuple[str, ...] | list[str], ascii_only: bool) -> str:
    """`a ⫫ b | c, d`, or `a indep b given c, d`."""
    if ascii_only:
        text = f"{a} indep {b}"
        return text + (" given " + ", ".join(given) if given else "")
    text = f"{a} {SIGN} {b}"
    return text + (" | " + ", ".join(given) if given else "")


def _stdout_can_write(text: str) -> bool:
    encoding = getattr(sys.stdout, "encoding", None) or "ascii"
    try:
        text.encode(encoding)
    except (UnicodeEncodeError, LookupError):
        return False
    return True


def run(args: argparse.Namespace) -> int:
    settings = settings_from(args)
    if args.plot and not args.data:
        raise UsageProblem("--plot needs --data (the plot shows the tests' effects)")
    result = load_clean(args.file, settings)
    diagram = result.diagram
    from ..data import DataOptions, implied

    independencies = implied(diagram)
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
    ascii_only = args.ascii or (not args.output and not _stdout_can_write(SIGN))
    if args.format == "json":
        text = _json(args, diagram, independencies, results, options, table, ascii_only)
    elif results is None:
        text = "".join(statement(i.a, i.b, i.given, ascii_only) + "\n" for i in independencies)
    else:
        text = _table(results, options, ascii_only)
    emit(args, text)
    if not args.quiet:
        _notes(args, independencies, results, findings, diagram)
    if args.plot and results is not None:
        _plot(args, diagram, results, options)
    from ..findings import SEVERITY_RANK

    severities = [f.severity for f in findings] + ([rejected_severity] if rejected_severity else [])
    threshold = SEVERITY_RANK[settings.fail_on]
    return 1 if any(SEVERITY_RANK[s] >= threshold for s in severities) else 0


def _notes(args, independencies, results, findings, diagram) -> None:
    if not independencies:
        sys.stderr.write(
            f"dagward: {args.file} implies no independence among its "
            f"{len(diagram.measured)} measured variables\n"
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


def _table(results, options, ascii_only: bool) -> str:
    from ..data import format_effect, format_p, format_statistic, verdict

    header = ("independence", "n", "statistic", "p", "Holm p", "effect [95% interval]", "verdict")
    rows = [header]
    for r in results:
        ind = r.independence
        v = verdict(r, options)
        if r.note:
            v += f" ({r.note})"
        rows.append(
            (
                statement(ind.a, ind.b, ind.given, ascii_only),
                str(r.n),
                format_statistic(r),
                format_p(r.p),
                format_p(r.p_adjusted),
                format_effect(r),
                v,
            )
        )
    widths = [max(len(row[i]) for row in rows) for i in range(len(header) - 1)]
    lines = []
    for row in rows:
        cells = [cell.ljust(w) if i == 0 else cell.rjust(w) for i, (cell, w) in
                 enumerate(zip(row, widths, strict=False))]  # fmt: skip
        lines.append("  ".join(cells + [row[-1]]).rstrip())
    return "\n".join(lines) + "\n"


def _json(args, diagram, independencies, results, options, table, ascii_only: bool) -> str:
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
        "data": data,
    }
    return json.dumps(out, indent=2, ensure_ascii=ascii_only) + "\n"


def _plot(args, diagram, results, options) -> None:
    from ..fileio import write_atomic
    from ..stats import forest_plot_svg

    title = f"Implied independencies of {diagram.title or args.file} tested on {args.data}"
    svg = forest_plot_svg(results, title, min_effect=options.min_effect)
    try:
        write_atomic(args.plot, svg)
    except OSError as e:
        raise UsageProblem(f"cannot write {args.plot}: {e.strerror or e}") from None
