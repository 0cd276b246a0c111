"""Route `euclidean-period`: the temperature as the period of Euclidean time.

After t = -i tau the (tau, r) plane near the horizon, F dtau^2 + dr^2/G, is
a smooth disc only if tau has the period beta_t = lim 2 pi rho / sqrt(F),
rho the proper distance from the horizon (PHYSICS.md, "euclidean-period").
The thermal (KMS) state of the Killing time xi = N d/dt then has
T = N / beta_t and kappa = 2 pi T.  The symbolic side takes the limit on the
leading Taylor terms of F and G at r_h (`_euclidean_period_series`); the
numeric side integrates rho and extrapolates the ratio
(`_euclidean_period_quadrature`).  Rotating metrics are read in the
co-rotating frame (`_euclidean_period_plane`).  When r_h is a root of a
quadratic (Kerr-Newman family) sqrt(a b) is found as a rational function of
r_h (`crosscheck.fieldroots`), so the closed form has no nested roots and
is proved equal to a claim quickly; the zeroth law is checked at the other
angles on the representative point (symbolic side) and at 15 digits
(numeric side: a consistency check, not the value).  A degenerate horizon has no
finite period: T = 0, reported as a value.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import replace
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck import fieldroots as er
from crosscheck import probing
from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes import _euclidean_period_plane as pl
from crosscheck.routes import _euclidean_period_quadrature as eq
from crosscheck.routes import _euclidean_period_series as es
from crosscheck.routes.base import NumericResult, Problem, Step, SymbolicResult, horizon_input_obstacle
from crosscheck.spacetimes.base import Spacetime
from crosscheck.spacetimes.evaluation import to_mp
from crosscheck.spacetimes.horizon import horizon_radius, horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor, normalization_factor_numeric

OBSERVABLES = frozenset({"T", "kappa"})
_GUARD = 15  # digits carried beyond the requested ones
CHECK_DIGITS = 15  # digits of the zeroth-law check at the angles after the first
_METHOD_SYMBOLIC = ("Euclidean section t = -i tau; F(r_h + x), G(r_h + x) expanded at r_h (Taylor coefficients by "
                    "sympy derivatives, zero tests at 50/80 digits at the probe points); rho = integral dy/sqrt(G) "
                    "of the leading term and beta_t = lim 2 pi rho/sqrt(F) by sympy; T = N/beta_t, kappa = 2 pi T")
_DEGENERATE = "degenerate horizon: F G vanishes faster than (r - r_h)^2, the period is infinite, T = 0 and kappa = 0"


class EuclideanPeriodRoute:
    """T and kappa from the regularity (no conical singularity) of the Euclidean section."""

    name: ClassVar[str] = "euclidean-period"
    title: ClassVar[str] = "Period of Euclidean time that makes the (tau, r) plane smooth at the horizon (KMS)"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "1"
    observables: ClassVar[frozenset[str]] = OBSERVABLES

    def applies(self, problem: Problem) -> str | None:
        reason = horizon_input_obstacle(problem, OBSERVABLES)
        if reason:
            return reason
        return pl.obstacle(problem.spacetime.metric)

    def symbolic(self, problem: Problem) -> SymbolicResult:
        return _symbolic(problem)

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        return _numeric(problem, point, digits)


def _spacetime(problem: Problem) -> Spacetime:
    if problem.spacetime is None:
        raise CannotCompute("euclidean-period needs a spacetime")
    return problem.spacetime


def _eq(name: str, expr: sympy.Expr) -> sympy.Basic:
    return sympy.Eq(sympy.Symbol(name), expr, evaluate=False)


# --------------------------------------------------------------------------- symbolic side


def _symbolic(problem: Problem) -> SymbolicResult:
    spacetime = _spacetime(problem)
    plane = pl.plane(spacetime.metric)
    points = probing.probe_points(problem)
    rep, r = points[0], plane.r
    r_h = horizon_radius(spacetime, rep)
    F, G = plane.at_angle(pl.ANGLES[0])
    side = pl.static_side(F, r, r_h, rep)
    h = es.horizon(F, r, r_h, side, points)
    f, g = es.leading(F, h), es.leading(G, h)
    per = es.period(f, g)
    N = normalization_factor(spacetime, rep)
    x = es.X_
    where = "x = r - r_h" if side > 0 else "x = r_h - r (static region inside)"
    reduced = f" (reduced modulo {h.modulus.as_expr()} = 0)" if h.modulus is not None and h.modulus.degree() > 1 else ""
    steps = [Step(f"(tau, r) plane: {plane.inputs}", sympy.Tuple(_eq("F", F), _eq("G", G))),
             Step("horizon r_h", _eq("r_h", r_h)),
             Step(f"series at r_h, {where}: F = a x^k + ...{reduced}", _eq("F", f.coefficient * x**f.order)),
             Step(f"series at r_h, {where}: G = b x^m + ...{reduced}", _eq("G", g.coefficient * x**g.order)),
             Step("proper distance of the leading term" + (" (from x = 1: it diverges at r_h)" if g.order >= 2 else ""),
                  _eq("rho", es.fill(per.rho, f, g))),
             Step("beta_t = lim_(x -> 0+) 2 pi rho/sqrt(F)", _eq("beta_t", es.fill(per.beta, f, g)))]
    provenance = [f"inputs: {plane.inputs}; {pl.describe(spacetime)}", _METHOD_SYMBOLIC]
    if per.degenerate:
        T = kappa = sympy.Integer(0)
        steps.append(Step("no linear term in F G at r_h: " + _DEGENERATE, _eq("T", T)))
        provenance.append(_DEGENERATE)
    else:
        beta_t = _period_closed_form(per, f, g, h)
        T = h.exact(N / beta_t if es.has_nested_root(N) else es.tidy(N / beta_t))  # no simplify on Cardano
        kappa = 2 * sympy.pi * T
        steps += [Step("beta_t with the Taylor coefficients", _eq("beta_t", beta_t))]
    if plane.transverse:
        steps.append(Step("a b at the representative point, angles " + ", ".join(map(str, pl.ANGLES)),
                          _zeroth_law(plane, h, rep)))
        provenance.append("zeroth law: the product of the leading coefficients a b agrees at the angles "
                          + ", ".join(map(str, pl.ANGLES)) + "; the closed form is taken at pi/2")
    steps += [Step("normalisation of the Killing time, xi = N d/dt", _eq("N", N)),
              Step("T = N/beta_t (KMS period of the Killing time)", _eq("T", T)),
              Step("kappa = 2 pi T", _eq("kappa", kappa))]
    values = {"T": T, "kappa": kappa}
    return SymbolicResult(values={k: v for k, v in values.items() if k in (problem.wanted or OBSERVABLES)},
                          steps=tuple(steps), provenance=tuple(provenance))


def _period_closed_form(per: es.Period, f: es.Leading, g: es.Leading, h: es.Horizon) -> sympy.Expr:
    """beta_t = c / sqrt(a b): c from the limit with a = b = 1 (checked: beta sqrt(a b) is free of a, b)."""
    unit = sympy.simplify(per.beta * sympy.sqrt(es.A_ * es.B_))
    if unit.has(es.A_) or unit.has(es.B_):
        return es.fill(per.beta, f, g)
    square = f.coefficient * g.coefficient
    # r_h a root of a quadratic (Kerr-like horizons): sqrt(a b) as a rational function of r_h, which
    # proves equal to a claim quickly (nested roots do not)
    root = er.positive_sqrt(square, h.modulus, (f.coefficient, g.coefficient), h.value, h.points)
    return unit / (root if root is not None else es.positive_sqrt(h.reduce(square), h))


def _zeroth_law(plane: pl.Plane, h: es.Horizon, rep: pl.Point) -> sympy.Tuple:
    """a b at each angle (representative point, 20 digits); ValueError when they differ.
    The representative point goes in first and r_h stays the symbol RH (its value given with
    the point), so the series are of functions of r alone: the same coefficients with much
    less algebra than with the parameters as symbols or the closed form of r_h put in."""
    products = []
    where = {es.RH: h.value.subs(rep)}
    r = sympy.Dummy("r")  # no assumptions: sympy's sign queries on numeric coefficients are slow
    at_rep = es.Horizon(r, es.RH, h.side, (where,), None)
    for angle in pl.ANGLES:
        F, G = (e.subs(rep).xreplace({h.r: r}) for e in plane.at_angle(angle))
        f, g = es.leading(F, at_rep), es.leading(G, at_rep)
        if f.order + g.order != 2:
            products.append(mpmath.mpf(0))
            continue
        products.append(probing.value(f.coefficient * g.coefficient, where, 30).real)
    with mpmath.workdps(30):
        spread = max(abs(p - products[0]) for p in products)
        if spread > mpmath.mpf(10) ** -20 * max(abs(products[0]), mpmath.mpf(10) ** -30):
            raise ValueError(f"the period depends on the angle (a b = {[mpmath.nstr(p, 12) for p in products]}): "
                             "not a Killing horizon of this generator")
        return sympy.Tuple(*(sympy.Float(mpmath.nstr(p, 20), 20) for p in products))


# --------------------------------------------------------------------------- numeric side


@functools.lru_cache(maxsize=64)
def _prepared(F: sympy.Expr, G: sympy.Expr, r: sympy.Symbol) -> tuple:
    """Per-expression work shared by all points: F, G, F', F'' compiled (lambdify with
    mpmath, arguments r and the parameters) and the polynomial parts of F and G."""
    dF = sympy.diff(F, r)
    exprs = (F, G, dF, sympy.diff(dF, r))
    symbols = tuple(sorted(set().union(*(e.free_symbols for e in exprs)) - {r}, key=str))
    compiled = tuple(sympy.lambdify((r, *symbols), e, modules="mpmath") for e in exprs)
    return compiled, symbols, probing.polynomial_parts(F, r) + probing.polynomial_parts(G, r)


def _real(function, constants: tuple) -> eq.Function:
    """x -> Re function(x, *constants); nan where it is singular."""

    def f(x: mpmath.mpf) -> mpmath.mpf:
        try:
            return mpmath.re(function(x, *constants))
        except (ZeroDivisionError, ValueError):
            return mpmath.nan

    return f


def _local(plane: pl.Plane, angle: sympy.Expr, point: dict, r_h: mpmath.mpf, scale: mpmath.mpf | None) -> eq.Local:
    """F, G near r_h at one angle; `scale` (distance to the nearest other zero or pole of F or G)
    is found at the first angle and reused at the others (the checks of convergence remain)."""
    F, G = plane.at_angle(angle)
    compiled, symbols, polys = _prepared(F, G, plane.r)
    missing = [s for s in symbols if s not in point]
    if missing:
        raise ValueError(f"no value for {', '.join(map(str, missing))}")
    fs = [_real(c, tuple(point[s] for s in symbols)) for c in compiled]
    if scale is None:
        scale = probing.nearest_root_distance(polys, point, r_h, abs(r_h) or mpmath.mpf(1))
    probe = scale / 10**6
    side = 1 if fs[0](r_h + probe) > 0 or not fs[0](r_h - probe) > 0 else -1
    return eq.Local(*fs, r_h=r_h, side=side, scale=scale)


def _numeric(problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
    spacetime = _spacetime(problem)
    plane = pl.plane(spacetime.metric)
    dps = digits + _GUARD
    with mpmath.workdps(dps):
        point = {s: to_mp(v, dps) for s, v in point.items()}
        given = horizon_radius_numeric(spacetime, point, digits)
        N = normalization_factor_numeric(spacetime, point, digits)
        results = [_period_at(plane, plane.angles[0], point, given, digits, dps, None)]
        scale, check = mpmath.mpf(results[0][1]["scale"]), min(digits, CHECK_DIGITS)
        with mpmath.workdps(check + _GUARD):  # the other angles only test the zeroth law
            for angle in plane.angles[1:]:
                results.append(_period_at(plane, angle, point, given, check, check + _GUARD, scale))
        beta, evidence, how = results[0]
        if len(results) > 1:
            evidence["zeroth_law_angle"] = [float(a) for a in plane.angles]
            evidence["zeroth_law_beta_t"] = [float(b.value) for b, _, _ in results]
            _check_angles([b for b, _, _ in results], check)
        if beta is None:  # degenerate: the period is infinite; the error is what the root resolution allows
            T = Measured(mpmath.mpf(0), N.value * evidence["T_t_bound"])
            evidence["T_t_bound"] = float(evidence["T_t_bound"])
        else:
            T = Measured(N.value / beta.value, N.error / beta.value + N.value * beta.error / beta.value**2)
        two_pi = 2 * mpmath.pi
        values = {"T": T, "kappa": Measured(two_pi * T.value, two_pi * T.error)}
        provenance = [f"inputs: {plane.inputs}; {pl.describe(spacetime)}", how]
        if len(results) > 1:
            provenance.append("zeroth law: beta_t agrees at the angles " + ", ".join(map(str, plane.angles))
                              + f" (the others than the first computed to {check} digits: a consistency check)")
        evidence["N"] = float(N.value)
        evidence["scale"] = float(evidence["scale"])
    return NumericResult(values={k: v for k, v in values.items() if k in (problem.wanted or OBSERVABLES)},
                         evidence=evidence, provenance=tuple(provenance))


def _period_at(plane: pl.Plane, angle: sympy.Expr, point: dict, given: Measured, digits: int, dps: int,
               scale: mpmath.mpf | None):
    """(beta_t or None if degenerate, evidence, method text) at one angle."""
    local = _local(plane, angle, point, given.value, scale)
    k, m = eq.zero_order(local.F, local), eq.zero_order(local.G, local)
    polys = _prepared(*plane.at_angle(angle), plane.r)[2]
    if k + m > 2 and scale is None:  # degenerate, or an inner horizon closer than 20 digits resolve?
        closer = probing.nearest_root_distance(polys, point, given.value, local.scale, digits=dps)
        if closer < local.scale / 10:
            return _period_at(plane, angle, point, given, digits, dps, closer)
    evidence: dict[str, object] = {"orders": {"F": k, "G": m}, "scale": local.scale}
    if k == 0:
        raise ValueError(f"F does not vanish at r_h = {mpmath.nstr(given.value, 15)}: not a horizon")
    if k + m < 2:
        raise ValueError(f"F ~ x^{k}, G ~ x^{m} at r_h: no regular Euclidean section (curvature singularity)")
    if k + m > 2:
        separation = probing.resolution(given.value, dps) if polys else local.scale / 10**4
        evidence["T_t_bound"] = eq.degenerate_bound(local, k, m, separation)
        shown = eq.divergence(local)
        evidence["series"] = [
            {"name": "proper distance from r_ref", "x_label": "r - r_h", "y_label": "rho", "x": shown["delta"],
             "y": shown["rho"], "log_x": True},
            {"name": "2 pi rho/sqrt(F)", "x_label": "r - r_h", "y_label": "beta_t(delta)", "x": shown["delta"],
             "y": shown["ratio"], "log_x": True, "log_y": True}]
        how = (f"F ~ x^{k}, G ~ x^{m} at r_h (orders from the slope of ln|F|, ln|G| against ln x): {_DEGENERATE}; "
               "evidence: rho from r_h + scale/10 by quadrature in ln x and the ratio 2 pi rho/sqrt(F), both unbounded; "
               f"error: the T of a simple zero split off by {mpmath.nstr(separation, 3)} (the root resolution)")
        return None, evidence, how
    r_h = eq.polish(local, k, given.error)
    local = replace(local, r_h=r_h.value)
    result = eq.period(local, digits)
    beta = Measured(result.beta.value, result.beta.error + eq.horizon_shift_error(result, r_h.error))
    evidence["beta_t"] = float(beta.value)
    evidence["series"] = [{"name": "2 pi rho/sqrt(F) at r_h + delta", "x_label": "delta", "y_label": "beta_t(delta)",
                           "x": [h for h, _ in result.samples], "y": [v for _, v in result.samples], "log_x": True,
                           "fit_x": [0.0, result.samples[0][0]], "fit_y": [float(beta.value)] * 2,
                           "fit_label": "Richardson limit"}]
    how = (f"rho = integral_(r_h)^r dr'/sqrt(G) by Gauss-Legendre quadrature after r' = r_h {'+' if local.side > 0 else '-'} "
           f"s^2 (mpmath, {dps} digits); beta_t(delta) = 2 pi rho/sqrt(F) at delta = {mpmath.nstr(result.samples[0][0], 4)} "
           f"* 2^-k (k < {result.steps}), Richardson-extrapolated to delta = 0; error: last two orders + quadrature "
           "errors amplified + r_h error propagated; r_h polished by Newton steps on F"
           + (" (F' for its double zero)" if k == 2 else "") + "; T = N/beta_t with N from crosscheck.spacetimes.normalize")
    return beta, evidence, how


def _check_angles(betas: list[Measured | None], digits: int) -> None:
    """The period must be the same at every angle (ValueError otherwise)."""
    if all(b is None for b in betas):
        return
    if any(b is None for b in betas):
        raise ValueError("the horizon is degenerate at some angles only: not a Killing horizon of this generator")
    first = betas[0]
    for b in betas[1:]:
        allowed = 10 * (first.error + b.error) + mpmath.mpf(10) ** (2 - digits) * abs(first.value)
        if abs(b.value - first.value) > allowed:
            raise ValueError(f"beta_t depends on the angle ({mpmath.nstr(first.value, 12)} vs {mpmath.nstr(b.value, 12)}): "
                             "not a Killing horizon of this generator")
