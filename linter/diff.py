"""What a change to the diagrams means: the comparison behind `dagward diff`.

Two sides are compared file by file: two git revisions (read through
:mod:`dagward.gitrev`) or two files given directly. For each file: the arrows,
variables and roles added, removed or reversed; per analysis, the facts of its
:class:`dagward.verdict.Verdict` before and after (declared set valid or not, the
reasons as structured problems, the minimal sets, the smallest set, whether a
valid set exists, the best achievable set, whether the front-door criterion
holds); and the conditional independencies the diagram implies among measured
variables (per file: they depend on the diagram, not on the analysis).

This module judges nothing itself -- the verdict is the only judge -- and words
nothing: the renderers in :mod:`dagward.report.diff` word the structured
:class:`Remark` records through :mod:`dagward.wording`.

An analysis is "changed" exactly when one of those facts or one of its roles
changed. Witnesses (which open path a problem shows, which front-door set is
named) are not facts: another path found for the same problem is not a change.

When a side has structure errors (a cycle, an unknown name...) its analyses are
"not checked" and the reason is given.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from .config import Settings
from .engine import FileResult, lint_source
from .errors import UsageProblem
from .gitrev import (
    Revision,
    changed_files,
    read_revision,
    repository_root,
    resolve_base,
    resolve_head,
)
from .model import Diagram, arrow_key

if TYPE_CHECKING:
    from .verdict import Problem, Verdict

# Implied independencies are one separator search per measured pair; beyond this
# many measured variables the comparison would be slow and unreadable anyway.
MAX_INDEPENDENCE_VARIABLES = 300

Names = tuple[str, ...]
ArrowKey = tuple[str, str, str]  # model.arrow_key


# === data ==============================================================================


class _Keyed:
    """Reads an arrow's ends from its `model.arrow_key` (`key`)."""

    key: ArrowKey

    @property
    def source(self) -> str:
        return self.key[1]

    @property
    def target(self) -> str:
        return self.key[2]


@dataclass(frozen=True)
class ArrowChange(_Keyed):
    """An arrow added (line in the new file) or removed (line in the old file)."""

    key: ArrowKey
    line: int

    @property
    def bidirected(self) -> bool:
        return self.key[0] == "<->"


@dataclass(frozen=True)
class ArrowReversal(_Keyed):
    """`target -> source` in the old file became `source -> target` in the new one."""

    key: ArrowKey  # the new arrow
    line: int  # in the new file
    old_line: int

    @property
    def old_key(self) -> ArrowKey:
        return arrow_key(self.target, self.source, False)


@dataclass(frozen=True)
class SyntaxNote:
    line: int
    column: int
    message: str


@dataclass(frozen=True)
class FileProblem:
    """A finding of `check` not tied to an analysis (a cycle, an isolated variable...)."""

    rule: str
    severity: str
    line: int
    message: str


@dataclass(frozen=True)
class Independence:
    a: str
    b: str
    given: Names  # one minimal separating set (a witness)


@dataclass(frozen=True)
class RoleChange:
    role: str
    before: Names | None
    after: Names | None


@dataclass(frozen=True)
class Reason:
    """One of the verdict's problems or notes; compared by rule and variable only
    (the path it shows is a witness)."""

    rule: str
    variable: str | None
    problem: Problem = field(compare=False, repr=False)
    part: str | None = None  # natural effects: which confounding question


def _reason(p: Problem) -> Reason:
    return Reason(p.rule, p.variable, p, p.part)


@dataclass(frozen=True)
class AnalysisState:
    """The facts of one analysis on one side, read from its verdict."""

    exposure: Names
    outcome: Names
    declared: Names | None
    checked: bool
    note: str | None = None  # why it was not checked
    declared_valid: bool | None = None
    reasons: tuple[Reason, ...] = ()  # Verdict.problems
    notes: tuple[Reason, ...] = ()  # Verdict.notes (never reasons for invalidity)
    identifiable: bool | None = None  # a valid adjustment set exists
    minimal_sets: tuple[Names, ...] = ()
    truncated: bool = False
    smallest: Names | None = None
    best_achievable: Names | None = None
    front_door_holds: bool | None = None  # None: not looked for (a valid set exists)
    front_door: Names | None = field(default=None, compare=False)  # a witness set
    # the question asked (`effect:`), its mediators and the restriction
    question: str = "total"
    mediators: Names = ()
    restricted: Names = ()
    verdict: Verdict | None = field(default=None, compare=False, repr=False)

    @property
    def route(self) -> str | None:
        """How the effect is identified: "adjustment", "front-door" or "none"."""
        if not self.checked:
            return None
        if self.identifiable:
            return "adjustment"
        return "front-door" if self.front_door_holds else "none"


@dataclass(frozen=True)
class Remark:
    """One thing the change does to an analysis, as data (worded by the renderers).

    kind: unparsed (role: "old" | "new"), new-analysis, declared-changed,
    role-changed (role), unchecked, checked-again, insufficient (reason,
    new_arrows: the added or reversed arrows on the reason's path), now-valid,
    adjustment-lost, adjustment-gained, front-door-gained, front-door-lost,
    minimal-sets-changed, smallest-changed, best-achievable-changed,
    reasons-added, reasons-removed, notes-added, notes-removed (items).
    """

    kind: str
    role: str | None = None
    before: object = None
    after: object = None
    reason: Reason | None = None
    new_arrows: tuple[ArrowKey, ...] = ()
    items: tuple[Reason, ...] = ()


@dataclass(frozen=True)
class AnalysisDiff:
    name: str
    status: str  # added, removed, changed, unchanged
    before: AnalysisState | None
    after: AnalysisState | None
    roles_changed: tuple[RoleChange, ...] = ()
    remarks: tuple[Remark, ...] = ()


@dataclass(frozen=True)
class FileDiff:
    old_path: str | None
    new_path: str | None
    status: str
    old_error: SyntaxNote | None = None
    new_error: SyntaxNote | None = None
    arrows_added: tuple[ArrowChange, ...] = ()
    arrows_removed: tuple[ArrowChange, ...] = ()
    arrows_reversed: tuple[ArrowReversal, ...] = ()
    variables_added: Names = ()
    variables_removed: Names = ()
    now_unmeasured: Names = ()
    now_measured: Names = ()
    problems_added: tuple[FileProblem, ...] = ()
    problems_removed: tuple[FileProblem, ...] = ()
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
    base_commit: str | None = None  # the commit compared (a merge base), None for files
    head_commit: str | None = None  # None: the working tree, or files


def sorted_set(names) -> Names:
    return tuple(sorted(names))


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
    """The facts of one analysis of one side, all read from its verdict."""
    from .verdict import verdict_of

    diagram = side.diagram
    assert diagram is not None
    analysis = diagram.analysis(name)
    Z = analysis.adjust_set
    roles = dict(
        exposure=sorted_set(analysis.exposure_set),
        outcome=sorted_set(analysis.outcome_set),
        declared=None if Z is None else sorted_set(Z),
        question=analysis.effect,
        mediators=sorted_set(analysis.mediator_set),
        restricted=sorted_set(analysis.restricted_set),
    )
    if not side.result.causal_ran:
        return AnalysisState(checked=False, note=_structure_note(side.result), **roles)
    verdict = verdict_of(diagram, analysis)
    try:
        minimal, truncated = verdict.list_minimal_sets(max_sets)
        # the front door matters for identification only when adjustment fails
        # (and its search is quadratic on large diagrams): looked for only then
        front_door = None if verdict.identifiable else verdict.front_door
        return AnalysisState(
            checked=True,
            declared_valid=verdict.declared_valid,
            reasons=tuple(_reason(p) for p in verdict.problems),
            notes=tuple(_reason(p) for p in verdict.notes),
            identifiable=verdict.identifiable,
            minimal_sets=minimal,
            truncated=truncated,
            smallest=verdict.smallest,
            best_achievable=verdict.best_achievable,
            front_door_holds=None if verdict.identifiable else front_door is not None,
            front_door=front_door,
            verdict=verdict,
            **roles,
        )
    except ValueError as e:  # exposures overlapping outcomes and the like
        return AnalysisState(checked=False, note=f"not checked: {e}", **roles)


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


def _arrow_lines(diagram: Diagram | None) -> dict[ArrowKey, int]:
    if diagram is None:
        return {}
    return {key: arrow.line for key, arrow in diagram.arrow_index.items()}


def compare_arrows(
    old: dict[ArrowKey, int], new: dict[ArrowKey, int]
) -> tuple[tuple[ArrowChange, ...], tuple[ArrowChange, ...], tuple[ArrowReversal, ...]]:
    """(added, removed, reversed): `a -> b` replaced by `b -> a` is one reversal."""
    added = {k: line for k, line in new.items() if k not in old}
    removed = {k: line for k, line in old.items() if k not in new}
    reversed_: list[ArrowReversal] = []
    for key, line in list(added.items()):
        kind, source, target = key
        back = arrow_key(target, source, False)
        if kind == "->" and back in removed:
            reversed_.append(ArrowReversal(key, line, removed.pop(back)))
            del added[key]
    return (
        tuple(ArrowChange(k, line) for k, line in added.items()),
        tuple(ArrowChange(k, line) for k, line in removed.items()),
        tuple(reversed_),
    )


def compare(old: Side | None, new: Side | None, status: str, max_sets: int = 10) -> FileDiff:
    """Everything that changed between two versions of one file (either may be missing)."""
    old_d = old.diagram if old else None
    new_d = new.diagram if new else None
    # when a side does not parse, nothing is known about it: list no arrow changes
    comparable = (old is None or old_d is not None) and (new is None or new_d is not None)
    added: tuple[ArrowChange, ...] = ()
    removed: tuple[ArrowChange, ...] = ()
    reversed_: tuple[ArrowReversal, ...] = ()
    vars_added: Names = ()
    vars_removed: Names = ()
    now_unmeasured: Names = ()
    now_measured: Names = ()
    if comparable:
        added, removed, reversed_ = compare_arrows(_arrow_lines(old_d), _arrow_lines(new_d))
        old_vars = set(old_d.variables) if old_d else set()
        new_vars = set(new_d.variables) if new_d else set()
        vars_added = sorted_set(new_vars - old_vars)
        vars_removed = sorted_set(old_vars - new_vars)
        if old_d and new_d:
            both = old_vars & new_vars
            old_u, new_u = set(old_d.unmeasured), set(new_d.unmeasured)
            now_unmeasured = sorted_set((new_u - old_u) & both)
            now_measured = sorted_set((old_u - new_u) & both)

    def file_problems(side: Side | None) -> dict[tuple[str, str], FileProblem]:
        if side is None or side.diagram is None:
            return {}
        return {
            (f.rule, f.message): FileProblem(f.rule, f.severity, f.line, f.message)
            for f in side.result.findings
            if f.analysis is None
        }

    old_p, new_p = file_problems(old), file_problems(new)
    changed_arrows = {a.key for a in added} | {r.key for r in reversed_}
    analyses = _compare_analyses(old, new, changed_arrows, max_sets)

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
        arrows_reversed=reversed_,
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
    old: Side | None, new: Side | None, changed_arrows: set[ArrowKey], max_sets: int
) -> tuple[AnalysisDiff, ...]:
    old_d = old.diagram if old else None
    new_d = new.diagram if new else None
    old_names = [a.name for a in old_d.analyses] if old_d else []
    new_names = [a.name for a in new_d.analyses] if new_d else []
    names = list(dict.fromkeys(new_names + old_names))  # new file order, removed ones last
    out = []
    for name in names:
        before = analysis_state(old, name, max_sets) if old and name in old_names else None
        after = analysis_state(new, name, max_sets) if new and name in new_names else None
        roles: list[RoleChange] = []
        if before and after:
            for role, b, a in (
                ("exposure", before.exposure, after.exposure),
                ("outcome", before.outcome, after.outcome),
                ("adjust", before.declared, after.declared),
                ("effect", (before.question,), (after.question,)),
                ("mediator", before.mediators, after.mediators),
                ("restriction", before.restricted, after.restricted),
            ):
                if b != a:
                    roles.append(RoleChange(role, b, a))
        unparsed = (old is not None and old_d is None) or (new is not None and new_d is None)
        if unparsed:
            # one side does not parse: its analyses are unknown, not added or removed
            side = "old" if old is not None and old_d is None else "new"
            out.append(
                AnalysisDiff(name, "changed", before, after, (), (Remark("unparsed", side),))
            )
            continue
        if before is None:
            status = "added"
        elif after is None:
            status = "removed"
        elif roles or before != after:  # facts only: witnesses compare equal
            status = "changed"
        else:
            status = "unchanged"
        remarks = _remarks(before, after, roles, changed_arrows) if status != "unchanged" else []
        out.append(AnalysisDiff(name, status, before, after, tuple(roles), tuple(remarks)))
    return tuple(out)


def path_arrow_keys(graph, path: Names) -> set[ArrowKey]:
    """The arrows a path of graph nodes runs along (a hidden parent is one `<->`)."""
    from .causal.graph import is_hidden

    succ = graph.succ
    keys: set[ArrowKey] = set()
    for i in range(len(path) - 1):
        a, b = path[i], path[i + 1]
        if is_hidden(graph, b) and i + 2 < len(path):
            keys.add(arrow_key(a, path[i + 2], True))
        elif is_hidden(graph, a):
            continue
        elif b in succ[a]:
            keys.add(arrow_key(a, b, False))
        else:
            keys.add(arrow_key(b, a, False))
    return keys


def _remarks(
    before: AnalysisState | None,
    after: AnalysisState | None,
    roles: list[RoleChange],
    changed_arrows: set[ArrowKey],
) -> list[Remark]:
    """What changed for one analysis, as records in the order a reviewer reads them."""
    if before is None or after is None:
        return [Remark("new-analysis")] if after is not None else []
    out: list[Remark] = []
    for r in roles:
        if r.role == "adjust":
            out.insert(0, Remark("declared-changed", before=r.before, after=r.after))
        else:
            out.append(Remark("role-changed", r.role, r.before, r.after))
    if before.checked and not after.checked:
        return out + [Remark("unchecked")]
    if not before.checked and after.checked:
        return out + [Remark("checked-again")]
    if not (before.checked and after.checked):
        return out
    if before.declared_valid is not False and after.declared_valid is False:
        # the first reason with a path, else the first reason: what `check` shows first
        shown = next((r for r in after.reasons if r.problem.path), after.reasons[0])
        on_path: tuple[ArrowKey, ...] = ()
        if shown.problem.path and after.verdict is not None:
            keys = path_arrow_keys(after.verdict.graph, shown.problem.path)
            on_path = tuple(sorted(keys & changed_arrows))
        out.append(Remark("insufficient", reason=shown, new_arrows=on_path))
    elif before.declared_valid is False and after.declared_valid:
        out.append(Remark("now-valid"))
    if before.identifiable and not after.identifiable:
        out.append(Remark("adjustment-lost"))
    elif not before.identifiable and after.identifiable:
        out.append(Remark("adjustment-gained"))
    # the route by the front door, when adjustment fails on both sides (a route
    # gained or lost together with adjustment is said in the remark above)
    if before.route == "none" and after.route == "front-door":
        out.append(Remark("front-door-gained", after=after.front_door))
    elif before.route == "front-door" and after.route == "none":
        out.append(Remark("front-door-lost", before=before.front_door))
    if (before.minimal_sets, before.truncated) != (after.minimal_sets, after.truncated):
        if before.identifiable and after.identifiable:  # else the route remark says it
            out.append(Remark("minimal-sets-changed", before=before, after=after))
    elif before.smallest != after.smallest:
        out.append(Remark("smallest-changed", before=before.smallest, after=after.smallest))
    if before.best_achievable != after.best_achievable and not after.identifiable:
        if not before.identifiable:
            out.append(
                Remark(
                    "best-achievable-changed",
                    before=before.best_achievable,
                    after=after.best_achievable,
                )
            )
    gained = tuple(r for r in after.reasons if r not in before.reasons)
    lost = tuple(r for r in before.reasons if r not in after.reasons)
    if gained:
        out.append(Remark("reasons-added", items=gained))
    if lost:
        out.append(Remark("reasons-removed", items=lost))
    noted = tuple(r for r in after.notes if r not in before.notes)
    unnoted = tuple(r for r in before.notes if r not in after.notes)
    if noted:
        out.append(Remark("notes-added", items=noted))
    if unnoted:
        out.append(Remark("notes-removed", items=unnoted))
    return out


# === the two ways in =====================================================================


def diff_revisions(
    settings: Settings,
    base: str | None = None,
    head: str | None = None,
    paths: list[str] | None = None,
    cwd: str | Path | None = None,
    max_sets: int = 10,
) -> DiffReport:
    """Compare the merge base of `base` and `head` with `head` (None: the working tree)."""
    cwd = Path(cwd or os.getcwd())
    root = repository_root(cwd)
    head_rev: Revision = resolve_head(root, head)
    base_rev: Revision = resolve_base(root, base, head)
    assert base_rev.commit is not None
    files = []
    for change in changed_files(root, base_rev.commit, head_rev.commit, list(paths or []), cwd):
        shown = change.new_path or change.old_path or ""
        if settings.exclude and _excluded(root / shown, settings):
            continue
        old = new = None
        if change.old_path is not None:
            data = read_revision(root, base_rev.commit, change.old_path)
            old = read_side(data, change.old_path, settings)
        if change.new_path is not None:
            data = read_revision(root, head_rev.commit, change.new_path)
            new = read_side(data, change.new_path, settings)
        files.append(compare(old, new, change.status, max_sets))
    return DiffReport(
        base_rev.label, head_rev.label, tuple(files), base_rev.commit, head_rev.commit
    )


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
        try:
            with open(p, "rb") as handle:
                sides.append(read_side(handle.read(), p, settings))
        except OSError as e:
            raise UsageProblem(f"cannot read {p}: {e.strerror or e}") from None
    old_d, new_d = sides[0].diagram, sides[1].diagram
    same = old_d is not None and new_d is not None and old_d.source == new_d.source
    status = "unchanged" if same else "modified"
    return DiffReport(old_path, new_path, (compare(sides[0], sides[1], status, max_sets),))
