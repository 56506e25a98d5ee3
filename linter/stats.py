"""Testing a diagram's implied conditional independencies against data.

A causal diagram implies that some pairs of measured variables are independent
given a set of others (the global Markov property: Lauritzen 1996, *Graphical
Models*, section 3.2; Pearl 2009, *Causality*, ch. 1). This module checks such
statements against a CSV table:

* numeric pairs: partial correlation and Fisher's z test (Fisher 1915,
  "Frequency distribution of the values of the correlation coefficient in
  samples from an indefinitely large population", Biometrika 10:507-521;
  Fisher 1924 for the partial case, which loses one degree of freedom per
  conditioning variable);
* ``method="spearman"``: the same on ranks, with the rank-correlation variance
  factor 1.06 of Fieller, Hartley & Pearson (1957, "Tests for rank correlation
  coefficients. I", Biometrika 44:470-481);
* pairs with a categorical member: the likelihood-ratio G-test of conditional
  independence, summed over the strata of the conditioning set (Wilks 1938,
  "The large-sample distribution of the likelihood ratio for testing composite
  hypotheses", Ann Math Statist 9:60-62; the stratified sum is common practice);
* Holm's step-down adjustment across all tests of one run (Holm 1979, "A simple
  sequentially rejective multiple test procedure", Scand J Statist 6:65-70).

numpy, scipy and pandas are imported lazily (:func:`_require`) so that
importing this module costs nothing and ``dagward check`` without ``--data``
never loads them. When they are missing, public functions raise
:class:`StatsUnavailable`.
"""

from __future__ import annotations

import csv
import math
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # only for type checkers; the real imports are lazy
    import networkx as nx
    import numpy as np
    import pandas as pd

__all__ = [
    "CATEGORICAL_MAX_LEVELS_AS_IS",
    "DataError",
    "Independence",
    "StatsError",
    "StatsUnavailable",
    "Table",
    "TestResult",
    "fisher_z_test",
    "g_test_conditional",
    "holm",
    "load_table",
    "ReadNote",
    "ReadOptions",
    "detect_format",
    "table_from_text",
    "partial_correlation",
    "simulate_linear_gaussian",
    "test_independencies",
]

# A numeric column with at most this many distinct values enters a G-test with
# one level per value; a numeric column with more is cut at its quintiles.
CATEGORICAL_MAX_LEVELS_AS_IS = 5

# A G-test needs on average at least this many rows per cell of its table
# (levels of a x levels of b x strata of the conditioning set); below it the
# test is not run. The rule of thumb of "expected counts of at least 5" for
# chi-squared-type tests: Cochran 1954, "Some methods for strengthening the
# common chi-squared tests", Biometrics 10:417-451 (from memory).
G_TEST_MIN_PER_CELL = 5

# Fieller, Hartley & Pearson (1957): var(atanh(r_s)) ~ 1.06 / (n - 3) for
# Spearman's coefficient under bivariate normality.
SPEARMAN_VARIANCE_FACTOR = 1.06

_Z_975 = 1.959963984540054  # standard normal 97.5% quantile

METHODS = ("pearson", "spearman")


class StatsError(Exception):
    """Base class of the errors raised by this module."""


class StatsUnavailable(StatsError):
    """numpy, scipy or pandas is not installed."""


class DataError(StatsError):
    """A data file cannot be used (missing, unreadable, empty, malformed)."""


_np: Any = None
_pd: Any = None
_sps: Any = None


def _require() -> None:
    """Import numpy, scipy.stats and pandas once, or raise StatsUnavailable."""
    global _np, _pd, _sps
    if _np is not None and _pd is not None and _sps is not None:
        return
    try:
        import numpy
        import pandas
        from scipy import stats as scipy_stats
    except ImportError as exc:  # the message names the missing package
        raise StatsUnavailable(
            f"testing against data needs numpy, scipy and pandas ({exc}); "
            'install them with: pip install "dagward[data]"'
        ) from exc
    _np, _pd, _sps = numpy, pandas, scipy_stats


# --------------------------------------------------------------------------
# data types


@dataclass(frozen=True)
class Independence:
    """What the diagram implies: ``a`` is independent of ``b`` given ``given``."""

    a: str
    b: str
    given: tuple[str, ...] = ()

    def columns(self) -> tuple[str, ...]:
        return (self.a, self.b, *self.given)

    def label(self) -> str:
        """The claim in words: ``a and b, holding fixed c, d`` (as the table and plot say)."""
        from .wording import claim_text

        return claim_text(self.a, self.b, self.given)

    def __str__(self) -> str:
        return self.label()


@dataclass(frozen=True)
class TestResult:
    """The outcome of testing one implied independence.

    ``effect`` is the partial correlation for ``pearson``, the rank partial
    correlation for ``spearman``, and for the ``g-test`` a bias-corrected
    Cramér's V computed from the G statistic,
    ``sqrt(max(G - df, 0) / (n * (min(R, C) - 1)))`` with R and C the numbers
    of observed levels of ``a`` and ``b`` (Cramér 1946, *Mathematical Methods
    of Statistics*, section 21.9; subtracting the null expectation ``df`` of G
    is common practice). It lies in [0, 1]; the G-test gives no interval.

    ``rejected`` is ``p_adjusted < alpha and |effect| >= min_effect``.
    When a test could not run, ``p``, ``p_adjusted`` and ``statistic`` are NaN,
    ``rejected`` is False and ``note`` says why; :meth:`to_dict` turns NaN into
    None for JSON.
    """

    __test__ = False  # not a pytest test class despite the name

    independence: Independence
    method: str
    statistic: float
    df: int | None
    n: int
    p: float
    p_adjusted: float
    effect: float | None
    ci_low: float | None
    ci_high: float | None
    rejected: bool
    note: str | None = None

    @property
    def tested(self) -> bool:
        return not math.isnan(self.p)

    def to_dict(self) -> dict[str, Any]:
        def clean(value: float | None) -> float | None:
            if value is None or math.isnan(value):
                return None
            return float(value)

        ind = self.independence
        return {
            "a": ind.a,
            "b": ind.b,
            "given": list(ind.given),
            "method": self.method,
            "statistic": clean(self.statistic),
            "df": self.df,
            "n": self.n,
            "p": clean(self.p),
            "p_adjusted": clean(self.p_adjusted),
            "effect": clean(self.effect),
            "ci_low": clean(self.ci_low),
            "ci_high": clean(self.ci_high),
            "rejected": self.rejected,
            "note": self.note,
        }


# --------------------------------------------------------------------------
# the table


class Table:
    """A data table read from CSV, column by column.

    Missing values: empty cells and pandas' default markers (``NA``, ``NaN``,
    ``null``, ``N/A``, ``-nan``, ...); in numeric columns also ``inf``.

    Categorical rule: a column is *categorical* when some non-missing value is
    not a number (text such as ``yes``/``no`` or ``A``/``B``) or when its values
    are ``True``/``False``; every column whose non-missing values are all
    numbers is *numeric*, including 0/1 and small integer codes. Pass
    ``categorical=[...]`` to :func:`load_table` to treat numeric codes as
    categories. A column that is entirely missing counts as numeric (and every
    test that needs it reports a note).
    """

    def __init__(
        self,
        frame: pd.DataFrame,
        *,
        source: str = "<memory>",
        categorical: Iterable[str] = (),
        notes: Iterable[ReadNote] = (),
    ) -> None:
        _require()
        self.source = source
        self.notes: tuple[ReadNote, ...] = tuple(notes)  # what reading the file did
        self._frame = frame
        forced = set(categorical)
        unknown = forced - set(frame.columns)
        if unknown:
            raise DataError(f"{source}: no column named {', '.join(sorted(unknown))}")
        self._categorical = {
            name for name in frame.columns if name in forced or not _is_numeric_dtype(frame[name])
        }
        self._numeric_cache: dict[str, np.ndarray] = {}
        self._codes_cache: dict[str, tuple[np.ndarray, list[Any]]] = {}
        self._rankers: dict[str, _Ranker] = {}

    @classmethod
    def from_columns(
        cls,
        columns: Mapping[str, Sequence[Any]],
        *,
        source: str = "<memory>",
        categorical: Iterable[str] = (),
    ) -> Table:
        """Build a table from ``{name: values}`` (for tests and simulations)."""
        _require()
        return cls(_pd.DataFrame(dict(columns)), source=source, categorical=categorical)

    def columns(self) -> tuple[str, ...]:
        return tuple(str(c) for c in self._frame.columns)

    def has_column(self, name: str) -> bool:
        return name in self._frame.columns

    def is_categorical(self, name: str) -> bool:
        if not self.has_column(name):
            raise KeyError(name)
        return name in self._categorical

    @property
    def n_rows(self) -> int:
        return int(len(self._frame))

    def numeric(self, name: str) -> np.ndarray:
        """Float values with NaN for missing (and non-finite) cells."""
        cached = self._numeric_cache.get(name)
        if cached is None:
            values = _np.asarray(
                self._frame[name].to_numpy(dtype="float64", na_value=_np.nan), dtype=float
            )
            if not _np.isfinite(values).all():
                values = values.copy()
                values[~_np.isfinite(values)] = _np.nan
            largest = _np.nanmax(_np.abs(values)) if not _np.isnan(values).all() else 0.0
            if largest > _HUGE:
                # Scale by a power of two (exact in floating point): correlations,
                # ranks and quantile bins are unchanged, and the sums of squares
                # no longer overflow.
                values = values * 2.0 ** -(math.frexp(float(largest))[1])
            cached = values
            self._numeric_cache[name] = cached
        return cached

    def missing(self, name: str) -> np.ndarray:
        """Boolean mask of missing cells."""
        if self.is_categorical(name):
            return self.codes(name)[0] < 0
        return _np.isnan(self.numeric(name))

    def ranker(self, name: str) -> _Ranker:
        """The column's sort structure for ranking within row subsets."""
        ranker = self._rankers.get(name)
        if ranker is None:
            ranker = self._rankers[name] = _Ranker(self.numeric(name))
        return ranker

    def codes(self, name: str) -> tuple[np.ndarray, list[Any]]:
        """Integer level codes (-1 for missing) and the level values, sorted."""
        cached = self._codes_cache.get(name)
        if cached is None:
            cat = _pd.Categorical(self._frame[name])
            cached = (_np.asarray(cat.codes, dtype=_np.int64), list(cat.categories))
            self._codes_cache[name] = cached
        return cached


def _is_numeric_dtype(series: pd.Series) -> bool:
    api = _pd.api.types
    if api.is_bool_dtype(series.dtype):
        return False
    if api.is_numeric_dtype(series.dtype):
        return True
    # An all-missing column is read as float by pandas; anything else that is
    # not numeric holds at least one non-number.
    return bool(series.isna().all())


# --------------------------------------------------------------------------
# reading a CSV file

# Field separators tried when none is given, in order of preference on a tie.
SEPARATORS = (",", ";", "\t", "|")
SEPARATOR_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}
_SNIFF_CHARS = 256 * 1024  # the start of the file that the detection reads
_SNIFF_ROWS = 200
# Magnitudes above 2**500 (about 3e150) cannot be squared and summed in float64:
# such columns are scaled by an exact power of two before the arithmetic.
_HUGE = 2.0**500
# Distinct text values quoted in a note about a numeric column.
_QUOTED_VALUES = 5


@dataclass(frozen=True)
class ReadOptions:
    """How a CSV file is read.

    ``sep`` and ``decimal`` are detected when None (see :func:`detect_format`).
    ``categorical`` columns are categories whatever their values;
    ``numeric`` columns are numbers, their text cells missing.
    """

    sep: str | None = None
    decimal: str | None = None
    categorical: tuple[str, ...] = ()
    numeric: tuple[str, ...] = ()


@dataclass(frozen=True)
class ReadNote:
    """Something the reader did that the user should know, as structured data.

    ``kind``: ``"format"`` (the separator and decimal mark were detected),
    ``"text-in-numeric"`` (a numeric column with text cells, read as missing),
    ``"huge-values"`` (values too large for the arithmetic as they are, scaled
    exactly), ``"trailing-separator"`` (every row ends with a separator),
    ``"comma-numbers"`` (a column read as categories whose cells look like
    numbers with a decimal comma).
    """

    kind: str
    column: str | None = None
    values: tuple[str, ...] = ()  # the distinct offending cells, as written (a few)
    count: int = 0  # how many cells
    first_line: int | None = None  # the file line of the first such cell
    sep: str | None = None
    decimal: str | None = None
    largest: float | None = None

    def message(self) -> str:
        if self.kind == "format":
            mark = "decimal comma" if self.decimal == "," else "decimal point"
            return (
                f"read as {SEPARATOR_NAMES.get(self.sep or ',', repr(self.sep))}-separated"
                f" with a {mark} (detected; --sep and --decimal set them)"
            )
        if self.kind == "trailing-separator":
            return (
                "every row ends with a separator after the last column; "
                "the empty field at the end is ignored"
            )
        if self.kind == "text-in-numeric":
            shown = ", ".join(f"`{v}`" for v in self.values)
            more = ", ..." if self.count > len(self.values) else ""
            rows = "row" if self.count == 1 else "rows"
            return (
                f"column `{self.column}` is numeric but {self.count} {rows} hold text "
                f"({shown}{more}; first on line {self.first_line}): those cells are read "
                "as missing (use --categorical to read the column as categories)"
            )
        if self.kind == "comma-numbers":
            shown = ", ".join(f"`{v}`" for v in self.values)
            return (
                f"column `{self.column}` is read as categories, but {self.count} of its "
                f"cells look like numbers written with a comma ({shown}, ...); if the "
                "comma is the decimal mark, give --decimal , (or --numeric for this column)"
            )
        if self.kind == "huge-values":
            return (
                f"column `{self.column}` holds values as large as {self.largest:.3g}; "
                "they are used as they are (scaled exactly by a power of two for the "
                "arithmetic), but check that they are not codes for missing values"
            )
        return self.kind


def detect_format(sample: str, sep: str | None = None) -> tuple[str, str]:
    """(separator, decimal mark) of a CSV file from its first lines.

    The separator is the candidate of :data:`SEPARATORS` that splits the header
    into at least two fields and gives the most rows of the header's width (a
    trailing separator allowed); a comma when none does. The decimal mark is
    a comma when the separator is not and some cells look like ``3,5`` while
    none looks like ``3.5``. A heuristic (common practice in spreadsheet
    imports); ``--sep`` and ``--decimal`` override it. Given ``sep``, only the
    decimal mark is detected.
    """
    import re

    lines = [line for line in sample.splitlines()[:_SNIFF_ROWS] if line.strip()]
    if len(sample) >= _SNIFF_CHARS and len(lines) > 1:
        lines = lines[:-1]  # the last line may be cut
    best, best_score = sep or ",", (0, 0)
    for candidate in SEPARATORS if sep is None else ():
        try:
            rows = list(csv.reader(lines, delimiter=candidate))
        except csv.Error:
            continue
        if not rows or len(rows[0]) < 2:
            continue
        width = len(rows[0]) - (1 if rows[0][-1].strip() == "" else 0)
        fitting = sum(1 for r in rows[1:] if len(r) == width
                      or (len(r) == width + 1 and not r[-1].strip()))  # fmt: skip
        score = (fitting, width)
        if score > best_score:
            best, best_score = candidate, score
    decimal = "."
    if best != ",":
        comma = re.compile(r"[+-]?\d+,\d+")
        point = re.compile(r"[+-]?\d*\.\d+(?:[eE][+-]?\d+)?")
        cells = [c.strip() for r in csv.reader(lines[1:], delimiter=best) for c in r]
        if any(comma.fullmatch(c) for c in cells) and not any(point.fullmatch(c) for c in cells):
            decimal = ","
    return best, decimal


def load_table(
    path: str | Path, *, categorical: Iterable[str] = (), options: ReadOptions | None = None
) -> Table:
    """Read a CSV file (header row, UTF-8 with optional BOM) into a :class:`Table`.

    The separator and decimal mark are detected (:func:`detect_format`) unless
    ``options`` gives them. Column names are stripped of surrounding blanks.
    Every row must have the header's width (a separator at the end of every
    row, as some spreadsheets write, is allowed and ignored); otherwise the
    error names the first line that differs. A column is numeric when most of
    its non-missing cells are numbers: its other cells are read as missing and
    reported in ``table.notes`` (which column, which values, how many rows);
    categorical when most are not, or when ``options.categorical`` names it.
    Raises :class:`DataError` naming the file when it is missing, unreadable,
    empty, malformed, has no data rows or repeats a column name.
    """
    _require()
    path = Path(path)
    name = str(path)
    if not path.exists():
        raise DataError(f"{name}: no such file")
    if path.is_dir():
        raise DataError(f"{name}: is a directory, not a CSV file")
    try:
        with open(path, encoding="utf-8-sig", newline="") as handle:
            sample = handle.read(_SNIFF_CHARS)
    except UnicodeDecodeError as exc:
        raise DataError(f"{name}: not UTF-8 text ({exc.reason} at byte {exc.start})") from exc
    except OSError as exc:
        raise DataError(f"{name}: cannot read ({exc})") from exc

    def lines() -> Iterable[str]:
        with open(path, encoding="utf-8-sig", newline="") as handle:
            yield from handle

    def raw() -> Any:
        return open(path, "rb")

    try:
        return _read_csv(name, sample, lines, path, categorical, options or ReadOptions(), raw)
    except UnicodeDecodeError as exc:
        raise DataError(f"{name}: not UTF-8 text ({exc.reason} at byte {exc.start})") from exc


def table_from_text(
    text: str,
    source: str = "<text>",
    *,
    categorical: Iterable[str] = (),
    options: ReadOptions | None = None,
) -> Table:
    """A table from CSV text, read by the same rules as :func:`load_table`."""
    import io

    _require()
    text = text.removeprefix("\ufeff")
    return _read_csv(source, text[:_SNIFF_CHARS], lambda: io.StringIO(text, newline=""),
                     io.StringIO(text, newline=""), categorical, options or ReadOptions(),
                     lambda: io.BytesIO(text.encode("utf-8")))  # fmt: skip


def _read_csv(name: str, sample: str, lines: Callable[[], Iterable[str]], source: Any,
              categorical: Iterable[str], options: ReadOptions,
              raw: Callable[[], Any]) -> Table:  # fmt: skip
    notes: list[ReadNote] = []
    if options.sep is not None and options.decimal is not None:
        sep, decimal = options.sep, options.decimal
    else:
        found_sep, found_decimal = detect_format(sample, options.sep)
        sep = options.sep or found_sep
        decimal = options.decimal or (found_decimal if sep != "," else ".")
        if (options.sep is None and sep != ",") or (options.decimal is None and decimal != "."):
            notes.append(ReadNote("format", sep=sep, decimal=decimal))
    if sep == decimal:
        raise DataError(f"{name}: the separator and the decimal mark are both `{sep}`")
    header, trailing = _check_widths(name, lines(), sep, raw)
    if trailing:
        notes.append(ReadNote("trailing-separator"))
    width = len(header)
    encoding = {"encoding": "utf-8-sig"} if isinstance(source, (str, Path)) else {}
    try:
        # index_col=False: a separator at the end of every row must not turn the
        # first column into the row index (which shifts every column by one).
        frame = _pd.read_csv(source, sep=sep, decimal=decimal, index_col=False,
                             usecols=range(width), header=0, names=header,
                             low_memory=False, **encoding)  # fmt: skip
    except _pd.errors.EmptyDataError as exc:
        raise DataError(f"{name}: empty file") from exc
    except (_pd.errors.ParserError, ValueError, OSError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise DataError(f"{name}: malformed CSV ({first})") from exc
    if len(frame) == 0:
        raise DataError(f"{name}: no data rows (only a header)")
    forced_categorical = set(categorical) | set(options.categorical)
    forced_numeric = set(options.numeric)
    unknown = (forced_categorical | forced_numeric) - set(header)
    if unknown:
        raise DataError(f"{name}: no column named {', '.join(sorted(unknown))}")
    both = forced_categorical & forced_numeric
    if both:
        raise DataError(f"{name}: column {', '.join(sorted(both))} is named both categorical"
                        " and numeric")  # fmt: skip
    line_of_row = lambda: _row_lines(lines(), sep)  # noqa: E731 (only when a note needs it)
    for column in header:
        if column in forced_categorical:
            continue
        series = frame[column]
        if _is_text(series):
            converted, note = _settle_column(column, series, decimal, column in forced_numeric,
                                             line_of_row)  # fmt: skip
            if converted is not None:
                frame[column] = converted
            if note is not None:
                notes.append(note)
        elif column in forced_numeric and _pd.api.types.is_bool_dtype(series.dtype):
            frame[column] = series.astype(float)
        huge = _huge_note(column, frame[column])
        if huge is not None:
            notes.append(huge)
    return Table(frame, source=name, categorical=forced_categorical, notes=notes)


def _is_text(series: pd.Series) -> bool:
    """Neither numbers nor booleans (object or string dtype, by pandas version)."""
    api = _pd.api.types
    return not (api.is_numeric_dtype(series.dtype) or api.is_bool_dtype(series.dtype))


def _check_widths(name: str, lines: Iterable[str], sep: str,
                  raw: Callable[[], Any] | None = None) -> tuple[list[str], bool]:  # fmt: skip
    """The stripped header, and whether every row ends with an extra empty field.

    Every row must have the header's width, or that width plus one empty field
    at the end (a trailing separator) on every row; the first row that differs
    is an error naming its line. Files without quotes are checked by counting
    separators per line with numpy (a 1,000,000-row file in a fraction of a
    second); others row by row with the csv module.
    """
    try:
        reader = csv.reader(lines, delimiter=sep)
        header = next(reader, None)
        if not header or all(not cell.strip() for cell in header):
            raise DataError(f"{name}: empty file (expected a header row naming the columns)")
        stripped = [cell.strip() for cell in header]
        header_trailing = len(stripped) > 1 and stripped[-1] == ""
        if header_trailing:
            stripped.pop()
        seen: set[str] = set()
        for cell in stripped:
            if not cell:
                raise DataError(f"{name}: the header has an empty column name")
            if cell in seen:
                raise DataError(f"{name}: column `{cell}` appears twice in the header")
            seen.add(cell)
        width = len(stripped)
        state = _WidthState(name, sep, width, header_trailing)
        if raw is not None and reader.line_num == 1 and _widths_by_counting(raw, sep, state):
            return stripped, state.trailing
        for row in reader:
            state.row(row, reader.line_num)
    except csv.Error as exc:
        raise DataError(f"{name}: malformed CSV ({exc})") from exc
    return stripped, state.trailing


class _WidthState:
    """The width rule, fed one row at a time (see `_check_widths`)."""

    def __init__(self, name: str, sep: str, width: int, header_trailing: bool) -> None:
        self.name, self.sep, self.width = name, sep, width
        self.header_trailing = header_trailing
        self._kind: bool | None = True if header_trailing else None  # rows end with sep?

    @property
    def trailing(self) -> bool:
        return bool(self._kind)

    def row(self, row: list[str], line: int) -> None:
        width = self.width
        if not row or (len(row) == 1 and not row[0].strip()):
            return  # a blank line
        if len(row) == width + 1 and not row[-1].strip() and self._kind is not False:
            self._kind = True
            return
        if len(row) == width and (self.header_trailing or self._kind is not True):
            if not self.header_trailing:
                self._kind = False
            return  # (with a trailing header, the empty last field may be left out)
        what = "fields" if len(row) != 1 else "field"
        expected = f"{width} (the header's width)"
        if self._kind:
            expected = f"{width} and an empty one at the end, like the rows before it"
        columns = "column" if width == 1 else "columns"
        hint = "; the separator is likely wrong: set it with --sep" if width == 1 else ""
        raise DataError(f"{self.name}: line {line} has {len(row)} {what} where {expected} are "
                        f"expected; the header names {width} {columns} (separator: "
                        f"{SEPARATOR_NAMES.get(self.sep, repr(self.sep))}){hint}")  # fmt: skip


_CHUNK = 8 * 1024 * 1024


def _widths_by_counting(raw: Callable[[], Any], sep: str, state: _WidthState) -> bool:
    """The width check by counting separators per line; False (nothing checked)
    when the file has a quote, which may hide separators or line breaks."""
    sep_byte, nl = ord(sep), ord("\n")
    line_offset = 0  # lines before the current chunk
    with raw() as handle:
        first = handle.readline()  # the header, checked by the caller
        if b'"' in first:
            return False
        line_offset = 1
        tail = b""
        while True:
            chunk = handle.read(_CHUNK)
            data = tail + chunk
            if not chunk:
                if not data:
                    break
                if not data.endswith(b"\n"):
                    data += b"\n"
                end = len(data)
            else:
                end = data.rfind(b"\n") + 1
                if end == 0:
                    tail = data
                    continue
            block, tail = data[:end], data[end:]
            if b'"' in block:
                return False
            if block:
                line_offset = _count_block(block, sep_byte, nl, state, line_offset)
            if not chunk:
                break
    return True


def _count_block(block: bytes, sep_byte: int, nl: int, state: _WidthState, offset: int) -> int:
    """Check the whole lines of `block`; returns the line count after it."""
    arr = _np.frombuffer(block, dtype=_np.uint8)
    ends = _np.flatnonzero(arr == nl)  # the newline of each line
    starts = _np.empty_like(ends)
    starts[0] = 0
    starts[1:] = ends[:-1] + 1
    at = _np.flatnonzero(arr == sep_byte)  # (a cumulative sum is several times slower)
    fields = _np.searchsorted(at, ends) - _np.searchsorted(at, starts) + 1
    # the last character before the newline (a \r of CRLF skipped)
    last = _np.maximum(ends - 1, 0)
    cr = (arr[last] == ord("\r")) & (ends > starts)
    last = _np.where(cr, _np.maximum(last - 1, 0), last)
    length = ends - starts - cr.astype(_np.int64)
    ends_with_sep = (length > 0) & (arr[last] == sep_byte)
    width = state.width
    plain = fields == width
    trail = (fields == width + 1) & ends_with_sep
    blank = length == 0
    # lines the vectorised rule cannot settle go through the row rule one by one
    odd = ~(plain | trail | blank)
    if state.header_trailing:
        odd_index = _np.flatnonzero(odd)
    else:
        kind = state._kind
        if kind is None:
            first_plain = int(_np.argmax(plain)) if plain.any() else None
            first_trail = int(_np.argmax(trail)) if trail.any() else None
            if first_plain is not None and (first_trail is None or first_plain < first_trail):
                kind = False
            elif first_trail is not None:
                kind = True
        if kind is True:
            odd = odd | plain
        elif kind is False:
            odd = odd | trail
        if kind is not None:
            state._kind = kind
        odd_index = _np.flatnonzero(odd)
    for i in odd_index:
        text = block[starts[i] : ends[i]].decode("utf-8", errors="replace").rstrip("\r")
        state.row(next(csv.reader([text], delimiter=state.sep), []), offset + int(i) + 1)
    return offset + len(ends)


def _row_lines(lines: Iterable[str], sep: str) -> list[int]:
    """The file line of each data row (rows may span lines inside quotes)."""
    reader = csv.reader(lines, delimiter=sep)
    next(reader, None)
    out = []
    start = reader.line_num + 1
    for row in reader:
        if row and not (len(row) == 1 and not row[0].strip()):
            out.append(start)
        start = reader.line_num + 1
    return out


def _settle_column(
    column: str, series: pd.Series, decimal: str, force_numeric: bool,
    line_of_row: Callable[[], list[int]],
) -> tuple[pd.Series | None, ReadNote | None]:  # fmt: skip
    """A text column: numbers when most of its cells are (or when forced), else None.

    Returns (the numeric column or None to keep it as categories, a note on the
    text cells read as missing).
    """
    present = series.notna()
    text = series[present].astype(str).str.strip()
    if decimal == ",":
        text = text.str.replace(",", ".", regex=False)
    numbers = _pd.to_numeric(text, errors="coerce")
    # booleans stay categories (pandas reads True/False as numbers when coerced)
    bad = numbers.isna()
    n_numbers = int((~bad).sum())
    if not force_numeric and n_numbers <= int(bad.sum()):
        if decimal == "." and len(text) and bool(text.str.fullmatch(r"[+-]?\d+,\d+").mean() > 0.5):
            # read as categories, but most cells look like `3,5`: say so
            return None, ReadNote("comma-numbers", column=column,
                                  values=tuple(dict.fromkeys(text[:_QUOTED_VALUES])),
                                  count=int(text.str.fullmatch(r"[+-]?\d+,\d+").sum()))  # fmt: skip
        return None, None
    values = _pd.Series(_np.nan, index=series.index, dtype="float64")
    values[numbers.index] = numbers.astype("float64")
    note = None
    if bad.any():
        raw = series[present][bad]
        distinct = list(dict.fromkeys(str(v) for v in raw))[:_QUOTED_VALUES]
        position = int(series.index.get_loc(raw.index[0]))
        row_lines = line_of_row()
        first_line = row_lines[position] if position < len(row_lines) else position + 2
        note = ReadNote("text-in-numeric", column=column, values=tuple(distinct),
                        count=int(bad.sum()), first_line=first_line)  # fmt: skip
    return values, note


def _huge_note(column: str, series: pd.Series) -> ReadNote | None:
    if not _pd.api.types.is_float_dtype(series.dtype) and not \
            _pd.api.types.is_integer_dtype(series.dtype):  # fmt: skip
        return None
    values = _np.abs(series.to_numpy(dtype="float64", na_value=_np.nan))
    finite = values[_np.isfinite(values)]
    if finite.size and finite.max() > _HUGE:
        return ReadNote("huge-values", column=column, largest=float(finite.max()))
    return None


# --------------------------------------------------------------------------
# the statistics


def _partial_from_cov(cov: np.ndarray) -> tuple[float, int, str | None]:
    """Partial correlation of variables 0 and 1 given 2..m from a covariance.

    Works through the Schur complement with a pseudo-inverse of the
    conditioning block, so collinear conditioning columns are harmless; the
    returned k is that block's rank (the degrees of freedom it uses up).
    """
    cov = _np.asarray(cov, dtype=float)
    sd = _np.sqrt(_np.clip(_np.diag(cov), 0.0, None))
    if sd[0] == 0.0 or sd[1] == 0.0:
        return math.nan, 0, "constant column"
    # Scale every variable to unit variance first: the pseudo-inverse
    # tolerance is relative, and columns may be in very different units.
    nonzero = _np.where(sd > 0, sd, 1.0)
    corr = cov / _np.outer(nonzero, nonzero)
    k = 0
    resid = corr[:2, :2]
    if cov.shape[0] > 2:
        keep = [i for i in range(2, cov.shape[0]) if sd[i] > 0]
        if keep:
            szz = corr[_np.ix_(keep, keep)]
            sxz = corr[_np.ix_([0, 1], keep)]
            pinv = _np.linalg.pinv(szz, rcond=1e-10, hermitian=True)
            k = int(
                _np.linalg.matrix_rank(
                    szz, tol=1e-10 * max(1.0, float(_np.abs(szz).max())), hermitian=True
                )
            )
            resid = resid - sxz @ pinv @ sxz.T
    v0, v1 = float(resid[0, 0]), float(resid[1, 1])
    if v0 <= 1e-12 or v1 <= 1e-12:
        return math.nan, k, "a variable is a linear function of the conditioning set"
    r = float(resid[0, 1]) / math.sqrt(v0 * v1)
    return max(-1.0, min(1.0, r)), k, None


def partial_correlation(x: Any, y: Any, Z: Any = None) -> float:
    """Partial correlation of ``x`` and ``y`` given the columns of ``Z``.

    ``Z`` has shape (n, k) with k >= 0 (or is None). Equals the correlation of
    the least-squares residuals of x and y on Z with an intercept (common
    practice; e.g. Anderson 2003, *An Introduction to Multivariate Statistical
    Analysis*, section 2.5). NaN when x or y is constant or determined by Z.
    """
    _require()
    x = _np.asarray(x, dtype=float).ravel()
    y = _np.asarray(y, dtype=float).ravel()
    n = x.shape[0]
    if y.shape[0] != n:
        raise ValueError("x and y differ in length")
    if Z is None:
        Z = _np.empty((n, 0))
    Z = _np.asarray(Z, dtype=float)
    if Z.ndim == 1:
        Z = Z.reshape(n, 1)
    if Z.shape[0] != n:
        raise ValueError("Z has a different number of rows from x")
    data = _np.column_stack([x, y, Z])
    r, _k, _note = _partial_from_cov(_covariance(data))
    return r


def _covariance(data: np.ndarray) -> np.ndarray:
    """Column covariance (two-pass: centre first, for accuracy on large n)."""
    centred = data - data.mean(axis=0)
    return (centred.T @ centred) / max(data.shape[0] - 1, 1)


def fisher_z_test(r: float, n: int, k: int, *, variance_factor: float = 1.0) -> tuple[float, float]:
    """Fisher's z test of a (partial) correlation: ``(z, two-sided p)``.

    ``z = atanh(r) * sqrt((n - k - 3) / variance_factor)`` is standard normal
    under zero (partial) correlation for Gaussian data (Fisher 1915; 1924).
    ``variance_factor`` is 1.06 for Spearman's coefficient (Fieller, Hartley &
    Pearson 1957). Raises ValueError when ``n - k - 3 < 1``.
    """
    _require()
    dof = n - k - 3
    if dof < 1:
        raise ValueError(f"too few cases for Fisher's z: n = {n} with {k} conditioning variables")
    r = max(-1.0 + 1e-15, min(1.0 - 1e-15, float(r)))
    z = math.atanh(r) * math.sqrt(dof / variance_factor)
    p = float(2.0 * _sps.norm.sf(abs(z)))
    return z, p


def _fisher_interval(r: float, n: int, k: int, variance_factor: float) -> tuple[float, float]:
    r = max(-1.0 + 1e-15, min(1.0 - 1e-15, r))
    half = _Z_975 * math.sqrt(variance_factor / (n - k - 3))
    centre = math.atanh(r)
    return math.tanh(centre - half), math.tanh(centre + half)


def g_test_conditional(x: Any, y: Any, strata: Any = None) -> tuple[float, int, float]:
    """G-test that ``x`` and ``y`` (labels) are independent within each stratum.

    Returns ``(G, df, p)``: G is the sum over strata of the likelihood-ratio
    statistic ``2 * sum O * ln(O / E)``, df the sum of ``(r - 1)(c - 1)`` with
    r, c the levels of x and y observed in that stratum, p from the chi-squared
    distribution with df degrees (Wilks 1938). Strata with fewer than 2 rows are
    skipped. ``strata`` is a 1-D array of stratum labels or None (one stratum).
    When df is 0 (no stratum shows two levels of both), p is NaN.
    """
    _require()
    x = _np.asarray(x)
    y = _np.asarray(y)
    n = x.shape[0]
    if y.shape[0] != n:
        raise ValueError("x and y differ in length")
    _, xc = _np.unique(x, return_inverse=True)
    _, yc = _np.unique(y, return_inverse=True)
    if strata is None:
        sc = _np.zeros(n, dtype=_np.int64)
    else:
        strata = _np.asarray(strata)
        if strata.shape[0] != n:
            raise ValueError("strata differ in length from x")
        _, sc = _np.unique(strata, return_inverse=True, axis=0 if strata.ndim > 1 else None)
    return _g_from_codes(
        xc.ravel().astype(_np.int64), yc.ravel().astype(_np.int64), sc.ravel().astype(_np.int64)
    )


def _g_from_codes(xc: np.ndarray, yc: np.ndarray, sc: np.ndarray) -> tuple[float, int, float]:
    if xc.size == 0:
        return 0.0, 0, math.nan
    nx_, ny_, ns = int(xc.max()) + 1, int(yc.max()) + 1, int(sc.max()) + 1
    # One bincount builds every stratum's contingency table at once.
    counts = _np.bincount((sc * nx_ + xc) * ny_ + yc, minlength=ns * nx_ * ny_)
    tables = counts.reshape(ns, nx_, ny_).astype(float)
    totals = tables.sum(axis=(1, 2))
    tables = tables[totals >= 2]
    totals = totals[totals >= 2]
    if tables.shape[0] == 0:
        return 0.0, 0, math.nan
    rows = tables.sum(axis=2)
    cols = tables.sum(axis=1)
    expected = rows[:, :, None] * cols[:, None, :] / totals[:, None, None]
    observed = tables > 0
    g = 2.0 * float(_np.sum(tables[observed] * _np.log(tables[observed] / expected[observed])))
    r_levels = (rows > 0).sum(axis=1)
    c_levels = (cols > 0).sum(axis=1)
    df = int(_np.sum((r_levels - 1) * (c_levels - 1)))
    g = max(g, 0.0)  # rounding can leave -1e-13 for a perfectly independent table
    if df == 0:
        return g, 0, math.nan
    return g, df, float(_sps.chi2.sf(g, df))


def holm(pvalues: Sequence[float]) -> list[float]:
    """Holm's step-down adjusted p-values, in the input order.

    With p-values sorted p(1) <= ... <= p(m), the adjusted value of p(i) is
    ``max over j <= i of min(1, (m - j + 1) * p(j))`` (Holm 1979). Rejecting
    where the adjusted value is below alpha controls the family-wise error
    rate at alpha. NaN entries (tests that could not run) stay NaN and do not
    count towards m.
    """
    values = [float(p) for p in pvalues]
    for p in values:
        if not math.isnan(p) and not 0.0 <= p <= 1.0:
            raise ValueError(f"p-value out of [0, 1]: {p}")
    present = sorted((p, i) for i, p in enumerate(values) if not math.isnan(p))
    m = len(present)
    adjusted = [math.nan] * len(values)
    running = 0.0
    for rank, (p, index) in enumerate(present):
        running = max(running, min(1.0, (m - rank) * p))
        adjusted[index] = running
    return adjusted


# --------------------------------------------------------------------------
# running the tests of one diagram


@dataclass(frozen=True)
class _Raw:
    method: str
    statistic: float
    df: int | None
    n: int
    p: float
    effect: float | None
    ci_low: float | None
    ci_high: float | None
    note: str | None


def _untested(method: str, n: int, note: str) -> _Raw:
    return _Raw(method, math.nan, None, n, math.nan, None, None, None, note)


class _MomentBlock:
    """Covariances of a group of numeric columns over one set of rows.

    Tests whose columns share the same missing-value pattern share one block,
    so a run over a complete table computes one covariance matrix in all.
    Used for spearman; pearson uses :class:`_PartialRowMoments`.
    """

    def __init__(
        self, table: Table, columns: Sequence[str], rows: np.ndarray | None, spearman: bool
    ) -> None:
        self.index = {name: i for i, name in enumerate(columns)}
        data = _np.empty((table.n_rows if rows is None else int(rows.sum()), len(columns)))
        for j, name in enumerate(columns):
            if spearman:
                data[:, j] = table.ranker(name).ranks(rows)
            else:
                values = table.numeric(name)
                data[:, j] = values if rows is None else values[rows]
        self.n = data.shape[0]
        self.constant = {
            name: bool(self.n == 0 or _np.ptp(data[:, j]) == 0) for name, j in self.index.items()
        }
        self.cov = _covariance(data) if self.n > 1 else _np.zeros((len(columns),) * 2)


class _PartialRowMoments:
    """Complete-case covariances for many column sets at the cost of one.

    Rows complete on every column ("base" rows) are summed once; for a test,
    the rows that miss some column but none of the test's columns are added
    to those sums. With few incomplete rows this makes each test cheap however
    the missing cells are scattered. Values are shifted by the base means
    before summing so the one-pass covariance formula stays accurate.
    """

    def __init__(self, table: Table, columns: Sequence[str]) -> None:
        self.index = {name: i for i, name in enumerate(columns)}
        data = _np.column_stack([table.numeric(name) for name in columns])
        missing = _np.isnan(data)
        incomplete = missing.any(axis=1)
        base = data[~incomplete] if incomplete.any() else data
        self.shift = base.mean(axis=0) if base.shape[0] else _np.zeros(len(columns))
        base = base - self.shift
        self.n_base = base.shape[0]
        self.sum = base.sum(axis=0)
        self.cross = base.T @ base
        self.low = base.min(axis=0) if self.n_base else _np.full(len(columns), _np.inf)
        self.high = base.max(axis=0) if self.n_base else _np.full(len(columns), -_np.inf)
        self.extra = data[incomplete] - self.shift
        self.extra_missing = missing[incomplete]

    def for_columns(self, names: Sequence[str]) -> tuple[int, np.ndarray, dict[str, bool]]:
        index = [self.index[name] for name in names]
        rows = ~self.extra_missing[:, index].any(axis=1)
        extra = self.extra[rows][:, index]
        n = self.n_base + extra.shape[0]
        total = self.sum[index] + extra.sum(axis=0)
        cross = self.cross[_np.ix_(index, index)] + extra.T @ extra
        cov = (cross - _np.outer(total, total) / max(n, 1)) / max(n - 1, 1)
        low = _np.minimum(self.low[index], extra.min(axis=0) if extra.shape[0] else _np.inf)
        high = _np.maximum(self.high[index], extra.max(axis=0) if extra.shape[0] else -_np.inf)
        constant = {name: bool(n == 0 or low[j] == high[j]) for j, name in enumerate(names)}
        return n, cov, constant


class _Ranker:
    """Average ranks of one column within any subset of its rows in O(n).

    The column is sorted once; for a subset, a cumulative count along the
    sorted order gives each tie group's position, so each test ranks within
    its own complete cases without sorting again.
    """

    def __init__(self, values: np.ndarray) -> None:
        present = _np.flatnonzero(~_np.isnan(values))
        self.order = present[_np.argsort(values[present], kind="stable")]
        ordered = values[self.order]
        new_group = _np.empty(ordered.shape[0], dtype=bool)
        new_group[:1] = True
        new_group[1:] = ordered[1:] != ordered[:-1]
        self.starts = _np.flatnonzero(new_group)
        self.ends = _np.append(self.starts[1:], ordered.shape[0])
        self.group_of_row = _np.full(values.shape[0], -1, dtype=_np.int64)
        self.group_of_row[self.order] = _np.cumsum(new_group) - 1

    def ranks(self, rows: np.ndarray | None) -> np.ndarray:
        """Average ranks (1-based, as scipy.stats.rankdata) of the values in
        ``rows`` (a boolean mask of present values; None = all rows)."""
        if rows is None:
            counts = _np.arange(self.order.shape[0] + 1, dtype=float)
            groups = self.group_of_row
        else:
            counts = _np.zeros(self.order.shape[0] + 1)
            _np.cumsum(rows[self.order], out=counts[1:])
            groups = self.group_of_row[rows]
        before = counts[self.starts]
        tied = counts[self.ends] - before
        return (before + (tied + 1.0) / 2.0)[groups]


def _numeric_test(
    cov: np.ndarray,
    n: int,
    names: Sequence[str],
    constant: Mapping[str, bool],
    method: str,
    k_override: int | None = None,
) -> _Raw:
    """Fisher z test on the partial correlation of names[0], names[1] | rest."""
    a, b = names[0], names[1]
    for name in (a, b):
        if constant[name]:
            return _untested(method, n, f"constant column `{name}`")
    notes = []
    dropped = [z for z in names[2:] if constant[z]]
    if dropped:
        notes.append(
            "constant conditioning column " + ", ".join(f"`{z}`" for z in dropped) + " left out"
        )
    r, k, note = _partial_from_cov(cov)
    if k_override is not None:
        k = k_override
    if note is not None:
        return _untested(method, n, note)
    factor = SPEARMAN_VARIANCE_FACTOR if method == "spearman" else 1.0
    if n - k - 3 < 1:
        return _untested(
            method,
            n,
            f"too few complete cases (n = {n} with {k} conditioning variables; need n > k + 3)",
        )
    z, p = fisher_z_test(r, n, k, variance_factor=factor)
    low, high = _fisher_interval(r, n, k, factor)
    return _Raw(method, z, None, n, p, r, low, high, "; ".join(notes) or None)


def _levels_for_g(table: Table, name: str, rows: np.ndarray) -> np.ndarray:
    """Level codes of a column over ``rows`` for the G-test.

    Categorical columns keep their categories. Numeric columns with at most
    CATEGORICAL_MAX_LEVELS_AS_IS distinct values keep one level per value;
    other numeric columns are cut at their quintiles (ties may merge bins).
    """
    if table.is_categorical(name):
        codes = table.codes(name)[0][rows]
        _, inverse = _np.unique(codes, return_inverse=True)
        return inverse.ravel()
    values = table.numeric(name)[rows]
    distinct, inverse = _np.unique(values, return_inverse=True)
    if distinct.size <= CATEGORICAL_MAX_LEVELS_AS_IS:
        return inverse.ravel()
    edges = _np.unique(_np.quantile(values, [0.2, 0.4, 0.6, 0.8]))
    return _np.searchsorted(edges, values, side="left").astype(_np.int64)


def _g_test(table: Table, ind: Independence, rows: np.ndarray) -> _Raw:
    n = int(rows.sum())
    if n < 2:
        return _untested("g-test", n, f"too few complete cases (n = {n})")
    xc = _levels_for_g(table, ind.a, rows)
    yc = _levels_for_g(table, ind.b, rows)
    for name, codes in ((ind.a, xc), (ind.b, yc)):
        if codes.max() == 0:
            return _untested("g-test", n, f"constant column `{name}`")
    if ind.given:
        parts = _np.column_stack([_levels_for_g(table, z, rows) for z in ind.given])
        _, sc = _np.unique(parts, axis=0, return_inverse=True)
        sc = sc.ravel().astype(_np.int64)
    else:
        sc = _np.zeros(n, dtype=_np.int64)
    cells = int(xc.max() + 1) * int(yc.max() + 1) * int(sc.max() + 1)
    if n < G_TEST_MIN_PER_CELL * cells:
        # Too many cells for the rows: the chi-squared approximation of G fails
        # and sparse tables call real dependence "consistent" (rule of thumb:
        # at least 5 expected rows per cell, Cochran 1954, from memory).
        strata = int(sc.max() + 1)
        return _untested(
            "g-test",
            n,
            f"too few rows for the G-test: {n} rows for {cells:,} "
            f"cells ({int(xc.max() + 1)} x {int(yc.max() + 1)} levels in "
            f"{strata:,} strata), fewer than {G_TEST_MIN_PER_CELL} a cell",
        )
    g, df, p = _g_from_codes(xc, yc, sc)
    if df == 0:
        return _untested(
            "g-test", n, "no stratum of the conditioning set shows two levels of both variables"
        )
    m = min(int(xc.max()), int(yc.max()))  # min(R, C) - 1 over the whole table
    effect = math.sqrt(max(g - df, 0.0) / (n * m))
    return _Raw("g-test", g, df, n, p, effect, None, None, None)


def _design_test(table: Table, ind: Independence, rows: np.ndarray, method: str) -> _Raw:
    """Numeric pair with some categorical conditioning columns: the categories
    enter as indicator columns (one per observed level but the first)."""
    n = int(rows.sum())
    spearman = method == "spearman"
    columns: list[np.ndarray] = []
    names: list[str] = []
    constant: dict[str, bool] = {}
    for name in ind.columns():
        if table.is_categorical(name):
            codes = table.codes(name)[0][rows]
            levels = _np.unique(codes)
            constant[name] = levels.size < 2
            for level in levels[1:]:
                columns.append((codes == level).astype(float))
                names.append(name)
        else:
            values = table.numeric(name)[rows]
            constant[name] = bool(n == 0 or _np.ptp(values) == 0)
            columns.append(_sps.rankdata(values) if spearman else values)
            names.append(name)
    if n < 2:
        return _untested(method, n, f"too few complete cases (n = {n})")
    data = _np.column_stack(columns)
    return _numeric_test(_covariance(data), n, names, constant, method)


def test_independencies(
    table: Table,
    independencies: Sequence[Independence],
    *,
    method: str = "pearson",
    alpha: float = 0.05,
    min_effect: float = 0.1,
    progress: Callable[[int, int], None] | None = None,
) -> list[TestResult]:
    """Test each implied independence against ``table``; results in input order.

    Each test uses its complete cases (rows where ``a``, ``b`` and every
    conditioning column are present). Numeric pairs use the partial
    correlation and Fisher's z (``method`` "pearson") or the same on ranks
    ("spearman"); a pair with a categorical member uses the stratified G-test
    (see :func:`g_test_conditional`; numeric columns there follow
    :func:`_levels_for_g`). Holm's adjustment runs over all tests that could be
    computed. ``progress(done, total)`` is called after each test.
    """
    _require()
    if method not in METHODS:
        raise ValueError(f"unknown method {method!r}; choose one of {', '.join(METHODS)}")
    if not 0.0 < alpha < 1.0:
        raise ValueError(f"alpha must lie strictly between 0 and 1, not {alpha}")
    if min_effect < 0.0:
        raise ValueError(f"min_effect must not be negative, not {min_effect}")
    items = list(independencies)
    total = len(items)
    raws: list[_Raw | None] = [None] * total
    done = 0

    def report() -> None:
        nonlocal done
        done += 1
        if progress is not None:
            progress(done, total)

    has_missing: dict[str, bool] = {}
    all_missing: dict[str, bool] = {}
    for ind in items:
        for name in ind.columns():
            if table.has_column(name) and name not in has_missing:
                mask = table.missing(name)
                has_missing[name] = bool(mask.any())
                all_missing[name] = bool(mask.all())

    # Sort the tests: untestable ones, the fast numeric path grouped by the
    # missing-value pattern, and the rest (G-test, categorical conditioning).
    groups: dict[frozenset[str], list[int]] = {}
    for i, ind in enumerate(items):
        absent = [name for name in dict.fromkeys(ind.columns()) if not table.has_column(name)]
        if absent:
            raws[i] = _untested(
                method, 0, "not in the data: " + ", ".join(f"`{name}`" for name in absent)
            )
            report()
            continue
        if len(set(ind.columns())) != len(ind.columns()):
            raws[i] = _untested(method, 0, "a variable appears twice in the statement")
            report()
            continue
        empty = [name for name in dict.fromkeys(ind.columns()) if all_missing[name]]
        if empty:
            raws[i] = _untested(
                method, 0, "no values in column " + ", ".join(f"`{name}`" for name in empty)
            )
            report()
            continue
        if any(table.is_categorical(name) for name in ind.columns()):
            rows = _np.ones(table.n_rows, dtype=bool)
            for name in ind.columns():
                if has_missing[name]:
                    rows &= ~table.missing(name)
            if table.is_categorical(ind.a) or table.is_categorical(ind.b):
                raws[i] = _g_test(table, ind, rows)
            else:
                raws[i] = _design_test(table, ind, rows, method)
            report()
            continue
        key = frozenset(name for name in ind.columns() if has_missing[name])
        groups.setdefault(key, []).append(i)

    if method == "pearson" and groups:
        members = sorted(i for group in groups.values() for i in group)
        names = list(dict.fromkeys(name for i in members for name in items[i].columns()))
        moments = _PartialRowMoments(table, names)
        for i in members:
            n, cov, constant = moments.for_columns(items[i].columns())
            if n < 2:
                raws[i] = _untested(method, n, f"too few complete cases (n = {n})")
            else:
                raws[i] = _numeric_test(cov, n, items[i].columns(), constant, method)
            report()
    else:
        for key, members in groups.items():
            names = list(dict.fromkeys(name for i in members for name in items[i].columns()))
            rows = None
            if key:
                rows = _np.ones(table.n_rows, dtype=bool)
                for name in key:
                    rows &= ~table.missing(name)
            block = _MomentBlock(table, names, rows, method == "spearman")
            for i in members:
                ind = items[i]
                if block.n < 2:
                    raws[i] = _untested(method, block.n, f"too few complete cases (n = {block.n})")
                else:
                    index = [block.index[name] for name in ind.columns()]
                    sub = block.cov[_np.ix_(index, index)]
                    raws[i] = _numeric_test(sub, block.n, ind.columns(), block.constant, method)
                report()

    final = [raw for raw in raws if raw is not None]
    assert len(final) == total
    adjusted = holm([raw.p for raw in final])
    results = []
    for ind, raw, p_adj in zip(items, final, adjusted, strict=True):
        rejected = (
            not math.isnan(p_adj)
            and p_adj < alpha
            and raw.effect is not None
            and abs(raw.effect) >= min_effect
        )
        results.append(
            TestResult(
                independence=ind,
                method=raw.method,
                statistic=raw.statistic,
                df=raw.df,
                n=raw.n,
                p=raw.p,
                p_adjusted=p_adj,
                effect=raw.effect,
                ci_low=raw.ci_low,
                ci_high=raw.ci_high,
                rejected=rejected,
                note=raw.note,
            )
        )
    return results


# --------------------------------------------------------------------------
# simulation (demo data, tests and the benchmark)


def simulate_linear_gaussian(
    G: nx.DiGraph,
    n: int,
    seed: int,
    *,
    coefficients: Mapping[tuple[str, str], float] | None = None,
    coef_range: tuple[float, float] = (0.3, 0.8),
    noise_sd: float = 1.0,
    standardize: bool = True,
) -> dict[str, np.ndarray]:
    """Draw n rows from a linear-Gaussian structural equation model on DAG G.

    Each variable is the weighted sum of its parents plus independent normal
    noise; such data are Markov to G (common practice; Spirtes, Glymour &
    Scheines 2000, *Causation, Prediction, and Search*, ch. 3). Arrow weights
    come from ``coefficients`` where given, otherwise uniform on ``coef_range``
    in absolute value with a random sign. With ``standardize`` every variable
    is scaled to unit variance before its children use it, which keeps
    correlations moderate in deep diagrams (scaling leaves the independencies
    unchanged). Variables are visited in topological order (iterative).
    """
    _require()
    import networkx as nx_

    rng = _np.random.default_rng(seed)
    coefficients = dict(coefficients or {})
    low, high = coef_range
    values: dict[str, np.ndarray] = {}
    for node in nx_.topological_sort(G):
        column = rng.normal(0.0, noise_sd, size=n)
        for parent in sorted(G.predecessors(node), key=str):
            weight = coefficients.get((parent, node))
            if weight is None:
                weight = float(rng.uniform(low, high) * rng.choice([-1.0, 1.0]))
            column += weight * values[parent]
        if standardize:
            column = (column - column.mean()) / column.std()
        values[node] = column
    return values
