"""The Bogoliubov route: thermal ratio of the Bogoliubov coefficients of the late-time ray map.

alpha, beta_(omega omega') = (1/2 pi) sqrt(omega'/omega) integral du exp(-i omega u +- i omega' p(u))
for the ray map p(u) = v of a null-shell collapse (PHYSICS.md, "bogoliubov").  For the
late-time map p ~ v_H - C exp(-kappa_t u): |beta/alpha|^2 = exp(-2 pi omega/kappa_t), a Planck
spectrum at T_t = kappa_t/(2 pi); with the Killing normalisation T = N T_t, kappa = 2 pi T.

Numeric side: the route traces its own ray map (`_null_rays`: tortoise coordinate with the
log-singular part split off, matching across the shell by the areal radius, or by the
regular null coordinate for planar metrics such as Rindler), continues it to complex x,
integrates alpha and beta on rotated contours at several late-time windows
(`_bogoliubov_integrals`: one stretched node set, shared by the windows, the frequencies
and beta's mirror contour, step halved until nested rules agree), extrapolates ln|alpha/beta|^2 to late times and fits
ln|alpha/beta|^2 = omega/T_t over three frequencies.
Symbolic side (`_bogoliubov_symbolic`, its own derivation): the log coefficient of the
tortoise coordinate as the residue of (r - r_h)/(F G) at r_h (polynomial division), the
order of the matching function, the exponential map p = p0 - C exp(-kappa_t u) they imply,
and |alpha/beta|^2 = exp(2 pi omega/kappa_t) simplified from its Gamma-function form.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.probing import probe_points
from crosscheck.routes import _null_rays as nr
from crosscheck.routes._bogoliubov_integrals import LateTimeCoefficients, thermal_fit
from crosscheck.routes._bogoliubov_symbolic import map_exponent
from crosscheck.routes.base import NumericResult, Problem, Step, SymbolicResult
from crosscheck.spacetimes.horizon import horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor, normalization_factor_numeric

OBSERVABLES = frozenset({"T", "kappa"})
MULTIPLES = (1, 2, 3)  # omega = multiple * kappa_t/2 (scale from the measured log coefficient)
LEVELS = 3  # late-time windows h, 2^-1 h, 2^-2 h for the extrapolation
# The coefficient integrals cost grows with precision (nodes ~ digits; measured 0.05-0.07 s
# CPU per warm point at 15 and 20 digits); beyond this many digits the route works at this
# precision and its error estimate says so -- about 1e-22 relative, far below any claim's tolerance.
MAX_DIGITS = 20


class BogoliubovRoute:
    """Bogoliubov coefficients of the late-time ray map of a collapse, thermal fit."""

    name: ClassVar[str] = "bogoliubov"
    title: ClassVar[str] = "Bogoliubov coefficients of the late-time ray map of a collapse"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "4"
    observables: ClassVar[frozenset[str]] = OBSERVABLES

    def applies(self, problem: Problem) -> str | None:
        spacetime = problem.spacetime
        horizon = spacetime.horizon if spacetime else None
        if horizon is None or (horizon.expression is None and horizon.root is None):
            return "needs a spacetime with a horizon"
        missing = problem.wanted - OBSERVABLES
        if missing:
            return f"does not compute {', '.join(sorted(missing))}"
        if spacetime.metric.axial is not None:
            return "static metrics only (the ray map of a rotating collapse needs omega - m Omega modes)"
        try:
            nr.radial_form(spacetime.metric)
        except CannotCompute as exc:
            return str(exc)
        return None

    def symbolic(self, problem: Problem) -> SymbolicResult:
        return _symbolic(problem)

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        result = _Numeric(problem, point, min(digits, MAX_DIGITS)).result()
        if digits <= MAX_DIGITS:
            return result
        note = f"computed at {MAX_DIGITS} digits (asked for {digits}): the error estimate is for {MAX_DIGITS}"
        return dataclasses.replace(result, provenance=(*result.provenance, note))


def _targets(problem: Problem) -> frozenset[str]:
    return (problem.wanted & OBSERVABLES) or OBSERVABLES


def _spacetime(problem: Problem):
    if problem.spacetime is None:
        raise CannotCompute("no spacetime")
    if problem.spacetime.metric.axial is not None:
        raise CannotCompute("static metrics only")
    return problem.spacetime


def _points(problem: Problem) -> list[dict]:
    """The generic probe points (crosscheck.probing), with a generic value for any metric
    symbol that is not a parameter, so that zero tests see every symbol."""
    metric = problem.spacetime.metric
    extra = sorted(metric.g.free_symbols - set(metric.coords) - set(problem.parameters), key=str)
    generic = (sympy.Rational(13, 10), sympy.Rational(17, 10), sympy.Rational(11, 10))
    return [{**point, **{symbol: generic[k] for symbol in extra}} for k, point in enumerate(probe_points(problem))]


def _symbolic(problem: Problem) -> SymbolicResult:
    spacetime = _spacetime(problem)
    form = nr.radial_form(spacetime.metric)
    points = _points(problem)
    exponent = map_exponent(spacetime, form, points)
    steps = list(exponent.steps)
    N = normalization_factor(spacetime, points[0])
    steps.append(Step("normalisation of the Killing time, xi = N d/dt (omega conjugate to N t)", sympy.Eq(sympy.Symbol("N"), N, evaluate=False)))
    T = _tidy(N * exponent.T_t)
    steps.append(Step("Planck spectrum in the Killing frequency: T = N T_t", sympy.Eq(sympy.Symbol("T"), T, evaluate=False)))
    values = {"T": T, "kappa": _tidy(2 * sympy.pi * T)}
    provenance = (f"{form.how}; F G = P/Q, P divided by (r - r_h)^k at r_h = {exponent.r_h}, remainders tested for zero "
                  f"at {len(points)} parameter points", exponent.reason,
                  "Bogoliubov ratio of the exponential map from its Gamma-function form (rotated contours), simplified by sympy",
                  f"normalisation '{spacetime.normalization.kind}': N = {N}")
    return SymbolicResult(values={k: v for k, v in values.items() if k in _targets(problem)}, steps=tuple(steps), provenance=provenance)


def _tidy(expr: sympy.Expr) -> sympy.Expr:
    """simplify small expressions only (sympy can take minutes on large radical ones)."""
    return sympy.simplify(expr) if sympy.count_ops(expr) <= 150 else expr


class _Numeric:
    """The traced map's Bogoliubov coefficients at one parameter point; fit of T."""

    def __init__(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> None:
        self.problem, self.spacetime, self.point, self.digits = problem, _spacetime(problem), dict(point), digits
        self.q = digits // 3 + 2  # late-time window h = scale 10^-q
        self.dps = digits + 2 * self.q + 15  # b = R - R_h loses m q digits (m <= 2)
        self.evidence: dict[str, object] = {}
        self.provenance: list[str] = []

    def result(self) -> NumericResult:
        with mpmath.workdps(self.dps):
            r_h = horizon_radius_numeric(self.spacetime, self.point, self.digits + 10 + self.q)
            form = nr.radial_form(self.spacetime.metric)
            radial = nr.Radial(form, self.spacetime, self.point, r_h, self.dps)
            order = radial.order(radial.fg)
            if order != 2:
                kind = "degenerate (extremal) horizon" if order > 2 else "no horizon of this form"
                raise CannotCompute(f"{kind}: F G ~ x^{order} at r_h, the late-time map is not exponential (no thermal fit)")
            s = nr.log_coefficient(radial, self.digits, max(10, self.digits // 3 + 2))
            ray_map = nr.RayMap(radial, s)
            T_t = self.fit(ray_map, radial)
            N = normalization_factor_numeric(self.spacetime, self.point, self.digits + 5)
            T = Measured(N.value * T_t.value, abs(N.value) * T_t.error + T_t.value * N.error)
            kappa = Measured(2 * mpmath.pi * T.value, 2 * mpmath.pi * T.error)
            self.evidence.update(r_h=float(r_h.value), N=float(N.value), T_t=float(T_t.value), matching=ray_map.matching, map_order=ray_map.order)
            self.provenance.append(f"r_h = {mpmath.nstr(r_h.value, 15)}; normalisation '{self.spacetime.normalization.kind}': "
                                   f"N = {mpmath.nstr(N.value, 15)}; up to {self.dps} working digits")
        values = {"T": T, "kappa": kappa}
        return NumericResult(values={k: v for k, v in values.items() if k in _targets(self.problem)},
                             evidence=self.evidence, provenance=tuple(self.provenance))

    def fit(self, ray_map: nr.RayMap, radial: nr.Radial) -> Measured:
        window = radial.scale * mpmath.mpf(10) ** (-self.q)
        unit = ray_map.order * ray_map.s.value / 4  # kappa_t/2 as estimated from the log coefficient: a frequency scale only
        dps = self.digits + ray_map.order * self.q + 15  # what b = R - R_h loses is m q digits
        with mpmath.workdps(dps):
            return self._fit(ray_map, radial, window, unit, dps)

    def _fit(self, ray_map: nr.RayMap, radial: nr.Radial, window: mpmath.mpf, unit: mpmath.mpf, dps: int) -> Measured:
        coefficients = LateTimeCoefficients(ray_map, window, unit, self.digits, dps, MULTIPLES, LEVELS)
        if not coefficients.converged:
            raise CannotCompute("the continued ray map did not converge on the rotated contour (a singularity too near the horizon)")
        if coefficients.mirror_gap > mpmath.mpf(10) ** (-self.digits):  # J_- is read off the mirror ray (`LateTimeCoefficients`)
            raise CannotCompute(f"the ray map is not real on the real axis (mirror rays differ by {mpmath.nstr(coefficients.mirror_gap, 2)})")
        ratios = [coefficients.log_ratio(k, LEVELS) for k in MULTIPLES]
        fit = thermal_fit(ratios)
        # a shift of r_h by its error moves the map's base point: relative effect ~ error/window
        T_t = Measured(fit.T.value, fit.T.error + fit.T.value * radial.r_h.error / window)
        omegas = [float(p.omega) for p in ratios]
        thermal = bool(fit.max_relative_residual <= 10 * max(p.value.error / abs(p.value.value) for p in ratios) + mpmath.mpf(10) ** (-self.digits))
        middle = ratios[len(ratios) // 2]
        self.evidence.update(
            omegas=omegas, log_ratios=[float(p.value.value) for p in ratios], log_ratio_errors=[float(p.value.error) for p in ratios],
            thermality={"max_relative_residual": float(fit.max_relative_residual), "intercept": float(fit.intercept), "planck": thermal},
            windows=[h for h, _ in middle.samples], omega_prime=[float(coefficients.omega_prime(mpmath.mpf(h))) for h, _ in middle.samples],
            map_evaluations=coefficients.evaluations, log_coefficient_on_contour=[float(mpmath.re(1 / ray.k0)) for ray in coefficients.rays.values()],
            series=[
                {"name": "ln|alpha/beta|^2 vs omega (late-time limit)", "x_label": "omega (conjugate to t)", "y_label": "ln|alpha/beta|^2",
                 "x": omegas, "y": [float(p.value.value) for p in ratios], "y_error": [float(p.value.error) for p in ratios],
                 "fit_x": [0.0, omegas[-1]], "fit_y": [0.0, float(fit.slope) * omegas[-1]], "fit_label": "omega/T_t (through the origin)",
                 "log_x": False, "log_y": False},
                {"name": f"late-time extrapolation at omega = {mpmath.nstr(middle.omega, 6)}", "x_label": "window h (omega' ~ 1/h^m)",
                 "y_label": "ln|alpha/beta|^2", "x": [h for h, _ in middle.samples], "y": [v for _, v in middle.samples],
                 "fit_x": [0.0, middle.samples[0][0]], "fit_y": [float(middle.value.value)] * 2, "fit_label": "extrapolated to h = 0",
                 "log_x": False, "log_y": False},
            ])
        self.provenance.append(
            f"ray map traced with {ray_map.matching}; tortoise log split off on the contour; alpha, beta by one integration by parts, "
            f"rotation x -> exp(-+ i pi/{2 * ray_map.order}) t, nested trapezoidal rules in u, ln t = u - A(e^(-u/L) - 1) "
            f"({coefficients.evaluations} map evaluations, shared by all windows and frequencies); "
            f"{LEVELS} late-time windows from h = {mpmath.nstr(window, 3)}, Richardson; fit over omega = {', '.join(mpmath.nstr(w, 4) for w in omegas)}: "
            f"{'Planck (linear through 0)' if thermal else 'NOT linear'}, max residual {mpmath.nstr(fit.max_relative_residual, 2)}")
        return T_t
