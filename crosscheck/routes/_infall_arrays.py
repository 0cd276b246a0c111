"""Metric functions as numpy array functions (double precision), by a tree walk.

The infall route evaluates F and G on ~10^4 radii per parameter point; mpmath
would take seconds, numpy takes milliseconds.  Double precision is enough there
once the cancellation near the horizon is avoided: `OffsetFunction` takes x = r/r_h - 1
as its variable and uses the horizon's Taylor series (coefficients at 30 digits) where
evaluating F at r = r_h (1 + x) would lose 1e-16/(c_1 x) relative.
No text is ever turned into code: the sympy tree is walked node by node.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

import mpmath
import numpy
import sympy

from crosscheck.spacetimes.evaluation import evaluate

_FUNCTIONS = {
    sympy.exp: numpy.exp, sympy.log: numpy.log, sympy.sin: numpy.sin, sympy.cos: numpy.cos,
    sympy.tan: numpy.tan, sympy.sinh: numpy.sinh, sympy.cosh: numpy.cosh, sympy.tanh: numpy.tanh,
    sympy.asinh: numpy.arcsinh, sympy.acosh: numpy.arccosh, sympy.atanh: numpy.arctanh,
    sympy.atan: numpy.arctan, sympy.Abs: numpy.abs,
}


def array_function(expr: sympy.Expr, variable: sympy.Symbol, constants: Mapping[sympy.Symbol, float]) -> Callable:
    """x (numpy array) -> expr with `variable` = x and the constants substituted."""
    if expr == variable:
        return lambda x: x
    if expr.is_Symbol:
        if expr not in constants:
            raise ValueError(f"no value for {expr}")
        value = float(constants[expr])
        return lambda x: numpy.full_like(x, value)
    if expr.is_Number or expr.is_NumberSymbol:
        value = float(expr)
        return lambda x: numpy.full_like(x, value)
    parts = [array_function(arg, variable, constants) for arg in expr.args]
    if expr.is_Add:
        return lambda x: sum(p(x) for p in parts)
    if expr.is_Mul:
        def product(x):
            result = parts[0](x)
            for p in parts[1:]:
                result = result * p(x)
            return result
        return product
    if expr.is_Pow:
        base, exponent = parts
        if expr.exp.is_Integer:
            n = int(expr.exp)
            return lambda x: base(x) ** n if n >= 0 else 1 / base(x) ** (-n)
        return lambda x: numpy.power(base(x), exponent(x))
    function = _FUNCTIONS.get(expr.func)
    if function is not None and len(parts) == 1:
        return lambda x: function(parts[0](x))
    raise ValueError(f"cannot evaluate {expr.func.__name__} on arrays")


TAYLOR_ORDER = 6  # terms c_1 x .. c_6 x^6 (plus c_0) of the expansion at the horizon
SWITCH = 1e-3  # the expansion is used for x < SWITCH * scale, scale = `leading_extent`


def taylor_coefficients(expr: sympy.Expr, variable: sympy.Symbol, point: Mapping[sympy.Symbol, object],
                        r_h: object) -> list[float]:
    """c_k = r_h^k f^(k)(r_h)/k!, k = 0..TAYLOR_ORDER, at 30 digits: f(r_h (1 + x)) = sum c_k x^k.

    Computed from the sympy derivatives at high precision, so they carry none of the
    cancellation that evaluating f at r = r_h (1 + x) in double precision suffers."""
    at = dict(point)
    at[variable] = r_h
    coefficients, derivative = [], expr
    for k in range(TAYLOR_ORDER + 1):
        with mpmath.workdps(30):
            value = mpmath.re(evaluate(derivative, at, 30)) * mpmath.mpf(r_h) ** k / mpmath.factorial(k)
        coefficients.append(float(value))
        derivative = sympy.diff(derivative, variable)
    return coefficients


@dataclass(frozen=True)
class OffsetFunction:
    """x -> f(r_h (1 + x)) in double precision, exact to rounding also near the horizon.

    Far out, f is evaluated directly at r = r_h (1 + x).  Close to the horizon that loses
    digits twice -- r - r_h is known only to 1e-16 r_h, and F = 1 - 2M/r + ... cancels
    to ~ c_1 x -- which near extremality (c_1 small) makes F <= 0 from rounding (the old
    "needs 0 < F < 1" failure at q = 0.9999).  There the Taylor series in x is used: its
    truncation error is ~ (x/scale)^(7-n) <= 1e-15 relative (n = 1 or 2, the order of the
    zero), scale = `leading_extent`, the radius where the leading term stops dominating."""

    direct: Callable
    r_h: float
    coefficients: tuple[float, ...]
    switch: float

    def __call__(self, x: numpy.ndarray) -> numpy.ndarray:
        x = numpy.asarray(x, dtype=float)
        near = x < self.switch
        out = numpy.empty_like(x)
        out[~near] = self.direct(self.r_h * (1 + x[~near]))
        out[near] = numpy.polyval(self.coefficients[::-1], x[near])
        return out


ZERO = 1e-12  # |c_k| below this counts as zero (c_k are dimensionless; F -> 1 at infinity)


def switch_mismatch(f: OffsetFunction) -> float:
    """|direct - series|/|series| at the switch: the relative precision of f where the two
    evaluations meet (rounding of the direct one, truncation of the series).  The route turns it into a floor on its stated error."""
    x = numpy.array([f.switch])
    series = numpy.polyval(f.coefficients[::-1], x)
    return float(abs(f.direct(f.r_h * (1 + x)) - series)[0] / abs(series[0]))


def leading_order(coefficients: tuple[float, ...]) -> int:
    """Index of the first coefficient that is not zero: the order to which f vanishes at r_h
    (c_0 is the value at the horizon, ~1e-30 for a root computed at 30 digits)."""
    for k, c in enumerate(coefficients):
        if abs(c) > ZERO:
            return k
    return len(coefficients)


def leading_extent(coefficients: tuple[float, ...]) -> float:
    """min(1, |c_n/c_(n+1)|), n = `leading_order`: the x = r/r_h - 1 up to which the leading
    term dominates (Reissner-Nordstrom's F: c_1 = eps = (r_+ - r_-)/r_+, c_2 = 1 - 2 eps)."""
    n = leading_order(coefficients)
    if n + 1 >= len(coefficients) or coefficients[n + 1] == 0:
        return 1.0
    return min(1.0, abs(coefficients[n] / coefficients[n + 1]))


def offset_function(expr: sympy.Expr, variable: sympy.Symbol, point: Mapping[sympy.Symbol, object],
                    r_h: object) -> OffsetFunction:
    """`OffsetFunction` of expr (a metric function of `variable`) at a parameter point."""
    constants = {s: float(v) for s, v in point.items()}
    coefficients = taylor_coefficients(expr, variable, point, r_h)
    scale = leading_extent(tuple(coefficients))
    return OffsetFunction(array_function(expr, variable, constants), float(r_h), tuple(coefficients), SWITCH * scale)
