"""The one table from sympy's elementary functions to their mpmath namesakes.

Three tree walkers evaluate sympy expressions in mpmath without generating
code -- the claim evaluator (`evaluate`, with error propagation), the
symbolic verdict's point tests (`compare`) and the spacetime closures
(`spacetimes.evaluation`).  They share this table so that a function added
to the parser is evaluated the same way everywhere.
"""

from __future__ import annotations

from collections.abc import Callable

import mpmath
import sympy

MPMATH_FUNCTIONS: dict[type, Callable] = {
    sympy.exp: mpmath.exp,
    sympy.log: mpmath.log,
    sympy.sin: mpmath.sin,
    sympy.cos: mpmath.cos,
    sympy.tan: mpmath.tan,
    sympy.sinh: mpmath.sinh,
    sympy.cosh: mpmath.cosh,
    sympy.tanh: mpmath.tanh,
    sympy.asinh: mpmath.asinh,
    sympy.acosh: mpmath.acosh,
    sympy.atanh: mpmath.atanh,
    sympy.atan: mpmath.atan,
    sympy.asin: mpmath.asin,
    sympy.acos: mpmath.acos,
    sympy.Abs: abs,
}
