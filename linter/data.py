"""The bridge between diagrams and data: options, loading a CSV, running the tests.

The statistics themselves live in `dagward.stats` (partial correlation with
Fisher's z, its rank version, the stratified G-test, Holm's adjustment). This
module decides *what* is tested -- one implied independence per non-adjacent
measured pair, with a minimal separating set of measured variables (see
`dagward.causal.implied_independencies`) -- and turns statistics errors into
`UsageProblem`s so that the command line exits 2 with one line.

numpy, scipy and pandas are imported only inside the functions that need them,
so `dagward check` without `--data` never loads them.
"""

from __future__ import annotations

import math
import sys
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from .errors import UsageProblem

if TYPE_CHECKING:
    from .model import Diagram
    from .stats import Independence, ReadOptions, Table, TestResult

METHODS = ("pearson", "spearman")


@dataclass(frozen=True)
class DataOptions:
    """How implied independencies are tested against data.

    `alpha` is the level for Holm-adjusted p values; `min_effect` the smallest
    |partial correlation| (or Cramér's V for the G-test) worth a finding;
    `method` "pearson" or "spearman"; `source` the data file as the user named it.
    """

    alpha: float = 0.05
    min_effect: float = 0.1
    method: str = "pearson"
    source: str | None = None

    def __post_init__(self) -> None:
        # Checked here so that every command that builds options says the same.
        if not (isinstance(self.alpha, float | int) and 0.0 < self.alpha < 1.0):
            raise UsageProblem(f"--alpha must lie strictly between 0 and 1, not {self.alpha}")
        if not (isinstance(self.min_effect, float | int) and 0.0 <= self.min_effect <= 1.0):
            raise UsageProblem(f"--min-effect must lie between 0 and 1, not {self.min_effect}")
        if self.method not in METHODS:
            raise UsageProblem(f"--method must be one of {', '.join(METHODS)}, not {self.method!r}")


def load_data(
    path: str,
    reading: ReadOptions | None = None,
    *,
    report: Callable[[str], None] | None = None,
) -> Table:
    """Read a CSV file into a `dagward.stats.Table`; any problem is a `UsageProblem`.

    What the reader did that changes what the data mean (a detected separator
    or decimal comma, text cells in a numeric column read as missing, huge
    values) is passed to `report` one line each, by default written to stderr
    as `dagward: FILE: ...`; the same notes stay on `table.notes`.
    """
    from .stats import StatsError, load_table

    try:
        table = load_table(path, options=reading)
    except StatsError as e:  # DataError and StatsUnavailable: one line for the user
        raise UsageProblem(_one_line(str(e))) from None
    for note in table.notes:
        line = f"dagward: {path}: {note.message()}"
        if report is None:
            sys.stderr.write(line + "\n")
        else:
            report(line)
    return table


def table_from_csv_text(
    text: str, source: str = "<text>", reading: ReadOptions | None = None
) -> Table:
    """A table from CSV text (docstring examples and tests); same rules as `load_data`."""
    from .stats import StatsError, table_from_text

    try:
        return table_from_text(text, source, options=reading)
    except StatsError as e:
        raise UsageProblem(_one_line(str(e))) from None


# --- how the data file is read: options and `[tool.dagward.data]` ----------------

_SEP_WORDS = {"comma": ",", "semicolon": ";", "tab": "\t", "\\t": "\t", "pipe": "|"}


def add_reading_arguments(p) -> None:
    """`--sep`, `--decimal`, `--categorical`, `--numeric` (shared by the commands)."""
    p.add_argument("--sep", metavar="CHAR", help="field separator of the data file: `,` `;` "
                   "`tab` or `|` (default: detected)")  # fmt: skip
    p.add_argument(
        "--decimal",
        metavar="CHAR",
        choices=(".", ","),
        help="decimal mark of the data file, `.` or `,` (default: detected)",
    )
    p.add_argument(
        "--categorical",
        metavar="COLUMNS",
        action="append",
        default=[],
        help="read these columns (comma-separated) as categories",
    )
    p.add_argument(
        "--numeric",
        metavar="COLUMNS",
        action="append",
        default=[],
        help="read these columns (comma-separated) as numbers; text cells are missing",
    )


def reading_options(args, settings=None) -> ReadOptions:
    """The reading options from the command line, over `[tool.dagward.data]`."""
    from .stats import ReadOptions

    base = getattr(settings, "data", None) or {}

    def columns(option: list[str] | None, key: str) -> tuple[str, ...]:
        given = [c.strip() for raw in option or [] for c in raw.split(",") if c.strip()]
        return tuple(dict.fromkeys(given or list(base.get(key, ()))))

    sep = getattr(args, "sep", None) or base.get("sep")
    if sep is not None:
        sep = _SEP_WORDS.get(sep, sep)
        if len(sep) != 1 or sep in '"\n\r' or sep.isalnum():
            raise UsageProblem(f"--sep must be one character such as `,` `;` `tab` or `|`, "
                               f"not {sep!r}")  # fmt: skip
    decimal = getattr(args, "decimal", None) or base.get("decimal")
    if decimal is not None and decimal not in (".", ","):
        raise UsageProblem(f"--decimal must be `.` or `,`, not {decimal!r}")
    if sep is not None and decimal is not None and sep == decimal:
        raise UsageProblem(f"--sep and --decimal cannot both be `{sep}`")
    categorical = columns(getattr(args, "categorical", None), "categorical")
    numeric = columns(getattr(args, "numeric", None), "numeric")
    both = sorted(set(categorical) & set(numeric))
    if both:
        raise UsageProblem(f"column {', '.join(both)} is named both categorical and numeric")
    return ReadOptions(sep=sep, decimal=decimal, categorical=categorical, numeric=numeric)


def _one_line(message: str) -> str:
    return " ".join(message.split())


def implied(diagram: Diagram) -> list[Independence]:
    """The implied independencies among measured variables, as stats `Independence`s.

    One per non-adjacent measured pair `a < b` that some measured set separates,
    with an inclusion-minimal separating set (names sorted).
    """
    from .causal import implied_independencies
    from .stats import Independence

    return [
        Independence(a, b, tuple(sorted(sep)))
        for a, b, sep in implied_independencies(diagram.graph, diagram.measured)
    ]


def run_tests(
    table: Table,
    independencies: Sequence[Independence],
    options: DataOptions,
    *,
    progress: Callable[[int, int], None] | None = None,
) -> list[TestResult]:
    """Test every independence; results in input order (see `stats.test_independencies`).

    Without an explicit `progress`, a counter is written to stderr when stderr is
    a terminal (and nothing otherwise, so logs and pipes stay clean).
    """
    from .stats import StatsError, test_independencies

    if progress is None and _stderr_is_terminal() and len(independencies) > 1:
        progress = _terminal_progress
    try:
        results = test_independencies(
            table,
            independencies,
            method=options.method,
            alpha=options.alpha,
            min_effect=options.min_effect,
            progress=progress,
        )
    except StatsError as e:
        raise UsageProblem(_one_line(str(e))) from None
    except ValueError as e:  # bad options that slipped past DataOptions
        raise UsageProblem(_one_line(str(e))) from None
    finally:
        if progress is _terminal_progress:
            sys.stderr.write("\r\033[K")
            sys.stderr.flush()
    return results


def _stderr_is_terminal() -> bool:
    try:
        return sys.stderr.isatty()
    except (AttributeError, ValueError):
        return False


def _terminal_progress(done: int, total: int) -> None:
    sys.stderr.write(f"\rtesting implied independencies: {done}/{total}")
    sys.stderr.flush()


# --- wording shared by the rule, the table and the JSON ------------------------


def effect_name(result: TestResult) -> str:
    """What the effect figure is: partial or rank partial correlation, or Cramér's V."""
    if result.method == "g-test":
        return "Cramér's V"
    given = bool(result.independence.given)
    if result.method == "spearman":
        return "rank partial correlation" if given else "rank correlation"
    return "partial correlation" if given else "correlation"


def format_number(value: float | None, digits: int = 2) -> str:
    if value is None or math.isnan(value):
        return "-"
    return f"{value:.{digits}f}"


def format_p(p: float) -> str:
    if math.isnan(p):
        return "-"
    if p < 0.001:
        return "<0.001"
    return f"{p:.3f}"


def format_effect(result: TestResult) -> str:
    """`0.27 [0.23, 0.31]`, or `0.31` when there is no interval (G-test)."""
    text = format_number(result.effect)
    if result.ci_low is not None and result.ci_high is not None:
        if not (math.isnan(result.ci_low) or math.isnan(result.ci_high)):
            text += f" [{format_number(result.ci_low)}, {format_number(result.ci_high)}]"
    return text


def format_statistic(result: TestResult) -> str:
    if math.isnan(result.statistic):
        return "-"
    if result.method == "g-test":
        return f"G={result.statistic:.2f} (df {result.df})"
    return f"z={result.statistic:.2f}"


def verdict(result: TestResult, options: DataOptions) -> str:
    """`rejected`, `small` (significant, but the effect is below --min-effect),
    `consistent`, or `not tested` (the note says why)."""
    if not result.tested:
        return "not tested"
    if result.rejected:
        return "rejected"
    if result.p_adjusted < options.alpha:
        return "small"
    return "consistent"
