"""The observables a claim can mention and how they appear inside sympy.

Scalar observables (T, kappa, ...) are represented in a parsed claim as
undefined functions applied to the claim's parameters, e.g. T(M, q), so that
calculus such as diff(S, M) stays unevaluated and meaningful until a route's
value is substituted.  Function observables (a_loc, T_loc) are undefined
functions of the radial argument the claim writes.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import sympy
from sympy.core.function import AppliedUndef

SCALAR_OBSERVABLES: dict[str, str] = {
    "T": "temperature with the normalised Killing time (or a detector's temperature)",
    "kappa": "surface gravity of the chosen horizon, same normalisation",
    "A": "horizon area",
    "S": "horizon entropy",
    "Omega": "horizon angular velocity",
    "Phi": "horizon electric potential",
    "r_h": "horizon radius",
}

FUNCTION_OBSERVABLES: dict[str, str] = {
    "a_loc": "proper acceleration of a static observer at r",
    "T_loc": "local (Tolman) temperature of a static observer at r",
    "T_eff": "a detector's detailed-balance temperature w/ln(F(-w)/F(w)) at gap w",
    "rate": "a detector's transition rate F(w) per unit proper time at gap w (w < 0: de-excitation)",
}

ALL_OBSERVABLES = frozenset(SCALAR_OBSERVABLES) | frozenset(FUNCTION_OBSERVABLES)

_FUNCTIONS = {name: sympy.Function(name, real=True) for name in ALL_OBSERVABLES}


def observable_function(name: str) -> sympy.FunctionClass:
    """The undefined sympy function standing for observable `name`."""
    return _FUNCTIONS[name]


def scalar_placeholder(name: str, parameters: Sequence[sympy.Symbol]) -> sympy.Expr:
    """T(M, q)-style placeholder for a scalar observable."""
    return _FUNCTIONS[name](*parameters)


def mentioned_observables(expr: sympy.Basic) -> frozenset[str]:
    """Names of the observables that occur in `expr`."""
    return frozenset(
        f.func.__name__ for f in expr.atoms(AppliedUndef) if f.func.__name__ in ALL_OBSERVABLES
    )


def substitute_observables(
    expr: sympy.Expr,
    scalars: Mapping[str, sympy.Expr],
    functions: Mapping[str, sympy.Lambda],
) -> sympy.Expr:
    """Replace observable placeholders by a route's expressions; leave calculus unevaluated."""

    def replacement(node: sympy.Basic) -> sympy.Basic:
        name = node.func.__name__
        if name in scalars:
            return scalars[name]
        if name in functions:
            return functions[name](*node.args)
        return node

    return expr.replace(
        lambda node: isinstance(node, AppliedUndef) and node.func.__name__ in ALL_OBSERVABLES,
        replacement,
    )
