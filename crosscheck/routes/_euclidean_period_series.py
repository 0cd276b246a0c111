"""Symbolic side of the Euclidean period: series of F and G at r_h and the limit.

With x = side (r - r_h) >= 0 in the static region, F = a x^k + ... and
G = b x^m + ... (a, b > 0).  The proper distance is
rho = integral_0^x dy / sqrt(b y^m) and circles of constant r have length
beta_t sqrt(F); the limit beta_t = lim 2 pi rho / sqrt(F) is finite and
non-zero only for k + m = 2 (the regular horizon), infinite for k + m > 2
(a degenerate horizon: no linear term in F G, T = 0).  Both the integral and
the limit are done by sympy on the leading terms with placeholder
coefficients, which are then replaced by the Taylor coefficients of the
claim's F and G -- never by a surface-gravity formula.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy

from crosscheck import fieldroots as er
from crosscheck import probing
from crosscheck.errors import CannotCompute

MAX_ORDER = 4  # highest Taylor order looked at (an extremal horizon has order 2)
SIMPLIFY_OPS = 80  # sympy simplify only below this many operations (it can hang)
FACTOR_OPS = 600  # factor/cancel only below this many operations


@dataclass(frozen=True)
class Leading:
    """f(r_h + side x) = coefficient x^order + O(x^(order + 1)); the coefficient is written
    with the symbol RH standing for r_h (reduced modulo r_h's minimal polynomial)."""

    order: int
    coefficient: sympy.Expr


RH = sympy.Dummy("r_h", positive=True)  # r_h in the coefficients until the very end (a Dummy: no clash with parameters)


def tidy(expr: sympy.Expr) -> sympy.Expr:
    """simplify when small, cancel when root-free, else leave alone (both can hang)."""
    ops = sympy.count_ops(expr)
    if ops <= SIMPLIFY_OPS and not has_nested_root(expr):
        return sympy.simplify(expr)
    if ops <= FACTOR_OPS and all(p.exp.is_Integer for p in expr.atoms(sympy.Pow)):
        return sympy.factor(sympy.cancel(expr))
    return expr


def has_nested_root(expr: sympy.Expr) -> bool:
    roots = [p for p in expr.atoms(sympy.Pow) if not p.exp.is_Integer]
    return any(any(not q.exp.is_Integer for q in p.base.atoms(sympy.Pow)) for p in roots)


@dataclass(frozen=True)
class Horizon:
    """r_h as the symbol RH with its closed form `value` and, when F's numerator is a
    polynomial in r, the irreducible factor `modulus` that vanishes there: coefficients are
    reduced modulo it, so they stay small (the closed form is put in only at the end)."""

    r: sympy.Symbol
    value: sympy.Expr
    side: int
    points: tuple
    modulus: sympy.Poly | None

    def exact(self, expr: sympy.Expr) -> sympy.Expr:
        return expr.subs(RH, self.value)

    def reduce(self, expr: sympy.Expr) -> sympy.Expr:
        """expr (a function of RH) with numerator and denominator reduced modulo `modulus`
        when that makes them smaller; unchanged if it is not rational in RH.  Tidied by
        simplify, or only factored when the modulus is quadratic (the square root of a b is
        then found in the field of r_h, `crosscheck.fieldroots`, and simplify is slow)."""
        expr = sympy.together(expr)
        if self.modulus is None or sympy.count_ops(expr) > FACTOR_OPS:
            return expr
        parts = []
        for part in sympy.fraction(expr):
            try:
                poly = sympy.Poly(part, RH)
            except sympy.PolynomialError:
                return expr
            reduced = poly.rem(self.modulus).as_expr()
            parts.append(reduced if sympy.count_ops(reduced) < sympy.count_ops(part) else part)
        if self.modulus.degree() == 2:
            return sympy.factor(sympy.cancel(parts[0] / parts[1]))
        return tidy(parts[0] / parts[1])

    def is_zero(self, expr: sympy.Expr) -> bool:
        return probing.is_zero(self.exact(expr), self.points)


def horizon(F: sympy.Expr, r: sympy.Symbol, value: sympy.Expr, side: int, points) -> Horizon:
    """The Horizon of F at the closed form `value` (modulus from factoring F's numerator)."""
    return Horizon(r, value, side, tuple(points), er.defining_factor(F, r, value, points, RH))


def leading(f: sympy.Expr, h: Horizon) -> Leading:
    """Leading Taylor term of f at r_h from x = side (r - r_h) >= 0: derivatives at r_h,
    each tested for zero at the probe points (CannotCompute if all vanish up to MAX_ORDER)."""
    derivative = f
    for order in range(MAX_ORDER + 1):
        if order:
            derivative = sympy.diff(derivative, h.r)
        c = derivative.subs(h.r, RH) * sympy.Integer(h.side) ** order / sympy.factorial(order)
        if not h.is_zero(c):
            return Leading(order, h.reduce(c))
    raise CannotCompute(f"{f} vanishes to order > {MAX_ORDER} at r_h = {h.value}")


@dataclass(frozen=True)
class Period:
    """beta_t (sympy.oo for a degenerate horizon) and the derivation shown to the reader."""

    beta: sympy.Expr
    rho: sympy.Expr  # rho(x) for the leading terms, with the placeholders a, b
    ratio: sympy.Expr  # 2 pi rho / sqrt(F) for the leading terms
    degenerate: bool


A_, B_ = sympy.symbols("a b", positive=True)  # placeholders: F ~ a x^k, G ~ b x^m
X_, Y_ = sympy.symbols("x y", positive=True)


def period(f: Leading, g: Leading) -> Period:
    """beta_t = lim_(x -> 0+) 2 pi rho(x) / sqrt(a x^k) with rho = integral dy/sqrt(b y^m)."""
    k, m = f.order, g.order
    if k == 0:
        raise ValueError("F does not vanish at r_h: not a horizon")
    if k + m < 2:
        raise ValueError(f"F ~ x^{k}, G ~ x^{m} at r_h: the proper circumference vanishes faster than the "
                         "radius, no regular Euclidean section (curvature singularity)")
    if m < 2:
        rho = sympy.integrate(1 / sympy.sqrt(B_ * Y_**m), (Y_, 0, X_))
    else:  # the distance from r_h diverges; measure it from a reference point x = 1
        rho = sympy.integrate(1 / sympy.sqrt(B_ * Y_**m), (Y_, X_, 1))
    ratio = sympy.simplify(2 * sympy.pi * rho / sympy.sqrt(A_ * X_**k))
    beta = sympy.limit(ratio, X_, 0, "+")
    return Period(beta, rho, ratio, degenerate=beta == sympy.oo)


def fill(expr: sympy.Expr, f: Leading, g: Leading) -> sympy.Expr:
    """The placeholders a, b replaced by the Taylor coefficients of F and G."""
    return expr.subs({A_: f.coefficient, B_: g.coefficient})


def positive_sqrt(square: sympy.Expr, h: Horizon) -> sympy.Expr:
    """sqrt(square) > 0 (square a function of RH) in a simpler form when one is found:
    a perfect square after factoring, checked at the probe points at the actual r_h."""
    plain = sympy.sqrt(square)
    if sympy.count_ops(square) > FACTOR_OPS or has_nested_root(square):
        return plain
    for candidate in (sympy.powdenest(sympy.sqrt(sympy.factor(square)), force=True),
                      sympy.powdenest(sympy.sqrt(sympy.factor(h.reduce(square))), force=True)):
        candidate = candidate.replace(lambda e: isinstance(e, sympy.Abs), lambda e: e.args[0])
        if any(not p.exp.is_Integer for p in candidate.atoms(sympy.Pow) if p.base.has(RH)):
            continue
        for sign in (1, -1):
            try:
                if h.is_zero(sign * candidate - plain):
                    return h.reduce(sign * candidate)
            except CannotCompute:
                break
    return plain
