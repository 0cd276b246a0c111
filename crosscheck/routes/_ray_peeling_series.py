"""Taylor series at the horizon for the ray-peeling route (private helpers; the Bogoliubov
route has its own derivation, `_bogoliubov_symbolic`).

The late-time exponent of outgoing null rays from the series of F G (and of the function
that matches the ray map across the collapsing shell) at r_h, with each Taylor
coefficient tested for zero numerically at a few parameter points (rounding noise
shrinks with the precision, a true value does not).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.routes._null_rays import RadialForm, compile_at, static_side_numeric
from crosscheck.routes.base import Step
from crosscheck.spacetimes.base import Spacetime
from crosscheck.spacetimes.evaluation import as_sympy, to_mp
from crosscheck.spacetimes.horizon import horizon_radius

Point = Mapping[sympy.Symbol, object]
MAX_ORDER = 6  # highest Taylor order examined for a leading term


def value_at(expr: sympy.Expr, point: Point, dps: int) -> mpmath.mpc:
    """expr at an exact or mpmath point, at dps digits (nan where singular)."""
    expr = as_sympy(expr)
    symbols = sorted(expr.free_symbols, key=str)
    function = sympy.lambdify(symbols, expr, modules="mpmath")
    with mpmath.workdps(dps):
        try:
            return mpmath.mpc(function(*[to_mp(point[s], dps + 5) for s in symbols]))
        except (ZeroDivisionError, ValueError, TypeError):
            return mpmath.mpc(mpmath.nan)


def vanishes(expr: sympy.Expr, points: Sequence[Point]) -> bool:
    """True when expr is zero at every test point: tiny at 50 digits and shrinking at 90
    (a non-zero value agrees at both precisions; rounding noise does not)."""
    expr = as_sympy(expr)
    if expr == 0:
        return True
    for point in points:
        low, high = value_at(expr, point, 50), value_at(expr, point, 90)
        if not (mpmath.isfinite(low) and mpmath.isfinite(high)):
            raise CannotCompute(f"{expr} is singular at a test point")
        with mpmath.workdps(90):
            if high != 0 and abs(high - low) <= mpmath.mpf(10) ** -20 * abs(high):
                return False
    return True


def leading_term(expr: sympy.Expr, r: sympy.Symbol, r_h: sympy.Expr, side: int, points: Sequence[Point]) -> tuple[int, sympy.Expr]:
    """(k, c) with expr(r_h + side x) = c x^k + O(x^(k+1)).  A ratio of polynomials P/D
    takes the leading terms of P and D separately, each derivative reduced modulo r_h's
    irreducible factor of P (so that c is a low power of r_h, not a large radical
    expression); anything else is differentiated as it stands."""
    expr = as_sympy(expr)
    top, bottom = sympy.fraction(sympy.cancel(sympy.together(expr)))
    if top.is_polynomial(r) and bottom.is_polynomial(r) and top.has(r):
        try:
            P, D = sympy.Poly(top, r), sympy.Poly(bottom, r)
        except sympy.PolynomialError:
            P = None
        if P is not None:
            modulus = _modulus(P, r, r_h, points)
            k_top, c_top = _leading(P, r, r_h, side, points, modulus)
            k_bottom, c_bottom = _leading(D, r, r_h, side, points, modulus)
            return k_top - k_bottom, c_top / c_bottom
    return _leading(expr, r, r_h, side, points, None)


def _modulus(P: sympy.Poly, r: sympy.Symbol, r_h: sympy.Expr, points: Sequence[Point]) -> sympy.Poly | None:
    """The irreducible factor of P that vanishes at r_h, if sympy can factor P."""
    try:
        factors = sympy.factor_list(P)[1]
    except (sympy.PolynomialError, NotImplementedError):
        return None
    for factor, _ in sorted(factors, key=lambda pair: pair[0].degree()):
        if factor.degree() >= 1 and vanishes(factor.as_expr().subs(r, r_h), points):
            return factor
    return None


def _leading(expr, r, r_h, side, points, modulus) -> tuple[int, sympy.Expr]:
    """Leading Taylor term at r_h from successive derivatives (Poly: reduced modulo `modulus`)."""
    derivative = expr
    for order in range(MAX_ORDER + 1):
        if order:
            derivative = derivative.diff(r) if isinstance(derivative, sympy.Poly) else sympy.diff(derivative, r)
        if isinstance(derivative, sympy.Poly):
            reduced = derivative.rem(modulus) if modulus is not None else derivative
            value = sum((sympy.factor(c) * r_h**k for k, c in enumerate(reversed(reduced.all_coeffs()))), sympy.Integer(0))
        else:
            value = derivative.subs(r, r_h)
        c = value * sympy.Integer(side) ** order / sympy.factorial(order)
        if not vanishes(c, points):
            return order, c
    raise CannotCompute(f"{expr} has no non-zero Taylor coefficient up to order {MAX_ORDER} at r = {r_h}")


@dataclass(frozen=True)
class Exponent:
    """The late-time exponent kappa_t of the ray map, from Taylor series at r_h."""

    kappa_t: sympy.Expr
    r_h: sympy.Expr
    side: int
    representative: dict
    steps: tuple
    reason: str
    degenerate: bool


def tidy(expr: sympy.Expr) -> sympy.Expr:
    """simplify small expressions only (sympy can take minutes on large radical ones)."""
    return sympy.simplify(expr) if sympy.count_ops(expr) <= 150 else expr


def symbolic_exponent(spacetime: Spacetime, form: RadialForm, points: Sequence[Point], matching: bool) -> Exponent:
    """kappa_t = (m/2) sqrt(c) from F G = c x^2 + ... at r_h: tau ~ ln(x)/sqrt(c) and a
    regular function that vanishes like x^m on the horizon, exp(-m sqrt(c) u/2) at late u.
    m is the order of F (the regular coordinate rho = integral sqrt(F/G) dr ~ x^m), or,
    with `matching`, of R - R(r_h) when there is an areal radius (the collapse map)."""
    rep, r, x = points[0], form.r, sympy.Symbol("x", positive=True)
    r_h = horizon_radius(spacetime, rep)
    fg = sympy.cancel(sympy.together(form.F * form.G))
    with mpmath.workdps(30):
        r_value = mpmath.re(value_at(r_h, rep, 30))
        rep_mp = {k: to_mp(v, 30) for k, v in rep.items()}
        side = static_side_numeric(compile_at(form.F, r, rep_mp), compile_at(form.G, r, rep_mp), r_value, abs(r_value) or mpmath.mpf(1))
    order, c = leading_term(fg, r, r_h, side, points)
    steps = [Step(f"null rays dr/dt = sqrt(F G), {form.how}; series at r_h = {r_h}, x = |r - r_h|",
                  sympy.Eq(sympy.Symbol("F*G"), tidy(c) * x**order, evaluate=False))]
    if order < 2:
        raise ValueError(f"horizon: F G does not have a double zero at r_h = {r_h} (order {order})")
    if order > 2:
        steps.append(Step(f"degenerate horizon: F G ~ x^{order}; tau ~ x^(1 - {order // 2}) is not logarithmic: power-law map, rate 0",
                          sympy.Eq(sympy.Symbol("kappa_t"), 0)))
        reason = f"degenerate (extremal) horizon: F G ~ x^{order}, power-law not exponential, kappa_t = 0"
        return Exponent(sympy.Integer(0), r_h, side, rep, tuple(steps), reason, True)
    root = tidy(sympy.sqrt(tidy(c)))
    steps.append(Step("d/dr sqrt(F G) at r_h; tortoise tau ~ ln(x)/s (the rate on t = const slices)",
                      sympy.Eq(sympy.Symbol("s"), root, evaluate=False)))
    if matching and form.R is not None and form.R.has(r):
        m, _ = leading_term(form.R - form.R.subs(r, r_h), r, r_h, side, points)
        what = "areal radius R - R(r_h) (null-shell collapse)"
    else:
        m, _ = leading_term(form.F, r, r_h, side, points)
        what = "regular coordinate rho = integral sqrt(F/G) dr"
    steps.append(Step(f"{what} ~ x^{m} ~ exp(-{m} s u/2) at late u = -2 tau",
                      sympy.Eq(sympy.Symbol("kappa_t"), sympy.Rational(m, 2) * sympy.Symbol("s"), evaluate=False)))
    return Exponent(tidy(sympy.Rational(m, 2) * root), r_h, side, rep, tuple(steps), f"{what} ~ x^{m}, F G ~ c x^2: kappa_t = ({m}/2) sqrt(c)", False)


# --------------------------------------------------------------------------- sample points

_FRACTIONS = (sympy.Rational(1, 2), sympy.Rational(3, 10), sympy.Rational(7, 10))
_GENERIC = (sympy.Rational(13, 10), sympy.Rational(17, 10), sympy.Rational(11, 10))


def sample_points(parameters: Sequence[sympy.Symbol], ranges: Mapping, extra: set) -> list[dict]:
    """Exact points inside the parameter ranges (the first is the midpoint, the representative
    used to pick closed-form roots); each parameter at a different fraction so that equal
    ranges do not give equal values.  Symbols without a range get generic values."""
    symbols = sorted(set(parameters) | set(extra), key=str)
    points = []
    for k, base in enumerate(_FRACTIONS):
        point = {}
        for i, symbol in enumerate(symbols):
            if symbol in ranges:
                lo, hi = (sympy.Rational(v) for v in ranges[symbol])
                fraction = base if k == 0 else sympy.Rational(2 + (3 * i + 5 * k) % 7, 11)
                point[symbol] = lo + fraction * (hi - lo)
            else:
                point[symbol] = _GENERIC[k]
        points.append(point)
    return points
