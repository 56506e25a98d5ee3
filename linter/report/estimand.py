"""Writing an estimand (dagward.causal.estimand) as plain text, Unicode or LaTeX.

A summed variable whose name is already in use (the exposure's set value,
or a variable summed further out) is printed with a prime, ``x'``, so that
``sum over m of P(m | x) * sum over x' of P(y | m, x') P(x')`` reads as the
front-door formula is usually written.  The writer walks the tree with an
explicit stack.
"""

from __future__ import annotations

from ..causal.estimand import Expr, Prob, Product, Ratio, Sum, children, free_variables

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


def _scope(e: Sum, names: dict[str, str], used: set[str]) -> tuple[dict[str, str], set[str]]:
    """The names inside a sum: a summed variable whose name is in use gets a prime."""
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
    return inner_names, inner_used


def _write(e: Expr, style: Style, names: dict[str, str], used: set[str]) -> str:
    """Post-order over the tree with an explicit stack (a formula may nest deeply)."""
    out: list[str] = []
    stack: list[tuple[Expr, dict[str, str], set[str], bool]] = [(e, names, used, False)]
    while stack:
        node, nm, us, done = stack.pop()
        if isinstance(node, Prob):
            out.append(_prob(node, style, nm))
            continue
        kids = list(children(node))
        if not done:
            stack.append((node, nm, us, True))
            if isinstance(node, Sum):
                inner = _scope(node, nm, us)
                stack.append((node.body, inner[0], inner[1], False))
            else:
                stack.extend((k, nm, us, False) for k in reversed(kids))
            continue
        got = out[len(out) - len(kids) :] if kids else []
        if kids:
            del out[len(out) - len(kids) :]
        out.append(_combine(node, got, style, nm, us))
    return out[0]


def _prob(e: Prob, style: Style, names: dict[str, str]) -> str:
    bar = r" \mid " if style == "latex" else " | "
    inner = _names(e.vars, names, style)
    if e.given:
        inner += bar + _names(e.given, names, style)
    return f"P({inner})"


def _combine(e: Expr, parts: list[str], style: Style, names: dict[str, str], used: set[str]) -> str:
    if isinstance(e, Sum):
        over = _names(e.over, _scope(e, names, used)[0], style)
        body = parts[0]
        if style == "latex":
            return rf"\sum_{{{over}}} {body}"
        if style == "unicode":
            sub = over if len(e.over) == 1 else "{" + over + "}"
            return f"Σ_{sub} {body}"
        return f"sum over {over} of {body}"
    if isinstance(e, Ratio):
        num, den = parts
        if style == "latex":
            return rf"\frac{{{num}}}{{{den}}}"
        return f"{_wrap(e.numerator, num)} / {_wrap(e.denominator, den)}"
    assert isinstance(e, Product)
    if not e.factors:
        return "1"
    out = []
    last = len(e.factors) - 1
    for i, (f, text) in enumerate(zip(e.factors, parts, strict=True)):
        if isinstance(f, Sum):
            if i != last:
                text = r"\left[" + text + r"\right]" if style == "latex" else "[" + text + "]"
            if i and style == "text":
                text = "* " + text
        elif isinstance(f, Ratio) and style != "latex":
            text = "[" + text + "]"
        out.append(text)
    return " ".join(out)


def _wrap(e: Expr, text: str) -> str:
    return text if isinstance(e, Prob) else f"({text})"


__all__ = ["render_estimand", "variable_name"]
