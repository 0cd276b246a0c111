"""Evaluating a claim's two sides with one route's results.

Symbolic: observable placeholders are replaced by the route's closed forms
and calculus (diff, limit, integrate) is carried out by sympy.

Numeric: a small tree-walking evaluator in mpmath.  Every node yields a
`Measured` (value, error): the route's error estimates are propagated by
perturbing each argument by its error, so the final comparison knows how
far the route's own uncertainty goes.  Derivatives and limits are taken by
Richardson extrapolation on the route's numeric results at shifted points,
which is why a route's numeric side is a function of the parameter point.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import mpmath
import sympy
from sympy.core.function import AppliedUndef

from crosscheck.errors import CannotCompute
from crosscheck.limits import algebraic_limit
from crosscheck.measure import Measured
from crosscheck.mpfunctions import MPMATH_FUNCTIONS
from crosscheck.numerics import richardson_limit, richardson_until
from crosscheck.observables import FUNCTION_OBSERVABLES, SCALAR_OBSERVABLES, substitute_observables
from crosscheck.radicals import Box
from crosscheck.routes.base import NumericResult, SymbolicResult

Provider = Callable[[Mapping[sympy.Symbol, mpmath.mpf]], NumericResult]



def substitute_symbolic(expr: sympy.Expr, result: SymbolicResult, box: Box | None = None,
                        notes: list[str] | None = None) -> sympy.Expr:
    """The claim side with the route's closed forms in place, calculus done.  With the
    parameter `box`, limits of algebraic expressions are taken by `crosscheck.limits`
    first (sympy's `limit` often runs out of time on near-horizon ratios)."""
    wanted = {f.func.__name__ for f in expr.atoms(AppliedUndef)}
    missing = sorted(wanted - set(result.values) - set(result.functions))
    missing = [m for m in missing if m in SCALAR_OBSERVABLES or m in FUNCTION_OBSERVABLES]
    if missing:
        raise CannotCompute(f"no closed form for {', '.join(missing)}")
    substituted = substitute_observables(expr, result.values, result.functions)
    if box is not None and substituted.has(sympy.Limit):
        substituted = _algebraic_limits(substituted, box, notes if notes is not None else [])
    if substituted.has(sympy.Derivative, sympy.Limit, sympy.Integral):
        substituted = substituted.doit()
        if substituted.has(sympy.Limit, sympy.Integral):
            raise CannotCompute("sympy could not carry out the limit or integral in closed form")
    return substituted


def _algebraic_limits(expr: sympy.Expr, box: Box, notes: list[str]) -> sympy.Expr:
    """expr with each innermost Limit that `algebraic_limit` can take replaced by its value."""
    found = {}
    for node in expr.atoms(sympy.Limit):
        if node.args[0].has(sympy.Limit, sympy.Derivative, sympy.Integral):
            continue
        value = algebraic_limit(*node.args, box)
        if value is not None:
            found[node] = value
            notes.append(f"the limit {node.args[1]} -> {node.args[2]} taken in closed form (written as "
                         f"{node.args[1]} = {node.args[2]} + t^2, square roots reduced over the parameter ranges)")
    return expr.xreplace(found) if found else expr


class NumericEvaluator:
    """Evaluates claim sides at parameter points, caching the route's results per point."""

    def __init__(self, provider: Provider, digits: int) -> None:
        self.provider = provider
        self.digits = digits
        self._cache: dict[tuple, NumericResult] = {}

    def route_result(self, point: Mapping[sympy.Symbol, mpmath.mpf]) -> NumericResult:
        key = tuple(sorted((s.name, mpmath.nstr(v, self.digits + 5)) for s, v in point.items()))
        if key not in self._cache:
            self._cache[key] = self.provider(point)
        return self._cache[key]

    def evaluate(self, expr: sympy.Expr, point: Mapping[sympy.Symbol, mpmath.mpf]) -> Measured:
        with mpmath.workdps(self.digits + 10):
            return self._eval(expr, dict(point), dict(point))

    # -- the tree walk -------------------------------------------------------------------------
    def _eval(self, node: sympy.Basic, env: dict, params: dict) -> Measured:
        if node.is_Number or isinstance(node, sympy.NumberSymbol):
            return Measured(_number(node), mpmath.mpf(0))
        if node is sympy.S.ImaginaryUnit:
            return Measured(mpmath.mpc(0, 1), mpmath.mpf(0))
        if isinstance(node, sympy.Symbol):
            if node not in env:
                raise CannotCompute(f"no value for '{node}' at this point")
            return Measured(mpmath.mpf(env[node]), mpmath.mpf(0))
        if isinstance(node, AppliedUndef):
            return self._observable(node, env, params)
        if isinstance(node, sympy.Derivative):
            return self._derivative(node, env, params)
        if isinstance(node, sympy.Limit):
            return self._limit(node, env, params)
        if isinstance(node, sympy.Integral):
            return self._integral(node, env, params)
        return self._combine(node, [self._eval(arg, env, params) for arg in node.args])

    def _observable(self, node: AppliedUndef, env: dict, params: dict) -> Measured:
        name = node.func.__name__
        result = self.route_result(params)
        if name in FUNCTION_OBSERVABLES:
            if name not in result.functions:
                raise CannotCompute(f"the route gives no numeric {name}(r)")
            argument = self._eval(node.args[0], env, params)
            return result.functions[name](argument.value)
        if name not in result.values:
            raise CannotCompute(f"the route gives no numeric value of {name}")
        return result.values[name]

    def _combine(self, node: sympy.Basic, args: list[Measured]) -> Measured:
        """Apply the node's operation and propagate errors by perturbing each argument."""
        operation = _operation(node)
        values = [a.value for a in args]
        value = operation(values)
        error = mpmath.mpf(0)
        for i, arg in enumerate(args):
            if arg.error == 0:
                continue
            shifted = list(values)
            shifted[i] = values[i] + arg.error
            error += abs(operation(shifted) - value)
        return Measured(value, error)

    def _derivative(self, node: sympy.Derivative, env: dict, params: dict) -> Measured:
        if len(node.variable_count) != 1 or node.variable_count[0][1] != 1:
            raise CannotCompute("numeric derivatives of order above one are not supported")
        variable = node.variable_count[0][0]
        if variable not in env:
            raise CannotCompute(f"no value for '{variable}' to differentiate at")
        x0 = mpmath.mpf(env[variable])
        scale = abs(x0) if x0 != 0 else mpmath.mpf(1)

        def central(h: mpmath.mpf) -> mpmath.mpf:
            plus = self._shifted(node.expr, variable, x0 + h, env, params)
            minus = self._shifted(node.expr, variable, x0 - h, env, params)
            return (plus - minus) / (2 * h)

        # All but the last two working digits: more than any comparison uses.
        target = mpmath.mpf(10) ** (2 - self.digits)
        return richardson_until(central, scale * mpmath.mpf("1e-2"), relative=target, orders=[2, 4, 6, 8, 10])

    def _shifted(self, expr, variable, value, env, params) -> mpmath.mpf:
        new_env = dict(env)
        new_env[variable] = value
        new_params = dict(params)
        if variable in params:
            new_params[variable] = value
        return self._eval(expr, new_env, new_params).value

    def _limit(self, node: sympy.Limit, env: dict, params: dict) -> Measured:
        expr, variable, target, direction = node.args
        if target in (sympy.oo, -sympy.oo):
            raise CannotCompute("numeric limits at infinity are not supported")
        x0 = self._eval(target, env, params)
        sign = -1 if str(direction) == "-" else 1
        scale = abs(x0.value) if x0.value != 0 else mpmath.mpf(1)

        def sample(h: mpmath.mpf) -> mpmath.mpf:
            return self._shifted(expr, variable, x0.value + sign * h, env, params)

        estimate, _ = richardson_limit(sample, scale * mpmath.mpf("1e-3"), steps=8)
        return Measured(estimate.value, estimate.error + x0.error)

    def _integral(self, node: sympy.Integral, env: dict, params: dict) -> Measured:
        if len(node.limits) != 1 or len(node.limits[0]) != 3:
            raise CannotCompute("only single definite integrals are evaluated numerically")
        variable, lo, hi = node.limits[0]
        a, b = self._eval(lo, env, params), self._eval(hi, env, params)
        value, error = mpmath.quad(
            lambda x: self._shifted(node.function, variable, x, env, params), [a.value, b.value], error=True
        )
        return Measured(value, mpmath.mpf(error) + a.error + b.error)


def _number(node: sympy.Basic) -> mpmath.mpf:
    if isinstance(node, sympy.Rational):
        return mpmath.mpf(node.p) / node.q
    if node is sympy.pi:
        return +mpmath.pi
    if node is sympy.E:
        return mpmath.e
    return mpmath.mpmathify(node.evalf(mpmath.mp.dps))


def _operation(node: sympy.Basic) -> Callable[[list], mpmath.mpf]:
    if isinstance(node, sympy.Add):
        return lambda v: mpmath.fsum(v)
    if isinstance(node, sympy.Mul):
        return lambda v: mpmath.fprod(v)
    if isinstance(node, sympy.Pow):
        return lambda v: _power(v[0], v[1])
    if isinstance(node, sympy.Min):
        return lambda v: min(v)
    if isinstance(node, sympy.Max):
        return lambda v: max(v)
    if node.func in MPMATH_FUNCTIONS:
        function = MPMATH_FUNCTIONS[node.func]
        return lambda v: function(*v)
    raise CannotCompute(f"cannot evaluate {node.func.__name__} numerically")


def _power(base, exponent):
    if exponent == mpmath.mpf("0.5"):
        return mpmath.sqrt(base)
    if mpmath.isint(exponent):
        return base ** int(exponent)
    return mpmath.power(base, exponent)
