"""Writing an estimand (linter.causal.estimand) as plain text, Unicode or LaTeX.

A summed variable whose name is already in use (the exposure's set value,
or a variable summed further out) is printed with a prime, ``x'``, so that
``sum over m of P(m | x) * sum over x' of P(y | m, x') P(x')`` reads as the
front-door formula is usually written.  Estimands are a few levels deep, so
the writers follow the tree directly.
"""

from __future__ import annotations

from ..causal.estimand import Expr, Prob, Product, Ratio, Sum, free_variables

Style = str  # "text", "unicode" or "latex"


def render_estimand(e: Expr, style: Style = "text") -> str:
    """The formula in one line: ``style`` is "text", "unicode" (Σ) or "latex"."""
    if style not in ("text", "unicode", "latex"):
        raise ValueError(f"unknown style {style!r}")
    used = set(free_variables(e))
    return _write(e, style, {}, used)


def variable_name(v: str, style: Style = "text") -> str:
    """A variable's name as the formulas write it (``\\mathit{...}`` in LaTeX)."""
    return _name(v, {}, style)


def _fresh(v: str, used: set[str]) -> str:
    name = v + "'"
    while name in used:
        name += "'"
    return name


def _name(v: str, names: dict[str, str], style: Style) -> str:
    shown = names.get(v, v)
    if style != "latex":
        return shown
    base = shown.rstrip("'")
    primes = shown[len(base) :]
    if len(base) == 1:
        return base + primes
    return r"\mathit{" + base.replace("_", r"\_") + "}" + primes


def _names(vs, names, style) -> str:
    return ", ".join(_name(v, names, style) for v in sorted(vs))


def _write(e: Expr, style: Style, names: dict[str, str], used: set[str]) -> str:
    if isinstance(e, Prob):
        bar = r" \mid " if style == "latex" else " | "
        inner = _names(e.vars, names, style)
        if e.given:
            inner += bar + _names(e.given, names, style)
        return f"P({inner})"
    if isinstance(e, Sum):
        inner_names = dict(names)
        inner_used = set(used)
        for v in sorted(e.over):
            if v in used:
                new = _fresh(v, inner_used)
                inner_names[v] = new
                inner_used.add(new)
            else:
                inner_names.pop(v, None)
                inner_used.add(v)
        over = _names(e.over, inner_names, style)
        body = _write(e.body, style, inner_names, inner_used)
        if style == "latex":
            return rf"\sum_{{{over}}} {body}"
        if style == "unicode":
            sub = over if len(e.over) == 1 else "{" + over + "}"
            return f"Σ_{sub} {body}"
        return f"sum over {over} of {body}"
    if isinstance(e, Ratio):
        num = _write(e.numerator, style, names, used)
        den = _write(e.denominator, style, names, used)
        if style == "latex":
            return rf"\frac{{{num}}}{{{den}}}"
        return f"{_wrap(e.numerator, num)} / {_wrap(e.denominator, den)}"
    assert isinstance(e, Product)
    if not e.factors:
        return "1"
    parts = []
    last = len(e.factors) - 1
    for i, f in enumerate(e.factors):
        text = _write(f, style, names, used)
        if isinstance(f, Sum):
            if i != last:
                text = r"\left[" + text + r"\right]" if style == "latex" else "[" + text + "]"
            if i and style == "text":
                text = "* " + text
        elif isinstance(f, Ratio) and style != "latex":
            text = "[" + text + "]"
        parts.append(text)
    return " ".join(parts)


def _wrap(e: Expr, text: str) -> str:
    return text if isinstance(e, Prob) else f"({text})"


__all__ = ["render_estimand", "variable_name"]
