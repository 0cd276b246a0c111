"""The dimensional-estimate route: barrier penetration gives T ~ 1/r_h.

A quantum of energy E leaving a hole must tunnel through a region whose
only length is the horizon size L; the transmission is ~ exp(-L E)
(momentum p = E in geometric units).  Reading that as a Boltzmann factor
exp(-E/T) gives T ~ 1/L, in any dimension (PHYSICS.md,
"dimensional-estimate").  The Killing normalisation N rescales the clock,
so the estimate is N/L.  L is the horizon radius r_h, measured as the areal
radius R(r_h) when the metric has round spheres: that is the same in every
radial coordinate (isotropic Schwarzschild has r_h = M/2 but R(r_h) = 2M),
and equal to r_h when R = r.

The estimate is right only up to an O(1) factor -- for the uncharged static
hole the exact answer is 1/(4 pi) times it -- so the route's grade is
`estimate`: the runner lets it vote only on `agreement: scaling` claims and,
for exact claims, reports the factor claim/route through the diagnosis.
Nothing here uses a surface gravity: only the horizon radius and N.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes.base import NumericResult, Problem, Step, SymbolicResult
from crosscheck.spacetimes.evaluation import real_function
from crosscheck.spacetimes.horizon import horizon_radius, horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor, normalization_factor_numeric

#: Energies E r_h of the evidence's transmission curve (plot data only).
_ENERGIES = tuple(k / 4 for k in range(1, 13))


def _fraction_of(bounds, f) -> sympy.Expr:
    if bounds is None:
        return sympy.Integer(1)
    lo, hi = (sympy.Rational(b) for b in bounds)
    return lo + f * (hi - lo)


def representative(problem: Problem) -> dict[sympy.Symbol, sympy.Expr]:
    """Midpoints of the parameter ranges (1 for a parameter without a range): the point
    at which closed-form horizon and normalisation roots are chosen."""
    return {p: _fraction_of(problem.ranges.get(p), sympy.Rational(1, 2)) for p in problem.parameters}


class DimensionalEstimateRoute:
    """T ~ N/R(r_h) from barrier penetration; right up to an O(1) factor."""

    name: ClassVar[str] = "dimensional-estimate"
    title: ClassVar[str] = "Barrier-penetration estimate T ~ 1/r_h, r_h as areal radius (up to an O(1) factor)"
    grade: ClassVar[Literal["exact", "estimate"]] = "estimate"
    version: ClassVar[str] = "1"
    observables: ClassVar[frozenset[str]] = frozenset({"T"})

    def applies(self, problem: Problem) -> str | None:
        spacetime = problem.spacetime
        if spacetime is None:
            return "needs a spacetime with a horizon"
        spec = spacetime.horizon
        if spec.expression is None and spec.root is None:
            return "needs a spacetime with a horizon"
        if spec.expression is not None and spec.expression.is_zero:
            return "the horizon sits at r = 0 (an acceleration horizon): r_h sets no length scale"
        missing = problem.wanted - self.observables
        return f"does not compute {', '.join(sorted(missing))}" if missing else None

    def symbolic(self, problem: Problem) -> SymbolicResult:
        spacetime = problem.spacetime
        rep = representative(problem)
        r_h = horizon_radius(spacetime, rep)
        N = normalization_factor(spacetime, rep)
        L = _areal(spacetime, r_h)
        T = N / L
        steps = (
            Step("horizon r_h", sympy.Eq(sympy.Symbol("r_h"), r_h, evaluate=False)),
            Step("horizon scale L = R(r_h), the areal radius", sympy.Eq(sympy.Symbol("L"), L, evaluate=False)),
            Step("transmission ~ exp(-L E) = exp(-E/T)  =>  T_t ~ 1/L", sympy.Eq(sympy.Symbol("T_t"), 1 / L, evaluate=False)),
            Step("normalised clock xi = N d/dt: T = N T_t", sympy.Eq(sympy.Symbol("T"), T, evaluate=False)),
        )
        provenance = (
            "barrier-penetration estimate: T ~ N/L, L = R(r_h) (O(1) factor unknown by construction)",
            f"r_h = {r_h}, L = {L}; normalisation '{spacetime.normalization.kind}': N = {N}",
        )
        return SymbolicResult(values={"T": T}, steps=steps, provenance=provenance)

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        spacetime = problem.spacetime
        with mpmath.workdps(digits + 10):
            try:
                r_h = horizon_radius_numeric(spacetime, point, digits + 5)
                N = normalization_factor_numeric(spacetime, point, digits + 5)
            except ValueError as exc:
                raise CannotCompute(str(exc)) from exc
            L = _areal_numeric(spacetime, point, r_h, digits)
            if not L.value > 0:
                raise CannotCompute("the horizon size is not positive: no length scale for the estimate")
            T = N.value / L.value
            error = abs(T) * (N.error / abs(N.value) + L.error / L.value)
            evidence = {
                "r_h": float(r_h.value),
                "L": float(L.value),
                "N": float(N.value),
                "series": [_transmission_series(L.value, N.value)],
            }
            provenance = (
                "barrier-penetration estimate: T ~ N/L, L = R(r_h) (O(1) factor unknown by construction)",
                "r_h from the horizon root finder, N from the normalisation; errors propagated from both",
            )
            return NumericResult(values={"T": Measured(T, error)}, evidence=evidence, provenance=provenance)


def _areal(spacetime, r_h: sympy.Expr) -> sympy.Expr:
    """R(r_h) for round spheres, else r_h itself (rotating metrics, flat transverse space)."""
    static = spacetime.metric.static
    if static is None or static.R is None:
        return r_h
    return static.R.subs(static.r, r_h)


def _areal_numeric(spacetime, point, r_h: Measured, digits: int) -> Measured:
    """R(r_h) with r_h's error carried through (r_h itself without round spheres)."""
    static = spacetime.metric.static
    if static is None or static.R is None:
        return r_h
    R = real_function(static.R, static.r, point, digits + 10)
    value = R(r_h.value)
    shift = abs(R(r_h.value + r_h.error) - value) if r_h.error else mpmath.mpf(0)
    return Measured(value, shift + mpmath.mpf(10) ** (-digits - 5) * abs(value))


def _transmission_series(L: mpmath.mpf, N: mpmath.mpf) -> dict[str, object]:
    """ln(transmission) = -E L against E (energy in units of the normalised clock): its
    slope -1/T is what the estimate reads as a temperature."""
    energies = [float(e / L) for e in _ENERGIES]
    logs = [float(-e * L / N) for e in (mpmath.mpf(x) for x in energies)]
    return {
        "name": "barrier penetration",
        "x_label": "E",
        "y_label": "ln transmission",
        "x": energies,
        "y": logs,
        "fit_x": [energies[0], energies[-1]],
        "fit_y": [logs[0], logs[-1]],
        "fit_label": f"slope -1/T, T = {float(N / L):.6g}",
    }
