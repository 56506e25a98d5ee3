"""role-conflict: a variable has two roles in one analysis, or is listed twice.

A variable cannot be both exposure and outcome, an exposure or outcome cannot be
in the adjustment set, and a name is listed once per key. The finding is at the
second occurrence.

The keys of the questions beyond the total effect: a mediator cannot also be an
exposure or the outcome, and a restricted variable cannot be an exposure (the
data would hold one level of it: there is no contrast to estimate). A
restricted variable may be the outcome (case-control sampling), a mediator or
adjusted for; a mediator may be adjusted for. A `mediator:` line belongs to a
direct or indirect effect, so with the total effect (`effect: total` or no
`effect:` line) it is reported here, and so is a second `effect:` line. (A
direct or indirect effect without `mediator:` is a syntax error, like an
analysis without an exposure.)

Bad::

    age -> sick_days
    analysis {
      exposure: age
      outcome: sick_days
      adjust: age  # expect: role-conflict
    }

Good::

    age -> sick_days
    analysis {
      exposure: age
      outcome: sick_days
      adjust: none
    }
"""

from __future__ import annotations

from collections.abc import Iterator

from ..findings import Finding
from ..model import DEFAULT_EFFECT, Analysis, Name
from .base import Context, Rule

_ROLE_WORD = {
    "exposure": "an exposure",
    "outcome": "an outcome",
    "adjust": "adjusted for",
    "mediator": "a mediator",
    "restricted": "a variable the data are restricted on",
}
# Pairs of different keys a variable may hold at once (see the docstring).
_COMPATIBLE = {
    frozenset({"restricted", "outcome"}),
    frozenset({"restricted", "adjust"}),
    frozenset({"restricted", "mediator"}),
    frozenset({"mediator", "adjust"}),
}


def check(ctx: Context) -> Iterator[Finding]:
    for analysis in ctx.diagram.analyses:
        yield from _effect_keys(ctx, analysis)
        # every key a name has appeared under so far, with its first occurrence there
        first_role: dict[str, dict[str, Name]] = {}
        for entry in analysis.entries:
            if entry.is_none and any(e.key == "adjust" and e.names for e in analysis.entries):
                yield ctx.finding(
                    RULE,
                    entry.span,
                    f"analysis `{analysis.name}` says `adjust: none` and also lists "
                    "variables to adjust for; keep one",
                    analysis=analysis,
                )
            for n in entry.names:
                roles = first_role.setdefault(n.text, {})
                if entry.key in roles:
                    role, first = entry.key, roles[entry.key]
                    msg = f"`{n.text}` is listed twice in `{entry.key}:`; list it once"
                else:
                    clash = next(
                        (r for r in roles if frozenset({r, entry.key}) not in _COMPATIBLE), None
                    )
                    roles[entry.key] = n
                    if clash is None:
                        continue
                    role, first = clash, roles[clash]
                    why = _WHY.get(frozenset({role, entry.key}), _ONE_ROLE)
                    msg = (
                        f"`{n.text}` is {_ROLE_WORD[role]} and also {_ROLE_WORD[entry.key]} "
                        f"in analysis `{analysis.name}`; {why}"
                    )
                yield ctx.finding(
                    RULE,
                    n.span,
                    msg,
                    analysis=analysis,
                    related=(ctx.related(first.span, f"first use of `{n.text}`"),),
                )


_ONE_ROLE = "a variable has one role per analysis"
_WHY = {
    frozenset({"restricted", "exposure"}): (
        "data restricted to one level of the exposure hold no contrast to estimate"
    ),
}


def _effect_keys(ctx: Context, analysis: Analysis) -> Iterator[Finding]:
    """A second `effect:` line, and `mediator:` with the total effect."""
    effects = [e for e in analysis.entries if e.key == "effect"]
    for extra in effects[1:]:
        yield ctx.finding(
            RULE,
            extra.span,
            f"analysis `{analysis.name}` says `effect:` twice; keep one line",
            analysis=analysis,
            related=(ctx.related(effects[0].span, "first `effect:` line"),),
        )
    mediator = analysis.entry("mediator")
    if mediator is not None and analysis.effect == DEFAULT_EFFECT:
        said = (
            "says `effect: total`" if effects else "asks for the total effect (no `effect:` line)"
        )
        yield ctx.finding(
            RULE,
            mediator.key_span,
            f"analysis `{analysis.name}` {said}, so `mediator:` has no meaning; "
            "add `effect: controlled-direct`, `natural-direct` or `natural-indirect`, "
            "or remove the `mediator:` line",
            analysis=analysis,
        )


RULE = Rule(
    name="role-conflict",
    severity="error",
    summary="A variable is both exposure and outcome, adjusted while exposure or outcome, "
    "a mediator while exposure or outcome, restricted while exposure, or listed twice; "
    "or `mediator:` without a direct or indirect effect.",
    scope="structure",
    check=check,
    doc=__doc__,
)
