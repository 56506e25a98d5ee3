"""Estimands as expression trees over the observed distribution, and their simplification.

An identified causal effect is a formula in the distribution P of the
measured variables.  The identification algorithm (dagward.causal.identify)
builds it from four kinds of node, all frozen dataclasses:

* :class:`Prob` -- a term ``P(A | C)`` of the observed distribution;
* :class:`Product` -- a product of factors;
* :class:`Sum` -- a sum over every value of some variables;
* :class:`Ratio` -- a quotient.

Scoping: a :class:`Sum` binds its variables inside its body.  A bound
variable may have the name of a variable that is free outside (the
front-door formula sums over the exposure inside a term that also uses the
exposure's set value); inside the sum the name means the summed copy.  The
renderers (dagward.report.estimand) print such copies with a prime (x').

:func:`simplify` applies only identities that hold for every distribution:
a conditional distribution summed over its own variables is 1, a joint
marginalises (``sum over b of P(a, b | c) = P(a | c)``), factors that do not
mention the summed variables move out of the sum, the chain rule joins
``P(a | b, c) P(b | c)`` into ``P(a, b | c)``, and equal factors cancel in a
ratio (``P(a, b | c) / P(b | c) = P(a | b, c)``).  The tree is rebuilt
bottom-up with an explicit stack (no recursion).
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass


@dataclass(frozen=True)
class Prob:
    """``P(vars | given)`` in the observed distribution (``given`` may be empty)."""

    vars: frozenset[str]
    given: frozenset[str] = frozenset()


@dataclass(frozen=True)
class Product:
    """The product of ``factors`` (the empty product is 1)."""

    factors: tuple[Expr, ...]


@dataclass(frozen=True)
class Sum:
    """The sum of ``body`` over every value of the variables ``over``."""

    over: frozenset[str]
    body: Expr


@dataclass(frozen=True)
class Ratio:
    numerator: Expr
    denominator: Expr


Expr = Prob | Product | Sum | Ratio
ONE = Product(())


def prob(vars: Iterable[str], given: Iterable[str] = ()) -> Prob:
    return Prob(frozenset(vars), frozenset(given))


def children(e: Expr) -> tuple[Expr, ...]:
    if isinstance(e, Product):
        return e.factors
    if isinstance(e, Sum):
        return (e.body,)
    if isinstance(e, Ratio):
        return (e.numerator, e.denominator)
    return ()


def _rebuild(e: Expr, kids: list[Expr]) -> Expr:
    if isinstance(e, Product):
        return Product(tuple(kids))
    if isinstance(e, Sum):
        return Sum(e.over, kids[0])
    if isinstance(e, Ratio):
        return Ratio(kids[0], kids[1])
    return e


def bottom_up(e: Expr, fn) -> Expr:
    """Rebuild ``e`` with ``fn`` applied to every node after its children (iterative)."""
    out: list[Expr] = []
    stack: list[tuple[Expr, bool]] = [(e, False)]
    while stack:
        node, done = stack.pop()
        kids = children(node)
        if not kids:
            out.append(fn(node))
        elif done:
            got = out[len(out) - len(kids) :]
            del out[len(out) - len(kids) :]
            out.append(fn(_rebuild(node, got)))
        else:
            stack.append((node, True))
            stack.extend((k, False) for k in reversed(kids))
    return out[0]


def free_variables(e: Expr) -> frozenset[str]:
    """The variables ``e`` depends on (summed variables are bound inside their sum)."""
    # computed bottom-up into a side table keyed by node identity
    table: dict[int, frozenset[str]] = {}
    stack: list[tuple[Expr, bool]] = [(e, False)]
    keep: list[Expr] = []  # holds nodes so their ids stay theirs
    while stack:
        node, done = stack.pop()
        if id(node) in table:
            continue
        kids = children(node)
        if isinstance(node, Prob):
            table[id(node)] = node.vars | node.given
            keep.append(node)
        elif done:
            if isinstance(node, Sum):
                table[id(node)] = table[id(node.body)] - node.over
            else:
                acc: frozenset[str] = frozenset()
                for k in kids:
                    acc |= table[id(k)]
                table[id(node)] = acc
            keep.append(node)
        else:
            stack.append((node, True))
            stack.extend((k, False) for k in kids)
    return table[id(e)]


def factors_of(e: Expr) -> list[Expr]:
    return list(e.factors) if isinstance(e, Product) else [e]


def product(factors: Iterable[Expr]) -> Expr:
    """A product, flattened, with 1s dropped; a single factor stands alone."""
    flat: list[Expr] = []
    for f in factors:
        if isinstance(f, Product):
            flat.extend(f.factors)
        elif isinstance(f, Prob) and not f.vars:
            continue  # P(nothing | c) = 1
        else:
            flat.append(f)
    if len(flat) == 1:
        return flat[0]
    return Product(tuple(flat))


def _chain_merge(factors: list[Expr]) -> list[Expr]:
    """P(a | b, c) P(b | c) -> P(a, b | c), repeatedly (the chain rule).

    f = P(A | B u C) pairs with g = P(B | C) exactly when f's conditioning
    set is g's variables and conditioning set together, so a dict keyed by
    conditioning sets finds the pairs of a pass in linear time.
    """
    probs = [f for f in factors if isinstance(f, Prob)]
    others = [f for f in factors if not isinstance(f, Prob)]
    changed = True
    while changed:
        changed = False
        by_given: dict[frozenset[str], list[int]] = {}
        for i, f in enumerate(probs):
            by_given.setdefault(f.given, []).append(i)
        used: set[int] = set()
        merged: list[Expr] = []
        for j, g in enumerate(probs):
            if j in used:
                continue
            for i in by_given.get(g.vars | g.given, ()):
                if i != j and i not in used:
                    used.update((i, j))
                    merged.append(Prob(probs[i].vars | g.vars, g.given))
                    changed = True
                    break
        if changed:
            probs = [p for k, p in enumerate(probs) if k not in used] + merged
    return probs + others


def _simplify_product(e: Product) -> Expr:
    factors = [f for f in factors_of(product(e.factors)) if f != ONE]
    factors = _chain_merge(factors)
    return product(_order(factors))


def _order(factors: list[Expr]) -> list[Expr]:
    """Terms first, then ratios, then sums (a sum reads to the end of the line)."""
    rank = {Prob: 0, Ratio: 1, Sum: 2, Product: 3}
    return sorted(factors, key=lambda f: rank[type(f)])


def _simplify_sum(e: Sum) -> Expr:
    body = e.body
    over = set(e.over)
    if isinstance(body, Sum) and not (body.over & over):
        over |= body.over
        body = body.body
    factors = factors_of(body)
    fvs = [free_variables(f) for f in factors]
    # A summed variable no factor mentions: every sum the algorithm builds
    # ranges over variables that head a conditional term, and the rules below
    # remove a variable together with the term it heads; so none is left
    # that would multiply by the number of its values.
    over &= set().union(*fvs) if fvs else set()
    # which factors mention each summed variable
    occurs: dict[str, set[int]] = {}
    for i, s in enumerate(fvs):
        for v in s & over:
            occurs.setdefault(v, set()).add(i)
    work = sorted(over, reverse=True)
    while work:
        v = work.pop()
        users = occurs.get(v, ())
        if v not in over or len(users) != 1:
            continue
        (i,) = users
        f = factors[i]
        if not (isinstance(f, Prob) and v in f.vars):
            continue
        # sum over v of P(v, a | c) = P(a | c); the empty term is 1
        over.discard(v)
        g = Prob(f.vars - {v}, f.given)
        if g.vars:
            factors[i] = g
            fvs[i] = g.vars | g.given
        else:
            factors[i] = ONE
            for u in fvs[i] & over:  # they lost a user: perhaps one is left
                occurs[u].discard(i)
                work.append(u)
            fvs[i] = frozenset()
    keep = [(f, s) for f, s in zip(factors, fvs, strict=True) if f != ONE]
    inside = [f for f, s in keep if s & over]
    outside = [f for f, s in keep if not (s & over)]
    if not over or not inside:
        return product(_order(outside + inside))
    inner = _simplify_product(Product(tuple(inside)))
    summed = Sum(frozenset(over), inner)
    if not outside:
        return summed
    return product(_order(outside) + [summed])


def _simplify_ratio(e: Ratio) -> Expr:
    num = [f for f in factors_of(e.numerator) if f != ONE]
    den = [f for f in factors_of(e.denominator) if f != ONE]
    # cancel equal factors
    left = Counter(den)
    kept_num = []
    for f in num:
        if left[f]:
            left[f] -= 1
        else:
            kept_num.append(f)
    den = list(left.elements())
    num = kept_num
    # P(a, b | c) / P(b | c) = P(a | b, c)
    changed = True
    while changed:
        changed = False
        for i, d in enumerate(den):
            if not isinstance(d, Prob):
                continue
            for j, n in enumerate(num):
                if isinstance(n, Prob) and n.given == d.given and d.vars < n.vars:
                    num[j] = Prob(n.vars - d.vars, n.given | d.vars)
                    del den[i]
                    changed = True
                    break
            if changed:
                break
    top = _simplify_product(Product(tuple(num))) if num else ONE
    if not den:
        return top
    bottom = _simplify_product(Product(tuple(den)))
    return Ratio(top, bottom)


def _step(e: Expr) -> Expr:
    if isinstance(e, Product):
        return _simplify_product(e)
    if isinstance(e, Sum):
        return _simplify_sum(e)
    if isinstance(e, Ratio):
        return _simplify_ratio(e)
    if isinstance(e, Prob) and not e.vars:
        return ONE
    return e


def simplify(e: Expr) -> Expr:
    """Apply the identities of the module docstring until the tree stops changing."""
    for _ in range(50):  # each pass only shrinks the tree; a few passes suffice
        new = bottom_up(e, _step)
        if new == e:
            return new
        e = new
    return e


def adjustment_formula(X: Iterable[str], Y: Iterable[str], Z: Iterable[str]) -> Expr:
    """``sum over z of P(y | x, z) P(z)``: the adjustment formula for a valid set Z
    (Pearl 1993; Shpitser, VanderWeele & Robins 2010), ``P(y | x)`` when Z is empty."""
    X, Y, Z = frozenset(X), frozenset(Y), frozenset(Z)
    if not Z:
        return Prob(Y, X)
    return Sum(Z, Product((Prob(Y, X | Z), Prob(Z))))


def front_door_formula(x: str, y: str, M: Iterable[str]) -> Expr:
    """``sum over m of P(m | x) * sum over x' of P(y | m, x') P(x')`` (Pearl 1995,
    "Causal diagrams for empirical research", Biometrika 82:669-688, eq. for
    the front-door criterion).  The inner sum binds the exposure's name."""
    M = frozenset(M)
    inner = Sum(frozenset({x}), Product((Prob(frozenset({y}), M | {x}), Prob(frozenset({x})))))
    return Sum(M, Product((Prob(M, frozenset({x})), inner)))


def to_json(e: Expr) -> dict:
    """The tree as JSON-ready data (lists sorted; a sum binds ``over`` inside ``of``)."""

    def node(n: Expr, kids: list[dict]) -> dict:
        if isinstance(n, Prob):
            return {"type": "p", "of": sorted(n.vars), "given": sorted(n.given)}
        if isinstance(n, Product):
            return {"type": "product", "factors": kids}
        if isinstance(n, Sum):
            return {"type": "sum", "over": sorted(n.over), "of": kids[0]}
        return {"type": "ratio", "numerator": kids[0], "denominator": kids[1]}

    out: list[dict] = []
    stack: list[tuple[Expr, bool]] = [(e, False)]
    while stack:
        n, done = stack.pop()
        kids = children(n)
        if not kids and not isinstance(n, Product):
            out.append(node(n, []))
        elif done or not kids:
            got = out[len(out) - len(kids) :] if kids else []
            if kids:
                del out[len(out) - len(kids) :]
            out.append(node(n, got))
        else:
            stack.append((n, True))
            stack.extend((k, False) for k in reversed(kids))
    return out[0]


def from_json(d: dict) -> Expr:
    """Inverse of :func:`to_json` (for programs that read the tree back)."""
    kind = d["type"]
    if kind == "p":
        return prob(d["of"], d["given"])
    if kind == "product":
        return Product(tuple(from_json(f) for f in d["factors"]))
    if kind == "sum":
        return Sum(frozenset(d["over"]), from_json(d["of"]))
    if kind == "ratio":
        return Ratio(from_json(d["numerator"]), from_json(d["denominator"]))
    raise ValueError(f"unknown estimand node type: {kind!r}")


__all__ = [
    "ONE",
    "Expr",
    "Prob",
    "Product",
    "Ratio",
    "Sum",
    "adjustment_formula",
    "bottom_up",
    "free_variables",
    "from_json",
    "front_door_formula",
    "prob",
    "simplify",
    "to_json",
]
