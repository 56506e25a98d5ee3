"""The reporters of `dagward diff`: text, JSON and Markdown (with a Mermaid picture).

They read a :class:`dagward.diff.DiffReport` -- facts taken from the verdicts of
both sides -- and word it through :mod:`dagward.wording`; the picture is drawn by
:mod:`dagward.render`'s one Mermaid writer, with the changed arrows highlighted.
Text, Markdown and JSON are built from the same fields, so they cannot disagree.

JSON shape (`--format json`; header from :mod:`dagward.report.json_report`)::

    {
      "tool": {"name": "dagward", "version": "0.1.0"},
      "schema": 1,
      "base": "3f2a9c1 (merge base of HEAD and main)",   # or the old file's path
      "base_commit": "3f2a9c1...",                        # the commit compared; null for files
      "head": "working tree",                             # or a revision, or the new file
      "head_commit": null,                                # null: the working tree, or files
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
          "arrows_reversed": [{"arrow": "b -> a", "was": "a -> b", "source": "b",
                               "target": "a", "line": 7, "old_line": 6}],
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
             "declared_valid": true | false | null,      # Verdict.declared_valid
             "identifiable": true | false | null,        # a valid adjustment set exists
             "route": "adjustment" | "front-door" | "none" | null,
             "problems": [{"rule", "variable"?, "path"?, ..., "message"}],  # Verdict.problems
             "notes": [...],                             # Verdict.notes (not reasons)
             "minimal_sets": [["age", "fitness_base"]], "truncated": false,
             "smallest": [...] | null, "best_achievable": [...] | null,
             "front_door": [...] | null,    # looked for only when no valid set exists
             "question": {"effect": "total" | "controlled-direct" | "natural-direct"
                          | "natural-indirect", "mediators": [...], "restricted": [...]}}

Names inside a set are sorted; sets are sorted by size, then by name.
"""

from __future__ import annotations

import json
from typing import Any, cast

from ..diff import (
    AnalysisDiff,
    AnalysisState,
    ArrowChange,
    ArrowReversal,
    DiffReport,
    FileDiff,
    FileProblem,
    Independence,
    Names,
    Reason,
    Remark,
)
from ..wording import (
    arrow_key_text,
    backticked,
    format_minimal_sets,
    format_set,
    independence_text,
    problem_message,
    spell_path,
)
from .json_report import SCHEMA_VERSION, tool

# Mermaid pictures with more arrows than this are not drawn (they do not render
# legibly in a pull-request comment).
MAX_PICTURE_ARROWS = 150
# Problems whose path is an open path from exposure to outcome (the others show a
# causal path through a mediator, or whose effect an adjusted variable is).
_OPEN_PATH_RULES = frozenset({"collider-adjusted", "open-biasing-path", "unmeasured-confounding"})


# === words ===============================================================================


def reason_label(r: Reason) -> str:
    text = r.rule + (f" for `{r.variable}`" if r.variable else "")
    return text + (f" ({r.part} confounding)" if r.part else "")


def _labels(reasons: tuple[Reason, ...]) -> str:
    return ", ".join(reason_label(r) for r in reasons)


def verdict_text(s: AnalysisState) -> str:
    """The declared set's verdict in a few words, from the verdict's fields."""
    if not s.checked:
        return s.note or "not checked"
    notes = f"note: {', '.join(dict.fromkeys(r.rule for r in s.notes))}" if s.notes else ""
    if s.declared_valid is None:
        return "none declared"
    if s.declared_valid:
        return "valid" + (f" ({notes})" if notes else "")
    rules = ", ".join(dict.fromkeys(r.rule for r in s.reasons))
    return f"not valid ({rules}{'; ' + notes if notes else ''})"


def route_text(s: AnalysisState) -> str:
    if s.route is None:
        return "not checked"
    if s.route == "adjustment":
        return "by adjustment"
    if s.route == "front-door":
        return f"by the front-door criterion only (for {format_set(s.front_door)})"
    return "neither by adjustment nor by the front-door criterion"


def _why(r: Reason, s: AnalysisState, f: FileDiff, new_arrows) -> str:
    """Why a declared set became insufficient: the open path and the arrows that the
    change put on it, else the verdict's own message."""
    p, verdict = r.problem, s.verdict
    assert verdict is not None
    if p.path and p.rule in _OPEN_PATH_RULES:
        path = spell_path(verdict.graph, p.path)
        if not new_arrows:
            return f"the path `{path}` is open"
        reversed_keys = {x.key for x in f.arrows_reversed}
        kinds = {"reversed" if k in reversed_keys else "new" for k in new_arrows}
        kind = "new or reversed" if len(kinds) == 2 else kinds.pop()
        shown = ", ".join(f"`{arrow_key_text(k)}`" for k in new_arrows)
        if len(new_arrows) == 1:
            return f"the {kind} arrow {shown} opens `{path}`"
        return f"the {kind} arrows {shown} open `{path}`"
    return problem_message(p, verdict)


def remark_text(m: Remark, a: AnalysisDiff, f: FileDiff) -> str:
    """One remark of an analysis in a sentence a reviewer can act on."""
    n = a.after
    k = m.kind
    if k == "unparsed":
        return f"the {m.role} version does not parse, so there is nothing to compare with"
    assert n is not None
    if k == "new-analysis":
        return f"new analysis; declared set: {verdict_text(n)}"
    if k == "declared-changed":
        old_set, new_set = cast(Names, m.before), cast(Names, m.after)
        return f"the declared set changed from {format_set(old_set)} to {format_set(new_set)}"
    if k == "role-changed":
        old_names, new_names = cast(Names, m.before or ()), cast(Names, m.after or ())
        old_text = backticked(old_names) or "none"
        new_text = backticked(new_names) or "none"
        return f"the {m.role} changed from {old_text} to {new_text}"
    if k == "unchecked":
        return f"the analysis can no longer be checked ({n.note})"
    if k == "checked-again":
        return f"the analysis can be checked again; declared set: {verdict_text(n)}"
    if k == "insufficient":
        assert m.reason is not None
        why = _why(m.reason, n, f, m.new_arrows)
        return f"this change makes the declared set {format_set(n.declared)} insufficient: {why}"
    if k == "now-valid":
        return f"this change makes the declared set {format_set(n.declared)} valid"
    if k == "adjustment-lost":
        text = (
            "no valid adjustment set exists any more among the measured variables: "
            "the effect is no longer identifiable by covariate adjustment"
        )
        if n.route == "front-door":
            text += (
                f"; the front-door criterion holds for {format_set(n.front_door)}, "
                "so the effect is still identified that way"
            )
        return text
    if k == "adjustment-gained":
        return "a valid adjustment set now exists among the measured variables"
    if k == "front-door-gained":
        door = format_set(cast(Names, m.after))
        return (
            f"the front-door criterion now holds (for {door}): the effect is identified "
            "through it although no valid adjustment set exists"
        )
    if k == "front-door-lost":
        door = format_set(cast(Names, m.before))
        return (
            f"the front-door criterion no longer holds (it held for {door}): the effect is "
            "now identified neither by adjustment nor by the front-door criterion"
        )
    if k == "minimal-sets-changed":
        old, new = m.before, m.after
        assert isinstance(old, AnalysisState) and isinstance(new, AnalysisState)
        return (
            "the minimal adjustment sets changed from "
            f"{format_minimal_sets(old.minimal_sets, old.truncated)} to "
            f"{format_minimal_sets(new.minimal_sets, new.truncated)}"
        )
    if k == "smallest-changed":
        return (
            f"the smallest valid adjustment set changed from {_maybe_set(m.before)} "
            f"to {_maybe_set(m.after)}"
        )
    if k == "best-achievable-changed":
        return (
            "no set is fully valid on either side; the best achievable set changed from "
            f"{_maybe_set(m.before)} to {_maybe_set(m.after)}"
        )
    if k == "reasons-added":
        return f"now reported: {_labels(m.items)}"
    if k == "reasons-removed":
        return f"no longer reported: {_labels(m.items)}"
    if k == "notes-added":
        return f"new note: {_labels(m.items)}"
    if k == "notes-removed":
        return f"no longer noted: {_labels(m.items)}"
    raise ValueError(f"unknown remark kind {k!r}")  # pragma: no cover - a bug guard


def _best(s: AnalysisState) -> str:
    if not s.checked:
        return "not checked"
    return "not needed" if s.best_achievable is None else format_set(s.best_achievable)


def _maybe_set(names) -> str:
    return "none" if names is None else format_set(names)


def remarks(a: AnalysisDiff, f: FileDiff) -> list[str]:
    return [remark_text(m, a, f) for m in a.remarks]


def analysis_rows(a: AnalysisDiff) -> list[tuple[str, str, str]]:
    """(what, before, after) rows for one analysis."""
    b, n = a.before, a.after

    def cell(s: AnalysisState | None, what) -> str:
        if s is None:
            return "-"
        return what(s)

    def sets(s: AnalysisState) -> str:
        return format_minimal_sets(s.minimal_sets, s.truncated) if s.checked else "not checked"

    rows = [
        (
            "declared set",
            cell(b, lambda s: format_set(s.declared)),
            cell(n, lambda s: format_set(s.declared)),
        ),
        ("verdict", cell(b, verdict_text), cell(n, verdict_text)),
        ("minimal adjustment sets", cell(b, sets), cell(n, sets)),
    ]
    if b and n and b.smallest != n.smallest and b.minimal_sets == n.minimal_sets:
        rows.append(("smallest valid set", _maybe_set(b.smallest), _maybe_set(n.smallest)))
    if (b and b.best_achievable is not None) or (n and n.best_achievable is not None):
        rows.append(
            (
                "best achievable set",
                cell(b, _best),
                cell(n, _best),
            )
        )
    rows.append(("identification", cell(b, route_text), cell(n, route_text)))
    return rows


def _arrow_items(f: FileDiff) -> list[tuple[str, list[str], str]]:
    out = []
    if f.arrows_added:
        items = [f"`{arrow_key_text(a.key)}` (line {a.line})" for a in f.arrows_added]
        out.append(("arrows added", items, "+ "))
    if f.arrows_removed:
        items = [f"`{arrow_key_text(a.key)}` (was line {a.line})" for a in f.arrows_removed]
        out.append(("arrows removed", items, "- "))
    if f.arrows_reversed:
        items = [
            f"`{arrow_key_text(r.key)}` (line {r.line}), was `{arrow_key_text(r.old_key)}` "
            f"(line {r.old_line})"
            for r in f.arrows_reversed
        ]
        out.append(("arrows reversed", items, "~ "))
    return out


def sections(f: FileDiff) -> list[tuple[str, list[str], str]]:
    """The facts of one file as (heading, items, text marker): shared by text and Markdown."""
    out: list[tuple[str, list[str], str]] = []
    for which, e in (("old", f.old_error), ("new", f.new_error)):
        if e:
            out.append(
                (
                    f"the {which} version does not parse",
                    [f"line {e.line}, column {e.column}: {e.message}"],
                    "",
                )
            )
    out += _arrow_items(f)
    for heading, names in (
        ("variables added", f.variables_added),
        ("variables removed", f.variables_removed),
        ("now unmeasured", f.now_unmeasured),
        ("now measured", f.now_measured),
    ):
        if names:
            out.append((heading, [backticked(names)], ""))
    if f.problems_added:
        items = [f"line {p.line}: {p.severity} [{p.rule}] {p.message}" for p in f.problems_added]
        out.append(("new problems", items, ""))
    if f.problems_removed:
        out.append(("problems fixed", [f"[{p.rule}] {p.message}" for p in f.problems_removed], ""))
    return out


def independence_items(f: FileDiff) -> tuple[str, list[str]] | None:
    if f.independencies_before is None and f.independencies_after is None:
        return None if f.independencies_note is None else (f.independencies_note, [])
    counts = (
        f"{'-' if f.independencies_before is None else f.independencies_before} before, "
        f"{'-' if f.independencies_after is None else f.independencies_after} after"
    )
    words = [
        f"no longer implied: {independence_text(i.a, i.b, i.given)}"
        for i in f.independencies_removed
    ]
    words += [
        f"newly implied: {independence_text(i.a, i.b, i.given)}" for i in f.independencies_added
    ]
    if f.independencies_note:
        words.append(f.independencies_note)
    return counts, words


def file_heading(f: FileDiff, quote: str = "") -> str:
    if f.status == "renamed":
        return f"{quote}{f.old_path}{quote} -> {quote}{f.new_path}{quote} (renamed)"
    return f"{quote}{f.path}{quote} ({f.status})"


# === text ================================================================================


def render_text(report: DiffReport) -> str:
    lines = [f"dagward diff: {report.base} -> {report.head}"]
    if not report.files:
        lines.append("no diagram files changed")
    for f in report.files:
        lines += ["", file_heading(f)]
        for heading, items, marker in sections(f):
            lines.append(f"  {heading}:")
            lines.extend(f"    {marker}{i}" for i in items)
        for a in f.analyses:
            if a.status == "unchanged":
                assert a.after is not None
                lines.append(
                    f"  analysis {a.name}: unchanged; declared set: {verdict_text(a.after)}"
                )
                continue
            lines.append(f"  analysis {a.name} ({a.status}):")
            lines.extend(f"    ! {r}" for r in remarks(a, f))
            for what, before, after in analysis_rows(a):
                shown = before if before == after else f"{before} -> {after}"
                lines.append(f"    {what}: {shown}")
        ind = independence_items(f)
        if ind is not None:
            lines.append(f"  implied independencies: {ind[0]}")
            lines.extend(f"    {i}" for i in ind[1])
    return "\n".join(lines) + "\n"


# === Markdown ============================================================================


def _md_cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def render_markdown(report: DiffReport) -> str:
    out = ["## Causal diagrams in this change", ""]
    out.append(f"Comparing {report.base} with {report.head}.")
    if not report.files:
        out += ["", "No diagram file changed."]
    for f in report.files:
        out += ["", f"### {file_heading(f, '`')}", ""]
        for title, items, _ in sections(f):
            if len(items) == 1:
                out.append(f"- **{title}:** {items[0]}")
            else:
                out.append(f"- **{title}:**")
                out.extend(f"  - {i}" for i in items)
        for a in f.analyses:
            out += ["", f"#### Analysis `{a.name}` ({a.status})", ""]
            for m, text in zip(a.remarks, remarks(a, f), strict=True):
                text = text[0].upper() + text[1:]
                # the verdict turning bad is what a reviewer must not miss
                loud = m.kind in ("insufficient", "adjustment-lost")
                out.append(f"> **{text}**" if loud else f"> {text}")
                out.append(">")
            if a.remarks:
                out[-1] = ""
            out += ["| | before | after |", "| --- | --- | --- |"]
            for what, before, after in analysis_rows(a):
                out.append(f"| {what} | {_md_cell(before)} | {_md_cell(after)} |")
        ind = independence_items(f)
        if ind is not None:
            out += ["", f"**Implied independencies:** {ind[0]}"]
            out.extend(f"- {i}" for i in ind[1])
        if f.new_diagram is not None:
            out += ["", *mermaid_section(f)]
    return "\n".join(out).rstrip() + "\n"


def mermaid_section(f: FileDiff) -> list[str]:
    """The new diagram drawn by `render.to_mermaid`, new and reversed arrows highlighted."""
    from ..render import picture, to_mermaid

    diagram = f.new_diagram
    assert diagram is not None
    if len(diagram.arrows) > MAX_PICTURE_ARROWS:
        return [f"_The diagram has {len(diagram.arrows)} arrows; no picture is drawn._"]
    marked = frozenset(a.key for a in f.arrows_added) | {r.key for r in f.arrows_reversed}
    drawing = to_mermaid(picture(diagram, None, highlight=marked)).rstrip("\n")
    out = [
        "<details open><summary>The diagram after the change</summary>",
        "",
        "```mermaid",
        drawing,
        "```",
        "",
    ]
    legend = []  # only what the picture shows
    if marked:
        what = "new or reversed" if f.arrows_reversed else "new"
        legend.append(f"thick orange links are {what} in this change")
    if any(a.bidirected for a in diagram.arrows):
        legend.append("dashed links with two heads are shared hidden causes (`<->`)")
    if diagram.unmeasured:
        legend.append("dashed boxes are unmeasured variables")
    if legend:
        text = "; ".join(legend)
        out.append(text[0].upper() + text[1:] + ".")
    if f.arrows_removed:
        removed = ", ".join(f"`{arrow_key_text(a.key)}`" for a in f.arrows_removed)
        out.append(f"Removed (not drawn): {removed}.")
    out += ["", "</details>"]
    return out


# === JSON ================================================================================


def _file_problem(p: FileProblem) -> dict:
    return {"rule": p.rule, "severity": p.severity, "line": p.line, "message": p.message}


def _reason_dict(r: Reason, s: AnalysisState) -> dict:
    assert s.verdict is not None
    out = r.problem.to_dict(s.verdict.graph)
    out["message"] = problem_message(r.problem, s.verdict)
    return out


def _names(names) -> list[str] | None:
    return None if names is None else list(names)


def state_dict(s: AnalysisState | None) -> dict | None:
    if s is None:
        return None
    return {
        "exposure": list(s.exposure),
        "outcome": list(s.outcome),
        "declared": _names(s.declared),
        "checked": s.checked,
        "note": s.note,
        "declared_valid": s.declared_valid,
        "identifiable": s.identifiable,
        "route": s.route,
        "problems": [_reason_dict(r, s) for r in s.reasons],
        "notes": [_reason_dict(r, s) for r in s.notes],
        "minimal_sets": [list(x) for x in s.minimal_sets],
        "truncated": s.truncated,
        "smallest": _names(s.smallest),
        "best_achievable": _names(s.best_achievable),
        "front_door": _names(s.front_door),
        "question": {
            "effect": s.question,
            "mediators": list(s.mediators),
            "restricted": list(s.restricted),
        },
    }


def _arrow_dict(a: ArrowChange) -> dict:
    return {
        "arrow": arrow_key_text(a.key),
        "source": a.source,
        "target": a.target,
        "bidirected": a.bidirected,
        "line": a.line,
    }


def _reversal_dict(r: ArrowReversal) -> dict:
    return {
        "arrow": arrow_key_text(r.key),
        "was": arrow_key_text(r.old_key),
        "source": r.source,
        "target": r.target,
        "line": r.line,
        "old_line": r.old_line,
    }


def _ind_dict(i: Independence) -> dict:
    return {"a": i.a, "b": i.b, "given": list(i.given)}


def _syntax_dict(n) -> dict | None:
    return None if n is None else {"line": n.line, "column": n.column, "message": n.message}


def to_json(report: DiffReport) -> dict[str, Any]:
    return {
        "tool": tool(),
        "schema": SCHEMA_VERSION,
        "base": report.base,
        "base_commit": report.base_commit,
        "head": report.head,
        "head_commit": report.head_commit,
        "files": [
            {
                "old_path": f.old_path,
                "new_path": f.new_path,
                "status": f.status,
                "old_syntax_error": _syntax_dict(f.old_error),
                "new_syntax_error": _syntax_dict(f.new_error),
                "arrows_added": [_arrow_dict(a) for a in f.arrows_added],
                "arrows_removed": [_arrow_dict(a) for a in f.arrows_removed],
                "arrows_reversed": [_reversal_dict(r) for r in f.arrows_reversed],
                "variables_added": list(f.variables_added),
                "variables_removed": list(f.variables_removed),
                "now_unmeasured": list(f.now_unmeasured),
                "now_measured": list(f.now_measured),
                "problems_added": [_file_problem(p) for p in f.problems_added],
                "problems_removed": [_file_problem(p) for p in f.problems_removed],
                "analyses": [
                    {
                        "name": a.name,
                        "status": a.status,
                        "roles_changed": [
                            {"role": r.role, "before": _names(r.before), "after": _names(r.after)}
                            for r in a.roles_changed
                        ],
                        "before": state_dict(a.before),
                        "after": state_dict(a.after),
                        "remarks": remarks(a, f),
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


def render_json(report: DiffReport) -> str:
    return json.dumps(to_json(report), indent=2, ensure_ascii=False) + "\n"
