"""Metric functions as numpy array functions (double precision), by a tree walk.

The infall route evaluates F and G on ~10^4 radii per parameter point; mpmath
would take seconds, numpy takes milliseconds.  Double precision is enough there
(see `infall_atom`): the cancellation in F near the horizon costs 1e-16/x relative
at r = r_h (1 + x), and the grid stops where the amplitude has decayed.
No text is ever turned into code: the sympy tree is walked node by node.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy
import sympy

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
