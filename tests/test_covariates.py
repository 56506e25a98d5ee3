"""`dagward covariates`: model formulas read into variables, and the verdict on them.

The formula cases follow the operator meanings of Wilkinson & Rogers (1973),
"Symbolic description of factorial models for analysis of variance", Applied
Statistics 22:392-399, as R documents them on its `?formula` help page (stats
package; from memory): `a*b` is `a + b + a:b`, `(a+b+c)^2` is every term up to
two-way interactions, `-` removes a term, `0`/`- 1` removes the intercept,
`%in%` and `/` nest. The verdicts are checked against an oracle written here
from the definition of a valid adjustment set (the adjustment criterion of
Shpitser, VanderWeele & Robins 2010, "On the validity of covariate adjustment
for estimating causal effects", UAI; in the form of Perkovic et al. 2018, JMLR
18(220), Definition 3.1: no covariate descends from a node on a proper causal
path, and the covariates d-separate exposure and outcome in the proper
back-door graph), using networkx's own d-separation routine.
"""

from __future__ import annotations

import itertools
import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import networkx as nx
import pytest
from clirunner import ROOT, dagward, in_process
from dagward.api import load_diagram
from dagward.cli import main
from dagward.formula import FormulaProblem, parse_formula

WELLNESS = str(ROOT / "samples" / "wellness.dag")


# --- reading formulas ---------------------------------------------------------------------


@pytest.mark.parametrize(
    ("formula", "outcome", "variables", "terms"),
    [
        # the formula of the contract: functions, a factor and an interaction
        (
            "y ~ x + age + ns(bmi, 3) + factor(region) + x:age",
            ("y",),
            ("x", "age", "bmi", "region"),
            (("x",), ("age",), ("bmi",), ("region",), ("x", "age")),
        ),
        # a transformed variable in an interaction adjusts for the variable itself
        ("y ~ log(age):treated", ("y",), ("age", "treated"), (("age", "treated"),)),
        # `-` removes a term ...
        ("y ~ x + age - age", ("y",), ("x",), (("x",),)),
        # ... but age stays through the interaction that x*age brings
        ("y ~ x*age - age", ("y",), ("x", "age"), (("x",), ("x", "age"))),
        (
            "y ~ (x + a + b)^2 - a:b",
            ("y",),
            ("x", "a", "b"),
            (("x",), ("a",), ("b",), ("x", "a"), ("x", "b")),
        ),
        # the intercept names nothing; `0 +` and `- 1` drop it
        ("y ~ 0 + x + age", ("y",), ("x", "age"), (("x",), ("age",))),
        ("y ~ x + age - 1", ("y",), ("x", "age"), (("x",), ("age",))),
        # nesting
        (
            "y ~ x + age/region",
            ("y",),
            ("x", "age", "region"),
            (("x",), ("age",), ("age", "region")),
        ),
        # function arguments that are not data: numbers, keywords with constants,
        # contrasts, functions inside functions
        (
            "y ~ x + poly(bmi, 2, raw = TRUE) + C(region, contr.treatment)",
            ("y",),
            ("x", "bmi", "region"),
            (("x",), ("bmi",), ("region",)),
        ),
        (
            "y ~ x + I(age^2) + offset(log(pop)) + s(bmi, k = 5)",
            ("y",),
            ("x", "age", "pop", "bmi"),
            (("x",), ("age",), ("pop",), ("bmi",)),
        ),
        ("y ~ x + te(age, bmi)", ("y",), ("x", "age", "bmi"), (("x",), ("age", "bmi"))),
        # the left side: transformed, or a survival outcome naming two columns
        ("log(y) ~ x", ("y",), ("x",), (("x",),)),
        (
            "Surv(time, event) ~ x + strata(site)",
            ("time", "event"),
            ("x", "site"),
            (("x",), ("site",)),
        ),
        # R names with dots, and quoted names
        (
            "y ~ x + bmi.base + log(bmi.base)",
            ("y",),
            ("x", "bmi.base"),
            (("x",), ("bmi.base",), ("bmi.base",)),
        ),
        ("y ~ x + `body mass`", ("y",), ("x", "body mass"), (("x",), ("body mass",))),
        # one-sided
        ("~ x + age", (), ("x", "age"), (("x",), ("age",))),
    ],
)
def test_formula_variables(formula, outcome, variables, terms):
    parsed = parse_formula(formula)
    assert parsed.outcome == outcome
    assert parsed.variables == variables
    assert parsed.terms == terms


@pytest.mark.parametrize(
    ("formula", "says"),
    [
        ("y ~ . - age", "uses `.`"),
        ("y ~ x + (1 | site)", "has a `|` part"),
        ("y ~ x + age | region", "has a `|` part"),
        ("y ~ x +", "cannot be read (column 7)"),
        ("y ~ x + 'age'", "cannot be read"),
        ("   ", "the formula is empty"),
    ],
)
def test_formulas_that_are_refused(formula, says):
    with pytest.raises(FormulaProblem) as caught:
        parse_formula(formula)
    assert says in str(caught.value)
    assert "\n" not in str(caught.value) and "\x1b" not in str(caught.value)


# --- the command ----------------------------------------------------------------------------


def test_valid_formula_exits_0_with_the_verdict(capsys):
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--formula",
        "sick_days ~ fitness_12m + age + ns(shift_work, 3)",
    )
    assert run.code == 0, run.err
    assert run.out.splitlines() == [
        f"analysis `fitness_effect` in {WELLNESS}: covariates age, shift_work",
        "verdict: valid adjustment set (according to the diagram)",
        "no findings",
    ]


def test_exposure_terms_are_recognised_and_interactions_adjust(capsys):
    # the exposure in an interaction is still the exposure; `age` comes in through it
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--format",
        "json",
        "--formula",
        "sick_days ~ fitness_12m*age + factor(shift_work)",
    )
    doc = json.loads(run.out)
    assert doc["covariates"] == ["age", "shift_work"]
    assert doc["exposure_terms"] == [["fitness_12m"], ["fitness_12m", "age"]]
    assert doc["valid"] is True and run.code == 0
    # without shift_work the back-door path through it stays open
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--format",
        "json",
        "--formula",
        "sick_days ~ fitness_12m*age",
    )
    doc = json.loads(run.out)
    assert run.code == 1 and doc["valid"] is False
    assert {f["rule"] for f in doc["findings"]} == {"open-biasing-path"}
    assert all(f["analysis"] == "fitness_effect" for f in doc["findings"])


def test_not_valid_prints_only_that_analysis_and_exits_1(capsys):
    run = in_process(
        capsys, "covariates", WELLNESS, "--analysis", "fitness_effect", "--list", "age"
    )
    assert run.code == 1
    assert "verdict: not a valid adjustment set (according to the diagram); see below" in run.out
    # shift_work -> fitness_base -> ... and shift_work -> sick_days stays open
    assert "[open-biasing-path]" in run.out and "shift_work" in run.out
    assert "total_effect" not in run.out
    # a warning alone does not make the set invalid (enrolled acts like an instrument)
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--list",
        "age,shift_work,enrolled",
    )
    assert run.code == 0 and "[instrument-adjusted]" in run.out
    assert "verdict: valid adjustment set" in run.out


def test_unknown_names_get_suggestions_and_renames_fix_them(tmp_path, capsys, monkeypatch):
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--formula",
        "sick ~ fitness_12m + agee + shift",
    )
    assert run.code == 2 and run.out == ""
    assert run.err.count("\n") == 1
    assert "`sick` (did you mean `sick_days`?)" in run.err
    assert "`agee` (did you mean `age`?)" in run.err
    assert "--rename COLUMN=VARIABLE" in run.err
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--formula",
        "sick ~ fitness_12m + agee + shift",
        "--rename",
        "sick=sick_days,agee=age",
        "--rename",
        "shift=shift_work",
    )
    assert run.code == 0, run.err
    mapped = "agee = age, shift = shift_work, sick = sick_days"
    assert f"data columns read as diagram variables: {mapped}" in run.out
    # the same mapping from [tool.dagward.columns] next to the diagram
    monkeypatch.chdir(tmp_path)
    study = tmp_path / "study"
    study.mkdir()
    (study / "wellness.dag").write_text(Path(WELLNESS).read_text())
    (study / "pyproject.toml").write_text(
        '[tool.dagward.columns]\nsick = "sick_days"\nagee = "age"\nshift = "shift_work"\n'
    )
    run = in_process(
        capsys,
        "covariates",
        str(study / "wellness.dag"),
        "--analysis",
        "fitness_effect",
        "--formula",
        "sick ~ fitness_12m + agee + shift",
    )
    assert run.code == 0, run.err
    (study / "pyproject.toml").write_text("[tool.dagward]\ncolumns = [1]\n")
    run = in_process(capsys, "covariates", str(study / "wellness.dag"), "--list", "age")
    assert run.code == 2 and "`columns` must be a table" in run.err


def test_outcome_and_exposure_must_match_the_analysis(capsys):
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--formula",
        "age ~ fitness_12m + shift_work",
    )
    assert run.code == 2 and "the outcome of analysis `fitness_effect` is `sick_days`" in run.err
    run = in_process(
        capsys,
        "covariates",
        WELLNESS,
        "--analysis",
        "fitness_effect",
        "--formula",
        "sick_days ~ age + shift_work",
    )
    assert run.code == 2 and "does not name the exposure `fitness_12m`" in run.err
    run = in_process(capsys, "covariates", WELLNESS, "--list", "age")
    assert run.code == 2 and "name one with --analysis" in run.err
    run = in_process(capsys, "covariates", WELLNESS, "--analysis", "fitnes_effect", "--list", "age")
    assert run.code == 2 and "did you mean `fitness_effect`?" in run.err
    run = in_process(capsys, "covariates", WELLNESS, "--analysis", "fitness_effect")
    assert run.code == 2  # --formula or --list is required


def test_a_diagram_with_errors_exits_1_with_them():
    run = dagward("covariates", str(ROOT / "samples/broken/cycle.dag"), "--list", "x")
    assert run.code == 1 and "[cycle]" in run.err


# --- verdicts against the oracle -----------------------------------------------------------


def _valid_by_definition(g: nx.DiGraph, x: str, y: str, z: set[str]) -> bool:
    """Perkovic et al. (2018), Definition 3.1, for one exposure and one outcome."""
    descendants_x = nx.descendants(g, x) | {x}
    ancestors_y = nx.ancestors(g, y) | {y}
    on_causal = (descendants_x & ancestors_y) - {x}  # nodes on proper causal paths
    forbidden = set().union(*(nx.descendants(g, w) | {w} for w in on_causal)) | {x}
    if z & forbidden:
        return False
    backdoor = g.copy()
    backdoor.remove_edges_from([(x, w) for w in g.successors(x) if w in on_causal])
    return nx.is_d_separator(backdoor, {x}, {y}, z)


@pytest.mark.parametrize("sample", ["wellness.dag", "soil_amendment.dag", "tree_canopy.dag"])
def test_verdicts_match_the_definition_on_every_subset(sample, capsys):
    path = str(ROOT / "samples" / sample)
    checked = load_diagram(path)
    diagram = checked.diagram
    graph = diagram.graph
    compared = 0
    for analysis in diagram.analyses:
        (x,), (y,) = analysis.exposure_set, analysis.outcome_set
        candidates = sorted(diagram.measured - {x, y})
        for k in range(len(candidates) + 1):
            for subset in itertools.combinations(candidates, k):
                args = [
                    "covariates",
                    path,
                    "--analysis",
                    analysis.name,
                    "--format",
                    "json",
                    "--list",
                    ",".join(subset),
                ]
                code = main(args)
                doc = json.loads(capsys.readouterr().out)
                expected = _valid_by_definition(graph, x, y, set(subset))
                assert doc["valid"] is expected, (analysis.name, subset, doc["findings"])
                assert code == (0 if expected else 1)
                compared += 1
    assert compared >= 16


# --- the README's examples, run for real -----------------------------------------------------


def _readme_block(language: str, containing: str) -> str:
    text = (ROOT / "README.md").read_text("utf-8")
    blocks = re.findall(rf"```{language}\n(.*?)```", text, flags=re.DOTALL)
    (block,) = [b for b in blocks if containing in b]
    return block


def _project_with_dagward_on_path(tmp_path: Path) -> tuple[Path, dict]:
    """An analysis project holding causal/wellness.dag, and `dagward` on PATH."""
    project = tmp_path / "project"
    (project / "causal").mkdir(parents=True)
    shutil.copy(WELLNESS, project / "causal" / "wellness.dag")
    bin_dir = tmp_path / "bin"
    bin_dir.mkdir()
    shim = bin_dir / "dagward"
    shim.write_text(f'#!/bin/sh\nexec "{sys.executable}" -m dagward "$@"\n')
    shim.chmod(0o755)
    env = {**os.environ, "PYTHONPATH": str(ROOT), "PATH": f"{bin_dir}:{os.environ['PATH']}"}
    return project, env


def test_readme_pytest_example_passes_and_fails_when_it_should(tmp_path):
    project, env = _project_with_dagward_on_path(tmp_path)
    block = _readme_block("python", "def test_model_covariates_match_the_diagram")
    (project / "test_model.py").write_text(block)
    # the same test with a covariate missing fails, and says why
    (project / "test_model_missing.py").write_text(block.replace(" + C(shift_work)", ""))
    # one pytest run for both files; the example needs no plugin, so none is loaded
    done = subprocess.run(
        [sys.executable, "-m", "pytest", "-q", "-rA", "-p", "no:cacheprovider",
         "test_model.py", "test_model_missing.py"],
        cwd=project,
        env={**env, "PYTEST_DISABLE_PLUGIN_AUTOLOAD": "1"},
        capture_output=True,
        text=True,
        timeout=300,
    )  # fmt: skip
    out = done.stdout + done.stderr
    assert done.returncode == 1, out
    assert "PASSED test_model.py::test_model_covariates_match_the_diagram" in out
    assert "FAILED test_model_missing.py::test_model_covariates_match_the_diagram" in out
    assert "1 failed, 1 passed" in out and "open-biasing-path" in out


def test_readme_stata_shell_line_leaves_the_marker_only_on_failure(tmp_path):
    project, env = _project_with_dagward_on_path(tmp_path)
    block = _readme_block("stata", "shell dagward covariates")
    line = next(x for x in block.splitlines() if x.startswith("shell "))
    command = line.removeprefix("shell ")
    done = subprocess.run(
        ["sh", "-c", command], cwd=project, env=env, capture_output=True, text=True, timeout=300
    )
    assert done.returncode == 0 and "verdict: valid" in done.stdout
    assert not (project / "dagward_failed").exists()
    failing = command.replace("--list age,shift_work", "--list age")
    subprocess.run(["sh", "-c", failing], cwd=project, env=env, capture_output=True, timeout=300)
    assert (project / "dagward_failed").exists()


def test_readme_r_example_uses_a_command_that_works(tmp_path):
    """The arguments the R example hands to system2, run as R would run them."""
    project, env = _project_with_dagward_on_path(tmp_path)
    block = _readme_block("r", "system2")
    formula = re.search(r"model_formula <- (.*)\n", block).group(1)
    assert '"--analysis", "fitness_effect"' in block and "causal/wellness.dag" in block
    done = subprocess.run(
        [
            "dagward",
            "covariates",
            "causal/wellness.dag",
            "--analysis",
            "fitness_effect",
            "--formula",
            formula,
        ],
        cwd=project,
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert done.returncode == 0, done.stdout + done.stderr
