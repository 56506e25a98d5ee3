"""What a change to the diagrams means: `dagward diff`.

Two sides are compared file by file: two git revisions (old versions read with
`git show REV:path`, the working tree read from disk), or two files given
directly. For each file the report says which arrows, variables and roles were
added or removed, and for each analysis the declared adjustment set's verdict,
the minimal valid adjustment sets before and after, and what the change does in
words ("this change makes the declared set {age} insufficient: the new arrow
`shift_work -> sick_days` opens enrolled <- shift_work -> sick_days"). The
conditional independencies the diagram implies among measured variables are
compared per file (they depend on the diagram, not on the analysis).

Verdicts: a declared set is *valid* when it meets the generalised adjustment
criterion (Shpitser, VanderWeele & Robins 2010, "On the validity of covariate
adjustment for estimating causal effects"; Perkovic et al. 2018) as computed by
`dagward.causal.is_valid_adjustment`; the findings the causal rules report for
the analysis are listed beside it. When a side has structure errors (a cycle, an
unknown name...) its analyses are "not checked" and the reason is given.

JSON shape (`--format json`, schema 1)::

    {
      "tool": {"name": "dagward", "version": "0.1.0"},
      "schema": 1,
      "base": "3f2a9c1 (merge base of HEAD and main)",   # or the old file's path
      "head": "working tree",                             # or a revision, or the new file
      "files": [
        {
          "old_path": "causal/wellness.dag" | null,       # null when added
          "new_path": "causal/wellness.dag" | null,       # null when deleted
          "status": "added" | "deleted" | "renamed" | "modified" | "unchanged",
          "old_syntax_error": null | {"line": 3, "column": 7, "message": "..."},
          "new_syntax_error": null | {...},
          "arrows_added":   [{"arrow": "a -> b", "source": "a", "target": "b",
                              "bidirected": false, "line": 7}],     # line in the new file
          "arrows_removed": [...],                                   # line in the old file
          "variables_added": ["shift_work"], "variables_removed": [],
          "now_unmeasured": [], "now_measured": [],
          "problems_added":   [{"rule": "...", "severity": "...", "line": 4, "message": "..."}],
          "problems_removed": [...],          # findings not tied to an analysis
          "analyses": [
            {
              "name": "total_effect",
              "status": "added" | "removed" | "changed" | "unchanged",
              "roles_changed": [{"role": "adjust", "before": ["age"], "after": []}],
              "before": state | null, "after": state | null,
              "remarks": ["this change makes the declared set {age} insufficient: ..."]
            }
          ],
          "independencies": {
            "before": 5 | null, "after": 4 | null,     # null: side missing or not computed
            "added":   [{"a": "x", "b": "y", "given": ["z"]}],
            "removed": [...]
          }
        }
      ]
    }

    state = {"exposure": [...], "outcome": [...], "declared": [...] | null,
             "checked": true, "note": null | "why it was not checked",
             "declared_valid": true | false | null,
             "problems": [{"rule", "severity", "line", "message", "path"?}],
             "identifiable": true | false | null,
             "minimal_sets": [["age", "fitness_base"]], "truncated": false,
             "explanation": null | "why the declared set is not valid"}

Names inside a set are sorted; sets are sorted by size, then by name.

`dagward diff` is informational: it exits 0 whatever changed, and 2 (with a
one-line message) when the revisions cannot be read.
"""

from __future__ import annotations

import os
import subprocess
from dataclasses import dataclass, field
from itertools import islice
from pathlib import Path
from typing import Any

from .config import Settings
from .engine import FileResult, lint_source
from .errors import UsageProblem
from .findings import Finding
from .model import Diagram
from .version import __version__

SCHEMA_VERSION = 1
WORKING_TREE = "working tree"
DEFAULT_BRANCHES = ("origin/HEAD", "main", "master")
# Implied independencies are one separator search per measured pair; beyond this
# many measured variables the comparison would be slow and unreadable anyway.
MAX_INDEPENDENCE_VARIABLES = 300
# Mermaid pictures with more arrows than this are not drawn (they do not render
# legibly in a pull-request comment).
MAX_PICTURE_ARROWS = 150

Names = tuple[str, ...]


# === data ==============================================================================


@dataclass(frozen=True)
class ArrowChange:
    source: str
    target: str
    bidirected: bool
    line: int

    def describe(self) -> str:
        return f"{self.source} {'<->' if self.bidirected else '->'} {self.target}"


@dataclass(frozen=True)
class SyntaxNote:
    line: int
    column: int
    message: str


@dataclass(frozen=True)
class Problem:
    rule: str
    severity: str
    line: int
    message: str
    path: Names | None = None  # the finding's path (names; `<->` for a hidden parent)


@dataclass(frozen=True)
class Independence:
    a: str
    b: str
    given: Names


@dataclass(frozen=True)
class RoleChange:
    role: str
    before: Names | None
    after: Names | None


@dataclass(frozen=True)
class AnalysisState:
    exposure: Names
    outcome: Names
    declared: Names | None
    checked: bool
    note: str | None = None
    declared_valid: bool | None = None
    problems: tuple[Problem, ...] = ()
    identifiable: bool | None = None
    minimal_sets: tuple[Names, ...] = ()
    truncated: bool = False
    explanation: str | None = None


@dataclass(frozen=True)
class AnalysisDiff:
    name: str
    status: str
    before: AnalysisState | None
    after: AnalysisState | None
    roles_changed: tuple[RoleChange, ...] = ()
    remarks: tuple[str, ...] = ()


@dataclass(frozen=True)
class FileDiff:
    old_path: str | None
    new_path: str | None
    status: str
    old_error: SyntaxNote | None = None
    new_error: SyntaxNote | None = None
    arrows_added: tuple[ArrowChange, ...] = ()
    arrows_removed: tuple[ArrowChange, ...] = ()
    variables_added: Names = ()
    variables_removed: Names = ()
    now_unmeasured: Names = ()
    now_measured: Names = ()
    problems_added: tuple[Problem, ...] = ()
    problems_removed: tuple[Problem, ...] = ()
    analyses: tuple[AnalysisDiff, ...] = ()
    independencies_before: int | None = None
    independencies_after: int | None = None
    independencies_added: tuple[Independence, ...] = ()
    independencies_removed: tuple[Independence, ...] = ()
    independencies_note: str | None = None
    new_diagram: Diagram | None = field(default=None, compare=False, repr=False)

    @property
    def path(self) -> str:
        return self.new_path or self.old_path or "?"


@dataclass(frozen=True)
class DiffReport:
    base: str
    head: str
    files: tuple[FileDiff, ...]


# === sets and paths in words ===========================================================


def sorted_set(names) -> Names:
    return tuple(sorted(names))


def sort_sets(sets) -> tuple[Names, ...]:
    return tuple(sorted((sorted_set(s) for s in sets), key=lambda s: (len(s), s)))


def braces(names) -> str:
    return "{" + ", ".join(names) + "}"


def describe_sets(sets: tuple[Names, ...], truncated: bool = False) -> str:
    if not sets:
        return "none exists"
    if sets == ((),):
        return "{} (no adjustment needed)"
    text = "; ".join(braces(s) for s in sets)
    return text + ("; ... (more not shown)" if truncated else "")


def spell_path(G, nodes: list[str]) -> tuple[str, list[tuple[str, str, bool]]]:
    """A path in arrows (`a <- b -> c`, a hidden parent as `a <-> b`), and its links
    as (source, target, bidirected) keys."""
    from .causal import is_hidden

    words = [nodes[0]]
    links: list[tuple[str, str, bool]] = []
    for i in range(1, len(nodes)):
        v = nodes[i]
        if is_hidden(G, v):
            continue
        prev = nodes[i - 1]
        if is_hidden(G, prev):
            words.append(f"<-> {v}")
            links.append(_key(nodes[i - 2], v, True))
        elif G.has_edge(prev, v):
            words.append(f"-> {v}")
            links.append(_key(prev, v, False))
        else:
            words.append(f"<- {v}")
            links.append(_key(v, prev, False))
    return " ".join(words), links


def spell_names(G, names: tuple[str, ...]) -> str:
    """A finding's path (names, with `<->` where a hidden parent joins two) in arrows."""
    words = [names[0]]
    for i in range(1, len(names)):
        v = names[i]
        if v == "<->":
            continue
        prev = names[i - 1]
        if prev == "<->":
            words.append(f"<-> {v}")
        elif G.has_edge(prev, v):
            words.append(f"-> {v}")
        else:
            words.append(f"<- {v}")
    return " ".join(words)


def _key(source: str, target: str, bidirected: bool) -> tuple[str, str, bool]:
    if bidirected and target < source:
        source, target = target, source
    return (source, target, bidirected)


def _arrow_keys(diagram: Diagram) -> dict[tuple[str, str, bool], int]:
    out: dict[tuple[str, str, bool], int] = {}
    for a in diagram.arrows:
        out.setdefault(_key(a.source.text, a.target.text, a.bidirected), a.line)
    return out


# === one side ===========================================================================


@dataclass(frozen=True)
class Side:
    """One version of one file: what was read and what the linter made of it."""

    path: str
    result: FileResult

    @property
    def diagram(self) -> Diagram | None:
        return self.result.diagram

    @property
    def syntax(self) -> SyntaxNote | None:
        if self.result.diagram is not None:
            return None
        f = next((f for f in self.result.findings if f.rule == "syntax-error"), None)
        return None if f is None else SyntaxNote(f.line, f.column, f.message)


def read_side(data: bytes, path: str, settings: Settings) -> Side:
    return Side(path, lint_source(data, path, settings))


def _problem(f: Finding) -> Problem:
    return Problem(f.rule, f.severity, f.line, f.message, f.path)


_GRAPH_BREAKERS = {"cycle", "self-loop"}


def _structure_note(result: FileResult) -> str:
    blocking = [f for f in result.findings if f.severity == "error" and f.analysis is None]
    blocking = blocking or [f for f in result.findings if f.severity == "error"]
    if not blocking:
        return "not checked: the diagram has structure errors"
    first = blocking[0]
    more = f" (and {len(blocking) - 1} more)" if len(blocking) > 1 else ""
    return f"not checked: line {first.line}: [{first.rule}] {first.message}{more}"


def analysis_state(side: Side, name: str, max_sets: int) -> AnalysisState:
    from .causal import (
        forbidden,
        is_valid_adjustment,
        mediators,
        minimal_adjustment_sets,
        open_noncausal_path,
    )

    diagram = side.diagram
    assert diagram is not None
    analysis = diagram.analysis(name)
    X, Y, Z = analysis.exposure_set, analysis.outcome_set, analysis.adjust_set
    base = dict(
        exposure=sorted_set(X),
        outcome=sorted_set(Y),
        declared=None if Z is None else sorted_set(Z),
        problems=tuple(_problem(f) for f in side.result.findings if f.analysis == name),
    )
    if not side.result.causal_ran:
        return AnalysisState(checked=False, note=_structure_note(side.result), **base)
    G = diagram.graph
    try:
        sets = list(islice(minimal_adjustment_sets(G, X, Y, diagram.measured), max_sets + 1))
        valid = None if Z is None else is_valid_adjustment(G, X, Y, Z)
    except ValueError as e:  # exposures overlapping outcomes and the like
        return AnalysisState(checked=False, note=f"not checked: {e}", **base)
    truncated = len(sets) > max_sets
    explanation = None
    with_path = [p for p in base["problems"] if p.severity == "error" and p.path]
    if valid is False and with_path:
        # the path the causal rule reports is the one `check` shows: use the same
        explanation = f"the path `{spell_names(G, with_path[0].path)}` is open"
    elif valid is False:
        assert Z is not None
        on_causal = sorted(Z & mediators(G, X, Y))
        after_effect = sorted((Z & forbidden(G, X, Y)) - set(on_causal))
        if on_causal:
            explanation = (
                f"{_ticks(on_causal)} {'lies' if len(on_causal) == 1 else 'lie'} on a causal "
                "path from the exposure to the outcome; adjusting blocks part of the effect"
            )
        elif after_effect:
            verb = "is an effect" if len(after_effect) == 1 else "are effects"
            explanation = (
                f"{_ticks(after_effect)} {verb} of a variable on a causal path from the "
                "exposure; adjusting can bias the estimate"
            )
        else:
            path = open_noncausal_path(G, X, Y, Z)
            if path is not None:
                explanation = f"the path `{spell_path(G, path)[0]}` is open"
    return AnalysisState(
        checked=True,
        declared_valid=valid,
        identifiable=bool(sets),
        minimal_sets=sort_sets(sets[:max_sets]),
        truncated=truncated,
        explanation=explanation,
        **base,
    )


def _ticks(names) -> str:
    items = [f"`{n}`" for n in names]
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _independencies(side: Side) -> tuple[dict[tuple[str, str], Names] | None, str | None]:
    from .causal import implied_independencies

    diagram = side.diagram
    if diagram is None:
        return None, None
    if any(f.rule in _GRAPH_BREAKERS for f in side.result.findings):
        return None, "not computed: the diagram has a cycle"
    if len(diagram.measured) > MAX_INDEPENDENCE_VARIABLES:
        return None, (
            f"not computed: {len(diagram.measured)} measured variables "
            f"(more than {MAX_INDEPENDENCE_VARIABLES})"
        )
    found = implied_independencies(diagram.graph, diagram.measured)
    return {(a, b): sorted_set(sep) for a, b, sep in found}, None


# === comparing two sides ================================================================


def compare(old: Side | None, new: Side | None, status: str, max_sets: int = 10) -> FileDiff:
    """Everything that changed between two versions of one file (either may be missing)."""
    old_d = old.diagram if old else None
    new_d = new.diagram if new else None
    empty: dict = {}
    old_arrows = _arrow_keys(old_d) if old_d else empty
    new_arrows = _arrow_keys(new_d) if new_d else empty
    # when a side does not parse, nothing is known about it: list no arrow changes
    comparable = (old is None or old_d is not None) and (new is None or new_d is not None)
    added = removed = ()
    vars_added: Names = ()
    vars_removed: Names = ()
    now_unmeasured: Names = ()
    now_measured: Names = ()
    if comparable:
        added = tuple(ArrowChange(*k, new_arrows[k]) for k in new_arrows if k not in old_arrows)
        removed = tuple(ArrowChange(*k, old_arrows[k]) for k in old_arrows if k not in new_arrows)
        old_vars = set(old_d.variables) if old_d else set()
        new_vars = set(new_d.variables) if new_d else set()
        vars_added = sorted_set(new_vars - old_vars)
        vars_removed = sorted_set(old_vars - new_vars)
        if old_d and new_d:
            both = old_vars & new_vars
            old_u, new_u = set(old_d.unmeasured), set(new_d.unmeasured)
            now_unmeasured = sorted_set((new_u - old_u) & both)
            now_measured = sorted_set((old_u - new_u) & both)

    def file_problems(side: Side | None) -> dict[tuple[str, str], Problem]:
        if side is None or side.diagram is None:
            return {}
        return {
            (f.rule, f.message): _problem(f) for f in side.result.findings if f.analysis is None
        }

    old_p, new_p = file_problems(old), file_problems(new)
    analyses = _compare_analyses(
        old, new, set(k for k in new_arrows if k not in old_arrows), max_sets
    )

    before, note_before = _independencies(old) if old else (None, None)
    after, note_after = _independencies(new) if new else (None, None)
    ind_added: tuple[Independence, ...] = ()
    ind_removed: tuple[Independence, ...] = ()
    if before is not None or after is not None:
        b, a = before or {}, after or {}
        if before is not None or old is None:
            ind_added = tuple(Independence(*k, a[k]) for k in sorted(a) if k not in b)
        if after is not None or new is None:
            ind_removed = tuple(Independence(*k, b[k]) for k in sorted(b) if k not in a)
    return FileDiff(
        old_path=old.path if old else None,
        new_path=new.path if new else None,
        status=status,
        old_error=old.syntax if old else None,
        new_error=new.syntax if new else None,
        arrows_added=added,
        arrows_removed=removed,
        variables_added=vars_added,
        variables_removed=vars_removed,
        now_unmeasured=now_unmeasured,
        now_measured=now_measured,
        problems_added=tuple(p for k, p in new_p.items() if k not in old_p),
        problems_removed=tuple(p for k, p in old_p.items() if k not in new_p),
        analyses=analyses,
        independencies_before=None if before is None else len(before),
        independencies_after=None if after is None else len(after),
        independencies_added=ind_added,
        independencies_removed=ind_removed,
        independencies_note=note_after or note_before,
        new_diagram=new_d,
    )


def _compare_analyses(
    old: Side | None, new: Side | None, new_arrows: set, max_sets: int
) -> tuple[AnalysisDiff, ...]:
    old_d = old.diagram if old else None
    new_d = new.diagram if new else None
    old_names = [a.name for a in old_d.analyses] if old_d else []
    new_names = [a.name for a in new_d.analyses] if new_d else []
    names = list(dict.fromkeys(new_names + old_names))  # new file order, removed ones last
    out = []
    for name in names:
        before = analysis_state(old, name, max_sets) if name in old_names else None  # type: ignore[arg-type]
        after = analysis_state(new, name, max_sets) if name in new_names else None  # type: ignore[arg-type]
        roles: list[RoleChange] = []
        if before and after:
            for role, b, a in (
                ("exposure", before.exposure, after.exposure),
                ("outcome", before.outcome, after.outcome),
                ("adjust", before.declared, after.declared),
            ):
                if b != a:
                    roles.append(RoleChange(role, b, a))
        unparsed = (old is not None and old_d is None) or (new is not None and new_d is None)
        if unparsed:
            # one side does not parse: its analyses are unknown, not added or removed
            side = "old" if old is not None and old_d is None else "new"
            remark = f"the {side} version does not parse, so there is nothing to compare with"
            out.append(AnalysisDiff(name, "changed", before, after, (), (remark,)))
            continue
        if before is None:
            status = "added"
        elif after is None:
            status = "removed"
        elif roles or before != after:
            status = "changed"
        else:
            status = "unchanged"
        remarks = _remarks(before, after, roles, new_d, new_arrows) if status != "unchanged" else ()
        out.append(AnalysisDiff(name, status, before, after, tuple(roles), tuple(remarks)))
    return tuple(out)


def _remarks(
    before: AnalysisState | None,
    after: AnalysisState | None,
    roles: list[RoleChange],
    new_d: Diagram | None,
    new_arrows: set,
) -> list[str]:
    """What changed for one analysis, in sentences a reviewer can act on."""
    out: list[str] = []
    if before is None or after is None:
        if after is not None:
            out.append(f"new analysis; declared set: {_verdict(after)}")
        return out
    adjust_change = next((r for r in roles if r.role == "adjust"), None)
    if adjust_change is not None:
        b = "no declared set" if adjust_change.before is None else braces(adjust_change.before)
        a = "no declared set" if adjust_change.after is None else braces(adjust_change.after)
        out.append(f"the declared set changed from {b} to {a}")
    for r in roles:
        if r.role != "adjust":
            out.append(
                f"the {r.role} changed from {braces(r.before or ())} to {braces(r.after or ())}"
            )
    if before.checked and not after.checked:
        out.append(f"the analysis can no longer be checked ({after.note})")
        return out
    if not before.checked and after.checked:
        out.append(f"the analysis can be checked again; declared set: {_verdict(after)}")
    if before.checked and after.checked:
        declared = braces(after.declared or ())
        if before.declared_valid and after.declared_valid is False:
            why = _why_invalid(after, new_d, new_arrows)
            out.append(f"this change makes the declared set {declared} insufficient: {why}")
        elif before.declared_valid is False and after.declared_valid:
            out.append(f"this change makes the declared set {declared} valid")
        if before.identifiable and after.identifiable is False:
            out.append(
                "no valid adjustment set exists any more among the measured variables: "
                "the effect is no longer identifiable by covariate adjustment"
            )
        elif before.identifiable is False and after.identifiable:
            out.append("a valid adjustment set now exists among the measured variables")
        if before.minimal_sets != after.minimal_sets and after.identifiable is not False:
            out.append(
                f"the minimal adjustment sets changed from {describe_sets(before.minimal_sets)} "
                f"to {describe_sets(after.minimal_sets, after.truncated)}"
            )
    new_rules = {p.rule for p in after.problems} - {p.rule for p in before.problems}
    gone_rules = {p.rule for p in before.problems} - {p.rule for p in after.problems}
    if new_rules:
        out.append(f"now reported: {', '.join(sorted(new_rules))}")
    if gone_rules:
        out.append(f"no longer reported: {', '.join(sorted(gone_rules))}")
    return out


def _why_invalid(state: AnalysisState, new_d: Diagram | None, new_arrows: set) -> str:
    errors = [p for p in state.problems if p.severity == "error"]
    if state.explanation is None and errors:  # the causal rules' own words
        return "; ".join(p.message for p in errors)
    explanation = state.explanation or "it no longer meets the adjustment criterion"
    if new_d is None or not explanation.startswith("the path "):
        return explanation
    # name the new arrows that lie on the open path
    spelled = explanation.removeprefix("the path `").removesuffix("` is open")
    on_path = [k for k in new_arrows if _on_spelled(k, spelled)]
    if on_path:
        arrows = ", ".join(f"`{ArrowChange(*k, 0).describe()}`" for k in sorted(on_path))
        word = "arrow" if len(on_path) == 1 else "arrows"
        return f"the new {word} {arrows} {'opens' if len(on_path) == 1 else 'open'} `{spelled}`"
    return explanation


def _on_spelled(key: tuple[str, str, bool], spelled: str) -> bool:
    source, target, bidirected = key
    tokens = spelled.split(" ")
    for i in range(0, len(tokens) - 2, 2):
        a, op, b = tokens[i], tokens[i + 1], tokens[i + 2]
        if bidirected and op == "<->" and {a, b} == {source, target}:
            return True
        if not bidirected and (
            (op == "->" and (a, b) == (source, target))
            or (op == "<-" and (b, a) == (source, target))
        ):
            return True
    return False


def _verdict(state: AnalysisState) -> str:
    if not state.checked:
        return state.note or "not checked"
    if state.declared is None:
        return "none declared"
    rules = sorted({p.rule for p in state.problems})
    if state.declared_valid:
        return "valid" + (f" (reported: {', '.join(rules)})" if rules else "")
    return "not valid" + (f" ({', '.join(rules)})" if rules else "")


# === git ================================================================================


def _git(args: list[str], cwd: str | Path) -> subprocess.CompletedProcess:
    try:
        return subprocess.run(["git", *args], cwd=cwd, capture_output=True, timeout=120)
    except FileNotFoundError:
        raise UsageProblem(
            "git is not installed; to compare two files: dagward diff OLD.dag NEW.dag"
        ) from None


def repository_root(cwd: str | Path) -> Path:
    done = _git(["rev-parse", "--show-toplevel"], cwd)
    if done.returncode != 0:
        raise UsageProblem(
            f"{os.path.abspath(cwd)} is not inside a git repository; "
            "to compare two files: dagward diff OLD.dag NEW.dag"
        )
    return Path(done.stdout.decode().strip())


def _commit(rev: str, root: Path) -> str | None:
    done = _git(["rev-parse", "--verify", "--quiet", f"{rev}^{{commit}}"], root)
    return done.stdout.decode().strip() if done.returncode == 0 else None


def resolve_base(root: Path, base: str | None) -> tuple[str, str]:
    """(commit, label) of the base: given, or the merge base of HEAD with the default branch."""
    if base is not None:
        commit = _commit(base, root)
        if commit is None:
            raise UsageProblem(f"base revision `{base}` not found in this repository")
        return commit, f"{base} ({commit[:7]})"
    if _commit("HEAD", root) is None:
        raise UsageProblem("the repository has no commits yet; nothing to compare with")
    for branch in DEFAULT_BRANCHES:
        if _commit(branch, root) is None:
            continue
        done = _git(["merge-base", "HEAD", branch], root)
        if done.returncode == 0:
            commit = done.stdout.decode().strip()
            return commit, f"{commit[:7]} (merge base of HEAD and {branch})"
    raise UsageProblem(
        f"no base revision: none of {', '.join(DEFAULT_BRANCHES)} shares history with HEAD; "
        "give one with --base REV"
    )


@dataclass(frozen=True)
class Change:
    status: str  # added, deleted, renamed, modified
    old_path: str | None  # relative to the repository root
    new_path: str | None


_STATUS = {
    "A": "added",
    "D": "deleted",
    "M": "modified",
    "T": "modified",
    "R": "renamed",
    "C": "added",
}


def changed_files(
    root: Path, base: str, head: str | None, pathspecs: list[str], cwd: str | Path
) -> list[Change]:
    """Changed `.dag` files between base and head (None: the working tree, untracked
    files included), with renames found by git (`--name-status -M`).

    `pathspecs` (relative to `cwd`) keep the changes whose old or new path lies
    under one of them; git is asked about the whole tree so that a file renamed
    into or out of those paths is still seen as a rename.
    """
    # --no-relative: paths from the repository root even when run from a subdirectory
    args = ["diff", "--name-status", "-z", "-M", "--no-ext-diff", "--no-relative", base]
    if head is not None:
        args.append(head)
    done = _git(args, root)
    if done.returncode != 0:
        raise UsageProblem(f"git diff failed: {done.stderr.decode(errors='replace').strip()}")
    fields = done.stdout.decode("utf-8", errors="surrogateescape").split("\0")
    out: list[Change] = []
    i = 0
    while i < len(fields) and fields[i]:
        code = fields[i][0]
        if code in "RC":
            old, new = fields[i + 1], fields[i + 2]
            i += 3
            if code == "C":
                old = None  # a copy: the new file is new
        else:
            old = new = fields[i + 1]
            i += 2
        status = _STATUS.get(code, "modified")
        if status == "added":
            old = None
        if status == "deleted":
            new = None
        out.append(Change(status, old, new))
    if head is None:
        untracked = _git(["ls-files", "-z", "--others", "--exclude-standard", "--full-name"], root)
        for path in untracked.stdout.decode("utf-8", errors="surrogateescape").split("\0"):
            if path:
                out.append(Change("added", None, path))
    prefixes = [_root_relative(p, root, cwd) for p in pathspecs]

    def wanted(path: str | None) -> bool:
        if path is None or not path.endswith(".dag"):
            return False
        return not prefixes or any(
            p == "" or path == p or path.startswith(p + "/") for p in prefixes
        )

    return [c for c in out if wanted(c.old_path) or wanted(c.new_path)]


def _root_relative(path: str, root: Path, cwd: str | Path) -> str:
    """A command-line path as a POSIX path from the repository root ("" for the root)."""
    absolute = Path(os.path.abspath(os.path.join(cwd, path))).resolve()
    try:
        relative = absolute.relative_to(root.resolve()).as_posix()
    except ValueError:
        raise UsageProblem(f"{path} is outside the repository {root}") from None
    return "" if relative == "." else relative


def read_revision(root: Path, rev: str | None, path: str) -> bytes:
    if rev is None:
        return (root / path).read_bytes()
    done = _git(["show", f"{rev}:{path}"], root)
    if done.returncode != 0:
        raise UsageProblem(
            f"cannot read {path} at {rev[:12]}: {done.stderr.decode(errors='replace').strip()}"
        )
    return done.stdout


def diff_revisions(
    settings: Settings,
    base: str | None = None,
    head: str | None = None,
    paths: list[str] | None = None,
    cwd: str | Path | None = None,
    max_sets: int = 10,
) -> DiffReport:
    cwd = Path(cwd or os.getcwd())
    root = repository_root(cwd)
    base_commit, base_label = resolve_base(root, base)
    head_commit, head_label = None, WORKING_TREE
    if head is not None:
        head_commit = _commit(head, root)
        if head_commit is None:
            raise UsageProblem(f"head revision `{head}` not found in this repository")
        head_label = f"{head} ({head_commit[:7]})"
    files = []
    for change in changed_files(root, base_commit, head_commit, list(paths or []), cwd):
        shown = change.new_path or change.old_path or ""
        if settings.exclude and _excluded(root / shown, settings):
            continue
        old = new = None
        if change.old_path is not None:
            old = read_side(
                read_revision(root, base_commit, change.old_path), change.old_path, settings
            )
        if change.new_path is not None:
            new = read_side(
                read_revision(root, head_commit, change.new_path), change.new_path, settings
            )
        files.append(compare(old, new, change.status, max_sets))
    return DiffReport(base_label, head_label, tuple(files))


def _excluded(path: Path, settings: Settings) -> bool:
    from .files import matches

    try:
        relative = path.resolve().relative_to(settings.root.resolve()).as_posix()
    except ValueError:
        return False
    return matches(relative, settings.exclude)


def diff_files(old_path: str, new_path: str, settings: Settings, max_sets: int = 10) -> DiffReport:
    sides = []
    for p in (old_path, new_path):
        if not os.path.isfile(p):
            raise UsageProblem(f"no such file: {p}")
        with open(p, "rb") as handle:
            sides.append(read_side(handle.read(), p, settings))
    same = sides[0].result.diagram is not None and sides[0].result.diagram.source == (
        sides[1].result.diagram.source if sides[1].result.diagram is not None else None
    )
    status = "unchanged" if same else "modified"
    return DiffReport(old_path, new_path, (compare(sides[0], sides[1], status, max_sets),))


# === output =============================================================================


def _problem_dict(p: Problem) -> dict:
    out = {"rule": p.rule, "severity": p.severity, "line": p.line, "message": p.message}
    if p.path is not None:
        out["path"] = list(p.path)
    return out


def _state_dict(s: AnalysisState | None) -> dict | None:
    if s is None:
        return None
    return {
        "exposure": list(s.exposure),
        "outcome": list(s.outcome),
        "declared": None if s.declared is None else list(s.declared),
        "checked": s.checked,
        "note": s.note,
        "declared_valid": s.declared_valid,
        "problems": [_problem_dict(p) for p in s.problems],
        "identifiable": s.identifiable if s.checked else None,
        "minimal_sets": [list(x) for x in s.minimal_sets],
        "truncated": s.truncated,
        "explanation": s.explanation,
    }


def _syntax_dict(n: SyntaxNote | None) -> dict | None:
    return None if n is None else {"line": n.line, "column": n.column, "message": n.message}


def _arrow_dict(a: ArrowChange) -> dict:
    return {
        "arrow": a.describe(),
        "source": a.source,
        "target": a.target,
        "bidirected": a.bidirected,
        "line": a.line,
    }


def to_json(report: DiffReport) -> dict[str, Any]:
    return {
        "tool": {"name": "dagward", "version": __version__},
        "schema": SCHEMA_VERSION,
        "base": report.base,
        "head": report.head,
        "files": [
            {
                "old_path": f.old_path,
                "new_path": f.new_path,
                "status": f.status,
                "old_syntax_error": _syntax_dict(f.old_error),
                "new_syntax_error": _syntax_dict(f.new_error),
                "arrows_added": [_arrow_dict(a) for a in f.arrows_added],
                "arrows_removed": [_arrow_dict(a) for a in f.arrows_removed],
                "variables_added": list(f.variables_added),
                "variables_removed": list(f.variables_removed),
                "now_unmeasured": list(f.now_unmeasured),
                "now_measured": list(f.now_measured),
                "problems_added": [_problem_dict(p) for p in f.problems_added],
                "problems_removed": [_problem_dict(p) for p in f.problems_removed],
                "analyses": [
                    {
                        "name": a.name,
                        "status": a.status,
                        "roles_changed": [
                            {
                                "role": r.role,
                                "before": None if r.before is None else list(r.before),
                                "after": None if r.after is None else list(r.after),
                            }
                            for r in a.roles_changed
                        ],
                        "before": _state_dict(a.before),
                        "after": _state_dict(a.after),
                        "remarks": list(a.remarks),
                    }
                    for a in f.analyses
                ],
                "independencies": {
                    "before": f.independencies_before,
                    "after": f.independencies_after,
                    "added": [_ind_dict(i) for i in f.independencies_added],
                    "removed": [_ind_dict(i) for i in f.independencies_removed],
                },
            }
            for f in report.files
        ],
    }


def _ind_dict(i: Independence) -> dict:
    return {"a": i.a, "b": i.b, "given": list(i.given)}


def _independence_words(i: Independence) -> str:
    given = f"given {braces(i.given)}" if i.given else "with no adjustment"
    return f"`{i.a}` and `{i.b}` independent {given}"


def _file_heading(f: FileDiff) -> str:
    if f.status == "renamed":
        return f"{f.old_path} -> {f.new_path} (renamed)"
    return f"{f.path} ({f.status})"


def _sections(f: FileDiff) -> list[tuple[str, list[str]]]:
    """The facts of one file as (heading, items): shared by text and Markdown."""
    out: list[tuple[str, list[str]]] = []
    if f.old_error:
        e = f.old_error
        out.append(
            ("the old version does not parse", [f"line {e.line}, column {e.column}: {e.message}"])
        )
    if f.new_error:
        e = f.new_error
        out.append(
            ("the new version does not parse", [f"line {e.line}, column {e.column}: {e.message}"])
        )
    if f.arrows_added:
        out.append(
            ("arrows added", [f"+ `{a.describe()}` (line {a.line})" for a in f.arrows_added])
        )
    if f.arrows_removed:
        out.append(
            (
                "arrows removed",
                [f"- `{a.describe()}` (was line {a.line})" for a in f.arrows_removed],
            )
        )
    for heading, names in (
        ("variables added", f.variables_added),
        ("variables removed", f.variables_removed),
        ("now unmeasured", f.now_unmeasured),
        ("now measured", f.now_measured),
    ):
        if names:
            out.append((heading, [", ".join(f"`{n}`" for n in names)]))
    if f.problems_added:
        out.append(
            (
                "new problems",
                [f"line {p.line}: {p.severity} [{p.rule}] {p.message}" for p in f.problems_added],
            )
        )
    if f.problems_removed:
        out.append(("problems fixed", [f"[{p.rule}] {p.message}" for p in f.problems_removed]))
    return out


def _analysis_rows(a: AnalysisDiff) -> list[tuple[str, str, str]]:
    """(what, before, after) rows for one analysis."""
    b, n = a.before, a.after

    def declared(s: AnalysisState | None) -> str:
        if s is None:
            return "-"
        return "none declared" if s.declared is None else braces(s.declared)

    def sets(s: AnalysisState | None) -> str:
        if s is None:
            return "-"
        if not s.checked:
            return "not checked"
        return describe_sets(s.minimal_sets, s.truncated)

    return [
        ("declared set", declared(b), declared(n)),
        ("verdict", _verdict(b) if b else "-", _verdict(n) if n else "-"),
        ("minimal adjustment sets", sets(b), sets(n)),
    ]


def _independence_items(f: FileDiff) -> tuple[str, list[str]] | None:
    if f.independencies_before is None and f.independencies_after is None:
        return (
            None
            if f.independencies_note is None
            else ("implied independencies", [f.independencies_note])
        )
    counts = (
        f"{'-' if f.independencies_before is None else f.independencies_before} before, "
        f"{'-' if f.independencies_after is None else f.independencies_after} after"
    )
    items = [counts]
    items += [f"no longer implied: {_independence_words(i)}" for i in f.independencies_removed]
    items += [f"newly implied: {_independence_words(i)}" for i in f.independencies_added]
    if f.independencies_note:
        items.append(f.independencies_note)
    return ("implied independencies", items)


def render_text(report: DiffReport) -> str:
    lines = [f"dagward diff: {report.base} -> {report.head}"]
    if not report.files:
        lines.append("no diagram files changed")
    for f in report.files:
        lines.append("")
        lines.append(_file_heading(f))
        for heading, items in _sections(f):
            lines.append(f"  {heading}:")
            lines.extend(f"    {_plain(i)}" for i in items)
        for a in f.analyses:
            if a.status == "unchanged":
                lines.append(f"  analysis {a.name}: unchanged ({_verdict(a.after)})")  # type: ignore[arg-type]
                continue
            lines.append(f"  analysis {a.name} ({a.status}):")
            lines.extend(f"    ! {_plain(r)}" for r in a.remarks)
            for what, before, after in _analysis_rows(a):
                shown = before if before == after else f"{before} -> {after}"
                lines.append(f"    {what}: {shown}")
        ind = _independence_items(f)
        if ind is not None:
            lines.append(f"  {ind[0]}: {_plain(ind[1][0])}")
            lines.extend(f"    {_plain(i)}" for i in ind[1][1:])
    return "\n".join(lines) + "\n"


def _plain(text: str) -> str:
    # backticks stay: the rules' messages use them to set names apart in text too
    return text


def _md_cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def render_markdown(report: DiffReport) -> str:
    out = ["## Causal diagrams in this change", ""]
    out.append(f"Comparing {report.base} with {report.head}.")
    if not report.files:
        out += ["", "No diagram file changed."]
    for f in report.files:
        heading = (
            f"`{f.old_path}` → `{f.new_path}` (renamed)"
            if f.status == "renamed"
            else f"`{f.path}` ({f.status})"
        )
        out += ["", f"### {heading}", ""]
        for title, items in _sections(f):
            items = [i[2:] if i.startswith(("+ ", "- ")) else i for i in items]
            if len(items) == 1:
                out.append(f"- **{title}:** {items[0]}")
            else:
                out.append(f"- **{title}:**")
                out.extend(f"  - {i}" for i in items)
        for a in f.analyses:
            out += ["", f"#### Analysis `{a.name}` ({a.status})", ""]
            for r in a.remarks:
                out.append(
                    f"> **{r[0].upper() + r[1:]}**"
                    if "insufficient" in r
                    else f"> {r[0].upper() + r[1:]}"
                )
                out.append(">")
            if a.remarks:
                out.pop()
                out.append("")
            out += ["| | before | after |", "| --- | --- | --- |"]
            for what, before, after in _analysis_rows(a):
                out.append(f"| {what} | {_md_cell(before)} | {_md_cell(after)} |")
        ind = _independence_items(f)
        if ind is not None:
            out += ["", f"**Implied independencies:** {ind[1][0]}"]
            out.extend(f"- {i}" for i in ind[1][1:])
        if f.new_diagram is not None:
            out += ["", *mermaid_section(f)]
    return "\n".join(out).rstrip() + "\n"


def mermaid_section(f: FileDiff) -> list[str]:
    diagram = f.new_diagram
    assert diagram is not None
    if len(diagram.arrows) > MAX_PICTURE_ARROWS:
        return [f"_The diagram has {len(diagram.arrows)} arrows; no picture is drawn._"]
    added = {(a.source, a.target, a.bidirected) for a in f.arrows_added}
    out = [
        "<details open><summary>The diagram after the change</summary>",
        "",
        "```mermaid",
        mermaid(diagram, added),
        "```",
        "",
    ]
    legend = "Thick orange links are new in this change"
    legend += "; dotted links with two heads are shared hidden causes (`<->`)"
    legend += "; dashed boxes are unmeasured variables."
    out.append(legend)
    if f.arrows_removed:
        out.append(
            "Removed (not drawn): " + ", ".join(f"`{a.describe()}`" for a in f.arrows_removed) + "."
        )
    out += ["", "</details>"]
    return out


def mermaid(diagram: Diagram, added: set[tuple[str, str, bool]]) -> str:
    """A Mermaid flowchart of the diagram; links whose key is in `added` are drawn thick."""
    ids = {name: f"v{i}" for i, name in enumerate(diagram.variables)}
    lines = ["flowchart LR"]
    for name, node in ids.items():
        label = name.replace('"', "#quot;")
        lines.append(f'  {node}["{label}"]')
    seen: set[tuple[str, str, bool]] = set()
    highlighted: list[int] = []
    new_hidden: list[int] = []
    for a in diagram.arrows:
        key = _key(a.source.text, a.target.text, a.bidirected)
        if key in seen or a.source.text == a.target.text:
            continue
        seen.add(key)
        new = key in added
        # A `<->` stays dotted with two heads (as the legend says), new or not.
        link = "<-.->" if a.bidirected else "==>" if new else "-->"
        if new:
            (new_hidden if a.bidirected else highlighted).append(len(seen) - 1)
        lines.append(f"  {ids[a.source.text]} {link} {ids[a.target.text]}")
    if highlighted:
        lines.append(
            f"  linkStyle {','.join(map(str, highlighted))} stroke:#e8590c,stroke-width:4px"
        )
    if new_hidden:
        lines.append(
            f"  linkStyle {','.join(map(str, new_hidden))} "
            "stroke:#e8590c,stroke-width:4px,stroke-dasharray:3 4"
        )
    unmeasured = [ids[n] for n in diagram.unmeasured if n in ids]
    if unmeasured:
        lines.append("  classDef unmeasured stroke-dasharray:5 5")
        lines.append(f"  class {','.join(unmeasured)} unmeasured")
    return "\n".join(lines)
