"""`dagward diff` on real git histories built in the test.

The verdicts and minimal sets the diff reports are checked against an oracle
written here from the definitions with networkx's own d-separation test
(`networkx.is_d_separator`): the generalised adjustment criterion (Shpitser,
VanderWeele & Robins 2010, "On the validity of covariate adjustment for estimating
causal effects", UAI; Perkovic, Textor, Kalisch & Maathuis 2018, JMLR 18(220),
Definition of forb and the proper back-door graph) and brute force over subsets
for inclusion-minimal sets. The diagrams are invented (staff wellness programme).

The property test at the end commits random diagrams and random changes to a git
repository and holds the diff JSON to three judges at once: the verdict object,
`check`'s findings, and the path-enumerating oracle of tests/helpers/oracle.py
(same definitions, written independently of the code under test).
"""

from __future__ import annotations

import json
import os
import re
import subprocess
from dataclasses import replace
from itertools import combinations
from pathlib import Path

import networkx as nx
import pytest
from dagward.causal import is_hidden
from dagward.cli import main
from dagward.config import Settings
from dagward.engine import lint_source
from dagward.rules import VALIDITY_RULES
from dagward.verdict import Verdict
from helpers.dag_text import to_dag_text
from helpers.examples import examples
from helpers.oracle import analysis_case
from helpers.oracle import oracle_minimal_valid_sets as brute_force_minimal_sets
from helpers.oracle import oracle_valid as brute_force_valid
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

WELLNESS = """\
title "Wellness programme and sick days"
age -> enrolled, sick_days
fitness_base -> enrolled, sick_days
shift_work -> enrolled
enrolled -> fitness_12m -> sick_days

analysis total_effect {
  exposure: enrolled
  outcome: sick_days
  adjust: age, fitness_base
}
"""
# commit 2: one new arrow, on line 5
WELLNESS_2 = WELLNESS.replace(
    "shift_work -> enrolled\n", "shift_work -> enrolled\nshift_work -> sick_days\n"
)
# commit 3: `age` is no longer a confounder (its arrow into `enrolled`, line 2, is
# removed) and the declared set follows the new diagram
WELLNESS_3 = WELLNESS_2.replace("age -> enrolled, sick_days", "age -> sick_days").replace(
    "adjust: age, fitness_base", "adjust: fitness_base, shift_work"
)
HEAT = """\
canopy -> surface_temp -> heat_admissions
income -> canopy, heat_admissions
"""
SOIL = """\
amendment -> soil_carbon -> yield
rainfall -> yield
"""


# --- the oracle ------------------------------------------------------------------------


def _graph(arrows: list[tuple[str, str]]) -> nx.DiGraph:
    g = nx.DiGraph()
    g.add_edges_from(arrows)
    return g


def oracle_valid(g: nx.DiGraph, x: str, y: str, z: set[str]) -> bool:
    """Generalised adjustment criterion for one exposure, straight from the definition."""
    cn = {w for w in nx.descendants(g, x) if w == y or y in nx.descendants(g, w)}
    forb = set(cn)
    for w in cn:
        forb |= nx.descendants(g, w)
    if z & (forb | {x, y}):
        return False
    pbd = g.copy()
    pbd.remove_edges_from([(x, w) for w in list(g.successors(x)) if w in cn])
    return nx.is_d_separator(pbd, {x}, {y}, z)


def oracle_minimal_sets(g: nx.DiGraph, x: str, y: str, measured: set[str]) -> list[list[str]]:
    candidates = sorted(measured - {x, y})
    valid = [
        set(c)
        for k in range(len(candidates) + 1)
        for c in combinations(candidates, k)
        if oracle_valid(g, x, y, set(c))
    ]
    minimal = [s for s in valid if not any(t < s for t in valid)]
    return sorted((sorted(s) for s in minimal), key=lambda s: (len(s), s))


G1 = _graph([("age", "enrolled"), ("age", "sick_days"), ("fitness_base", "enrolled"),
             ("fitness_base", "sick_days"), ("shift_work", "enrolled"),
             ("enrolled", "fitness_12m"), ("fitness_12m", "sick_days")])  # fmt: skip
G2 = G1.copy()
G2.add_edge("shift_work", "sick_days")
G3 = G2.copy()
G3.remove_edge("age", "enrolled")
MEASURED = set(G1)


# --- helpers ---------------------------------------------------------------------------


def git(repo: Path, *args: str) -> str:
    done = subprocess.run(
        ["git", "-c", "user.name=test", "-c", "user.email=test@example.invalid", *args],
        cwd=repo,
        capture_output=True,
        text=True,
        check=True,
    )
    return done.stdout.strip()


def write(repo: Path, path: str, text: str) -> None:
    target = repo / path
    target.parent.mkdir(parents=True, exist_ok=True)
    target.write_text(text, "utf-8")


@pytest.fixture()
def history(tmp_path, monkeypatch):
    """A repository on `main` with five commits; returns (repo, {name: sha})."""
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path.parent))
    repo = tmp_path / "study"
    repo.mkdir()
    git(repo, "init", "-q", "-b", "main")
    shas = {}
    write(repo, "wellness.dag", WELLNESS)
    write(repo, "heat.dag", HEAT)
    write(repo, "soil.dag", SOIL)
    write(repo, "notes.txt", "not a diagram\n")
    git(repo, "add", ".")
    git(repo, "commit", "-q", "-m", "first diagrams")
    shas["c1"] = git(repo, "rev-parse", "HEAD")
    write(repo, "wellness.dag", WELLNESS_2)
    git(repo, "commit", "-q", "-am", "shift work affects sick days directly")
    shas["c2"] = git(repo, "rev-parse", "HEAD")
    write(repo, "wellness.dag", WELLNESS_3)
    git(repo, "commit", "-q", "-am", "age is not a confounder; adjust for shift work")
    shas["c3"] = git(repo, "rev-parse", "HEAD")
    (repo / "models").mkdir()
    git(repo, "mv", "heat.dag", "models/heat.dag")
    git(repo, "commit", "-q", "-m", "move the heat diagram")
    shas["c4"] = git(repo, "rev-parse", "HEAD")
    git(repo, "rm", "-q", "soil.dag")
    write(repo, "notes.txt", "changed, still not a diagram\n")
    git(repo, "commit", "-q", "-am", "drop the soil diagram")
    shas["c5"] = git(repo, "rev-parse", "HEAD")
    monkeypatch.chdir(repo)
    return repo, shas


def run_json(capsys, *args: str) -> dict:
    code = main(["diff", "--format", "json", *args])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def one_file(doc: dict, path: str) -> dict:
    (f,) = [f for f in doc["files"] if path in (f["new_path"], f["old_path"])]
    return f


# --- tests -----------------------------------------------------------------------------


def test_oracle_agrees_with_the_scenario():
    # the premise of the tests below, from the definitions
    assert oracle_valid(G1, "enrolled", "sick_days", {"age", "fitness_base"})
    assert not oracle_valid(G2, "enrolled", "sick_days", {"age", "fitness_base"})
    assert oracle_valid(G3, "enrolled", "sick_days", {"fitness_base", "shift_work"})


def test_added_arrow_makes_declared_set_insufficient(history, capsys):
    repo, shas = history
    doc = run_json(capsys, "--base", shas["c1"], "--head", shas["c2"])
    assert doc["schema"] == 1
    assert (doc["base"], doc["head"]) == (
        f"{shas['c1']} ({shas['c1'][:7]})",
        f"{shas['c2']} ({shas['c2'][:7]})",
    )
    assert [f["new_path"] for f in doc["files"]] == ["wellness.dag"]  # heat/soil untouched
    f = one_file(doc, "wellness.dag")
    assert f["status"] == "modified"
    assert f["arrows_added"] == [
        {"arrow": "shift_work -> sick_days", "source": "shift_work", "target": "sick_days",
         "bidirected": False, "line": 5}
    ]  # fmt: skip
    assert f["arrows_removed"] == [] and f["variables_added"] == []
    (a,) = f["analyses"]
    assert a["name"] == "total_effect" and a["status"] == "changed" and a["roles_changed"] == []
    before, after = a["before"], a["after"]
    assert before["declared"] == after["declared"] == ["age", "fitness_base"]
    assert before["declared_valid"] is oracle_valid(
        G1, "enrolled", "sick_days", {"age", "fitness_base"}
    )
    assert after["declared_valid"] is oracle_valid(
        G2, "enrolled", "sick_days", {"age", "fitness_base"}
    )
    assert before["declared_valid"] is True and after["declared_valid"] is False
    assert before["minimal_sets"] == oracle_minimal_sets(G1, "enrolled", "sick_days", MEASURED)
    assert after["minimal_sets"] == oracle_minimal_sets(G2, "enrolled", "sick_days", MEASURED)
    assert after["minimal_sets"] == [["age", "fitness_base", "shift_work"]]
    # the verdict's reason comes along, worded as `check` words its finding
    (problem,) = after["problems"]
    assert problem["rule"] == "open-biasing-path"
    assert problem["path"] == ["enrolled", "shift_work", "sick_days"]
    assert problem["fixable"] == ["shift_work"]
    (finding,) = [f for f in lint_source(WELLNESS_2, "w.dag").findings if f.analysis]
    assert (finding.rule, finding.message) == (problem["rule"], problem["message"])
    assert before["problems"] == []
    assert (
        "this change makes the declared set {age, fitness_base} insufficient: the new arrow "
        "`shift_work -> sick_days` opens `enrolled <- shift_work -> sick_days`"
    ) in a["remarks"]
    # the independence of shift_work and sick_days is gone (they are now adjacent)
    removed = f["independencies"]["removed"]
    assert [(i["a"], i["b"]) for i in removed] == [("shift_work", "sick_days")]
    assert nx.is_d_separator(G1, {"shift_work"}, {"sick_days"}, set(removed[0]["given"]))
    assert f["independencies"]["added"] == []
    assert f["independencies"]["before"] == f["independencies"]["after"] + 1


def test_removed_confounder_and_changed_roles(history, capsys):
    repo, shas = history
    doc = run_json(capsys, "--base", shas["c2"], "--head", shas["c3"])
    f = one_file(doc, "wellness.dag")
    assert [(x["arrow"], x["line"]) for x in f["arrows_removed"]] == [("age -> enrolled", 2)]
    assert f["arrows_added"] == []
    (a,) = f["analyses"]
    assert a["roles_changed"] == [
        {
            "role": "adjust",
            "before": ["age", "fitness_base"],
            "after": ["fitness_base", "shift_work"],
        }
    ]
    assert a["before"]["declared_valid"] is False and a["after"]["declared_valid"] is True
    assert a["after"]["minimal_sets"] == oracle_minimal_sets(G3, "enrolled", "sick_days", MEASURED)
    assert a["after"]["minimal_sets"] == [["fitness_base", "shift_work"]]
    assert (
        "the declared set changed from {age, fitness_base} to {fitness_base, shift_work}"
        in a["remarks"]
    )
    assert "this change makes the declared set {fitness_base, shift_work} valid" in a["remarks"]
    # age and enrolled are now separable: a new implied independence
    added = {(i["a"], i["b"]): i["given"] for i in f["independencies"]["added"]}
    assert ("age", "enrolled") in added
    assert nx.is_d_separator(G3, {"age"}, {"enrolled"}, set(added[("age", "enrolled")]))


def test_declared_set_loses_a_confounder_two_files(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    write(tmp_path, "old.dag", WELLNESS)
    write(
        tmp_path, "new.dag", WELLNESS.replace("adjust: age, fitness_base", "adjust: fitness_base")
    )
    assert main(["diff", "old.dag", "new.dag"]) == 0
    out = capsys.readouterr().out
    assert out.splitlines()[0] == "dagward diff: old.dag -> new.dag"
    assert (
        "    ! this change makes the declared set {fitness_base} insufficient: "
        "the path `enrolled <- age -> sick_days` is open"
    ) in out.splitlines()
    assert "    verdict: valid -> not valid (open-biasing-path)" in out.splitlines()
    assert "    declared set: {age, fitness_base} -> {fitness_base}" in out.splitlines()
    assert not oracle_valid(G1, "enrolled", "sick_days", {"fitness_base"})


def test_rename_and_delete(history, capsys):
    repo, shas = history
    doc = run_json(capsys, "--base", shas["c3"], "--head", shas["c5"])
    by_status = {f["status"]: f for f in doc["files"]}
    assert set(by_status) == {"renamed", "deleted"}  # notes.txt is not a diagram
    renamed = by_status["renamed"]
    assert (renamed["old_path"], renamed["new_path"]) == ("heat.dag", "models/heat.dag")
    assert renamed["arrows_added"] == renamed["arrows_removed"] == []
    deleted = by_status["deleted"]
    assert (deleted["old_path"], deleted["new_path"]) == ("soil.dag", None)
    assert sorted(a["arrow"] for a in deleted["arrows_removed"]) == [
        "amendment -> soil_carbon", "rainfall -> yield", "soil_carbon -> yield"]  # fmt: skip
    assert deleted["variables_removed"] == ["amendment", "rainfall", "soil_carbon", "yield"]
    assert deleted["independencies"]["after"] is None
    # the whole history: wellness modified, heat renamed, soil deleted
    doc = run_json(capsys, "--base", shas["c1"], "--head", shas["c5"])
    assert sorted((f["status"], f["new_path"] or f["old_path"]) for f in doc["files"]) == [
        ("deleted", "soil.dag"),
        ("modified", "wellness.dag"),
        ("renamed", "models/heat.dag"),
    ]


def test_broken_syntax_in_working_tree(history, capsys):
    repo, shas = history
    write(repo, "wellness.dag", WELLNESS_3.replace("age -> sick_days", "age -> "))
    write(repo, "extra/new_model.dag", "canopy -> shade\n")  # untracked, so "added"
    doc = run_json(capsys, "--base", "HEAD")
    assert doc["head"] == "working tree"
    f = one_file(doc, "wellness.dag")
    assert f["old_syntax_error"] is None
    assert f["new_syntax_error"]["line"] == 2 and f["new_syntax_error"]["column"] == 8
    assert "expected a variable name" in f["new_syntax_error"]["message"]
    assert f["arrows_added"] == f["arrows_removed"] == []  # nothing known about the new side
    (a,) = f["analyses"]
    assert a["after"] is None and a["before"]["declared_valid"] is True
    assert a["remarks"] == ["the new version does not parse, so there is nothing to compare with"]
    new = one_file(doc, "extra/new_model.dag")
    assert new["status"] == "added" and new["old_path"] is None
    assert [x["arrow"] for x in new["arrows_added"]] == ["canopy -> shade"]
    assert main(["diff", "--base", "HEAD"]) == 0
    text = capsys.readouterr().out.splitlines()
    assert "  the new version does not parse:" in text
    assert "    line 2, column 8: " + f["new_syntax_error"]["message"] in text


def test_default_base_is_merge_base_with_main(history, capsys):
    repo, shas = history
    git(repo, "checkout", "-q", "-b", "feature")
    write(repo, "wellness.dag", WELLNESS_3 + "enrolled <-> sick_days\n")
    git(repo, "commit", "-q", "-am", "unmeasured common cause of enrolment and sick days")
    git(repo, "checkout", "-q", "main")
    write(repo, "other.dag", "a -> b\n")
    git(repo, "add", "other.dag")
    git(repo, "commit", "-q", "-m", "main moves on")
    git(repo, "checkout", "-q", "feature")
    doc = run_json(capsys)
    assert doc["base"] == f"{shas['c5'][:7]} (merge base of HEAD and main)"
    assert [f["new_path"] for f in doc["files"]] == ["wellness.dag"]  # not other.dag
    f = doc["files"][0]
    assert [x["arrow"] for x in f["arrows_added"]] == ["enrolled <-> sick_days"]
    (a,) = f["analyses"]
    assert a["after"]["identifiable"] is False and a["after"]["minimal_sets"] == []
    assert any("no longer identifiable" in r for r in a["remarks"])


def test_markdown_has_mermaid_with_marked_new_arrow(history, capsys):
    repo, shas = history
    assert main(["diff", "--format", "markdown", "--base", shas["c1"], "--head", shas["c3"]]) == 0
    md = capsys.readouterr().out
    assert md.startswith("## Causal diagrams in this change\n")
    assert "### `wellness.dag` (modified)" in md
    mermaid = md.split("```mermaid\n", 1)[1].split("```", 1)[0].splitlines()
    assert "flowchart LR" in mermaid
    # the one Mermaid writer (dagward.render) drew it: same text as `render` of the file
    from dagward.render import picture, to_mermaid
    from dagward.syntax import parse_source

    diagram, _ = parse_source(WELLNESS_3, "wellness.dag")
    plain = to_mermaid(picture(diagram, None)).splitlines()
    ids = dict(re.findall(r'^  (v\d+)\("([^"]+)"\)$', "\n".join(mermaid), re.M))
    names = {v: k for k, v in ids.items()}
    new_link = f"  {names['shift_work']} ==> {names['sick_days']}"
    assert new_link in mermaid
    links = [line for line in mermaid if re.match(r"^  v\d+ \S+ v\d+$", line)]
    index = links.index(new_link)
    assert f"  linkStyle {index} stroke:#e8590c,stroke-width:4px" in mermaid
    # only the new arrow differs from the plain picture
    assert [x for x in mermaid if x not in plain] == [
        new_link,
        f"  linkStyle {index} stroke:#e8590c,stroke-width:4px",
    ]
    assert f"  {names['age']} --> {names['sick_days']}" in mermaid
    assert not any(f"{names['age']} --> {names['enrolled']}" in line for line in mermaid)
    assert "Thick orange links are new in this change" in md
    assert "Removed (not drawn): `age -> enrolled`." in md
    assert "| verdict | valid | valid |" in md
    assert "| declared set | {age, fitness_base} | {fitness_base, shift_work} |" in md


def test_missing_base_revision_exits_2(history, capsys):
    assert main(["diff", "--base", "no-such-branch"]) == 2
    err = capsys.readouterr().err
    assert err == "dagward: error: base revision `no-such-branch` not found in this repository\n"
    assert main(["diff", "--head", "0000000"]) == 2
    assert capsys.readouterr().err.count("\n") == 1


def test_repository_without_default_branch_exits_2(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path.parent))
    git(tmp_path, "init", "-q", "-b", "trunk")
    write(tmp_path, "a.dag", "a -> b\n")
    git(tmp_path, "add", ".")
    git(tmp_path, "commit", "-q", "-m", "one")
    monkeypatch.chdir(tmp_path)
    assert main(["diff"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("dagward: error: no base revision: none of origin/HEAD, main, master")
    assert err.count("\n") == 1
    # with an explicit base it works
    assert main(["diff", "--base", "HEAD", "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["files"] == []


def test_not_a_git_repository_exits_2(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path.parent))
    monkeypatch.chdir(tmp_path)
    assert main(["diff"]) == 2
    err = capsys.readouterr().err
    assert "is not inside a git repository" in err and err.count("\n") == 1
    assert main(["diff", "missing.dag", "other.dag"]) == 2
    assert capsys.readouterr().err.count("\n") == 1


def test_cli_subprocess_exit_code(history):
    repo, shas = history
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    done = subprocess.run(
        [os.sys.executable, "-m", "dagward", "diff", "--base", shas["c1"]],
        cwd=repo, capture_output=True, text=True, env=env,
    )  # fmt: skip
    assert done.returncode == 0, done.stderr
    assert "wellness.dag (modified)" in done.stdout
    assert "heat.dag -> models/heat.dag (renamed)" in done.stdout


def test_the_verdicts_path_and_reasons_are_used():
    """The remark spells the path of the verdict's own problem (the one `check` shows)
    and names the new arrow on it; the verdict row lists the verdict's rules."""
    from dagward.diff import Side, compare
    from dagward.report.diff import remarks, verdict_text
    from dagward.verdict import Verdict
    from dagward.wording import spell_path

    new_text = WELLNESS + "enrolled <-> sick_days\n"
    old = Side("w.dag", lint_source(WELLNESS, "w.dag"))
    new = Side("w.dag", lint_source(new_text, "w.dag"))
    f = compare(old, new, "modified")
    (a,) = f.analyses
    verdict = Verdict(new.diagram, new.diagram.analysis("total_effect"))
    (problem,) = verdict.problems
    assert problem.rule == "unmeasured-confounding"
    assert spell_path(verdict.graph, problem.path) == "enrolled <-> sick_days"
    words = remarks(a, f)
    assert words[0] == (
        "this change makes the declared set {age, fitness_base} insufficient: the new arrow "
        "`enrolled <-> sick_days` opens `enrolled <-> sick_days`"
    )
    assert "now reported: unmeasured-confounding" in words
    assert verdict_text(a.after) == "not valid (unmeasured-confounding)"
    # the check finding says the same thing in the same words
    (finding,) = [x for x in new.result.findings if x.analysis == "total_effect"]
    assert (finding.rule, finding.path) == (
        "unmeasured-confounding",
        ("enrolled", "<->", "sick_days"),
    )
    assert [x.key for x in f.arrows_added] == [("<->", "enrolled", "sick_days")]


def test_paths_limit_the_comparison_from_a_subdirectory(history, capsys, monkeypatch):
    repo, shas = history
    monkeypatch.chdir(repo / "models")
    doc = run_json(capsys, "--base", shas["c1"], "--head", shas["c5"], ".")
    # only the file under models/, still named from the repository root
    assert [(f["status"], f["old_path"], f["new_path"]) for f in doc["files"]] == [
        ("renamed", "heat.dag", "models/heat.dag")
    ]


def test_markdown_draws_a_new_hidden_cause_as_its_legend_says(tmp_path, capsys):
    old, new = tmp_path / "old.dag", tmp_path / "new.dag"
    old.write_text("a -> b\nc -> b\n", "utf-8")
    new.write_text("a -> b\nc -> b\na <-> c\n", "utf-8")
    assert main(["diff", "--format", "markdown", str(old), str(new)]) == 0
    md = capsys.readouterr().out
    mermaid = md.split("```mermaid\n", 1)[1].split("```", 1)[0].splitlines()
    links = [line for line in mermaid if re.search(r" (-->|==>|<-\.->|<==>) ", line)]
    assert not any("<==>" in line for line in links)  # not a thick solid line
    (hidden,) = [i for i, line in enumerate(links) if "<-.->" in line]
    # the dash pattern of a `<->` in `render`'s own key, thick and orange as new
    assert f"  linkStyle {hidden} stroke:#e8590c,stroke-width:4px,stroke-dasharray:7 4" in mermaid
    assert "dashed links with two heads are shared hidden causes" in md


# --- facts, not wording (each failed on the comparison before the verdict) -------------


def two_file_json(tmp_path, capsys, old: str, new: str) -> dict:
    write(tmp_path, "old.dag", old)
    write(tmp_path, "new.dag", new)
    code = main(["diff", "--format", "json", str(tmp_path / "old.dag"), str(tmp_path / "new.dag")])
    out = capsys.readouterr()
    assert code == 0, out.err
    (f,) = json.loads(out.out)["files"]
    return f


def two_file_text(tmp_path, capsys) -> list[str]:
    assert main(["diff", str(tmp_path / "old.dag"), str(tmp_path / "new.dag")]) == 0
    return capsys.readouterr().out.splitlines()


def test_shifted_lines_alone_change_no_analysis(tmp_path, capsys):
    # the declared set is not valid on both sides; a comment moves every line down,
    # so only where the finding sits changes -- no fact of the analysis does
    f = two_file_json(tmp_path, capsys, WELLNESS_2, "# reviewed\n" + WELLNESS_2)
    (a,) = f["analyses"]
    assert a["status"] == "unchanged" and a["remarks"] == []
    assert a["before"]["declared_valid"] is a["after"]["declared_valid"] is False
    assert "  analysis total_effect: unchanged; declared set: not valid (open-biasing-path)" in (
        two_file_text(tmp_path, capsys)
    )


def test_reversed_arrow_is_one_reversal(tmp_path, capsys):
    old = "age -> enrolled\nenrolled -> sick_days\nfitness -> enrolled\nfitness -> sick_days\n"
    new = old.replace("fitness -> enrolled", "enrolled -> fitness")
    f = two_file_json(tmp_path, capsys, old, new)
    assert f["arrows_added"] == [] and f["arrows_removed"] == []
    assert f["arrows_reversed"] == [
        {"arrow": "enrolled -> fitness", "was": "fitness -> enrolled", "source": "enrolled",
         "target": "fitness", "line": 3, "old_line": 3}
    ]  # fmt: skip
    text = two_file_text(tmp_path, capsys)
    assert "  arrows reversed:" in text
    assert "    ~ `enrolled -> fitness` (line 3), was `fitness -> enrolled` (line 3)" in text
    assert not any(line.startswith(("    + ", "    - ")) for line in text)


# Front door (Pearl 1995, "Causal diagrams for empirical research", Biometrika 82(4),
# the front-door criterion): a hidden cause of exposure and outcome, the whole
# effect through a measured mediator. The scenario is invented.
FRONT_DOOR = """\
unmeasured motivation
motivation -> enrolled, sick_days
enrolled -> steps -> sick_days

analysis total_effect {
  exposure: enrolled
  outcome: sick_days
}
"""


def test_front_door_lost_and_gained_in_words(tmp_path, capsys):
    direct = FRONT_DOOR + "enrolled -> sick_days\n"  # the mediator no longer carries it all
    f = two_file_json(tmp_path, capsys, FRONT_DOOR, direct)
    (a,) = f["analyses"]
    before, after = a["before"], a["after"]
    assert (before["identifiable"], before["route"], before["front_door"]) == (
        False, "front-door", ["steps"]
    )  # fmt: skip
    assert (after["identifiable"], after["route"], after["front_door"]) == (False, "none", None)
    assert a["status"] == "changed"
    assert a["remarks"] == [
        "the front-door criterion no longer holds (it held for {steps}): the effect is now "
        "identified neither by adjustment nor by the front-door criterion"
    ]
    text = two_file_text(tmp_path, capsys)
    assert (
        "    identification: by the front-door criterion only (for {steps}) -> "
        "neither by adjustment nor by the front-door criterion"
    ) in text
    # and back
    f = two_file_json(tmp_path, capsys, direct, FRONT_DOOR)
    (a,) = f["analyses"]
    assert a["remarks"] == [
        "the front-door criterion now holds (for {steps}): the effect is identified through "
        "it although no valid adjustment set exists"
    ]


def test_json_and_text_speak_the_same_verdict(tmp_path, capsys):
    # no valid adjustment set after the change, but the front door holds: JSON says
    # identifiable false (by adjustment) and route front-door; the text says exactly that
    old = FRONT_DOOR.replace("unmeasured motivation\n", "")
    f = two_file_json(tmp_path, capsys, old, FRONT_DOOR)
    (a,) = f["analyses"]
    assert (a["before"]["identifiable"], a["before"]["route"]) == (True, "adjustment")
    assert (a["after"]["identifiable"], a["after"]["route"]) == (False, "front-door")
    text = two_file_text(tmp_path, capsys)
    assert [line.removeprefix("    ! ") for line in text if line.startswith("    ! ")] == (
        a["remarks"]
    )
    assert a["remarks"][0] == (
        "no valid adjustment set exists any more among the measured variables: the effect is "
        "no longer identifiable by covariate adjustment; the front-door criterion holds for "
        "{steps}, so the effect is still identified that way"
    )
    assert (
        "    identification: by adjustment -> by the front-door criterion only (for {steps})"
        in (text)
    )
    assert "    minimal adjustment sets: {motivation} -> none exists" in text


def test_an_instrument_is_a_note_not_a_reason(tmp_path, capsys):
    old = "distance -> enrolled\nenrolled -> sick_days\nage -> enrolled, sick_days\n" + (
        "analysis total_effect {\n  exposure: enrolled\n  outcome: sick_days\n  adjust: age\n}\n"
    )
    new = old.replace("adjust: age", "adjust: age, distance")
    f = two_file_json(tmp_path, capsys, old, new)
    (a,) = f["analyses"]
    after = a["after"]
    assert after["declared_valid"] is True and after["problems"] == []
    assert [n["rule"] for n in after["notes"]] == ["instrument-adjusted"]
    assert "new note: instrument-adjusted for `distance`" in a["remarks"]
    assert "    verdict: valid -> valid (note: instrument-adjusted)" in two_file_text(
        tmp_path, capsys
    )
    # with an invalid set too, the instrument stays out of the reasons
    worse = new.replace("adjust: age, distance", "adjust: distance")
    f = two_file_json(tmp_path, capsys, old, worse)
    after = f["analyses"][0]["after"]
    assert after["declared_valid"] is False
    assert [p["rule"] for p in after["problems"]] == ["open-biasing-path"]
    assert [n["rule"] for n in after["notes"]] == ["instrument-adjusted"]
    text = two_file_text(tmp_path, capsys)
    assert "    verdict: valid -> not valid (open-biasing-path; note: instrument-adjusted)" in text


# --- the merge base (on a branch behind main) -------------------------------------------


def test_base_main_is_the_merge_base_on_a_branch_behind_main(history, capsys):
    repo, shas = history
    # a branch that left main at c3; main went on with c4 (rename) and c5 (delete)
    git(repo, "checkout", "-q", "-b", "feature", shas["c3"])
    write(repo, "wellness.dag", WELLNESS_3 + "enrolled <-> sick_days\n")
    git(repo, "commit", "-q", "-am", "a hidden common cause")
    feature = git(repo, "rev-parse", "HEAD")
    label = f"{shas['c3'][:7]} (merge base of HEAD and main; main is at {shas['c5'][:7]})"
    for head in ([], ["--head", "HEAD"]):
        doc = run_json(capsys, "--base", "main", *head)
        # main's own later changes (heat.dag renamed, soil.dag deleted) are not the branch's
        assert [(f["status"], f["new_path"]) for f in doc["files"]] == [
            ("modified", "wellness.dag")
        ]
        assert doc["base_commit"] == shas["c3"]
        assert doc["base"] == label
    assert doc["head_commit"] == feature
    assert main(["diff", "--base", "main"]) == 0
    assert capsys.readouterr().out.splitlines()[0] == f"dagward diff: {label} -> working tree"
    assert main(["diff", "--base", "main", "--format", "markdown"]) == 0
    assert f"Comparing {label} with working tree." in capsys.readouterr().out
    # the tip of main would have shown the branch deleting soil.dag and un-renaming heat
    done = git(repo, "diff", "--name-status", "main", "HEAD")
    assert "soil.dag" in done and "heat.dag" in done


# --- every command speaks the same verdict -----------------------------------------------


@pytest.fixture(scope="module")
def shared_repo(tmp_path_factory) -> Path:
    """One repository for all examples (git is the slow part); each example commits
    a base and a head and compares the two commits. Under pytest's temporary
    folder, which pytest removes."""
    repo = tmp_path_factory.mktemp("diff-prop")
    git(repo, "init", "-q", "-b", "main")
    return repo


@st.composite
def changed_case(draw):
    """A random analysis (tests/helpers/oracle.py) and one random change to it,
    drawn from every change possible: an arrow added, removed or reversed (kept
    acyclic), a `<->` removed, a variable put into or out of `adjust:`, or made
    unmeasured or measured."""
    case = draw(analysis_case(max_nodes=7))
    if draw(st.booleans()):
        # half the time a valid declared set, so that changes can break it
        valid = brute_force_minimal_sets(case.G, case.X, case.Y, case.measured - case.X - case.Y)
        if valid:
            case = replace(case, Z=frozenset(draw(st.sampled_from(valid))))
    G = case.G.copy()
    names, measured, Z = case.observed, set(case.measured), set(case.Z)
    edges = sorted((a, b) for a, b in G.edges if not is_hidden(G, a))
    changes = [("add", a, b) for i, a in enumerate(names) for b in names[i + 1 :]
               if not G.has_edge(a, b)]  # fmt: skip
    changes += [("remove", a, b) for a, b in edges] + [("reverse", a, b) for a, b in edges]
    changes += [("unhide", h, None) for h in sorted(n for n in G if is_hidden(G, n))]
    changes += [("adjust", v, None) for v in sorted(set(names) - case.X - case.Y)]
    changes += [("measure", v, None) for v in names]
    by_kind: dict[str, list] = {}
    for change in changes:
        by_kind.setdefault(change[0], []).append(change)
    if Z:  # an adjusted variable turns out not to be measured after all
        by_kind["hide-adjusted"] = [("measure", v, None) for v in sorted(Z)]
    # each kind as likely as the others, whatever their numbers
    kind, a, b = draw(st.sampled_from(by_kind[draw(st.sampled_from(sorted(by_kind)))]))
    if kind == "add":
        G.add_edge(a, b)  # index order stays a topological order
    elif kind in ("remove", "reverse"):
        G.remove_edge(a, b)
        if kind == "reverse" and not nx.has_path(G, a, b):
            G.add_edge(b, a)  # no other path a ~> b, so no cycle
    elif kind == "unhide":
        G.remove_node(a)
    elif kind == "adjust":
        Z ^= {a}
    else:
        measured ^= {a}
    return case, (G, names, frozenset(measured), case.X, case.Y, frozenset(Z))


def _check_verdict(text: str):
    """What `check` says about the analysis: its validity findings."""
    result = lint_source(text, "q.dag")
    return result, {f.rule for f in result.findings if f.analysis == "question"}


@settings(max_examples=examples(100), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(changed_case())
def test_diff_speaks_the_verdict_of_check_and_the_oracle(shared_repo, example):
    from dagward.diff import diff_revisions
    from dagward.report.diff import to_json

    case, head = example
    base_text = to_dag_text(case.G, case.observed, case.measured, case.X, case.Y, case.Z)
    head_text = to_dag_text(*head)
    repo = shared_repo
    shas = []
    for text in (base_text, head_text):
        write(repo, "q.dag", text)
        git(repo, "add", "q.dag")
        git(repo, "commit", "-q", "--allow-empty", "-m", "step")
        shas.append(git(repo, "rev-parse", "HEAD"))
    doc = to_json(diff_revisions(Settings(), shas[0], shas[1], cwd=repo))
    if base_text == head_text:
        assert doc["files"] == []
        return
    (f,) = doc["files"]
    (a,) = f["analyses"]
    sides = (
        ("before", base_text, case.G, case.measured, case.Z),
        ("after", head_text, head[0], head[2], head[5]),
    )
    for key, text, G, measured, Z in sides:
        state = a[key]
        result, rules = _check_verdict(text)
        diagram = result.diagram
        verdict = Verdict(diagram, diagram.analysis("question"))
        assert state["checked"] is True
        # the one verdict ...
        assert state["declared_valid"] is verdict.declared_valid
        assert state["identifiable"] is verdict.identifiable
        assert [p["rule"] for p in state["problems"]] == [p.rule for p in verdict.problems]
        # ... is what `check` says (a declared set is valid exactly when no validity
        # rule fires; no valid set exists exactly when unmeasured-confounding fires) ...
        assert state["declared_valid"] is not (rules & VALIDITY_RULES)
        assert state["identifiable"] is ("unmeasured-confounding" not in rules)
        assert not {p["rule"] for p in state["problems"]} - VALIDITY_RULES
        # ... and what the definitions say (brute force over paths and subsets)
        X, Y = case.X, case.Y
        valid = Z <= measured and brute_force_valid(G, X, Y, set(Z))
        assert state["declared_valid"] is valid
        candidates = set(measured) - X - Y
        minimal = brute_force_minimal_sets(G, X, Y, candidates)
        assert state["identifiable"] is bool(minimal)
        listed = sorted(state["minimal_sets"])
        if state["truncated"]:
            assert set(map(tuple, listed)) < {tuple(sorted(m)) for m in minimal}
        else:
            assert sorted(sorted(m) for m in minimal) == listed
    # an analysis is "changed" exactly when a fact of its verdict changed
    facts = ("declared_valid", "identifiable", "route", "minimal_sets", "smallest",
             "best_achievable", "declared", "exposure", "outcome")  # fmt: skip
    same = all(a["before"][k] == a["after"][k] for k in facts) and [
        (p["rule"], p.get("variable")) for p in a["before"]["problems"] + a["before"]["notes"]
    ] == [(p["rule"], p.get("variable")) for p in a["after"]["problems"] + a["after"]["notes"]]
    assert (a["status"] == "unchanged") is same


def test_base_without_common_history_is_compared_at_its_tip(history, capsys):
    repo, shas = history
    git(repo, "checkout", "-q", "--orphan", "fresh")
    git(repo, "rm", "-q", "-r", "--cached", ".")
    write(repo, "wellness.dag", WELLNESS)
    git(repo, "add", "wellness.dag")
    git(repo, "commit", "-q", "-m", "a fresh start")
    doc = run_json(capsys, "--base", "main", "--head", "HEAD")
    assert doc["base_commit"] == shas["c5"]
    assert doc["base"] == f"main ({shas['c5'][:7]}; no common history with HEAD)"
