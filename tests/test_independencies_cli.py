"""`dagward independencies`: the list against networkx and a brute-force search, the
ASCII fallback, the JSON shape, and the tests against the invented demo data.

Oracles: `networkx.is_d_separator` (networkx's own d-separation) and an
exhaustive search over every subset of measured variables, straight from the
definition (one statement per non-adjacent measured pair that some measured set
d-separates; Pearl 2009, *Causality*, section 1.2.3). The partial correlation of
the rejected statement is recomputed with numpy least squares (residuals of both
variables on the conditioning set; common practice).
"""

from __future__ import annotations

import csv
import itertools
import json
import math
import re
import xml.etree.ElementTree as ET

import networkx as nx
import numpy as np
import pytest
from clirunner import ROOT, dagward
from dagward.syntax import parse_source

SAMPLES = ["wellness", "tree_canopy", "soil_amendment"]
CONSISTENT = "samples/data/wellness_consistent.csv"
EXTRA_ARROW = "samples/data/wellness_extra_arrow.csv"
LINE = re.compile(r"^(\S+) \u2aeb (\S+)(?: \| (.+))?$")
ASCII_LINE = re.compile(r"^(\S+) indep (\S+)(?: given (.+))?$")


def load(name: str):
    path = ROOT / "samples" / f"{name}.dag"
    diagram, problem = parse_source(path.read_bytes(), str(path))
    assert problem is None
    return diagram


def parse_lines(text: str, pattern=LINE) -> list[tuple[str, str, tuple[str, ...]]]:
    out = []
    for line in text.splitlines():
        m = pattern.match(line)
        assert m, line
        out.append((m.group(1), m.group(2), tuple(m.group(3).split(", ")) if m.group(3) else ()))
    return out


def adjacent(diagram, a: str, b: str) -> bool:
    return any({x.source.text, x.target.text} == {a, b} for x in diagram.arrows)


@pytest.mark.parametrize("name", SAMPLES)
def test_list_agrees_with_networkx_and_brute_force(name):
    diagram = load(name)
    G = diagram.graph
    measured = sorted(diagram.measured)
    run = dagward("independencies", f"samples/{name}.dag")
    assert run.code == 0, run.err
    listed = parse_lines(run.out)
    by_pair = {(a, b): given for a, b, given in listed}
    assert len(by_pair) == len(listed), "one statement per pair"
    for a, b in itertools.combinations(measured, 2):
        others = [v for v in measured if v not in (a, b)]
        separable = not adjacent(diagram, a, b) and any(
            nx.is_d_separator(G, {a}, {b}, set(subset))
            for k in range(len(others) + 1)
            for subset in itertools.combinations(others, k)
        )
        assert ((a, b) in by_pair) == separable, (a, b)
        if (a, b) in by_pair:
            given = set(by_pair[(a, b)])
            assert given <= set(others)
            assert nx.is_d_separator(G, {a}, {b}, given)
            for z in given:  # minimal: no member can be left out
                assert not nx.is_d_separator(G, {a}, {b}, given - {z})
            assert list(by_pair[(a, b)]) == sorted(given)


def test_wellness_list_by_hand():
    """Read off samples/wellness.dag by hand (motivation unmeasured)."""
    run = dagward("independencies", "samples/wellness.dag")
    assert run.out.splitlines() == [
        "age \u2aeb fitness_base",
        "age \u2aeb shift_work",
        "enrolled \u2aeb shift_work | fitness_base",
        "enrolled \u2aeb sick_days | age, fitness_12m, fitness_base",
        "fitness_12m \u2aeb shift_work | fitness_base",
        "fitness_base \u2aeb sick_days | age, fitness_12m, shift_work",
    ]
    # age and fitness_12m: the only separating sets contain enrolled, a collider
    # of age -> enrolled <- motivation -> fitness_12m, so no measured set works.
    assert "age \u2aeb fitness_12m" not in run.out


def test_ascii_flag_and_fallback():
    unicode_run = dagward("independencies", "samples/wellness.dag")
    flag = dagward("independencies", "samples/wellness.dag", "--ascii")
    forced = dagward("independencies", "samples/wellness.dag", env={"PYTHONIOENCODING": "ascii"})
    assert flag.code == forced.code == 0
    assert flag.out == forced.out
    assert parse_lines(flag.out, ASCII_LINE) == parse_lines(unicode_run.out)
    assert "enrolled indep shift_work given fitness_base" in flag.out.splitlines()
    assert "\u2aeb" not in flag.out


def test_json_shape_without_data():
    run = dagward("independencies", "samples/wellness.dag", "--format", "json")
    assert run.code == 0
    doc = json.loads(run.out)
    assert set(doc) == {"tool", "schema", "file", "measured", "independencies", "data"}
    assert doc["tool"]["name"] == "dagward" and doc["schema"] == 1
    assert doc["file"] == "samples/wellness.dag" and doc["data"] is None
    assert doc["measured"] == sorted(load("wellness").measured)
    text = dagward("independencies", "samples/wellness.dag").out
    assert [(i["a"], i["b"], tuple(i["given"])) for i in doc["independencies"]] == parse_lines(text)
    assert all(set(i) == {"a", "b", "given"} for i in doc["independencies"])


def _json_with_data(csv_path: str, *extra: str) -> dict:
    run = dagward("independencies", "samples/wellness.dag", "--data", csv_path,
                  "--format", "json", *extra)  # fmt: skip
    assert run.code == 0, run.err
    return json.loads(run.out)


def test_consistent_data_rejects_nothing():
    for method in ("pearson", "spearman"):
        doc = _json_with_data(CONSISTENT, "--method", method)
        assert doc["data"] == {"file": CONSISTENT, "rows": 2000, "method": method,
                               "alpha": 0.05, "min_effect": 0.1, "rejected": 0}  # fmt: skip
        tests = [i["test"] for i in doc["independencies"]]
        assert len(tests) == 6 and not any(t["rejected"] for t in tests)
        assert {t["verdict"] for t in tests} == {"consistent"}
        # fitness_12m has 25 blank cells: complete cases per test
        ns = {(i["a"], i["b"]): i["test"]["n"] for i in doc["independencies"]}
        assert ns[("age", "shift_work")] == 2000
        assert ns[("fitness_12m", "shift_work")] == 1975


def test_extra_arrow_data_rejects_shift_work_and_enrolled():
    doc = _json_with_data(EXTRA_ARROW)
    verdicts = {(i["a"], i["b"], tuple(i["given"])): i["test"] for i in doc["independencies"]}
    rejected = [k for k, t in verdicts.items() if t["rejected"]]
    assert rejected == [("enrolled", "shift_work", ("fitness_base",))]
    test = verdicts[rejected[0]]
    assert set(test) == {"method", "statistic", "df", "n", "p", "p_adjusted", "effect",
                         "ci_low", "ci_high", "rejected", "note", "verdict"}  # fmt: skip
    assert test["verdict"] == "rejected" and test["method"] == "pearson" and test["df"] is None
    assert test["ci_low"] < test["effect"] < test["ci_high"]
    # recompute the partial correlation with numpy least squares (outside the project)
    with open(ROOT / EXTRA_ARROW, newline="") as handle:
        rows = list(csv.DictReader(handle))
    cols = {k: np.array([float(r[k]) for r in rows]) for k in ("enrolled", "shift_work",
                                                             "fitness_base")}  # fmt: skip
    design = np.column_stack([np.ones(len(rows)), cols["fitness_base"]])

    def residual(v):
        return v - design @ np.linalg.lstsq(design, v, rcond=None)[0]

    r = np.corrcoef(residual(cols["enrolled"]), residual(cols["shift_work"]))[0, 1]
    assert test["n"] == len(rows) == 2000
    assert math.isclose(test["effect"], r, abs_tol=1e-9)
    assert 0.2 < r < 0.35  # the demo data's extra arrow (samples/data/README.md: about 0.27)
    # the two small departures the README describes: significant, below 0.1
    small = {k for k, t in verdicts.items() if t["verdict"] == "small"}
    assert small == {("enrolled", "sick_days", ("age", "fitness_12m", "fitness_base")),
                     ("fitness_12m", "shift_work", ("fitness_base",))}  # fmt: skip


def test_text_table_and_forest_plot(tmp_path):
    plot = tmp_path / "forest.svg"
    run = dagward("independencies", "samples/wellness.dag", "--data", EXTRA_ARROW,
                  "--plot", str(plot))  # fmt: skip
    assert run.code == 0  # independence-rejected is a warning; --fail-on error
    lines = run.out.splitlines()
    assert lines[0].split() == ["independence", "n", "statistic", "p", "Holm", "p",
                                "effect", "[95%", "interval]", "verdict"]  # fmt: skip
    row = next(x for x in lines if x.startswith("enrolled \u2aeb shift_work | fitness_base"))
    assert row.split()[-1] == "rejected" and " 2000 " in row and "<0.001" in row
    assert re.search(r"0\.\d\d \[0\.\d\d, 0\.\d\d\]", row)
    assert sum(x.endswith("rejected") for x in lines) == 1
    assert "1 of 6 implied independencies rejected" in run.err
    root = ET.parse(plot).getroot()
    rows = [g for g in root.iter("{http://www.w3.org/2000/svg}g") if g.get("class") == "test-row"]
    assert len(rows) == 6
    strict = dagward("independencies", "samples/wellness.dag", "--data", EXTRA_ARROW,
                     "--fail-on", "warning")  # fmt: skip
    assert strict.code == 1


def test_missing_column_and_bad_data(tmp_path):
    lacking = tmp_path / "lacking.csv"
    with open(ROOT / CONSISTENT, newline="") as handle:
        rows = list(csv.reader(handle))
    keep = [i for i, name in enumerate(rows[0]) if name != "age"]
    lacking.write_text("\n".join(",".join(r[i] for i in keep) for r in rows) + "\n")
    run = dagward("independencies", "samples/wellness.dag", "--data", str(lacking))
    assert run.code == 1  # missing-column is an error
    assert "samples/wellness.dag:12:18: error [missing-column] `age`" in run.err
    age_rows = [x for x in run.out.splitlines() if x.startswith("age ")]
    assert age_rows and all("not tested (not in the data: `age`)" in x for x in age_rows)
    for bad in (str(tmp_path / "none.csv"), str(tmp_path)):
        run = dagward("independencies", "samples/wellness.dag", "--data", bad)
        assert run.code == 2 and len(run.err.strip().splitlines()) == 1
        assert run.err.startswith("dagward: error: ")
    assert dagward("independencies", "samples/wellness.dag", "--plot", "x.svg").code == 2
    run = dagward("independencies", "samples/wellness.dag", "--data", CONSISTENT, "--alpha", "2")
    assert run.code == 2 and "--alpha" in run.err


def test_broken_diagram_prints_its_errors_and_exits_1():
    run = dagward("independencies", "samples/broken/cycle.dag")
    assert run.code == 1 and "samples/broken/cycle.dag:4:1: error [cycle]" in run.err
