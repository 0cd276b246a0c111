"""Numeric evaluation of sympy expressions at a parameter point, in mpmath.

Shared by the horizon and normalisation code.  Two ways: `evaluate` uses
sympy's evalf (adaptive precision, for one-off values such as a closed-form
horizon), `real_function` compiles the expression tree into mpmath closures
(fast, for the hundreds of calls of a root scan).  Neither ever turns text
into code.  Precision is always local (`mpmath.workdps`).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from fractions import Fraction

import mpmath
import sympy

from crosscheck.mpfunctions import MPMATH_FUNCTIONS


def as_sympy(value: object) -> sympy.Basic:
    """A sympy object from a sympy object or a Python number -- never from text.

    Strings are refused: text from claim files goes through `crosscheck.expr`
    only (sympy's own conversion of strings ends in `eval`).
    """
    if isinstance(value, sympy.Basic):
        return value
    if isinstance(value, bool) or not isinstance(value, (int, float, Fraction)):
        raise TypeError(f"expected a sympy expression or a number, got {type(value).__name__}")
    if isinstance(value, int):
        return sympy.Integer(value)
    if isinstance(value, Fraction):
        return sympy.Rational(value.numerator, value.denominator)
    return sympy.Float(value)



def to_sympy_number(value: object, dps: int) -> sympy.Expr:
    """Exact or high-precision sympy number for a parameter value.

    mpmath numbers keep their full binary value (sympy.Float(x) alone would
    round them to double precision).
    """
    if isinstance(value, sympy.Basic):
        return value
    if isinstance(value, int):
        return sympy.Integer(value)
    if isinstance(value, (mpmath.mpc, complex)):
        return to_sympy_number(value.real, dps) + sympy.I * to_sympy_number(value.imag, dps)
    if not isinstance(value, mpmath.mpf):
        with mpmath.workdps(dps):  # a str or float converted here, not at the global precision
            value = mpmath.mpf(value)
    return sympy.Float(value, dps)


def evaluate(expr: sympy.Expr, point: Mapping[sympy.Symbol, object], digits: int) -> mpmath.mpf | mpmath.mpc:
    """Value of `expr` at `point` as an mpmath number, computed with evalf at `digits`.

    Raises ValueError when symbols remain unset or the value is not finite.
    """
    subs = {sym: to_sympy_number(val, digits + 5) for sym, val in point.items()}
    expr = as_sympy(expr)
    missing = expr.free_symbols - set(subs)
    if missing:
        names = ", ".join(sorted(str(s) for s in missing))
        raise ValueError(f"cannot evaluate {expr}: no value for {names}")
    value = expr.evalf(digits, subs=subs)
    if not value.is_number or value.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
        raise ValueError(f"{expr} is not finite at {describe_point(point)}")
    with mpmath.workdps(digits):
        result = value._to_mpmath(mpmath.mp.prec)
    if isinstance(result, mpmath.mpc) and result.imag == 0:
        return result.real
    return result




def _compile(expr: sympy.Expr, variable: sympy.Symbol, constants: Mapping[sympy.Symbol, object]) -> Callable:
    """A closure x -> expr(x) in mpmath arithmetic (at the caller's precision).

    A direct tree walk: much faster than evalf for the hundreds of calls of a
    root scan, and it never turns text into code.  Nodes outside the table
    fall back to evalf at the current precision.
    """
    if expr == variable:
        return lambda x: x
    if expr.is_Symbol:
        value = constants[expr]
        return lambda x: value
    if expr.is_Rational:
        p, q = int(expr.p), int(expr.q)
        return lambda x: mpmath.mpf(p) / q
    if expr.is_Float:
        value = mpmath.mpf(expr)
        return lambda x: value
    if expr is sympy.pi:
        return lambda x: +mpmath.pi
    if expr is sympy.E:
        return lambda x: +mpmath.e
    if expr is sympy.I:
        return lambda x: mpmath.mpc(0, 1)
    if expr.is_Add or expr.is_Mul:
        parts = [_compile(arg, variable, constants) for arg in expr.args]
        if expr.is_Add:
            return lambda x: mpmath.fsum(part(x) for part in parts)
        return lambda x: mpmath.fprod(part(x) for part in parts)
    if expr.is_Pow:
        base = _compile(expr.base, variable, constants)
        if expr.exp == sympy.Rational(1, 2):
            return lambda x: mpmath.sqrt(base(x))
        if expr.exp.is_Integer:
            n = int(expr.exp)
            return lambda x: base(x) ** n
        power = _compile(expr.exp, variable, constants)
        return lambda x: mpmath.power(base(x), power(x))
    function = MPMATH_FUNCTIONS.get(type(expr))
    if function is not None and len(expr.args) == 1:
        inner = _compile(expr.args[0], variable, constants)
        return lambda x: function(inner(x))
    fixed = expr.xreplace({s: to_sympy_number(v, mpmath.mp.dps + 5) for s, v in constants.items()})

    def fallback(x):
        digits = mpmath.mp.dps
        value = fixed.evalf(digits, subs={variable: to_sympy_number(x, digits + 5)})
        return value._to_mpmath(mpmath.mp.prec)

    return fallback


def real_function(
    expr: sympy.Expr, variable: sympy.Symbol, point: Mapping[sympy.Symbol, object], digits: int
) -> Callable:
    """x -> real part of expr(variable = x) at the parameter point, computed at `digits`.

    Returns mpmath.nan where the expression is singular (division by zero...).
    """
    expr = as_sympy(expr)
    missing = expr.free_symbols - {variable} - set(point)
    if missing:
        names = ", ".join(sorted(str(s) for s in missing))
        raise ValueError(f"cannot evaluate {expr}: no value for {names}")
    with mpmath.workdps(digits):
        constants = {s: to_mp(v, digits) for s, v in point.items() if s in expr.free_symbols}
        compiled = _compile(expr, variable, constants)

    def f(x: object) -> mpmath.mpf:
        with mpmath.workdps(digits):
            try:
                value = compiled(mpmath.mpmathify(x))
            except (ZeroDivisionError, ValueError, TypeError):
                return mpmath.nan
            return mpmath.re(value)

    return f


def to_mp(value: object, digits: int) -> mpmath.mpf | mpmath.mpc:
    """A parameter value as an mpmath number (sympy numbers via evalf at `digits`)."""
    if isinstance(value, sympy.Basic):
        return sympy.N(value, digits)._to_mpmath(mpmath.mp.prec)
    return mpmath.mpmathify(value)


def describe_point(point: Mapping[sympy.Symbol, object]) -> str:
    """'M=1, Q=0.5' for error messages (8 significant digits)."""
    with mpmath.workdps(20):
        items = sorted(point.items(), key=lambda kv: str(kv[0]))
        return ", ".join(f"{s}={mpmath.nstr(to_mp(v, 20), 8)}" for s, v in items) or "(no parameters)"
