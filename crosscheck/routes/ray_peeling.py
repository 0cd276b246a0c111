"""The ray-peeling route: exponential separation of outgoing null rays near the horizon.

Outgoing radial null rays obey dr/dt = sqrt(F G) (rotating metrics: the co-rotating
(t, r) block at fixed theta).  Near a non-degenerate horizon two neighbouring rays
separate as exp(kappa_t v), v the Killing parameter along the horizon (PHYSICS.md,
"ray-peeling"); kappa = N kappa_t, T = kappa/(2 pi).

Numeric side: pairs of rays traced with a Bulirsch-Stoer integrator at the working
precision from offsets delta, the rate extrapolated to delta = 0 (Richardson); as
evidence, the late-time collapse ray map p(u) and its rate -d ln(dp/du)/du.
Symbolic side: the Taylor series of F G (and the order of F) at r_h: sqrt(F G) =
sqrt(c) x + ..., and the exponent of the map in the regular coordinate
rho ~ x^p: kappa_t = (p/2) sqrt(c).  Note: d/dr sqrt(F G) = sqrt(c) alone is the
rate on t = const slices, which is 2 kappa_t when F and G have simple zeros.
Degenerate horizons (F G ~ x^k, k > 2) peel as a power law: rate 0, reported so.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit
from crosscheck.routes import _null_rays as nr
from crosscheck.routes import _ray_peeling_series as taylor
from crosscheck.routes._ray_peeling_trace import peeling_rate
from crosscheck.routes.base import NumericResult, Problem, Step, SymbolicResult
from crosscheck.spacetimes.horizon import horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor, normalization_factor_numeric

OBSERVABLES = frozenset({"kappa", "T"})
_THETAS = (sympy.pi / 2, sympy.pi / 3, sympy.pi / 4)  # rotating metrics: zeroth-law check
_CHECK_DIGITS = 15  # precision of the rates at the other angles (zeroth-law check)
_EVIDENCE_DPS = 20  # the collapse-map evidence is computed at this fixed precision


class RayPeelingRoute:
    """Exponential peeling of neighbouring outgoing null rays off the horizon."""

    name: ClassVar[str] = "ray-peeling"
    title: ClassVar[str] = "Exponential peeling of outgoing null rays off the horizon"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "2"
    observables: ClassVar[frozenset[str]] = OBSERVABLES

    def applies(self, problem: Problem) -> str | None:
        spacetime = problem.spacetime
        horizon = spacetime.horizon if spacetime else None
        if horizon is None or (horizon.expression is None and horizon.root is None):
            return "needs a spacetime with a horizon"
        missing = problem.wanted - OBSERVABLES
        if missing:
            return f"does not compute {', '.join(sorted(missing))}"
        try:
            nr.radial_form(spacetime.metric)
        except CannotCompute as exc:
            return str(exc)
        return None

    def symbolic(self, problem: Problem) -> SymbolicResult:
        return _symbolic(problem)

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        return _Numeric(problem, point, digits).result()


def offsets(digits: int) -> int:
    """Number of ray-pair offsets in the Richardson extrapolation (`_ray_peeling_trace`)."""
    return max(8, digits // 3)


def _targets(problem: Problem) -> frozenset[str]:
    return (problem.wanted & OBSERVABLES) or OBSERVABLES


def _symbolic(problem: Problem) -> SymbolicResult:
    if problem.spacetime is None:
        raise CannotCompute("no spacetime")
    spacetime, metric = problem.spacetime, problem.spacetime.metric
    form = nr.radial_form(metric)
    points = taylor.sample_points(problem.parameters, problem.ranges, metric.g.free_symbols - set(metric.coords))
    exponent = taylor.symbolic_exponent(spacetime, form, points, matching=False)
    N = normalization_factor(spacetime, exponent.representative)
    steps = list(exponent.steps)
    steps.append(Step("normalisation of the Killing time, xi = N d/dt", sympy.Eq(sympy.Symbol("N"), N, evaluate=False)))
    kappa = taylor.tidy(N * exponent.kappa_t)
    values = {"kappa": kappa, "T": taylor.tidy(kappa / (2 * sympy.pi))}
    steps.append(Step("kappa = N kappa_t, T = kappa/(2 pi)", sympy.Eq(sympy.Symbol("T"), values["T"], evaluate=False)))
    side = "r > r_h" if exponent.side > 0 else "r < r_h"
    provenance = (f"{form.how}; Taylor series of F G and F at r_h = {exponent.r_h} ({side}), coefficients tested for zero "
                  "at 3 parameter points; peeling in the regular coordinate, Killing parameter v", exponent.reason,
                  f"normalisation '{spacetime.normalization.kind}': N = {N}")
    return SymbolicResult(values={k: v for k, v in values.items() if k in _targets(problem)}, steps=tuple(steps), provenance=provenance)


class _Numeric:
    """Pairs of traced rays at one parameter point; the collapse ray map as evidence."""

    def __init__(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> None:
        if problem.spacetime is None:
            raise CannotCompute("no spacetime")
        self.problem, self.spacetime, self.point, self.digits = problem, problem.spacetime, dict(point), digits
        self.metric = self.spacetime.metric
        self.steps = offsets(digits)
        self.dps = digits + (digits + 6) // 2 + 12  # eps of the ray pair costs half the digits
        self.evidence: dict[str, object] = {}
        self.provenance: list[str] = []
        self.scale: mpmath.mpf | None = None  # near-horizon size, found once per point (`nr.Radial`)

    def result(self) -> NumericResult:
        with mpmath.workdps(self.dps):
            r_h = horizon_radius_numeric(self.spacetime, self.point, self.digits + 10)
            thetas = _THETAS if self.metric.axial is not None else _THETAS[:1]
            measured = [self.kappa_t(r_h, thetas[0])] + [self.check_at(r_h, theta) for theta in thetas[1:]]
            kappa_t = measured[0]
            if len(measured) > 1:
                self.zeroth_law(thetas, measured)
            N = normalization_factor_numeric(self.spacetime, self.point, self.digits + 5)
            kappa = Measured(N.value * kappa_t.value, abs(N.value) * kappa_t.error + abs(kappa_t.value) * N.error)
            T = Measured(kappa.value / (2 * mpmath.pi), kappa.error / (2 * mpmath.pi))
            self.evidence.update(r_h=float(r_h.value), N=float(N.value), kappa_t=float(kappa_t.value), kappa_t_error=float(kappa_t.error))
            self.provenance.append(f"r_h = {mpmath.nstr(r_h.value, 15)}; normalisation '{self.spacetime.normalization.kind}': "
                                   f"N = {mpmath.nstr(N.value, 15)}; {self.dps} working digits")
        values = {"kappa": kappa, "T": T}
        return NumericResult(values={k: v for k, v in values.items() if k in _targets(self.problem)},
                             evidence=self.evidence, provenance=tuple(self.provenance))

    def check_at(self, r_h: Measured, theta: sympy.Expr) -> Measured:
        """The rate at another angle, for the zeroth-law check only: at _CHECK_DIGITS, which
        resolves a theta dependence far beyond any tolerance at a fraction of the cost."""
        if self.digits <= _CHECK_DIGITS:
            return self.kappa_t(r_h, theta)
        saved = self.digits, self.steps, self.dps
        self.digits, self.steps = _CHECK_DIGITS, offsets(_CHECK_DIGITS)
        self.dps = _CHECK_DIGITS + (_CHECK_DIGITS + 6) // 2 + 12
        try:
            with mpmath.workdps(self.dps):
                return self.kappa_t(Measured(+r_h.value, max(r_h.error, mpmath.mpf(10) ** -(_CHECK_DIGITS + 5))), theta)
        finally:
            self.digits, self.steps, self.dps = saved

    def kappa_t(self, r_h: Measured, theta: sympy.Expr) -> Measured:
        form = nr.radial_form(self.metric, theta)
        radial = nr.Radial(form, self.spacetime, self.point, r_h, self.dps, self.scale)
        self.scale = radial.scale
        extra = int(2 * mpmath.log10((abs(r_h.value) or 1) / radial.scale))  # another horizon close by: F G cancels
        if extra > 0:
            with mpmath.workdps(self.dps + extra):
                return self._kappa_t(form, nr.Radial(form, self.spacetime, self.point, r_h, self.dps + extra, self.scale), theta)
        return self._kappa_t(form, radial, theta)

    def _kappa_t(self, form: nr.RadialForm, radial: nr.Radial, theta: sympy.Expr) -> Measured:
        self.check_horizon(radial)
        order = radial.order(radial.fg)
        measured, samples, rate = peeling_rate(radial, self.digits, self.steps, degenerate=order > 2)
        if theta != _THETAS[0]:
            return measured if order <= 2 else Measured(mpmath.mpf(0), abs(measured.value) + measured.error)
        side = "r > r_h" if radial.side > 0 else "r < r_h"
        self.provenance.append(f"{form.how}; pairs of rays at x = delta e^(+-{mpmath.nstr(rate.eps, 2)}) traced by Bulirsch-Stoer in "
                               f"the advanced time ({rate.calls} calls), separation in rho = int sqrt(F/G) dr, {self.steps} offsets "
                               f"halving from {mpmath.nstr(samples[0][0], 3)} ({side}), Richardson to delta = 0")
        self.evidence.update(offsets=[h for h, _ in samples], rates=[v for _, v in samples], side=side, fg_order=order, ode_calls=rate.calls)
        series = [{"name": "separation rate of a ray pair vs its offset from the horizon", "x_label": "offset delta = |r - r_h|",
                   "y_label": "rate d ln(delta rho)/dv", "x": [h for h, _ in samples], "y": [v for _, v in samples],
                   "fit_x": [samples[-1][0], samples[0][0]], "fit_y": [float(measured.value)] * 2,
                   "fit_label": "Richardson limit kappa_t", "log_x": True, "log_y": False}]
        if order > 2:  # report 0; the measured limit (0 within its error) bounds the error
            self.evidence["degenerate"] = f"F G ~ x^{order} at r_h: degenerate horizon, power-law peeling, rate 0"
            self.provenance.append(f"degenerate horizon (F G ~ x^{order}): rays peel off as a power law; kappa_t = 0, "
                                   f"measured limit {mpmath.nstr(measured.value, 3)} +- {mpmath.nstr(measured.error, 2)}")
            measured = Measured(mpmath.mpf(0), abs(measured.value) + measured.error)
        else:
            series.append(self.collapse(form, radial.r_h, measured))
        self.evidence["series"] = series
        return measured

    def check_horizon(self, radial: nr.Radial) -> None:
        """F G must vanish at r_h, compared with its size a little way into the static region."""
        at, away = radial.fg(mpmath.mpf(0)), radial.fg(radial.scale / 1000)
        if not mpmath.isfinite(at) or abs(at) > mpmath.mpf(10) ** (-(self.digits // 2)) * abs(away):
            raise ValueError(f"horizon: F G = {mpmath.nstr(mpmath.re(at), 6)} does not vanish at r_h = {mpmath.nstr(radial.r_h.value, 12)}")

    def collapse(self, form: nr.RadialForm, r_h: Measured, kappa_t: Measured) -> dict:
        """Late-time ray map of the null-shell collapse at 20 digits: -d ln(dp/du)/du vs u,
        extrapolated to u = infinity; a second estimate of kappa_t, kept as evidence."""
        with mpmath.workdps(_EVIDENCE_DPS):
            radial = nr.Radial(form, self.spacetime, self.point, Measured(+r_h.value, +r_h.error), _EVIDENCE_DPS, self.scale)
            s = nr.log_coefficient(radial, 12, 8)
            ray_map = nr.RayMap(radial, s)
            x0 = radial.scale / 100
            by_x, by_u = ray_map.late_time_rates(x0, 8, mpmath.mpf(10) ** -16)
            rates = {x: v for x, v in by_x}
            estimate, _ = richardson_limit(lambda x: rates[x], x0, steps=8, ratio=mpmath.mpf(1) / 2)
            agrees = bool(abs(estimate.value - kappa_t.value) <= 10 * (estimate.error + kappa_t.error) + mpmath.mpf(10) ** -12 * abs(kappa_t.value))
            self.evidence["collapse"] = {"matching": ray_map.matching, "map_order": ray_map.order, "log_coefficient_s": float(s.value),
                                         "t_slice_rate": float(s.value), "kappa_t": float(estimate.value),
                                         "error": float(estimate.error), "agrees_with_pairs": agrees}
            self.provenance.append(f"collapse ray map p(u) (matching by {ray_map.matching}): -d ln(dp/du)/du -> "
                                   f"{mpmath.nstr(estimate.value, 12)} +- {mpmath.nstr(estimate.error, 2)}, "
                                   f"{'agrees' if agrees else 'DISAGREES'} with the ray pairs")
            return {"name": "collapse ray map: late-time rate -d ln(dp/du)/du", "x_label": "retarded time u", "y_label": "rate",
                    "x": [float(u) for u, _ in by_u], "y": [float(v) for _, v in by_u],
                    "fit_x": [float(by_u[0][0]), float(by_u[-1][0])], "fit_y": [float(estimate.value)] * 2,
                    "fit_label": "extrapolated to late u", "log_x": False, "log_y": False}

    def zeroth_law(self, thetas: tuple, measured: list[Measured]) -> None:
        spread = max(abs(m.value - measured[0].value) for m in measured)
        holds = bool(spread <= 10 * max(m.error for m in measured))
        self.evidence["zeroth_law"] = {"theta": [str(t) for t in thetas], "kappa_t": [float(m.value) for m in measured],
                                       "max_difference": float(spread), "holds": holds}
        self.provenance.append(f"rays at theta = {', '.join(map(str, thetas))}: the rate {'is' if holds else 'is NOT'} theta-independent")
