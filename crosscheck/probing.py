"""Probing closed forms at points: the generic numeric tools two horizon routes share.

Representative parameter points inside the claim's ranges, a fast compiled
mpmath evaluation of a sympy expression, a scale-free zero test, and the
distance from a horizon to the nearest other root of F's and G's polynomial
parts (the scale on which a route may approach the horizon).  They
evaluate whatever expression a route hands them; none of them knows a
surface gravity or a temperature, so sharing them keeps routes independent.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping, Sequence

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.routes.base import Problem
from crosscheck.spacetimes.evaluation import as_sympy, evaluate, to_mp

Point = Mapping[sympy.Symbol, object]


def _fraction_of(bounds, f) -> sympy.Expr:
    if bounds is None:
        return sympy.Integer(1)
    lo, hi = (sympy.Rational(b) for b in bounds)
    return lo + f * (hi - lo)


def probe_points(problem: Problem) -> list[dict[sympy.Symbol, sympy.Expr]]:
    """The representative point (range midpoints; 1 without a range) first, then two more."""
    fractions = (sympy.Rational(1, 2), sympy.Rational(3, 10), sympy.Rational(7, 10))
    return [{p: _fraction_of(problem.ranges.get(p), f) for p in problem.parameters} for f in fractions]


@functools.lru_cache(maxsize=512)
def _compiled(expr: sympy.Expr) -> tuple:
    symbols = tuple(sorted(expr.free_symbols, key=str))
    return symbols, sympy.lambdify(symbols, expr, modules="mpmath")


def value(expr: sympy.Expr, point: Point, digits: int) -> mpmath.mpc:
    """expr at a point (exact or mpmath values) at `digits` digits, by a compiled mpmath
    function (much faster than evalf on large expressions); ValueError if not finite."""
    symbols, function = _compiled(as_sympy(expr))
    missing = [s for s in symbols if s not in point]
    if missing:
        raise ValueError(f"no value for {', '.join(map(str, missing))}")
    with mpmath.workdps(digits):
        try:
            result = mpmath.mpc(function(*(to_mp(point[s], digits) for s in symbols)))
        except (ZeroDivisionError, ValueError, TypeError) as exc:
            raise ValueError(f"{expr} is singular at the point") from exc
        if not mpmath.isfinite(result):
            raise ValueError(f"{expr} is not finite at the point")
        return result


def is_zero(expr: sympy.Expr, points: Sequence[Point]) -> bool:
    """Whether expr vanishes at all `points`: a non-zero value agrees at 50 and 80 digits
    to 20 digits, rounding noise of an exact zero does not (scale free)."""
    if expr == 0:
        return True
    for point in points:
        try:
            low, high = value(expr, point, 50), value(expr, point, 80)
        except ValueError as exc:
            raise CannotCompute(f"{expr} is not finite at the horizon ({exc})") from exc
        with mpmath.workdps(80):
            if high != 0 and abs(high - low) <= mpmath.mpf(10) ** -20 * abs(high):
                return False
    return True


# -- roots of the polynomial parts of F and G: the length scale near a horizon ---------------
def polynomial_parts(expr: sympy.Expr, r: sympy.Symbol) -> list[sympy.Poly]:
    """Numerator and denominator of expr as polynomials in r (those that are)."""
    parts = []
    for part in sympy.fraction(sympy.cancel(sympy.together(expr))):
        if part.has(r) and part.is_polynomial(r):
            try:
                parts.append(sympy.Poly(part, r))
            except sympy.PolynomialError:
                continue
    return parts


def resolution(r_h: mpmath.mpf, digits: int) -> mpmath.mpf:
    """Roots closer to r_h than this count as r_h: polyroots returns a double root only to
    about half the digits, so 10^-(2 digits/5) |r_h| leaves a margin."""
    return mpmath.mpf(10) ** (-(2 * digits) // 5) * max(abs(r_h), 1)


def nearest_root_distance(polys: list[sympy.Poly], point: dict, r_h: mpmath.mpf, fallback: mpmath.mpf,
                  digits: int = 20) -> mpmath.mpf:
    """Distance from r_h to the nearest root, other than r_h itself, of the given
    polynomials at the point, by mpmath.polyroots at `digits` digits (20 give the length
    scale; more tell a near-extremal inner horizon from a double root at r_h); `fallback`
    when there is none."""
    found = []
    with mpmath.workdps(digits):
        for poly in polys:
            coefficients = [mpmath.mpmathify(evaluate(c, point, digits)) for c in poly.all_coeffs()]
            while coefficients and coefficients[0] == 0:
                coefficients.pop(0)
            if len(coefficients) < 2:
                continue
            try:
                roots = mpmath.polyroots(coefficients, maxsteps=100, extraprec=3 * digits)
            except mpmath.libmp.NoConvergence:
                continue
            near = resolution(r_h, digits)  # closer roots are r_h itself (a multiple root spreads)
            found += [abs(z - r_h) for z in roots if abs(z - r_h) > near]
    return +min(found + [fallback])
