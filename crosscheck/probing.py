"""Probing closed forms at points: the generic numeric tools two horizon routes share.

Representative parameter points inside the claim's ranges, a fast compiled
mpmath evaluation of a sympy expression, and a scale-free zero test.  They
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
from crosscheck.spacetimes.evaluation import as_sympy, to_mp

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
