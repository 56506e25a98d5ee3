"""Which variables a model formula uses: the outcome side, and every variable in a term.

A model formula in Wilkinson notation (Wilkinson & Rogers 1973, "Symbolic
description of factorial models for analysis of variance", Applied Statistics
22:392-399; the notation of R's `lm`/`glm` and of Python's formulaic and
patsy) is parsed with formulaic, which applies the operators (`+`, `-`, `:`,
`*`, `/`, `^`, `%in%`, `0`/`1` for the intercept) and hands back the terms that
remain. This module then reads the *variables* each term names:

* a plain term (`age`, `` `body mass` ``) names itself;
* a function term (`ns(bmi, 3)`, `factor(region)`, `log(age)`, `I(age^2)`,
  `poly(bmi, 2, raw = TRUE)`, `offset(log(pop))`) names every data variable in
  its arguments; function names, numbers, strings and the usual constants
  (`TRUE`, `FALSE`, `T`, `F`, `NA`, `NULL`, `Inf`, `NaN`, `pi`, `True`,
  `False`, `None`) and R's contrast functions (`contr.treatment`, ...) are not
  variables;
* an interaction (`x:age`, `log(age):treated`) names the variables of its
  parts, so `log(age):treated` uses `age` and `treated`;
* a term removed with `-` is gone (`y ~ x + age - age` does not use `age`),
  but `y ~ x*age - age` still uses `age` through `x:age`, as a model fitted
  from it would.

Refused, with a message saying why: `.` ("every other column of the data": the
diagram does not know the data's columns, so the covariates would be a guess),
and `|` (random effects in lme4, fixed effects in fixest, instruments in
ivreg: the same sign means different things, and only some of them adjust).
List the covariates with `--list` for those models.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from .errors import UsageProblem

# Names that are values in R or Python, not data columns.
CONSTANTS = frozenset(
    {"TRUE", "FALSE", "T", "F", "NA", "NULL", "Inf", "NaN", "pi", "True", "False", "None"}
)
_ANSI = re.compile(r"\x1b\[[0-9;]*m")


class FormulaProblem(UsageProblem):
    """A formula that cannot be read; the message says where and why (exit 2)."""


@dataclass(frozen=True)
class FormulaVariables:
    """The variables of a formula, each in order of first appearance."""

    outcome: tuple[str, ...]  # named on the left of `~` (empty for a one-sided formula)
    terms: tuple[tuple[str, ...], ...]  # per right-hand term, the variables it names
    variables: tuple[str, ...]  # all right-hand variables

    @classmethod
    def from_names(cls, names: list[str]) -> FormulaVariables:
        unique = tuple(dict.fromkeys(names))
        return cls((), tuple((n,) for n in unique), unique)


def _is_constant(name: str) -> bool:
    return name in CONSTANTS or name.startswith("contr.")


def _factor_variables(factor) -> list[str]:
    """The data variables one formulaic factor (one part of a term) reads."""
    from formulaic.utils.variables import Variable, get_expression_variables

    method = factor.eval_method.value
    if method == "literal":
        return []
    if method == "lookup":
        return [str(factor.expr)]
    found = get_expression_variables(factor.expr, {})
    names = [
        str(v)
        for v in found
        if Variable.Role.VALUE in v.roles
        and Variable.Role.CALLABLE not in v.roles
        and not _is_constant(str(v))
    ]
    # the set formulaic returns has no order: keep the order of the expression text
    return sorted(names, key=lambda n: (_position(factor.expr, n), n))


def _position(text: str, name: str) -> int:
    match = re.search(rf"(?<![\w.]){re.escape(name)}(?![\w.])", text)
    return match.start() if match else len(text)


def _terms(side) -> list[list[str]]:
    out = []
    for term in side:
        names: list[str] = []
        for factor in term.factors:
            names.extend(n for n in _factor_variables(factor) if n not in names)
        if names:  # the intercept term names nothing
            out.append(names)
    return out


def _problem(text: str, error: Exception) -> FormulaProblem:
    """formulaic's message in one line, with the column where it points."""
    message = _ANSI.sub("", str(error))
    lines = [line for line in message.splitlines() if line.strip()]
    first = lines[0].strip() if lines else type(error).__name__
    where = ""
    for line in lines[1:]:
        if "⧛" in line:  # formulaic marks the offending part as ⧛...⧚
            where = f" (column {line.index('⧛') + 1})"
    return FormulaProblem(f"the formula `{text}` cannot be read{where}: {first}")


def parse_formula(text: str) -> FormulaVariables:
    """The variables of a Wilkinson formula (see the module docstring)."""
    try:
        from formulaic import Formula
        from formulaic.errors import FormulaicError
    except ImportError:
        raise UsageProblem(
            "--formula needs the formulaic package: `pip install formulaic` (or install "
            "dagward with its `formula` extra); --list needs nothing"
        ) from None
    if not text.strip():
        raise FormulaProblem("the formula is empty")
    bare = re.sub(r"`[^`]*`|'[^']*'|\"[^\"]*\"", "", text)  # outside quotes and backticks
    if "|" in bare:
        raise FormulaProblem(
            f"the formula `{text}` has a `|` part, which means random effects, fixed effects "
            "or instruments depending on the package; list the covariates with --list instead"
        )
    if re.search(r"(?<![\w.])\.(?![\w.])", bare):
        raise FormulaProblem(
            f"the formula `{text}` uses `.` (every other column of the data); the diagram "
            "does not know the data's columns: write the covariates out, or use --list"
        )
    try:
        formula = Formula(text)
    except (FormulaicError, SyntaxError, ValueError) as e:
        raise _problem(text, e) from None
    if hasattr(formula, "lhs"):
        lhs, rhs = formula.lhs, formula.rhs
        outcome = [n for term in _terms(lhs) for n in term]
    else:
        lhs, rhs, outcome = None, formula, []
    if not hasattr(rhs, "__iter__") or not all(hasattr(t, "factors") for t in rhs):
        raise FormulaProblem(f"the formula `{text}` has several parts; use --list instead")
    terms = _terms(rhs)
    variables = tuple(dict.fromkeys(n for term in terms for n in term))
    return FormulaVariables(tuple(dict.fromkeys(outcome)), tuple(map(tuple, terms)), variables)
