"""Ordinary CSV files from real studies read right, or refused with a clear line.

Each case takes the demo data (samples/data/wellness_extra_arrow.csv, invented by
samples/data/make_demo_data.py), writes a variant the way a spreadsheet or a
colleague would (trailing separators, text cells in a numeric column, huge
values, semicolons and tabs with decimal commas) into a temporary directory,
and compares the test verdicts and figures with those of the clean file.
"""

from __future__ import annotations

import csv
import io
import math
import warnings
from pathlib import Path

import pytest
from clirunner import ROOT, dagward, in_process
from dagward.data import DataOptions, implied, load_data, run_tests
from dagward.errors import UsageProblem
from dagward.stats import ReadOptions, detect_format
from dagward.syntax import parse_source

CLEAN = ROOT / "samples" / "data" / "wellness_extra_arrow.csv"
DIAGRAM = ROOT / "samples" / "wellness.dag"
OPTIONS = DataOptions()


def independencies():
    diagram, problem = parse_source(DIAGRAM.read_bytes(), str(DIAGRAM))
    assert problem is None
    return implied(diagram)


def results(path: Path, reading: ReadOptions | None = None, notes: list[str] | None = None):
    sink = notes if notes is not None else []
    table = load_data(str(path), reading, report=sink.append)
    return run_tests(table, independencies(), OPTIONS)


def verdicts(found) -> list[tuple[str, bool, bool]]:
    return [(r.independence.label(), r.tested, r.rejected) for r in found]


def figures(found) -> list[tuple]:
    return [(r.independence.label(), r.method, r.n, round(r.statistic, 9), round(r.p, 12),
             round(r.effect, 12)) for r in found]  # fmt: skip


def rows() -> list[list[str]]:
    with CLEAN.open(newline="") as handle:
        return list(csv.reader(handle))


def write(tmp_path: Path, name: str, lines: list[str]) -> Path:
    path = tmp_path / name
    path.write_text("".join(line + "\n" for line in lines), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def clean():
    found = results(CLEAN)
    # the demo data hold one real violation (see samples/data/README.md)
    assert sum(r.rejected for r in found) == 1
    return found


# --- 1. a separator at the end of every row ---------------------------------------------------


@pytest.mark.parametrize("header_too", [False, True])
def test_a_trailing_comma_on_every_row_changes_nothing(tmp_path, clean, header_too):
    table = rows()
    lines = [",".join(table[0]) + ("," if header_too else "")]
    lines += [",".join(r) + "," for r in table[1:]]
    notes: list[str] = []
    found = results(write(tmp_path, "trailing.csv", lines), notes=notes)
    assert figures(found) == figures(clean)
    assert any("ends with a separator" in n for n in notes)


def test_a_row_of_another_width_is_refused_with_its_line(tmp_path):
    table = rows()
    lines = [",".join(r) for r in table]
    lines[41] += ",7"  # line 42 of the file: one field too many
    with pytest.raises(UsageProblem, match=r"line 42 has 7 fields where 6 .* expected"):
        load_data(str(write(tmp_path, "ragged.csv", lines)))
    lines = [",".join(r) for r in table]
    lines[9] = ",".join(table[9][:-1])  # line 10: one field short
    with pytest.raises(UsageProblem, match=r"line 10 has 5 fields"):
        load_data(str(write(tmp_path, "short.csv", lines)))


def test_a_trailing_comma_on_only_some_rows_is_refused(tmp_path):
    table = rows()
    lines = [",".join(r) + ("," if i in (1, 2) else "") for i, r in enumerate(table)]
    with pytest.raises(UsageProblem, match=r"line 4 has 6 fields where 6 and an empty one"):
        load_data(str(write(tmp_path, "some.csv", lines)))


# --- 2. text cells in a numeric column --------------------------------------------------------

MARKERS = {5: "<1", 17: ".", 300: "n/a "}  # data row index -> cell text


def test_text_cells_in_a_numeric_column_are_missing_values_and_reported(tmp_path, clean):
    table = rows()
    column = table[0].index("fitness_base")
    marked, blanked = [r[:] for r in table], [r[:] for r in table]
    for i, text in MARKERS.items():
        marked[i + 1][column] = text
        blanked[i + 1][column] = ""
    notes: list[str] = []
    found = results(write(tmp_path, "marked.csv", [",".join(r) for r in marked]), notes=notes)
    expected = results(write(tmp_path, "blank.csv", [",".join(r) for r in blanked]))
    # exactly as if those cells were empty, and the same verdicts as the clean file
    assert figures(found) == figures(expected)
    assert verdicts(found) == verdicts(clean)
    assert all(r.method == "pearson" for r in found)  # no pair fell back to a G-test
    (note,) = [n for n in notes if "fitness_base" in n]
    assert "3 rows hold text" in note
    assert "`<1`" in note and "`.`" in note and "`n/a `" in note
    assert "first on line 7" in note and "read as missing" in note


def test_a_mostly_text_column_stays_categorical(tmp_path):
    text = (
        "site,score\n"
        + "".join(f"{['north', 'south', 'east'][i % 3]},{i % 7}\n" for i in range(60))
        + "12,3\n"
    )
    path = tmp_path / "site.csv"
    path.write_text(text)
    notes: list[str] = []
    table = load_data(str(path), report=notes.append)
    assert table.is_categorical("site") and not table.is_categorical("score")
    assert notes == []


def test_forced_categorical_and_numeric(tmp_path):
    path = tmp_path / "codes.csv"
    path.write_text("group,dose\n" + "".join(f"{i % 3},{'x' if i % 2 else i}\n" for i in range(40)))
    table = load_data(str(path), report=lambda line: None)
    assert not table.is_categorical("group") and table.is_categorical("dose")
    forced = load_data(str(path), ReadOptions(categorical=("group",), numeric=("dose",)),
                       report=lambda line: None)  # fmt: skip
    assert forced.is_categorical("group") and not forced.is_categorical("dose")
    assert int(forced.missing("dose").sum()) == 20
    with pytest.raises(UsageProblem, match="no column named nope"):
        load_data(str(path), ReadOptions(numeric=("nope",)))


def test_a_g_test_with_more_cells_than_rows_is_not_tested(tmp_path, clean):
    # Read as categories, `fitness_base` has hundreds of levels: a G-test over
    # them would have thousands of cells for 2,000 rows.
    # (Conditioning on it is a regression on its indicators, which 2,000 rows can fit.)
    found = results(CLEAN, ReadOptions(categorical=("fitness_base",)))
    pair = [r for r in found if "fitness_base" in (r.independence.a, r.independence.b)]
    assert len(pair) == 2
    for r in pair:
        assert r.method == "g-test" and not r.tested and not r.rejected
        assert r.note.startswith("too few rows for the G-test") and "fewer than 5 a cell" in r.note
    others = [r for r in found if r not in pair]
    assert verdicts(others) == [
        v
        for v, r in zip(verdicts(clean), clean, strict=True)
        if "fitness_base" not in (r.independence.a, r.independence.b)
    ]


# --- 3. huge values ---------------------------------------------------------------------------


def test_huge_values_give_one_note_and_no_numpy_warnings(tmp_path, clean):
    table = rows()
    column = table[0].index("shift_work")
    scaled = [table[0]] + [
        [f"{float(c) * 1e306:.17g}" if j == column else c for j, c in enumerate(r)]
        for r in table[1:]
    ]
    notes: list[str] = []
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # any numpy RuntimeWarning fails the test
        found = results(write(tmp_path, "huge.csv", [",".join(r) for r in scaled]), notes=notes)
    # a column multiplied by 1e306 is the same column to a correlation
    assert verdicts(found) == verdicts(clean)
    for a, b in zip(found, clean, strict=True):
        assert math.isclose(a.effect, b.effect, rel_tol=1e-9, abs_tol=1e-12)
    assert len(notes) == 1 and "`shift_work`" in notes[0] and "as large as" in notes[0]


def test_one_1e308_cell_gives_one_note_and_finite_figures(tmp_path):
    table = rows()
    table[3][table[0].index("age")] = "1e308"
    notes: list[str] = []
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        found = results(write(tmp_path, "one.csv", [",".join(r) for r in table]), notes=notes)
    assert len(notes) == 1 and "`age`" in notes[0] and "1e+308" in notes[0]
    assert all(math.isfinite(r.p) for r in found)


# --- 4. semicolons, tabs and decimal commas ---------------------------------------------------


def european(sep: str) -> list[str]:
    return [sep.join(c.replace(".", ",") for c in r) for r in rows()]


@pytest.mark.parametrize(("sep", "word"), [(";", "semicolon"), ("\t", "tab")])
def test_semicolon_and_tab_files_with_decimal_commas_give_the_same_figures(
    tmp_path, clean, sep, word
):
    notes: list[str] = []
    found = results(write(tmp_path, "eu.csv", european(sep)), notes=notes)
    assert figures(found) == figures(clean)
    assert notes == [f"dagward: {tmp_path / 'eu.csv'}: read as {word}-separated with a decimal "
                     "comma (detected; --sep and --decimal set them)"]  # fmt: skip
    # given explicitly, nothing is detected and nothing said
    quiet: list[str] = []
    again = results(tmp_path / "eu.csv", ReadOptions(sep=sep, decimal=","), notes=quiet)
    assert figures(again) == figures(clean) and quiet == []
    # the separator given, the decimal comma still detected (and said)
    said: list[str] = []
    again = results(tmp_path / "eu.csv", ReadOptions(sep=sep), notes=said)
    assert figures(again) == figures(clean) and len(said) == 1 and "decimal comma" in said[0]


def test_detection_on_its_own():
    assert detect_format("a,b\n1.5,2\n") == (",", ".")
    assert detect_format("a;b\n1,5;2\n") == (";", ",")
    assert detect_format("a;b\n1.5;2\n") == (";", ".")
    assert detect_format("a\tb\tc\n1,5\t2\t3\n") == ("\t", ",")
    assert detect_format('a,b\n"x; y",2\n"z; w",3\n') == (",", ".")
    assert detect_format("only\n1\n2\n") == (",", ".")


def test_the_command_line_says_what_it_detected(tmp_path):
    path = write(tmp_path, "eu.csv", european(";"))
    run = dagward("independencies", str(DIAGRAM), "--data", str(path))
    assert run.code == 0
    assert "read as semicolon-separated with a decimal comma" in run.err
    assert "1 of 6 implied independencies rejected" in run.err


def test_every_column_missing_points_at_the_separator(tmp_path):
    path = write(tmp_path, "semi.csv", [";".join(r) for r in rows()])
    run = dagward("check", str(DIAGRAM), "--data", str(path), "--sep", ",")
    assert run.code == 1 and "[missing-column]" in run.out
    assert "most likely split at the wrong separator" in run.out and "--sep" in run.out


def test_options_and_config_table_reach_the_reader(tmp_path, capsys, monkeypatch):
    # the command line in this process (five runs that each import numpy and scipy)
    monkeypatch.chdir(tmp_path)
    # the table of the pyproject.toml nearest the diagram applies (per-file settings)
    (tmp_path / "pyproject.toml").write_text(
        '[tool.dagward.data]\ncategorical = ["fitness_base"]\n'
    )
    diagram = tmp_path / "wellness.dag"
    diagram.write_bytes(DIAGRAM.read_bytes())
    run = in_process(
        capsys, "independencies", str(diagram), "--data", str(CLEAN), "--format", "json"
    )
    assert run.code == 0 and "too few rows for the G-test" in run.out
    # the command line wins over the file
    run = in_process(capsys, "independencies", str(diagram), "--data", str(CLEAN), "--format", "json",
                     "--categorical", "age")  # fmt: skip
    assert run.code == 0 and "fitness_base" in run.out
    import json

    tests = [i["test"] for i in json.loads(run.out)["independencies"]]
    assert any(t["method"] == "g-test" for t in tests)
    (tmp_path / "pyproject.toml").write_text('[tool.dagward.data]\nsep = "::"\n')
    run = in_process(capsys, "independencies", str(diagram), "--data", str(CLEAN))
    assert run.code == 2 and "data.sep" in run.err
    run = in_process(capsys, "check", str(DIAGRAM), "--data", str(CLEAN), "--sep", "ab")
    assert run.code == 2 and "--sep" in run.err


def test_reading_csv_text_in_memory_follows_the_same_rules():
    from dagward.data import table_from_csv_text

    text = io.StringIO()
    for r in rows()[:50]:
        text.write(";".join(c.replace(".", ",") for c in r) + ";\n")
    table = table_from_csv_text(text.getvalue())
    assert table.columns() == tuple(rows()[0]) and table.n_rows == 49
    assert not any(table.is_categorical(c) for c in table.columns())


def test_decimal_commas_in_a_point_file_are_pointed_out(tmp_path):
    # one column written with decimal points, one with decimal commas: detection
    # keeps the point, and the comma column is read as categories -- with a line
    table = rows()
    lines = [";".join(table[0])]
    for r in table[1:]:
        lines.append(";".join([r[0], r[1].replace(".", ",")] + r[2:]))
    notes: list[str] = []
    loaded = load_data(str(write(tmp_path, "mixed.csv", lines)), report=notes.append)
    assert loaded.is_categorical(table[0][1])
    assert any(f"`{table[0][1]}` is read as categories" in n and "--decimal ," in n
               for n in notes)  # fmt: skip
    fixed = load_data(str(tmp_path / "mixed.csv"), ReadOptions(numeric=(table[0][1],)),
                      report=lambda line: None)  # fmt: skip
    assert not fixed.is_categorical(table[0][1])


def test_config_data_table_is_validated():
    from dagward.config import ConfigError, from_table

    settings = from_table({"data": {"numeric": ["a"], "sep": "tab", "decimal": ","}}, "p.toml",
                          ROOT)  # fmt: skip
    assert settings.data == {"numeric": ("a",), "sep": "\t", "decimal": ","}
    for bad, words in [
        ({"data": []}, "must be a table"),
        ({"data": {"columns": ["a"]}}, "unknown key `columns` in [tool.dagward.data]"),
        ({"data": {"categorical": "a"}}, "`categorical` must be a list"),
        ({"data": {"decimal": ";"}}, "`data.decimal` must be"),
        ({"data": {"categorical": ["a"], "numeric": ["a"]}}, "both name a"),
    ]:
        with pytest.raises(ConfigError) as info:
            from_table(bad, "p.toml", ROOT)
        assert words in str(info.value) and "p.toml" in str(info.value)


@pytest.mark.parametrize("quoted", [False, True])
@pytest.mark.parametrize("newline", ["\n", "\r\n"])
def test_both_width_checks_name_the_same_line(tmp_path, quoted, newline):
    # without quotes the widths are counted with numpy; with one, row by row
    table = rows()[:300]
    lines = [",".join(r) for r in table]
    if quoted:
        lines[1] = '"' + table[1][0] + '",' + ",".join(table[1][1:])
    lines[250] += ",1"
    path = tmp_path / "w.csv"
    path.write_bytes((newline.join(lines) + newline).encode())
    with pytest.raises(UsageProblem, match=r"line 251 has 7 fields"):
        load_data(str(path))
    lines[250] = ",".join(table[250])
    lines.insert(100, "   ")  # a line of blanks counts as blank
    path.write_bytes((newline.join(lines) + newline).encode())
    assert load_data(str(path)).n_rows == 299
