"""The infall-atom route: an atom falling from rest at infinity sees a Planck spectrum.

The route integrates the excitation probability of a two-level atom in radial free
fall (its own geodesic, `_infall_amplitude`), coupled to outgoing modes
exp(-i nu u), fits the temperature T(w) of the Planck factor in nu at several gaps
w, and extrapolates T(w) in 1/w (the fit is low by O(kappa/w), PHYSICS.md).  The
result is the temperature with respect to the time t of the observers at rest at
infinity (E = 1), times the claim's normalisation N.  A route of a completely
different kind from the horizon-geometry ones, so it also covers static horizon
claims on T and, through Tolman's law T_loc = T/sqrt(-g_tt) (for xi = d/dt), T_loc.

Numerics in double precision (numpy): the stated error is the larger of the
extrapolation's change between orders and the change when the y step halves.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import ClassVar, Literal

import mpmath
import numpy
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes._infall_amplitude import fall, fit_temperature, nodes, probability_tables, radial_rates
from crosscheck.routes._infall_arrays import array_function
from crosscheck.routes.base import NumericResult, Problem, SymbolicResult, claim_kind
from crosscheck.spacetimes.horizon import horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor_numeric

GAPS = numpy.array([20.0, 40.0, 80.0, 160.0, 320.0])  # w / kappa_u, kappa_u = lim 1/(du/dy) along the fall
NUS = numpy.linspace(0.2, 1.2, 10)  # nu / kappa_u: the Planck factor falls from 0.28 to 5e-4 of nu/T


class InfallAtomRoute:
    """Excitation of an atom in radial free fall from rest at infinity: Planck fit in nu."""

    name: ClassVar[str] = "infall-atom"
    title: ClassVar[str] = "Atom in radial free fall from rest at infinity: Planck factor of its excitation"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "1"
    observables: ClassVar[frozenset[str]] = frozenset({"T", "T_loc", "spectrum"})
    scope: ClassVar[frozenset[str]] = frozenset({"horizon", "detector"})

    def applies(self, problem: Problem) -> str | None:
        spacetime = problem.spacetime
        if claim_kind(problem) == "detector" and problem.detector.trajectory != "infall":
            return f"computes the infalling atom, not trajectory '{problem.detector.trajectory}'"
        if spacetime is None or spacetime.metric.static is None:
            return "needs a static metric (-F dt^2 + dr^2/G + ...)"
        if spacetime.horizon.expression is None and spacetime.horizon.root is None:
            return "needs a spacetime with a horizon"
        static = spacetime.metric.static
        r = static.r
        if sympy.limit(static.F, r, sympy.oo) != 1:
            return "the fall from rest at infinity needs F -> 1 at infinity (asymptotic flatness)"
        return None

    def symbolic(self, problem: Problem) -> SymbolicResult:
        raise CannotCompute("the excitation probability is integrated numerically")

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        spacetime = problem.spacetime
        static = spacetime.metric.static
        r_h = float(horizon_radius_numeric(spacetime, point, 20).value)
        constants = {s: float(v) for s, v in point.items()}
        F, G = (array_function(e, static.r, constants) for e in (static.F, static.G))
        coarse, fine = _temperatures(F, G, r_h)
        N = normalization_factor_numeric(spacetime, point, 20)
        error = max(fine["error"], abs(fine["T"] - coarse["T"])) + 1e-12 * fine["T"]
        T = Measured(mpmath.mpf(fine["T"]) * N.value, mpmath.mpf(error) * N.value + mpmath.mpf(fine["T"]) * N.error)
        values = {"T": T}
        functions = {"T_loc": _tolman(static.F, static.r, point, T, N)} if "T_loc" in problem.wanted else {}
        spectrum = {"verdict": "bose" if fine["residual"] < 1e-2 else "non-thermal", "spread": fine["spread"],
                    "detail": f"|A|^2 follows nu/(exp(nu/T) - 1) to rms {fine['residual']:.1e} in log at the largest gap"}
        evidence = {"spectrum": spectrum, "series": fine["series"], "r_h": r_h, "kappa_u": fine["kappa_u"]}
        provenance = ("geodesic from rest at infinity: dtau/dr = -sqrt(F/(G(1-F))), du/dr = -(1+sqrt(1-F))/sqrt(FG(1-F))",
                      "amplitude by the trapezoidal rule in xi = w_max tau + y (y = -ln(r/r_h - 1)), erf window in tau, double precision",
                      f"Planck fit in nu at w/kappa_u = {', '.join(f'{g:g}' for g in GAPS)}, extrapolated in 1/w (orders 2 and 3)",
                      f"redshift rate along the fall kappa_u/(2 pi) = {fine['kappa_u'] / (2 * 3.141592653589793):.12g} (cross-check)",
                      "error: max(extrapolation orders, node spacing 0.2 vs 0.1 rad)")
        return NumericResult(values=values, functions=functions, evidence=evidence, provenance=provenance)


def _temperatures(F, G, r_h: float) -> tuple[dict[str, object], dict[str, object]]:
    """`_temperature` at the node spacings 0.2 and 0.1 rad: the fall is integrated once, and
    the 0.2 rad nodes are every other 0.1 rad node (the same xi), so the phases are shared."""
    scale = _redshift_rate(F, G, r_h)
    gaps = GAPS * scale
    path = nodes(fall(F, G, r_h, float(gaps.max()), float(10 / gaps.min())), F, G, r_h, 0.1)
    kappa_u = float((path.y[-1] - path.y[-2]) / (path.u[-1] - path.u[-2]))  # du/dy -> 1/kappa_t
    nus = NUS * kappa_u
    coarse, fine = probability_tables(path, gaps, nus, 2)
    return _temperature(coarse, nus, kappa_u), _temperature(fine, nus, kappa_u)


def _temperature(table: numpy.ndarray, nus: numpy.ndarray, kappa_u: float) -> dict[str, object]:
    """Fitted T at each gap (rows of `table`: |A|^2 against nu) and its extrapolation to
    1/w -> 0 (cubic through the four largest gaps; the quadratic through the three largest
    gives the error)."""
    fits = []
    for p in table:
        guess = float((nus[-1] - nus[-4]) / numpy.log(p[-4] / p[-1]))
        fits.append(fit_temperature(nus, p, guess))
    inverse = 1 / GAPS
    temperatures = numpy.array([t for t, _ in fits])
    order3 = float(numpy.polyval(numpy.polyfit(inverse[1:], temperatures[1:], 3), 0.0))
    order2 = float(numpy.polyval(numpy.polyfit(inverse[2:], temperatures[2:], 2), 0.0))
    series = [{"name": "Planck-fit temperature", "x_label": "kappa_u / gap", "y_label": "T(gap) / kappa_u",
               "x": [float(v) for v in inverse], "y": [float(v) for v in temperatures / kappa_u],
               "fit_x": [0.0], "fit_y": [order3 / kappa_u], "fit_label": "extrapolated to 1/gap -> 0"}]
    return {"T": order3, "error": abs(order3 - order2), "residual": fits[-1][1],
            "spread": float((temperatures.max() - temperatures.min()) / order3), "series": series, "kappa_u": kappa_u,
            "fits": [float(t) for t in temperatures]}


def _redshift_rate(F, G, r_h: float) -> float:
    """1/(du/dy) deep in the fall (y = 30): the frequency scale the gaps are set in."""
    _, du = radial_rates(F, G, r_h, numpy.array([30.0]))
    return float(1 / du[0])


def _tolman(F: sympy.Expr, r: sympy.Symbol, point, T: Measured, N: Measured):
    """T_loc(r) = T/(N sqrt(F(r))): the temperature at infinity blue-shifted to r."""

    def t_loc(radius: object) -> Measured:
        with mpmath.workdps(30):
            value = sympy.N(F.subs(r, sympy.Float(mpmath.nstr(radius, 25), 25)).subs(
                {s: sympy.Float(mpmath.nstr(v, 25), 25) for s, v in point.items()}), 25)
            redshift = mpmath.sqrt(mpmath.mpf(str(value))) * N.value
            return Measured(T.value / redshift, T.error / redshift)

    return t_loc
