"""Symbolic side of the first-law route: the same construction in sympy.

T_t = sqrt(F1 G1)/(4 pi) with F1, G1 the first Taylor coefficients at the
closed-form r_h; S = integrate((dM/dlambda - Phi_t dQ/dlambda)/T_t,
(lambda, 0, 1)) along the scaling path.  The closed-form root is chosen at
the representative point for lambda = 1; along the path it is compared with
the numeric root at a few lambda so that a different branch of a cubic is
never integrated.  sympy's integrate runs under a time limit; when it does
not finish, S has no closed form here (CannotCompute) and the numeric side
decides.
"""

from __future__ import annotations

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.routes._first_law_path import LAMBDA, Path
from crosscheck.routes.base import Problem, Step, SymbolicResult
from crosscheck.spacetimes.evaluation import evaluate
from crosscheck.spacetimes.horizon import horizon_radius, horizon_radius_numeric
from crosscheck.spacetimes.normalize import geodesic_radius, normalization_factor
from crosscheck.timebox import OutOfTime, run_limited

#: Seconds for sympy to simplify and integrate dS/dlambda.
INTEGRATE_BUDGET = 4.0
SIMPLIFY_BUDGET = 3.0
TOTAL_BUDGET = 15.0
_CHECK_LAMBDAS = (sympy.Rational(1, 3), sympy.Rational(1, 100))


def _tidy(expr: sympy.Expr, seconds: float = SIMPLIFY_BUDGET) -> sympy.Expr:
    """simplify within a time limit, else a cheap canonical form, else expr as it is."""
    try:
        cheap = run_limited(lambda: sympy.powsimp(sympy.cancel(sympy.together(expr))), seconds / 2)
    except OutOfTime:
        return expr
    try:
        return run_limited(lambda: sympy.simplify(cheap), seconds)
    except OutOfTime:
        return cheap


def _orders(static, r_h: sympy.Expr, rep) -> tuple[int, int]:
    """(k, m) of the zeros of F and G at r_h (k + m = 2 is regular), judged at the
    representative point; a degenerate horizon has no temperature formula here."""
    orders = []
    x = mpmath.re(evaluate(r_h, rep, 40))
    for f in (static.F, static.G):
        values = [abs(mpmath.re(evaluate(sympy.diff(f, static.r, j), {**rep, static.r: x}, 40))) * x**j for j in range(3)]
        small = mpmath.mpf(10) ** -15 * (max(values) or 1)
        orders.append(next((j for j, v in enumerate(values) if v > small), 3))
    if orders[0] + orders[1] != 2:
        raise CannotCompute("first law: degenerate horizon (F G vanishes to order > 2): T = 0, no closed form here")
    return orders[0], orders[1]


def _root_of_product(F1: sympy.Expr, G1: sympy.Expr, rep) -> sympy.Expr:
    """sqrt(F1 G1), written as |F1| when G = F (sympy cannot always see sqrt(x^2) = |x|)."""
    if F1 == G1 or sympy.cancel(F1 - G1) == 0:
        sign = 1 if mpmath.re(evaluate(F1, rep, 30)) > 0 else -1
        return sign * F1
    return sympy.sqrt(F1 * G1)


def _eq(name: str, expr: sympy.Expr) -> sympy.Expr:
    return sympy.Eq(sympy.Symbol(name), expr, evaluate=False)


def _check_branch(problem: Problem, r_h: sympy.Expr, path: Path, rep) -> None:
    """The closed-form r_h(lambda) must be the numeric chosen root along the path."""
    for lam in _CHECK_LAMBDAS:
        point = {s: (v * lam if s in path.scaled else v) for s, v in rep.items()}
        closed = mpmath.re(evaluate(r_h, point, 30))
        try:
            numeric = horizon_radius_numeric(problem.spacetime, point, 20).value
        except ValueError as exc:
            raise CannotCompute(f"first law: no horizon along the path: {exc}") from exc
        if abs(closed - numeric) > mpmath.mpf(10) ** -12 * abs(numeric):
            raise CannotCompute("first law: the closed-form horizon changes branch along the path")


def symbolic_result(problem: Problem, path: Path | None, rep) -> SymbolicResult:
    """T (and Phi, S) in closed form within TOTAL_BUDGET seconds, else CannotCompute.

    Closed-form roots of cubics (Schwarzschild-de Sitter) make expressions that
    sympy can spend minutes on; the numeric side decides then.
    """
    try:
        return run_limited(lambda: _symbolic_result(problem, path, rep), TOTAL_BUDGET)
    except OutOfTime as exc:
        raise CannotCompute(f"first law: sympy did not finish the closed forms within {TOTAL_BUDGET:g} s") from exc


def _symbolic_result(problem: Problem, path: Path | None, rep) -> SymbolicResult:
    spacetime = problem.spacetime
    static = spacetime.metric.static
    r = static.r
    r_h = horizon_radius(spacetime, rep)
    k, m = _orders(static, r_h, rep)
    Fk = sympy.diff(static.F, r, k).subs(r, r_h) / sympy.factorial(k)
    Gm = sympy.diff(static.G, r, m).subs(r, r_h) / sympy.factorial(m)
    T_t = _tidy((1 - sympy.Rational(m, 2)) * _root_of_product(Fk, Gm, rep) / (2 * sympy.pi))
    N = normalization_factor(spacetime, rep)
    steps = [
        Step("horizon r_h", _eq("r_h", r_h)),
        Step(f"Taylor coefficients F ~ F_{k} x^{k}, G ~ G_{m} x^{m} at r_h", _eq(f"F_{k}*G_{m}", _tidy(Fk * Gm))),
        Step(f"regular Euclidean section: beta_t = 2 pi/((1 - {m}/2) sqrt(F_{k} G_{m})), T_t = 1/beta_t", _eq("T_t", T_t)),
        Step("normalised clock xi = N d/dt", _eq("N", N)),
    ]
    values = {"T": _tidy(N * T_t)}
    phi_t = _potential(spacetime, path, rep, r_h)
    if phi_t is not None:
        values["Phi"] = _tidy(N * phi_t)
        steps.append(Step("Phi = N (A_t at the normalisation point - A_t(r_h))", _eq("Phi", values["Phi"])))
    if path is not None:
        values["S"] = _entropy(problem, path, rep, r_h, T_t, phi_t, steps)
    provenance = ("T by local Euclidean regularity (sympy Taylor coefficients at r_h)",
                  "S by sympy integrate of (dM - Phi dQ)/T along the scaling path from a hole of zero size")
    wanted = problem.wanted or frozenset({"T"})
    return SymbolicResult(values={k: v for k, v in values.items() if k in wanted}, steps=tuple(steps), provenance=provenance)


def _potential(spacetime, path: Path | None, rep, r_h: sympy.Expr) -> sympy.Expr | None:
    static = spacetime.metric.static
    if static.A_t is None:
        return sympy.Integer(0)
    r = static.r
    norm = spacetime.normalization
    if norm.kind == "as-written":
        if path is not None:
            reference = path.potential_inf.subs(LAMBDA, 1)
        else:
            try:
                reference = run_limited(lambda: sympy.limit(static.A_t, r, sympy.oo), SIMPLIFY_BUDGET)
            except OutOfTime as exc:
                raise CannotCompute("Phi: sympy did not find A_t at infinity in time") from exc
    elif norm.kind == "radius":
        reference = static.A_t.subs(r, norm.radius)
    else:
        reference = static.A_t.subs(r, geodesic_radius(spacetime, rep))
    return reference - static.A_t.subs(r, r_h)


def _entropy(problem, path: Path, rep, r_h, T_t, phi_t, steps: list) -> sympy.Expr:
    _check_branch(problem, r_h, path, rep)
    scaling = path.scaling()
    T_lam = T_t.subs(scaling, simultaneous=True)
    work = path.mass_rate - (phi_t.subs(scaling, simultaneous=True) * path.charge_rate if phi_t != 0 else 0)
    integrand = _tidy(work / T_lam)
    lam = sympy.Symbol("lambda", positive=True)
    steps.append(Step("dS/dlambda = (dM/dlambda - Phi_t dQ/dlambda)/T_t along p -> lambda p", _eq("dS/dlambda", integrand.subs(LAMBDA, lam))))
    try:
        S = run_limited(lambda: sympy.integrate(integrand, (LAMBDA, 0, 1)), INTEGRATE_BUDGET)
    except OutOfTime as exc:
        raise CannotCompute(f"first law: sympy did not integrate dS/dlambda within {INTEGRATE_BUDGET:g} s") from exc
    if S.has(sympy.Integral) or S.has(sympy.oo, -sympy.oo, sympy.zoo, sympy.nan) or isinstance(S, sympy.Piecewise):
        raise CannotCompute("first law: sympy found no closed form for the integral of dS/dlambda")
    S = _tidy(S)
    steps.append(Step("S = integral_0^1 dS/dlambda dlambda, S(lambda -> 0) = 0", _eq("S", S)))
    return S
