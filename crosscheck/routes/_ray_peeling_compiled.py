"""Compiled radial functions for the null-ray helpers (`_null_rays`), prepared once per problem.

Both null-ray routes (ray-peeling, Bogoliubov) evaluate F G and F/G thousands of times per
parameter point.  Lambdifying the sympy expressions at every point, and evaluating the
claim's unsimplified expression tree at every call, cost most of their time (measured:
0.1 ms per F G call for Kerr-Newman at 60 digits).  So:

- the sympy -> mpmath translation is cached per expression (`lambdified`), so that the
  per-point calls of one problem share it;
- a function rational in r (every built-in metric) is put over one denominator once per
  problem (`rational_parts`), its coefficients are evaluated once per point and
  Taylor-shifted to the horizon, x = side (r - r_h), at extra precision; each call is then
  two Horner sums in x.  The shifted form is also better conditioned: near r_h the
  expanded form in r would lose 2 log10(r_h/x) digits to cancellation, the form in x only
  the guard digits of its low coefficients, the tiny values F G(r_h), (F G)'(r_h) themselves
  (measured for Reissner-Nordstrom at 40 digits: 6e-42 relative at x = 1e-9 against 5e-32).
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping, Sequence

import mpmath
import sympy

from crosscheck.spacetimes.evaluation import as_sympy

Point = Mapping[sympy.Symbol, object]
_SHIFT_GUARD = 20  # extra digits for the Taylor shift of the coefficients


@functools.lru_cache(maxsize=256)
def lambdified(expr: sympy.Expr, r: sympy.Symbol) -> tuple[tuple[sympy.Symbol, ...], Callable]:
    """(parameter symbols, f(r, *parameters)) in mpmath arithmetic, built once per expression."""
    symbols = tuple(sorted(expr.free_symbols - {r}, key=str))
    return symbols, sympy.lambdify((r, *symbols), expr, modules="mpmath", cse=True)


def _values(symbols: Sequence[sympy.Symbol], point: Point, what: object) -> list:
    missing = [s for s in symbols if s not in point]
    if missing:
        raise ValueError(f"cannot evaluate {what}: no value for {', '.join(map(str, missing))}")
    return [point[s] for s in symbols]


def compiled(expr: sympy.Expr, r: sympy.Symbol, point: Point) -> Callable:
    """r -> expr at the parameter point (complex r allowed), sharing the cached translation."""
    symbols, function = lambdified(as_sympy(expr), r)
    values = _values(symbols, point, expr)
    return lambda x: function(x, *values)


@functools.lru_cache(maxsize=128)
def rational_parts(expr: sympy.Expr, r: sympy.Symbol) -> tuple[tuple, Callable, Callable] | None:
    """(parameter symbols, numerator and denominator coefficient functions, highest power of
    r first) of expr = P(r)/Q(r), or None when expr is not rational in r."""
    top, bottom = sympy.fraction(sympy.cancel(sympy.together(expr)))
    if not (top.is_polynomial(r) and bottom.is_polynomial(r)):
        return None
    try:
        P, Q = sympy.Poly(top, r), sympy.Poly(bottom, r)
    except sympy.PolynomialError:
        return None
    symbols = tuple(sorted((top.free_symbols | bottom.free_symbols) - {r}, key=str))
    return symbols, sympy.lambdify(symbols, P.all_coeffs(), "mpmath"), sympy.lambdify(symbols, Q.all_coeffs(), "mpmath")


def taylor_shift(coefficients: Sequence, center: object, side: int) -> list:
    """Coefficients (highest power first) of p(center + side x) from those of p(r)."""
    b = list(coefficients)
    n = len(b) - 1
    for i in range(n):
        for j in range(1, n + 1 - i):
            b[j] += center * b[j - 1]
    return [c * side ** (n - k) for k, c in enumerate(b)]


def horner(coefficients: Sequence, x: object) -> object:
    value = coefficients[0]
    for c in coefficients[1:]:
        value = value * x + c
    return value


def at_horizon(expr: sympy.Expr, r: sympy.Symbol, point: Point, r_h: mpmath.mpf, side: int, dps: int) -> Callable:
    """x -> expr(r_h + side x) at the parameter point: two Horner sums in x when expr is
    rational in r (coefficients shifted at dps + _SHIFT_GUARD digits), else the cached
    translation of expr itself."""
    expr = as_sympy(expr)
    parts = rational_parts(expr, r)
    if parts is None:
        function = compiled(expr, r, point)
        return lambda x: function(r_h + side * x)
    symbols, top, bottom = parts
    with mpmath.workdps(dps + _SHIFT_GUARD):
        values = [mpmath.mpmathify(v) for v in _values(symbols, point, expr)]
        P = [+c for c in taylor_shift([mpmath.mpmathify(c) for c in top(*values)], r_h, side)]
        Q = [+c for c in taylor_shift([mpmath.mpmathify(c) for c in bottom(*values)], r_h, side)]
    with mpmath.workdps(dps):
        P, Q = [+c for c in P], [+c for c in Q]
    return lambda x: horner(P, x) / horner(Q, x)
