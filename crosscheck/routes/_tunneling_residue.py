"""Symbolic side of tunneling: the residue of 1/sqrt(F G) at r_h.

With x = r - r_h and F G = x^n h(x), h(0) != 0: for n = 2 (a regular
horizon) 1/sqrt(F G) = 1/(x sqrt(h)), a simple pole with residue
1/sqrt(h(0)); the outgoing path passes it on a half circle, so
Im W_out = pi E / sqrt(h(0)).  The residue is taken by sympy on the leading
terms with placeholder coefficients h0, h1, which are then replaced by the
Taylor coefficients of the claim's F G -- never by a surface-gravity formula.
For n = 4 (degenerate horizon) the pole is double: there is no residue-type
thermal factor and T = 0; the sub-leading residue is shown but is not a
temperature.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import sympy

from crosscheck import probing
from crosscheck.errors import CannotCompute
from crosscheck.routes import _tunneling_plane as tp

MAX_ORDER = 5
SIMPLIFY_OPS = 80
X = sympy.Symbol("x")
H0, H1 = sympy.symbols("h0 h1", positive=True)  # placeholders: F G = x^n (h0 + h1 x + ...)
# r_h stands as this symbol in the coefficients and is replaced by its closed form only at the
# end (substituting Cardano's formula early makes every later sympy operation slow); a Dummy,
# so that it cannot clash with a claim parameter.
RH = sympy.Dummy("r_h", positive=True)


def nested_roots(expr: sympy.Expr) -> bool:
    """True for roots of expressions with roots (Cardano's formula): sympy's simplify and
    factor can take minutes on those."""
    roots = [p for p in expr.atoms(sympy.Pow) if not p.exp.is_Integer]
    return any(any(not q.exp.is_Integer for q in p.base.atoms(sympy.Pow)) for p in roots)


def tidy(expr: sympy.Expr) -> sympy.Expr:
    """simplify small expressions without nested roots; leave the rest (sympy can hang)."""
    return sympy.simplify(expr) if sympy.count_ops(expr) <= SIMPLIFY_OPS and not nested_roots(expr) else expr


def taylor(f: sympy.Expr, r: sympy.Symbol, r_h: sympy.Expr, points: Sequence[tp.Point],
           clean: Callable[[sympy.Expr], sympy.Expr] | None = None) -> tuple[int, sympy.Expr, sympy.Expr]:
    """(k, c_k, c_(k+1)): f(r_h + x) = c_k x^k + c_(k+1) x^(k+1) + ..., from derivatives at r_h
    (written with the symbol RH) with zero tests at the probe points (RH = r_h there);
    the coefficients go through `clean` (default `tidy`)."""
    clean = clean or tidy
    derivatives = [f]
    for order in range(MAX_ORDER + 1):
        if order:
            derivatives.append(sympy.diff(derivatives[-1], r))
        c = derivatives[order].subs(r, RH) / sympy.factorial(order)
        if not probing.is_zero(c.subs(RH, r_h), points):
            following = sympy.diff(derivatives[order], r).subs(r, RH) / sympy.factorial(order + 1)
            return order, clean(c), clean(following)
    raise CannotCompute(f"{f} vanishes to order > {MAX_ORDER} at r_h = {r_h}")


def orders_allowed(k: int, m: int) -> None:
    """The route treats F, G with simple zeros (a chart crossing the horizon) and the degenerate
    k = m = 2; anything else has no tunneling path in this chart (CannotCompute, with why)."""
    if k == 0:
        raise ValueError("F does not vanish at r_h: not a horizon")
    if (k, m) not in ((1, 1), (2, 2)):
        raise CannotCompute(
            f"F ~ x^{k}, G ~ x^{m} at r_h: the radial coordinate does not cross the horizon as a regular chart "
            "(e.g. isotropic coordinates, where both sides of r_h are outside); the Hamilton-Jacobi path and its "
            "residue are not defined here")


def product_series(f: tuple[int, sympy.Expr, sympy.Expr], g: tuple[int, sympy.Expr, sympy.Expr],
                   clean: Callable[[sympy.Expr], sympy.Expr] | None = None) -> tuple[int, sympy.Expr, sympy.Expr]:
    """Leading two Taylor coefficients of F G from those of F and G (Cauchy product)."""
    (k, f0, f1), (m, g0, g1) = f, g
    return k + m, (clean or tidy)(f0 * g0), f0 * g1 + f1 * g0


@dataclass(frozen=True)
class Pole:
    """The pole of 1/sqrt(F G) at r_h: its order and the residue (placeholders filled in)."""

    order: int
    residue: sympy.Expr | None  # filled in for the double pole only (the simple one: 1/sqrt(h0))
    generic: sympy.Expr  # the residue in terms of h0, h1


def pole(n: int, h0: sympy.Expr, h1: sympy.Expr) -> Pole:
    """Residue of x^(-n/2) / sqrt(h0 + h1 x) at x = 0 by sympy.residue (n even)."""
    if n == 0:
        raise ValueError("F G does not vanish at r_h: not a horizon")
    if n % 2:
        raise ValueError(f"F G ~ (r - r_h)^{n}: sqrt(F G) has a branch point at r_h, not a pole")
    generic = sympy.residue(1 / (X ** (n // 2) * sympy.sqrt(H0 + H1 * X)), X, 0)
    filled = generic.subs({H0: h0, H1: h1}) if n > 2 else None  # n = 2: 1/sqrt(h0), see positive_sqrt
    return Pole(n // 2, filled, generic)


def positive_sqrt(square: sympy.Expr, r_h: sympy.Expr, points: Sequence[tp.Point]) -> sympy.Expr:
    """sqrt(square) (a function of RH) as a simpler expression when factoring shows a perfect
    square (checked at the probe points with RH = r_h)."""
    if nested_roots(square):  # sympy.sqrt would try to split it into real and imaginary parts (slow)
        return sympy.Pow(square, sympy.Rational(1, 2), evaluate=False)
    plain = sympy.sqrt(square)
    if sympy.count_ops(square) > 400:
        return plain
    candidate = sympy.powdenest(sympy.sqrt(sympy.factor(square)), force=True)
    candidate = candidate.replace(lambda e: isinstance(e, sympy.Abs), lambda e: e.args[0])
    for sign in (1, -1):
        try:
            if probing.is_zero((sign * candidate - plain).subs(RH, r_h), points):
                return tidy(sign * candidate)
        except CannotCompute:
            break
    return plain
