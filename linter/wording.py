"""The one place where dagward words things: sets, name lists, paths, arrows, and
the messages of the verdict's problems.

Every reporter, rule, command and `diff` formats from structured data through
these functions, so the same fact reads the same everywhere and no sentence is
ever parsed back into facts. Plain words first; a term of art at most once, in
parentheses; citations belong in the rule docs (`dagward explain`), not here.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from .verdict import Problem, Verdict

EMPTY_SET = "{} (no adjustment)"


def format_set(names: Iterable[str] | None) -> str:
    """`{a, b}`; the empty set as `{} (no adjustment)`; None as `none declared`."""
    if names is None:
        return "none declared"
    names = sorted(names)
    return "{" + ", ".join(names) + "}" if names else EMPTY_SET


def format_sets(sets: Iterable[Iterable[str]]) -> str:
    return "; ".join(format_set(s) for s in sets)


def name_list(names: Iterable[str]) -> str:
    """`a, b, c` (sorted)."""
    return ", ".join(sorted(names))


def backticked(names: Iterable[str]) -> str:
    """`a`, `b` and `c` (in the order given)."""
    items = [f"`{n}`" for n in names]
    if len(items) <= 1:
        return "".join(items)
    return ", ".join(items[:-1]) + " and " + items[-1]


def spell_path(graph, path: Iterable[str]) -> str:
    """`a <- b -> c`, with a hidden `<->` parent written `a <-> c`."""
    from .causal.graph import is_hidden  # networkx stays out of `fmt`

    path = list(path)
    succ = graph.succ
    parts = [path[0]]
    i = 0
    while i < len(path) - 1:
        a, b = path[i], path[i + 1]
        if is_hidden(graph, b) and i + 2 < len(path):
            parts.append(f" <-> {path[i + 2]}")
            i += 2
            continue
        parts.append(f" -> {b}" if b in succ[a] else f" <- {b}")
        i += 1
    return "".join(parts)


# Most name comparisons (difflib's ratio, a few microseconds each) that one
# list of hints may take: a rule that hints for thousands of names against
# thousands of known ones would otherwise grow with the product of the two.
SPELLING_BUDGET = 250_000


class Speller:
    """Close spellings among one list of known names, for `queries` names.

    The list and its lower-case index are built once. When `queries` names
    against the known ones would take more than `SPELLING_BUDGET` comparisons,
    only the match that differs in case is offered (a dict look-up), for every
    name alike, so which names get a hint never depends on their order.
    """

    __slots__ = ("known", "lowered", "spell")

    def __init__(self, known: Iterable[str], queries: int = 1):
        self.known = list(dict.fromkeys(known))
        self.lowered = {k.lower(): k for k in self.known}
        self.spell = queries * len(self.known) <= SPELLING_BUDGET

    def close(self, name: str, n: int = 3) -> list[str]:
        """Up to `n` known names a misspelt `name` may have meant, best first.

        A match that differs only in case first; then one close spelling
        (difflib's ratio, Ratcliff/Obershelp matching, as in the standard library:
        one is a clear hint, several a guessing game); and when nothing is close,
        names that contain the given one as a part (`collider` for
        `collider-adjusted`).
        """
        lowered = self.lowered.get(name.lower())
        if lowered is not None:
            return [lowered]
        if not self.spell:
            return []
        known = self.known
        out = difflib.get_close_matches(name, known, n=1, cutoff=0.6)
        if not out and len(name) >= 3:
            for k in known:
                parts = k.lower().replace("_", "-").split("-")
                if (name.lower() in parts or k.lower().startswith(name.lower())) and k not in out:
                    out.append(k)
        return out[:n]


def close_names(name: str, known: Iterable[str] | Speller, n: int = 3) -> list[str]:
    """Up to `n` known names a misspelt `name` may have meant (see `Speller.close`)."""
    return (known if isinstance(known, Speller) else Speller(known)).close(name, n)


def closest_name(name: str, known: Iterable[str] | Speller) -> str | None:
    """The one known name a misspelt name most likely meant, or None."""
    close = close_names(name, known, n=1)
    return close[0] if close else None


def did_you_mean(name: str, known: Iterable[str] | Speller) -> str:
    """`; did you mean `x`?` (or `x` or `y`), or nothing when no known name is close."""
    close = close_names(name, known)
    if not close:
        return ""
    return "; did you mean " + " or ".join(f"`{c}`" for c in close) + "?"


def arrow_text(source: str, target: str, bidirected: bool) -> str:
    return f"{source} {'<->' if bidirected else '->'} {target}"


def arrow_key_text(key: tuple[str, str, str]) -> str:
    """An arrow from its `model.arrow_key`: `a -> b` or `a <-> b`."""
    kind, source, target = key
    return f"{source} {kind} {target}"


def format_minimal_sets(sets: Iterable[Iterable[str]], truncated: bool = False) -> str:
    """Minimal valid sets in a row: `{a}; {b, c}`, `none exists` when there is none,
    and a mark when the list was cut."""
    sets = list(sets)
    if not sets:
        return "none exists"
    return format_sets(sets) + ("; ... (more not shown)" if truncated else "")


def claim_text(a: str, b: str, given: Iterable[str]) -> str:
    """An implied independence as a table and a plot show it: `a and b`, or
    `a and b, holding fixed c, d` (plain words, no symbol)."""
    given = list(given)
    text = f"{a} and {b}"
    return text + (", holding fixed " + ", ".join(given) if given else "")


def independence_text(a: str, b: str, given: Iterable[str]) -> str:
    """`a` and `b` are independent given `c` (plain words, no symbol)."""
    given = sorted(given)
    tail = f" given {backticked(given)}" if given else ""
    return f"`{a}` and `{b}` are independent{tail}"


# -- the verdict's problems ------------------------------------------------------


def problem_message(problem: Problem, verdict: Verdict) -> str:
    """The message of one problem of a verdict, built from its fields. A problem
    of one of the three questions of a natural effect says which one it is."""
    own = verdict.verdict_of(problem)
    text = _MESSAGES[problem.rule](problem, own)
    if problem.part is None:
        return text
    return f"{PART_WORDS[problem.part]}: {text}"


# The three confounding questions of natural effects, in plain words.
PART_WORDS = {
    "exposure-outcome": "for the exposure-outcome confounding",
    "exposure-mediator": "for the exposure-mediator confounding",
    "mediator-outcome": "for the mediator-outcome confounding (given the exposure)",
}

QUESTION_WORDS = {
    "total": "the total effect",
    "controlled-direct": "the controlled direct effect",
    "natural-direct": "the natural direct effect",
    "natural-indirect": "the natural indirect effect",
}


def question_text(verdict: Verdict) -> str:
    """`the natural direct effect of x on y through m, in data restricted on r`."""
    X = verdict.exposure - verdict.listed_mediators
    text = (
        f"{QUESTION_WORDS[verdict.question]} of {backticked(sorted(X))} on "
        f"{backticked(sorted(verdict.outcome))}"
    )
    if verdict.listed_mediators:
        held = "held fixed" if verdict.question == "controlled-direct" else "as mediator"
        text += f", with {backticked(sorted(verdict.listed_mediators))} {held}"
    if verdict.restricted_all:
        text += f", in data restricted on {backticked(sorted(verdict.restricted_all))}"
    return text


def _exposures(verdict: Verdict) -> str:
    return backticked(sorted(verdict.exposure))


def _adjusted_unmeasured(p: Problem, v: Verdict) -> str:
    return (
        f"`{p.variable}` is declared `unmeasured`, so the analysis cannot adjust for it; "
        "remove it from `adjust:` or measure it and drop it from `unmeasured`"
    )


def _adjusted_mediator(p: Problem, v: Verdict) -> str:
    shown = f": it lies on the causal path {spell_path(v.graph, p.path)}" if p.path else ""
    return f"adjusting for `{p.variable}` blocks part of the effect (it is a mediator){shown}; " + (
        "remove it from `adjust:` to estimate the total effect"
        if v.question == "total"
        else "remove it from `adjust:`"
    )


def _adjusted_descendant(p: Problem, v: Verdict) -> str:
    whose = "the outcome" if p.source_kind == "outcome" else "the mediator"
    return (
        f"`{p.variable}` is an effect of {whose} `{p.source}` "
        f"({spell_path(v.graph, p.path)}); adjusting for it biases the estimate: "
        "remove it from `adjust:`"
    )


def _collider_adjusted(p: Problem, v: Verdict) -> str:
    path = p.path or ()
    role = (
        f"`{p.variable}` is a common effect of its two neighbours on that path (a collider)"
        if p.collider == p.variable
        else f"`{p.variable}` is an effect of `{p.collider}`, a common effect of its two "
        "neighbours on that path (a collider)"
    )
    closers = sorted(
        n
        for i, n in enumerate(path[1:-1], start=1)
        if n in v.fixable and not _is_collider_at(v.graph, path, i)
    )
    fix = (
        f", or also adjust for {_one_of(tuple(closers))} to close that path again"
        if closers
        else ""
    )
    return (
        f"adjusting for `{p.variable}` opens the path {spell_path(v.graph, path)}: {role}; "
        f"remove it from `adjust:`{fix}"
    )


def _is_collider_at(graph, path, i: int) -> bool:
    succ = graph.succ
    return path[i] in succ[path[i - 1]] and path[i] in succ[path[i + 1]]


def _open_biasing_path(p: Problem, v: Verdict) -> str:
    shown = spell_path(v.graph, p.path) if p.path else "a biasing path"
    head = (
        f"the path {shown} is open: it carries confounding and nothing "
        f"on it is adjusted for; adjusting for {_one_of(p.fixable)} would close it"
        if p.fixable
        else f"the path {shown} is open: nothing on it can be adjusted for to close it"
    )
    if v.identifiable:
        sets = v.suggestions()
        return head + (f"; valid adjustment sets: {format_sets(sets)}" if sets else "")
    return (
        head + "; no set of measured variables is fully valid here, and adjusting for "
        f"{format_set(v.best_achievable)} closes every confounding path that measured "
        "variables can close"
    )


def _one_of(names: tuple[str, ...]) -> str:
    if len(names) == 1:
        return f"`{names[0]}`"
    return "any one of " + backticked(names)


def _unmeasured_confounding(p: Problem, v: Verdict) -> str:
    xs, ys = name_list(v.exposure), name_list(v.outcome)
    shown = f": {spell_path(v.graph, p.path)} stays open whatever is adjusted" if p.path else ""
    best = v.best_achievable
    if best is None:
        best_text = ""
    elif best:
        best_text = f"; the best that adjustment can do is {format_set(best)}"
    else:
        best_text = "; adjusting for measured variables cannot close it"
    route = v.route
    if route == "front-door" or (route is None and v.front_door):
        door = (
            f"; the front-door criterion holds for {format_set(v.front_door)}, so the effect "
            "is still identified through it (see `dagward identify`)"
        )
    elif route == "general":
        door = (
            "; the effect is still identified from the measured variables, by a formula "
            "other than adjustment (see `dagward identify`)"
        )
    elif route == "not-identified":
        door = (
            "; the effect is not identified from the measured variables by any formula "
            "(`dagward identify` shows what prevents it)"
        )
    else:
        door = ""
    found = v.instruments
    if found:
        shown = ", ".join(
            f"`{i.variable}`" + (f" given {backticked(sorted(i.given))}" if i.given else "")
            for i in found[:3]
        )
        more = f" and {len(found) - 3} more" if len(found) > 3 else ""
        door += f"; instruments for the exposure: {shown}{more}"
    return (
        f"no set of measured variables can block every biasing path from {xs} to {ys}"
        f"{shown}{best_text}{door}; measure a variable on that path, choose another design, "
        "or report a sensitivity analysis for the confounding that remains (the E-value, say)"
    )


def _instrument_adjusted(p: Problem, v: Verdict) -> str:
    given = f"given {backticked(p.given)}, " if p.given else ""
    return (
        f"{given}`{p.variable}` is related to the outcome only through {_exposures(v)} "
        "(it acts like an instrument): adjusting for it adds variance and can amplify bias "
        "from unmeasured confounding; consider removing it from `adjust:`"
    )


def _no_causal_path(p: Problem, v: Verdict) -> str:
    return (
        f"no causal path leads from {name_list(v.exposure)} to {name_list(v.outcome)}: the "
        "diagram says the effect is zero; add the missing arrow, or mark a negative-control "
        "analysis with `# dagward: allow no-causal-path`"
    )


def _selection_bias(p: Problem, v: Verdict) -> str:
    r = p.variable
    path = spell_path(v.graph, p.path) if p.path else None
    if p.source_kind == "mediator":
        head = (
            f"the data are restricted on `{r}`, which lies on the causal path {path}: "
            "within the restricted data part of the effect is held fixed"
        )
    elif p.source_kind in ("outcome-descendant", "mediator-descendant"):
        whose = "the outcome" if p.source_kind == "outcome-descendant" else "the mediator"
        head = (
            f"the data are restricted on `{r}`, an effect of {whose} `{p.source}` ({path}): "
            "who is in the data depends on the result being measured"
        )
    elif p.collider is not None and path:
        where = (
            f"`{r}` is a common effect of its two neighbours on that path"
            if p.collider == r
            else f"`{r}` is an effect of `{p.collider}`, a common effect of its two neighbours "
            "on that path"
        )
        head = (
            f"restricting the data on `{r}` opens the path {path}: {where}, so the exposure "
            "and outcome become linked in the selected data (collider stratification)"
        )
    elif path:
        head = f"restricting the data on `{r}` leaves the path {path} open"
    else:
        head = f"restricting the data on `{r}` biases the estimate whatever is adjusted"
    if p.source_kind is not None and p.paths:
        head += (
            f"; it also opens the path {spell_path(v.graph, p.paths[0])} "
            f"through `{p.collider}`, a common effect on that path (collider stratification)"
        )
    sel = v.selection
    tail = []
    if sel is not None and sel.sets:
        tail.append(
            "adjusting for "
            + " or ".join(format_set(s) for s in sel.sets[:3])
            + " (with the restriction) repairs it"
        )
    if sel is not None and sel.recoverable:
        tail.append(
            "the effect in the whole population is still recoverable from these data with "
            f"{format_set(sel.recovery_set)} when their distribution in the whole population "
            "is known"
        )
    elif sel is not None and not sel.sets:
        tail.append("the effect is not recoverable from these data alone")
    if sel is not None and sel.outcome_only:
        if sel.odds_ratio.survives:
            adjusted = sel.odds_ratio.adjusted
            which = (
                f"the odds ratio adjusted for {format_set(adjusted)}"
                if adjusted
                else "the unadjusted odds ratio"
            )
            tail.append(
                f"the restriction depends on the outcome only, so {which} is unbiased "
                "(as in case-control sampling), while risks and risk differences are not"
            )
        else:
            tail.append(
                "the odds ratio does not survive either: the exposure affects selection too"
            )
    return head + ("; " + "; ".join(tail) if tail else "")


def _needs_g_methods(p: Problem, v: Verdict) -> str:
    seq = v.sequential
    stages = "; ".join(
        f"stage {i} ({backticked(st.exposures)}): {format_set(st.covariates)}"
        for i, st in enumerate(seq.stages, start=1)
    )
    fb = seq.feedback[0] if seq.feedback else None
    why = (
        f"`{fb.variable}` is affected by the earlier exposure `{fb.earlier}` "
        f"({spell_path(v.graph, fb.affected_path)}) and confounds the later one `{fb.later}` "
        "(treatment-confounder feedback), so adjusting for it and leaving it out are both biased"
        if fb is not None
        else "no single set of covariates works for all the exposures at once"
    )
    return (
        f"ordinary regression adjustment cannot estimate the joint effect of "
        f"{backticked(sorted(v.exposure))}: {why}; adjusting stage by stage works, with "
        f"{stages}; use the g-formula, inverse probability weighting of a marginal structural "
        "model, or g-estimation"
    )


def _exposure_induced_confounder(p: Problem, v: Verdict) -> str:
    a, b, c = (spell_path(v.graph, q) for q in p.paths)
    return (
        f"`{p.variable}` is affected by the exposure ({a}) and affects both the mediator "
        f"({b}) and the outcome ({c}): natural direct and indirect effects are not identified "
        "whatever is adjusted; estimate the controlled direct effect (`effect: "
        "controlled-direct`) or the interventional direct and indirect effects instead"
    )


_MESSAGES = {
    "adjusted-unmeasured": _adjusted_unmeasured,
    "adjusted-mediator": _adjusted_mediator,
    "adjusted-descendant": _adjusted_descendant,
    "collider-adjusted": _collider_adjusted,
    "open-biasing-path": _open_biasing_path,
    "unmeasured-confounding": _unmeasured_confounding,
    "instrument-adjusted": _instrument_adjusted,
    "no-causal-path": _no_causal_path,
    "selection-bias": _selection_bias,
    "needs-g-methods": _needs_g_methods,
    "exposure-induced-confounder": _exposure_induced_confounder,
}
