"""Units: SI constants, conversion of route results, dimensional analysis.

Routes compute in *geometric form* (x0 = c t, r a length, F dimensionless).
This module converts their values to the claim's units and, before any route
runs, checks the claim's dimensions: a wrong power of M is the cheapest error
to catch and deserves a plain diagnosis.

Geometric units (G = c = hbar = k_B = 1) track powers of length: the scaling
r -> l r, M -> l M, under which T ~ 1/length and S = A/4 ~ length^(dim-2).
"""

from __future__ import annotations

import operator
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, fields
from fractions import Fraction
from typing import Literal

import mpmath
import sympy
from sympy.core.function import AppliedUndef

from crosscheck.errors import CrosscheckError, DimensionError
from crosscheck.measure import Measured
from crosscheck.observables import ALL_OBSERVABLES, FUNCTION_OBSERVABLES, mentioned_observables

UnitSystem = Literal["geometric", "si"]


def _exact(decimal: str) -> sympy.Rational:
    return _rational(Fraction(decimal))


def _rational(value: Fraction) -> sympy.Rational:
    return sympy.Rational(value.numerator, value.denominator)


# CODATA 2018; h, c, k_B, e are exact in the 2019 SI, G and epsilon_0 measured.
SI_CONSTANTS: dict[str, sympy.Expr] = {
    "h": _exact("6.62607015e-34"),
    "hbar": _exact("6.62607015e-34") / (2 * sympy.pi),
    "c": sympy.Integer(299792458),
    "G": _exact("6.67430e-11"),
    "k_B": _exact("1.380649e-23"),
    "e": _exact("1.602176634e-19"),
    "epsilon_0": _exact("8.8541878128e-12"),
}

_SI_NAMES = frozenset({"hbar", "c", "G", "k_B", "e", "epsilon_0"})


def constant_names(system: UnitSystem) -> frozenset[str]:
    """Constants a claim may name (pi and E come from the parser)."""
    return _SI_NAMES if _checked(system) == "si" else frozenset()


def constant_values(system: UnitSystem) -> dict[str, sympy.Expr]:
    return {name: SI_CONSTANTS[name] for name in sorted(constant_names(system))}


def _checked(system: str) -> str:
    if system not in ("geometric", "si"):
        raise CrosscheckError(f"unknown unit system {system!r}; expected geometric or si")
    return system


def _fraction(value: int | Fraction | sympy.Rational) -> Fraction:
    if isinstance(value, sympy.Rational):
        return Fraction(int(value.p), int(value.q))
    return Fraction(value)


_BASES = ("L", "M", "T", "K", "I")
_SI_SYMBOLS = {"L": "m", "M": "kg", "T": "s", "K": "K", "I": "A"}


@dataclass(frozen=True)
class Dimension:
    """Exponents of length, mass, time, temperature and current (exact fractions)."""

    L: Fraction = Fraction(0)
    M: Fraction = Fraction(0)
    T: Fraction = Fraction(0)
    K: Fraction = Fraction(0)
    I: Fraction = Fraction(0)  # noqa: E741 (current)

    def __post_init__(self) -> None:
        for f in fields(self):
            object.__setattr__(self, f.name, _fraction(getattr(self, f.name)))

    def exponents(self) -> tuple[Fraction, ...]:
        return tuple(getattr(self, b) for b in _BASES)

    def __mul__(self, other: Dimension) -> Dimension:
        return Dimension(*map(operator.add, self.exponents(), other.exponents()))

    def __truediv__(self, other: Dimension) -> Dimension:
        return Dimension(*map(operator.sub, self.exponents(), other.exponents()))

    def __pow__(self, power: Fraction | int) -> Dimension:
        return Dimension(*(a * _fraction(power) for a in self.exponents()))

    def is_dimensionless(self) -> bool:
        return not any(self.exponents())

    def describe(self, system: UnitSystem | None = None) -> str:
        """'length^-1' (geometric), 'm^2 kg s^-2' or 'K (temperature)' (SI).

        With `system` None, pure powers of length print the geometric way."""
        if self.is_dimensionless():
            return "dimensionless"
        geometric = system == "geometric" or (system is None and not any(self.exponents()[1:]))
        if not geometric and self.exponents() in _FRIENDLY:
            return _FRIENDLY[self.exponents()]
        names = dict(_SI_SYMBOLS, L="length") if geometric else _SI_SYMBOLS
        return " ".join(_power(names[b], getattr(self, b)) for b in _BASES if getattr(self, b))

    def __repr__(self) -> str:
        parts = ", ".join(f"{b}={getattr(self, b)}" for b in _BASES if getattr(self, b))
        return f"Dimension({parts})"


def _power(unit: str, exponent: Fraction) -> str:
    if exponent == 1:
        return unit
    if exponent.denominator == 1:
        return f"{unit}^{exponent.numerator}"
    return f"{unit}^({exponent})"


DIMENSIONLESS = Dimension()
LENGTH = Dimension(L=1)
MASS = Dimension(M=1)
TIME = Dimension(T=1)
TEMPERATURE = Dimension(K=1)
CURRENT = Dimension(I=1)
_ENERGY = MASS * LENGTH**2 / TIME**2
_VOLT = _ENERGY / (TIME * CURRENT)

_FRIENDLY: dict[tuple[Fraction, ...], str] = {
    d.exponents(): text
    for d, text in [
        (LENGTH, "m (length)"),
        (MASS, "kg (mass)"),
        (TEMPERATURE, "K (temperature)"),
        (LENGTH**2, "m^2 (area)"),
        (LENGTH / TIME**2, "m/s^2 (acceleration)"),
        (TIME**-1, "1/s (frequency)"),
        (_ENERGY, "J (energy)"),
        (_ENERGY / TEMPERATURE, "J/K (entropy)"),
        (_ENERGY * TIME, "J s (action)"),
        (_VOLT, "V (electric potential)"),
    ]
}


def constant_dimensions(system: UnitSystem) -> dict[str, Dimension]:
    if _checked(system) == "geometric":
        return {}
    return {"hbar": _ENERGY * TIME, "c": LENGTH / TIME, "G": LENGTH**3 / (MASS * TIME**2),
            "k_B": _ENERGY / TEMPERATURE, "e": CURRENT * TIME,
            "epsilon_0": CURRENT**2 * TIME**4 / (MASS * LENGTH**3)}


def observable_dimensions(system: UnitSystem, spacetime_dim: int) -> dict[str, Dimension]:
    """Dimension of each observable in the claim's units.

    Entropy scales like the area (S = A/4).  The SI conversion keeps the 4-d
    G, so for dim != 4 the SI entropy carries an extra m^(dim-4).
    """
    area = LENGTH ** (spacetime_dim - 2)
    if _checked(system) == "geometric":
        dims = dict.fromkeys(("T", "kappa", "Omega", "a_loc", "T_loc", "T_eff"), LENGTH**-1)
        # A monopole detector's rate: W(s) ~ s^(2-D), F = integral ds W ~ length^(3-D).
        return {**dims, "A": area, "S": area, "Phi": DIMENSIONLESS, "r_h": LENGTH,
                "rate": LENGTH ** (3 - spacetime_dim)}
    accel = LENGTH / TIME**2
    return {"T": TEMPERATURE, "T_loc": TEMPERATURE, "T_eff": TEMPERATURE, "kappa": accel, "a_loc": accel,
            "Omega": TIME**-1, "A": area, "r_h": LENGTH, "Phi": _VOLT,
            "S": _ENERGY / TEMPERATURE * LENGTH ** (spacetime_dim - 4)}


def argument_dimension(observable: str, system: UnitSystem) -> Dimension:
    """Dimension of a function observable's argument: a radius for a_loc(r), T_loc(r);
    a gap (an inverse length, in SI an angular frequency) for T_eff(w), rate(w)."""
    if observable in ("T_eff", "rate"):
        return LENGTH**-1 if _checked(system) == "geometric" else TIME**-1
    return LENGTH


def conversion_factor(observable: str, system: UnitSystem, spacetime_dim: int = 4) -> sympy.Expr:
    """Exact factor from a geometric-form route value to the claim's units.

    SI, with x0 = c t: kappa = c^2 kappa_geo; T = hbar kappa/(2 pi c k_B) =
    (hbar c/k_B) kappa_geo/(2 pi); Omega = c dphi/dx0; S = k_B c^3 A/(4 G hbar)
    from the route's A/4 (the 4-d G also for dim != 4).
    """
    if observable not in ALL_OBSERVABLES:
        raise CrosscheckError(f"unknown observable {observable!r}; known: {sorted(ALL_OBSERVABLES)}")
    if _checked(system) == "geometric":
        return sympy.Integer(1)
    c, hbar, k_B, G = (SI_CONSTANTS[n] for n in ("c", "hbar", "k_B", "G"))
    factors = {"kappa": c**2, "a_loc": c**2, "T": hbar * c / k_B, "T_loc": hbar * c / k_B,
               "Omega": c, "A": sympy.Integer(1), "r_h": sympy.Integer(1),
               "S": k_B * c**3 / (G * hbar)}
    if observable not in factors:
        raise CrosscheckError(f"{observable} has no SI conversion (the claim format fixes no "
                              "electromagnetic units); write this claim in geometric units")
    return factors[observable]


def to_claim_units(observable: str, geometric_value: object, system: UnitSystem, spacetime_dim: int = 4):
    """A route's geometric-form value in the claim's units (unchanged if geometric).

    sympy expressions and `sympy.Lambda` get the exact factor; mpmath numbers
    and `Measured` get it at the current precision (rounding added to the error).
    """
    factor = conversion_factor(observable, system, spacetime_dim)
    if factor == 1:
        return geometric_value
    if isinstance(geometric_value, sympy.Lambda):
        return sympy.Lambda(geometric_value.variables, geometric_value.expr * factor)
    if isinstance(geometric_value, sympy.Basic):
        return geometric_value * factor
    number = mpmath.mpf(factor.evalf(mpmath.mp.dps + 10))
    if isinstance(geometric_value, Measured):
        value = geometric_value.value * number
        return Measured(value, geometric_value.error * number + abs(value) * mpmath.eps)
    return mpmath.mpmathify(geometric_value) * number


class DimensionUnknown(DimensionError):
    """A dimension is not known: the check is inconclusive, not failed."""


def _dimension_free(expr: sympy.Basic) -> bool:
    """Zero and the infinities fit any dimension."""
    return expr in (sympy.oo, -sympy.oo, sympy.zoo) or bool(expr.is_Number and expr.is_zero)


def _walk(expr: sympy.Basic, ctx):
    """Dimension of `expr`: a `Dimension` for `_Check` (mismatches raise), linear
    forms in unknown exponents for `_Infer` (mismatches become equations)."""
    if isinstance(expr, AppliedUndef):
        return ctx.applied(expr)
    if isinstance(expr, sympy.Derivative):
        result = _walk(expr.expr, ctx)
        for var, count in expr.variable_count:
            if not count.is_Integer:
                raise DimensionUnknown(f"symbolic order of {expr}")
            result = result / _walk(var, ctx) ** _fraction(count)
        return result
    if isinstance(expr, (sympy.Limit, sympy.Integral, sympy.Subs)):
        return _walk_bound(expr, ctx)
    if isinstance(expr, sympy.Symbol):
        return ctx.symbol(expr)
    if isinstance(expr, (sympy.Number, sympy.NumberSymbol)) or expr is sympy.I:
        return ctx.one()
    if isinstance(expr, sympy.Add):
        return ctx.same([(_walk(t, ctx), t) for t in expr.args], expr, "the terms")
    if isinstance(expr, sympy.Mul):
        result = ctx.one()
        for factor in expr.args:
            result = result * _walk(factor, ctx)
        return result
    if isinstance(expr, sympy.Pow):
        return _walk_pow(expr, ctx)
    if isinstance(expr, (sympy.Min, sympy.Max)):
        return ctx.same([(_walk(a, ctx), a) for a in expr.args], expr, "the arguments")
    if isinstance(expr, sympy.Abs):
        return _walk(expr.args[0], ctx)
    if isinstance(expr, sympy.Function):
        for arg in expr.args:
            ctx.dimensionless(_walk(arg, ctx), arg, expr, "the argument")
        return ctx.one()
    raise DimensionUnknown(f"no dimension rule for {type(expr).__name__}: {expr}")


def _walk_pow(expr: sympy.Pow, ctx):
    base, exponent = expr.args
    if exponent.is_Rational:
        return _walk(base, ctx) ** _fraction(exponent)
    if exponent.is_Float:
        return _walk(base, ctx) ** Fraction(str(exponent))
    ctx.dimensionless(_walk(exponent, ctx), exponent, expr, "the exponent")
    ctx.dimensionless(_walk(base, ctx), base, expr, "a base with a symbolic exponent")
    return ctx.one()


def _walk_bound(expr: sympy.Basic, ctx):
    """Limit points, bounds and substituted values take their variable's dimension."""
    if isinstance(expr, sympy.Limit):
        body, pairs, measure = expr.args[0], [expr.args[1:3]], []
    elif isinstance(expr, sympy.Subs):
        body, pairs, measure = expr.expr, zip(expr.variables, expr.point), []
    else:
        body, measure = expr.function, [lim[0] for lim in expr.limits]
        pairs = [(lim[0], bound) for lim in expr.limits for bound in lim[1:]]
    for var, value in pairs:
        ctx.same([(_walk(var, ctx), var), (_walk(value, ctx), value)], expr, "a variable and its value")
    result = _walk(body, ctx)
    for var in measure:
        result = result * _walk(var, ctx)
    return result


class _Context:
    """Sums and function arguments impose equalities (checked or recorded)."""

    def same(self, items, node, what: str):
        kept = [(d, e) for d, e in items if not _dimension_free(e)] or items
        for d, e in kept[1:]:
            self.equal(kept[0], (d, e), f"{what} of {node}")
        return kept[0][0]

    def dimensionless(self, d, sub, node, what: str) -> None:
        self.equal((d, sub), (self.one(), None), f"{what} of {node}")


class _Check(_Context):
    """Known dimensions; a mismatch raises DimensionError."""

    def __init__(self, symbol_dims, function_dims, system) -> None:
        self.symbol_dims, self.function_dims, self.system = symbol_dims, function_dims, system

    def one(self) -> Dimension:
        return DIMENSIONLESS

    def symbol(self, s: sympy.Symbol) -> Dimension:
        for key in (s, s.name):  # by name too: assumptions may differ
            if key in self.symbol_dims:
                return self.symbol_dims[key]
        raise DimensionUnknown(f"unknown dimension of {s}")

    def applied(self, node: AppliedUndef) -> Dimension:
        name = node.func.__name__
        if name not in self.function_dims:
            raise DimensionUnknown(f"unknown dimension of {name}")
        expected = argument_dimension(name, self.system)
        for arg in node.args if name in FUNCTION_OBSERVABLES else ():
            if (d := _walk(arg, self)) != expected:  # a_loc(r): a radius; T_eff(w): a gap
                raise DimensionError(f"the argument of {node} must have {expected.describe(self.system)}, "
                                     f"but {arg} has {d.describe(self.system)}")
        return self.function_dims[name]

    def equal(self, a, b, why: str) -> None:
        (da, ea), (db, eb) = a, b
        x, y = da.describe(self.system), db.describe(self.system)
        if da != db:
            raise DimensionError(f"{why} must be dimensionless, but {ea} has {x}" if eb is None
                                 else f"{why} differ: {ea} has {x}, {eb} has {y}")


def dimension_of(
    expr: sympy.Expr,
    symbol_dims: Mapping[sympy.Symbol | str, Dimension],
    function_dims: Mapping[str, Dimension] | None = None,
    *,
    system: UnitSystem | None = None,
) -> Dimension:
    """Dimension of `expr`; DimensionError where it adds unlike quantities.

    Symbols are looked up in `symbol_dims` (by symbol, then name), observables
    such as T(M, q) or a_loc(r) by function name in `function_dims`; unknown
    ones raise DimensionUnknown.  `system` only sets how messages print.
    """
    return _walk(expr, _Check(symbol_dims, function_dims or {}, system))


class _Affine(tuple):
    """A dimension whose exponents are linear forms in unknown exponents."""

    def __mul__(self, other: _Affine) -> _Affine:
        return _Affine(map(operator.add, self, other))

    def __truediv__(self, other: _Affine) -> _Affine:
        return _Affine(map(operator.sub, self, other))

    def __pow__(self, power: Fraction) -> _Affine:
        return _Affine(a * _rational(power) for a in self)


class _Infer(_Context):
    """One unknown exponent per base dimension per unknown symbol."""

    def __init__(self, known, system: str) -> None:
        self.bases = ("L",) if system == "geometric" else _BASES
        self.known, self.unknowns, self.equations = known, {}, []

    def constant(self, d: Dimension) -> _Affine:
        return _Affine(_rational(getattr(d, b)) for b in self.bases)

    def one(self) -> _Affine:
        return self.constant(DIMENSIONLESS)

    def variables(self, key: sympy.Basic) -> _Affine:
        if key not in self.unknowns:
            self.unknowns[key] = tuple(sympy.Dummy(f"{key}_{b}") for b in self.bases)
        return _Affine(self.unknowns[key])

    def symbol(self, s: sympy.Symbol) -> _Affine:
        return self.constant(self.known[s]) if s in self.known else self.variables(s)

    def applied(self, node: AppliedUndef) -> _Affine:
        return self.variables(node)  # opaque: a dimension of its own

    def require(self, a: _Affine, b: _Affine, why: str) -> None:
        for x, y in zip(a, b):
            difference = sympy.expand(x - y)
            if difference != 0:
                self.equations.append((difference, why))

    def equal(self, a, b, why: str) -> None:
        rule = "be dimensionless" if b[1] is None else "have the same dimension"
        self.require(a[0], b[0], f"{why} must {rule}")


def _solve(equations: list[tuple[sympy.Expr, str]], variables: list[sympy.Symbol]):
    """Exact solution of the linear system, or DimensionError naming the culprit."""
    exprs = [e for e, _ in equations]
    if not exprs:
        return tuple(variables)
    # With no variables, every recorded equation is a nonzero constant.
    solution = sympy.linsolve(exprs, variables) if variables else sympy.EmptySet
    if solution != sympy.EmptySet:
        return next(iter(solution))
    count = next(n for n in range(1, len(exprs) + 1)
                 if not variables or sympy.linsolve(exprs[:n], variables) == sympy.EmptySet)
    raise DimensionError(f"inconsistent dimensions: {equations[count - 1][1]}, "
                         "which contradicts the relations before it")


def infer_dimensions(
    dimensionless: Sequence[sympy.Expr],
    lengths: Sequence[sympy.Expr],
    unknowns: Sequence[sympy.Symbol],
    known: Mapping[sympy.Symbol, Dimension],
    system: UnitSystem,
) -> dict[sympy.Symbol, Dimension]:
    """Dimensions of the parameters implied by the metric.

    `dimensionless` (F, G, g_tt ...) must be dimensionless and `lengths` (R,
    the horizon, r) lengths; sums, function arguments and symbolic exponents
    add linear equations in the unknown exponents, solved exactly.  Symbols
    not `known` are unknowns even if unlisted.  Undetermined ones are left out;
    a contradiction raises DimensionError naming the failing relation.
    """
    ctx = _Infer(known, _checked(system))
    for expr in dimensionless:
        if not _dimension_free(expr):
            ctx.require(_walk(expr, ctx), ctx.one(), f"{expr} must be dimensionless")
    for expr in lengths:
        if not _dimension_free(expr):
            ctx.require(_walk(expr, ctx), ctx.constant(LENGTH), f"{expr} must be a length")
    variables = [v for group in ctx.unknowns.values() for v in group]
    values = dict(zip(variables, _solve(ctx.equations, variables)))
    result: dict[sympy.Symbol, Dimension] = {}
    for s in unknowns:
        if s in known:
            result[s] = known[s]
        elif s in ctx.unknowns:
            exponents = [values.get(v, v) for v in ctx.unknowns[s]]
            if all(x.is_Rational for x in exponents):
                result[s] = Dimension(**{b: _fraction(x) for b, x in zip(ctx.bases, exponents)})
    return result


def _bare_observable(expr: sympy.Basic) -> str | None:
    if isinstance(expr, AppliedUndef) and expr.func.__name__ in ALL_OBSERVABLES:
        name = expr.func.__name__
        return str(expr) if name in FUNCTION_OBSERVABLES else name
    return None


def check_claim_dimensions(
    lhs: sympy.Expr,
    rhs: sympy.Expr,
    symbol_dims: Mapping[sympy.Symbol | str, Dimension],
    function_dims: Mapping[str, Dimension],
    system: UnitSystem,
) -> str | None:
    """None when lhs = rhs is consistent, else a one-line diagnosis.

    The constants of `system` are known by name; an unknown dimension raises
    DimensionUnknown (inconclusive, not failed).
    """
    dims = {**constant_dimensions(system), **symbol_dims}
    try:
        left = dimension_of(lhs, dims, function_dims, system=system)
        right = dimension_of(rhs, dims, function_dims, system=system)
    except DimensionUnknown:
        raise
    except DimensionError as error:
        return f"dimension: {error}"
    if left == right or _dimension_free(lhs) or _dimension_free(rhs):  # T = 0 fits any dimension
        return None
    sides = [(lhs, left, right)] + ([] if mentioned_observables(lhs) else [(rhs, right, left)])
    for side, need, has in sides:  # the observable side: lhs, or rhs if lhs is a formula
        if name := _bare_observable(side):
            return f"dimension: claim has {has.describe(system)}, {name} needs {need.describe(system)}"
    return f"dimension: left side has {left.describe(system)}, right side has {right.describe(system)}"
