"""Tests of dagward.stats against independent computations.

Every statistic is checked against a computation that does not go through the
code under test: numpy least squares, scipy.stats (norm, pearsonr, spearmanr,
chi2_contingency) and the definition of Holm's procedure.
"""

from __future__ import annotations

import itertools
import math
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import networkx as nx
import numpy as np
import pytest
from dagward import stats as S
from dagward.forest import forest_plot_svg
from dagward.stats import (
    DataError,
    Independence,
    StatsUnavailable,
    Table,
    TestResult,
    fisher_z_test,
    g_test_conditional,
    holm,
    load_table,
    partial_correlation,
    simulate_linear_gaussian,
)
from dagward.stats import (
    test_independencies as run_tests,  # the library's name starts with test_
)
from dagward.wording import claim_text
from scipy import stats as sps

ROOT = Path(__file__).resolve().parent.parent
SVG = "{http://www.w3.org/2000/svg}"


def correlated(n: int, p: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    mix = rng.normal(size=(p, p))
    return rng.normal(size=(n, p)) @ mix + rng.normal(size=p) * 5


# --------------------------------------------------------------------------
# partial correlation and Fisher's z


@pytest.mark.parametrize("k", [0, 1, 3, 6])
def test_partial_correlation_equals_residual_correlation(k: int) -> None:
    # Common practice: the partial correlation is the correlation of the
    # least-squares residuals of x and y on Z (with an intercept).
    data = correlated(500, 2 + k, seed=k)
    x, y, Z = data[:, 0], data[:, 1], data[:, 2:]
    design = np.column_stack([np.ones(len(x)), Z])
    rx = x - design @ np.linalg.lstsq(design, x, rcond=None)[0]
    ry = y - design @ np.linalg.lstsq(design, y, rcond=None)[0]
    expected = np.corrcoef(rx, ry)[0, 1]
    assert partial_correlation(x, y, Z) == pytest.approx(expected, abs=1e-10)
    if k == 0:
        assert partial_correlation(x, y, None) == pytest.approx(np.corrcoef(x, y)[0, 1], abs=1e-12)


def test_partial_correlation_ignores_collinear_conditioning_columns() -> None:
    data = correlated(400, 3, seed=9)
    x, y, z = data.T
    once = partial_correlation(x, y, z.reshape(-1, 1))
    twice = partial_correlation(x, y, np.column_stack([z, 2 * z + 1]))
    assert twice == pytest.approx(once, abs=1e-9)


def test_partial_correlation_is_nan_when_x_is_determined_by_z() -> None:
    data = correlated(100, 2, seed=3)
    x, z = data.T
    assert math.isnan(partial_correlation(3 * z - 1, x, z.reshape(-1, 1)))
    assert math.isnan(partial_correlation(np.ones(100), x))


@pytest.mark.parametrize(
    ("r", "n", "k"), [(0.1, 403, 0), (-0.25, 60, 2), (0.0, 10, 0), (0.6, 1000, 5)]
)
def test_fisher_z_against_scipy_norm(r: float, n: int, k: int) -> None:
    z, p = fisher_z_test(r, n, k)
    expected_z = 0.5 * math.log((1 + r) / (1 - r)) * math.sqrt(n - k - 3)
    assert z == pytest.approx(expected_z, rel=1e-12, abs=1e-15)
    assert p == pytest.approx(2 * sps.norm.cdf(-abs(expected_z)), rel=1e-10)


def test_fisher_z_worked_value() -> None:
    # Hand-worked: atanh(0.1) = 0.100335, times sqrt(400) = 2.00671; two-sided
    # normal p = 0.04478 (standard normal table).
    z, p = fisher_z_test(0.1, 403, 0)
    assert z == pytest.approx(2.00671, abs=1e-5)
    assert p == pytest.approx(0.04478, abs=1e-5)


def test_fisher_z_refuses_too_few_cases() -> None:
    with pytest.raises(ValueError, match="too few"):
        fisher_z_test(0.3, 5, 2)


def test_unconditional_pearson_matches_pearsonr_for_large_n() -> None:
    # pearsonr uses the exact t distribution with n - 2 degrees; Fisher's z is
    # its large-sample approximation (var atanh r ~ 1/(n-3)), so the p-values
    # agree to a few percent at n = 20,000 and the coefficients exactly.
    rng = np.random.default_rng(5)
    n = 20_000
    x = rng.normal(size=n)
    y = 0.02 * x + rng.normal(size=n)
    table = Table.from_columns({"x": x, "y": y})
    (result,) = run_tests(table, [Independence("x", "y")])
    reference = sps.pearsonr(x, y)
    assert result.effect == pytest.approx(reference.statistic, abs=1e-12)
    assert result.p == pytest.approx(reference.pvalue, rel=0.03)
    assert result.n == n and result.method == "pearson"
    # The 95% interval is Fisher's back-transformed one (Fisher 1921).
    half = 1.959964 / math.sqrt(n - 3)
    assert result.ci_low == pytest.approx(math.tanh(math.atanh(result.effect) - half), abs=1e-6)
    assert result.ci_high == pytest.approx(math.tanh(math.atanh(result.effect) + half), abs=1e-6)


def test_spearman_without_conditioning_matches_spearmanr() -> None:
    rng = np.random.default_rng(8)
    x = np.round(rng.normal(size=700), 1)  # rounding makes ties
    y = np.round(np.exp(x) + rng.normal(size=700), 0)
    table = Table.from_columns({"x": x, "y": y})
    (result,) = run_tests(table, [Independence("x", "y")], method="spearman")
    reference = sps.spearmanr(x, y)
    assert result.method == "spearman"
    assert result.effect == pytest.approx(reference.statistic, abs=1e-12)
    # Fieller, Hartley & Pearson (1957): var(atanh r_s) ~ 1.06 / (n - 3).
    expected_z = math.atanh(reference.statistic) * math.sqrt((700 - 3) / 1.06)
    assert result.statistic == pytest.approx(expected_z, rel=1e-9)


def test_spearman_partial_is_partial_correlation_of_ranks() -> None:
    data = correlated(300, 4, seed=12)
    data[:, 1] = np.exp(data[:, 1] / 5)
    names = ["a", "b", "c", "d"]
    table = Table.from_columns(dict(zip(names, data.T, strict=True)))
    (result,) = run_tests(table, [Independence("a", "b", ("c", "d"))], method="spearman")
    ranks = np.column_stack([sps.rankdata(col) for col in data.T])
    assert result.effect == pytest.approx(
        partial_correlation(ranks[:, 0], ranks[:, 1], ranks[:, 2:]), abs=1e-10
    )


# --------------------------------------------------------------------------
# G-test


def contingency(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    xs, ys = np.unique(x), np.unique(y)
    return np.array([[np.sum((x == a) & (y == b)) for b in ys] for a in xs])


def test_g_test_matches_chi2_contingency_per_stratum() -> None:
    rng = np.random.default_rng(21)
    n = 900
    strata = rng.integers(0, 4, size=n)
    x = np.array(["red", "green", "blue"])[rng.integers(0, 3, size=n)]
    # y depends on the stratum and (weakly) on x
    y = (rng.random(n) < 0.3 + 0.1 * strata / 3 + 0.05 * (x == "red")).astype(int)
    y[strata == 3] = rng.integers(0, 4, size=int(np.sum(strata == 3)))
    g, df, p = g_test_conditional(x, y, strata)
    total_g, total_df = 0.0, 0
    for s in range(4):
        sel = strata == s
        result = sps.chi2_contingency(
            contingency(x[sel], y[sel]), lambda_="log-likelihood", correction=False
        )
        total_g += result.statistic
        total_df += result.dof
    assert g == pytest.approx(total_g, rel=1e-10)
    assert df == total_df == 3 * (2 * 1) + 1 * (2 * 3)
    assert p == pytest.approx(sps.chi2.sf(total_g, total_df), rel=1e-10)


def test_g_test_uses_observed_levels_and_skips_tiny_strata() -> None:
    # Stratum "b" shows only two levels of x; stratum "c" has one row.
    x = np.array([0, 1, 2, 0, 1, 2, 0, 1, 0, 1, 0, 1, 2])
    y = np.array([0, 1, 1, 1, 0, 0, 0, 1, 1, 0, 0, 1, 1])
    strata = np.array(["a"] * 6 + ["b"] * 6 + ["c"])
    g, df, _ = g_test_conditional(x, y, strata)
    expected = 0.0
    for rows in (slice(0, 6), slice(6, 12)):  # strata "a" and "b"
        table = contingency(x[rows], y[rows])
        expected += sps.chi2_contingency(
            table, lambda_="log-likelihood", correction=False
        ).statistic
    assert df == (3 - 1) * (2 - 1) + (2 - 1) * (2 - 1)
    assert g == pytest.approx(expected, rel=1e-10)


def test_g_test_null_rate_is_nominal() -> None:
    # Under conditional independence the stratified G is asymptotically
    # chi-squared (Wilks 1938). 400 seeded data sets; count p < 0.05 and
    # compare with a 99.9% binomial interval.
    rng = np.random.default_rng(77)
    hits = 0
    trials = 400
    for _ in range(trials):
        n = 600
        strata = rng.integers(0, 3, size=n)
        x = (rng.random(n) < 0.2 + 0.2 * strata).astype(int)
        y = rng.integers(0, 3, size=n) + (strata == 2)
        hits += g_test_conditional(x, y, strata)[2] < 0.05
    low, high = sps.binom.interval(0.999, trials, 0.05)
    assert low <= hits <= high


def test_categorical_pair_runs_g_test_with_binned_numeric_conditioning() -> None:
    rng = np.random.default_rng(4)
    n = 1000
    z = rng.normal(size=n)
    group = np.where(rng.random(n) < 0.5, "day", "night")
    y = rng.normal(size=n) + 0.5 * (group == "night")
    table = Table.from_columns({"group": group, "y": y, "z": z, "site": rng.integers(0, 3, n)})
    dep, strat = run_tests(
        table, [Independence("group", "y"), Independence("group", "y", ("site", "z"))]
    )
    assert dep.method == "g-test" and dep.df == 4  # y cut at quintiles: 5 x 2 levels
    assert dep.rejected and dep.ci_low is None
    # independent construction: y quintiles, strata = site (3 values) x z quintiles
    y_bins = np.searchsorted(np.quantile(y, [0.2, 0.4, 0.6, 0.8]), y, side="left")
    z_bins = np.searchsorted(np.quantile(z, [0.2, 0.4, 0.6, 0.8]), z, side="left")
    strata = table.numeric("site") * 10 + z_bins
    g, df, _ = g_test_conditional(group, y_bins, strata)
    assert strat.statistic == pytest.approx(g, rel=1e-10) and strat.df == df == 15 * 4
    assert strat.effect == pytest.approx(math.sqrt(max(g - df, 0) / n), rel=1e-10)


def test_categorical_conditioning_of_numeric_pair_uses_indicators() -> None:
    rng = np.random.default_rng(6)
    n = 800
    site = rng.choice(["north", "south", "east"], size=n)
    shift = (site == "north") * 1.0 - (site == "east") * 0.5
    x = shift + rng.normal(size=n)
    y = -shift + rng.normal(size=n)
    table = Table.from_columns({"x": x, "y": y, "site": site})
    (result,) = run_tests(table, [Independence("x", "y", ("site",))])
    dummies = np.column_stack([site == "north", site == "south"]).astype(float)
    assert result.method == "pearson"
    assert result.effect == pytest.approx(partial_correlation(x, y, dummies), abs=1e-10)
    expected_z = math.atanh(result.effect) * math.sqrt(n - 2 - 3)  # two indicators
    assert result.statistic == pytest.approx(expected_z, rel=1e-9)


# --------------------------------------------------------------------------
# Holm


def test_holm_hand_worked_example() -> None:
    # Worked by hand from the definition in Holm (1979), m = 4: sorted
    # 0.005, 0.01, 0.03, 0.04 get 4*0.005 = 0.02, 3*0.01 = 0.03,
    # 2*0.03 = 0.06 and max(0.06, 1*0.04) = 0.06 (monotone step-down).
    assert holm([0.01, 0.04, 0.03, 0.005]) == pytest.approx([0.03, 0.06, 0.06, 0.02])
    # capped at 1, and monotone after the cap
    assert holm([0.5, 0.6]) == [1.0, 1.0]
    assert holm([]) == []
    adjusted = holm([0.02, math.nan, 0.01])
    assert math.isnan(adjusted[1]) and adjusted[0] == pytest.approx(0.02)
    assert adjusted[2] == pytest.approx(0.02)
    with pytest.raises(ValueError):
        holm([1.5])


def holm_rejects(pvalues: list[float], alpha: float) -> set[int]:
    """Holm's procedure as defined (Holm 1979): step through the sorted
    p-values, reject H(i) while p(i) <= alpha / (m - i + 1), stop at the first
    failure."""
    order = sorted(range(len(pvalues)), key=lambda i: pvalues[i])
    m = len(pvalues)
    rejected = set()
    for step, index in enumerate(order, start=1):
        if pvalues[index] <= alpha / (m - step + 1):
            rejected.add(index)
        else:
            break
    return rejected


def test_holm_matches_the_step_down_definition_on_random_vectors() -> None:
    rng = np.random.default_rng(2024)
    for _ in range(300):
        m = int(rng.integers(1, 25))
        pvalues = list(rng.beta(0.3, 1.0, size=m))  # many small p-values
        adjusted = holm(pvalues)
        for alpha in rng.uniform(0.001, 0.2, size=5):
            assert {i for i, a in enumerate(adjusted) if a <= alpha} == holm_rejects(
                pvalues, float(alpha)
            )
        assert all(a >= p for a, p in zip(adjusted, pvalues, strict=True))
        assert max(adjusted) <= 1.0


def test_holm_runs_across_all_tests_of_a_run() -> None:
    data = correlated(300, 4, seed=30)
    table = Table.from_columns(dict(zip("abcd", data.T, strict=True)))
    tests = [
        Independence("a", "b"),
        Independence("a", "c", ("d",)),
        Independence("b", "d"),
        Independence("a", "zzz"),
    ]
    results = run_tests(table, tests)
    expected = holm([r.p for r in results])
    assert [r.p_adjusted for r in results[:3]] == pytest.approx(expected[:3])
    assert math.isnan(results[3].p_adjusted)


# --------------------------------------------------------------------------
# run-level behaviour


@pytest.mark.parametrize("method", ["pearson", "spearman"])
def test_complete_cases_per_test_and_order_kept(method: str) -> None:
    # Missing cells scattered over several columns: every test must use
    # exactly its own complete cases (and, for spearman, rank within them).
    data = np.round(correlated(500, 4, seed=1), 0)  # rounding makes ties
    rng = np.random.default_rng(1)
    data[rng.choice(500, 40, replace=False), 2] = np.nan
    data[rng.choice(500, 25, replace=False), 3] = np.nan
    data[rng.choice(500, 10, replace=False), 0] = np.nan
    table = Table.from_columns(dict(zip("abcd", data.T, strict=True)))
    tests = [
        Independence("a", "b", ("c",)),
        Independence("b", "c"),
        Independence("b", "c", ("d",)),
        Independence("a", "b", ("c", "d")),
        Independence("d", "b"),
    ]
    seen = []
    results = run_tests(
        table, tests, method=method, progress=lambda done, total: seen.append((done, total))
    )
    assert seen == [(1, 5), (2, 5), (3, 5), (4, 5), (5, 5)]
    for test, result in zip(tests, results, strict=True):
        assert result.independence == test
        cols = [ord(c) - ord("a") for c in test.columns()]
        keep = ~np.isnan(data[:, cols]).any(axis=1)
        sub = data[keep][:, cols]
        if method == "spearman":
            sub = np.column_stack([sps.rankdata(col) for col in sub.T])
        assert result.n == int(keep.sum())
        assert result.effect == pytest.approx(
            partial_correlation(sub[:, 0], sub[:, 1], sub[:, 2:]), abs=1e-10
        )
    assert results[1].n == 460 and results[4].n == 475


def test_ranks_within_subsets_match_rankdata() -> None:
    rng = np.random.default_rng(44)
    values = rng.integers(0, 30, size=2000).astype(float)
    values[rng.choice(2000, 100, replace=False)] = np.nan
    ranker = S._Ranker(values)
    present = ~np.isnan(values)
    np.testing.assert_allclose(ranker.ranks(present), sps.rankdata(values[present]))
    for _ in range(5):
        rows = present & (rng.random(2000) < 0.7)
        np.testing.assert_allclose(ranker.ranks(rows), sps.rankdata(values[rows]))
    full = rng.normal(size=300)
    np.testing.assert_allclose(S._Ranker(full).ranks(None), sps.rankdata(full))


def test_rejected_needs_both_significance_and_effect() -> None:
    rng = np.random.default_rng(10)
    n = 200_000
    x = rng.normal(size=n)
    y = 0.03 * x + rng.normal(size=n)  # tiny but highly significant
    z = 0.6 * x + rng.normal(size=n)
    table = Table.from_columns({"x": x, "y": y, "z": z})
    small, large = run_tests(table, [Independence("x", "y"), Independence("x", "z")])
    assert small.p_adjusted < 1e-10 and abs(small.effect) < 0.1 and not small.rejected
    assert large.rejected
    (lenient,) = run_tests(table, [Independence("x", "y")], min_effect=0.0)
    assert lenient.rejected


def test_bad_arguments_are_value_errors() -> None:
    table = Table.from_columns({"x": [1.0, 2.0, 3.0], "y": [1.0, 0.0, 2.0]})
    for kwargs in ({"method": "kendall"}, {"alpha": 0.0}, {"alpha": 1.5}, {"min_effect": -1}):
        with pytest.raises(ValueError):
            run_tests(table, [Independence("x", "y")], **kwargs)


def test_to_dict_turns_nan_into_none() -> None:
    table = Table.from_columns({"x": [1.0, 2.0, 3.0], "y": [1.0, 0.0, 2.0]})
    (result,) = run_tests(table, [Independence("x", "y", ("w",))])
    record = result.to_dict()
    assert record["p"] is None and record["statistic"] is None
    assert record["given"] == ["w"] and record["note"] == "not in the data: `w`"


# --------------------------------------------------------------------------
# bad input


def write(tmp_path: Path, name: str, content: str | bytes) -> Path:
    path = tmp_path / name
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content, encoding="utf-8")
    return path


def test_missing_file(tmp_path: Path) -> None:
    with pytest.raises(DataError, match=r"nothere\.csv: no such file"):
        load_table(tmp_path / "nothere.csv")


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("", "empty file"),
        ("\n\n", "empty file"),
        ("age,sick_days\n", "no data rows"),
        ("age,age\n1,2\n", "`age` appears twice"),
        ("age,,x\n1,2,3\n", "empty column name"),
        (b"age,city\n1,M\xfcnchen\n", "not UTF-8"),
        ('age,note\n1,"unterminated\n', "malformed CSV"),
    ],
)
def test_unusable_files_raise_data_error_naming_the_file(
    tmp_path: Path, content: str | bytes, message: str
) -> None:
    path = write(tmp_path, "bad.csv", content)
    with pytest.raises(DataError, match=message) as info:
        load_table(path)
    assert str(path) in str(info.value)


def test_directory_is_refused(tmp_path: Path) -> None:
    with pytest.raises(DataError, match="directory"):
        load_table(tmp_path)


def test_reading_types_missing_values_and_header(tmp_path: Path) -> None:
    path = write(
        tmp_path,
        "t.csv",
        "\ufeff age , shift,site,flag,score,empty\n"
        "30,1,north,True,1.5,\n"
        "NA,0,south,False,,\n"
        "41,1,,True,2.5,\n"
        '52,0,"east, annex",False,inf,\n',
    )
    table = load_table(path)
    assert table.columns() == ("age", "shift", "site", "flag", "score", "empty")
    assert [table.is_categorical(c) for c in table.columns()] == [
        False,
        False,
        True,
        True,
        False,
        False,
    ]
    np.testing.assert_array_equal(np.isnan(table.numeric("age")), [False, True, False, False])
    np.testing.assert_array_equal(np.isnan(table.numeric("score")), [False, True, False, True])
    codes, levels = table.codes("site")
    assert levels == ["east, annex", "north", "south"] and list(codes) == [1, 2, -1, 0]
    forced = load_table(path, categorical=["shift"])
    assert forced.is_categorical("shift")
    with pytest.raises(DataError, match="no column named nope"):
        load_table(path, categorical=["nope"])


def test_all_missing_constant_and_too_few_give_notes_not_tracebacks() -> None:
    table = Table.from_columns(
        {
            "x": [1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
            "y": [2.0, 1.0, 4.0, 3.0, 6.0, 5.0],
            "z": [1.0, 0.0, 1.0, 1.0, 0.0, 0.0],
            "w": [7.0, 7.0, 7.0, 7.0, 7.0, 7.0],
            "nothing": [np.nan] * 6,
            "cat": ["a", "a", "a", "a", "a", "a"],
            "cat2": ["u", "v", "u", "v", "u", None],
        }
    )
    tests = [
        Independence("x", "nothing"),
        Independence("x", "w"),
        Independence("x", "y", ("z", "w")),
        Independence("x", "y", ("z",)),
        Independence("cat", "x"),
        Independence("x", "y", ("z", "cat2", "w")),
        Independence("x", "x"),
        Independence("cat2", "x", ("y",)),
    ]
    results = run_tests(table, tests)
    notes = [r.note for r in results]
    assert notes[0] == "no values in column `nothing`"
    assert notes[1] == "constant column `w`"
    assert notes[2] == "constant conditioning column `w` left out"
    assert results[2].tested and results[2].effect == pytest.approx(results[3].effect)
    assert results[3].note is None and results[3].tested
    assert notes[4] == "constant column `cat`" and results[4].method == "g-test"
    assert "too few complete cases" in notes[5] and results[5].n == 5
    assert notes[6] == "a variable appears twice in the statement"
    assert results[7].method == "g-test" and results[7].n == 5
    for result in results:
        if not result.tested:
            assert math.isnan(result.p) and not result.rejected and math.isnan(result.p_adjusted)


def test_missing_pandas_gives_stats_unavailable(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(S, "_np", None)
    monkeypatch.setitem(sys.modules, "pandas", None)  # makes `import pandas` fail
    with pytest.raises(StatsUnavailable, match=r'pip install "dagward\[data\]"'):
        load_table(ROOT / "samples" / "data" / "wellness_consistent.csv")


def test_importing_the_module_loads_no_numeric_library() -> None:
    import subprocess

    code = (
        "import sys, dagward.stats, dagward.forest; "
        "print(sorted(m for m in ('numpy', 'pandas', 'scipy') if m in sys.modules))"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True
    )
    assert out.stdout.strip() == "[]"


# --------------------------------------------------------------------------
# forest plot and atomic writes


def test_forest_plot_is_xml_with_one_labelled_row_per_test() -> None:
    data = correlated(400, 4, seed=2)
    table = Table.from_columns(
        {**dict(zip("abcd", data.T, strict=True)), "g": np.where(data[:, 0] > 0, "yes", "no")}
    )
    tests = [
        Independence("a", "b", ("c",)),
        Independence("a", "d"),
        Independence("g", "c", ("d",)),
        Independence("a", "missing & <odd>"),
    ]
    results = run_tests(table, tests)
    svg = forest_plot_svg(results, title="Wellness & sick days", min_effect=0.1)
    root = ET.fromstring(svg)
    assert root.tag == f"{SVG}svg"
    rows = [g for g in root.iter(f"{SVG}g") if g.get("class") == "test-row"]
    words = [claim_text(t.a, t.b, t.given) for t in tests]
    assert words[0] == "a and b, holding fixed c" and words[1] == "a and d"
    assert [t.label() for t in tests] == words  # no symbol anywhere a claim is named
    assert [g.get("data-label") for g in rows] == words
    for g, test, result in zip(rows, tests, results, strict=True):
        texts = ["".join(t.itertext()) for t in g.iter(f"{SVG}text")]
        assert texts[0] == claim_text(test.a, test.b, test.given)
        markers = [el.tag for el in g if el.tag in (f"{SVG}rect", f"{SVG}circle", f"{SVG}path")]
        if not result.tested:
            assert markers == [] and texts[1].startswith("not tested")
        elif result.rejected:
            assert markers == [f"{SVG}rect"]
        elif result.ci_low is None:
            assert markers == [f"{SVG}path"]  # G-test: diamond, no interval
        else:
            assert markers == [f"{SVG}circle"]
    assert root.find(f"{SVG}title").text == "Wellness & sick days"
    assert any(r.rejected for r in results)  # a, b | c are correlated by construction


def _forest_of_the_demo() -> str:
    data = correlated(400, 4, seed=2)
    table = Table.from_columns(
        {**dict(zip("abcd", data.T, strict=True)), "g": np.where(data[:, 0] > 0, "yes", "no")}
    )
    tests = [
        Independence("a", "b", ("c",)),
        Independence("a", "d"),
        Independence("g", "c", ("d",)),
        Independence("b", "d", ("a", "c")),
        Independence("a", "missing"),
    ]
    return forest_plot_svg(run_tests(table, tests), title="Forest", min_effect=0.1)


def test_forest_plot_figures_stand_in_columns() -> None:
    """Each right-hand figure is its own text element, anchored at its column's x."""
    root = ET.fromstring(_forest_of_the_demo())
    rows = [g for g in root.iter(f"{SVG}g") if g.get("class") == "test-row"]
    tested = [[(t.get("x"), t.get("text-anchor")) for t in g.iter(f"{SVG}text")
               if t.get("class") == "figure"] for g in rows]  # fmt: skip
    assert [len(cells) for cells in tested] == [5, 5, 5, 5, 0]  # the last one is not tested
    assert tested[0] == tested[1] == tested[2] == tested[3]  # the same x, the same anchor
    assert [anchor for _, anchor in tested[0]] == ["end"] * 4 + ["start"]  # numbers align right
    xs = [float(x) for x, _ in tested[0]]
    assert xs == sorted(xs)


def test_forest_plot_text_is_covered_by_its_fonts() -> None:
    """No sign that common fonts lack (a conditional-independence sign showed as an
    empty box with DejaVu Sans): every character is Latin-1, and every font of the
    stack that is installed here has a glyph for each (read with fontTools)."""
    from dagward.forest import FONT_STACK

    svg = _forest_of_the_demo()
    root = ET.fromstring(svg)
    assert root.get("font-family") == FONT_STACK
    used = {ch for t in root.iter(f"{SVG}text") for ch in "".join(t.itertext())}
    assert "\u2aeb" not in svg and all(ord(ch) < 256 for ch in used), sorted(used)
    fonttools = pytest.importorskip("fontTools.ttLib")
    import shutil

    if shutil.which("fc-match") is None:
        pytest.skip("fontconfig's fc-match is needed to find the font files")
    checked = 0
    for family in [f.strip() for f in FONT_STACK.split(",")][:-1]:  # not the generic name
        found = subprocess.run(["fc-match", "-f", "%{family}\n%{file}", family],
                               capture_output=True, text=True).stdout.splitlines()  # fmt: skip
        if len(found) < 2 or family.casefold() not in found[0].casefold():
            continue  # not installed: fontconfig substituted another family
        cmap = fonttools.TTFont(found[1], fontNumber=0).getBestCmap()
        assert {ch for ch in used if ord(ch) not in cmap} == set(), family
        checked += 1
    if checked == 0:
        pytest.skip("none of the stack's fonts is installed here")


def test_forest_plot_with_no_results_is_valid_svg() -> None:
    root = ET.fromstring(forest_plot_svg([]))
    assert root.tag == f"{SVG}svg"


# --------------------------------------------------------------------------
# demo data


def wellness_independencies(graph: nx.DiGraph, measured: list[str]) -> list[Independence]:
    found = []
    for a, b in itertools.combinations(measured, 2):
        if graph.has_edge(a, b) or graph.has_edge(b, a):
            continue
        sep = nx.find_minimal_d_separator(graph, a, b, restricted=set(measured))
        if sep is not None:
            found.append(Independence(a, b, tuple(sorted(sep))))
    return found


def test_demo_data_behaves_as_documented() -> None:
    sys.path.insert(0, str(ROOT / "samples" / "data"))
    try:
        import make_demo_data as demo
    finally:
        sys.path.pop(0)
    implied = wellness_independencies(demo.diagram(False), demo.COLUMNS)
    assert Independence("shift_work", "enrolled", ("fitness_base",)) in implied
    consistent = load_table(ROOT / "samples/data/wellness_consistent.csv")
    extra = load_table(ROOT / "samples/data/wellness_extra_arrow.csv")
    assert not any(r.rejected for r in run_tests(consistent, implied))
    flagged = [r.independence for r in run_tests(extra, implied) if r.rejected]
    assert flagged == [Independence("shift_work", "enrolled", ("fitness_base",))]
    # The committed file is what the script draws (up to the blanked cells).
    drawn = demo.draw(False, demo.SEED)
    for name in demo.COLUMNS:
        stored = consistent.numeric(name)
        keep = ~np.isnan(stored)
        np.testing.assert_allclose(stored[keep], drawn[name][keep], atol=1e-9)
    assert int(np.isnan(consistent.numeric("fitness_12m")).sum()) == demo.MISSING_CELLS


def test_simulation_follows_the_given_weights() -> None:
    graph = nx.DiGraph([("u", "v"), ("v", "w")])
    values = simulate_linear_gaussian(
        graph, 50_000, 3, coefficients={("u", "v"): 0.6, ("v", "w"): -0.5}, standardize=False
    )
    slope = np.polyfit(values["u"], values["v"], 1)[0]
    assert slope == pytest.approx(0.6, abs=0.02)
    assert np.polyfit(values["v"], values["w"], 1)[0] == pytest.approx(-0.5, abs=0.02)
    again = simulate_linear_gaussian(
        graph, 50_000, 3, coefficients={("u", "v"): 0.6, ("v", "w"): -0.5}, standardize=False
    )
    np.testing.assert_array_equal(values["w"], again["w"])


def test_result_type_is_frozen() -> None:
    table = Table.from_columns({"x": [1.0, 2.0, 3.0, 4.0, 5.0], "y": [2.0, 1.0, 3.0, 5.0, 4.0]})
    (result,) = run_tests(table, [Independence("x", "y")])
    assert isinstance(result, TestResult)
    with pytest.raises(AttributeError):
        result.p = 0.0  # type: ignore[misc]
