"""The infall-atom route: an atom falling from rest at infinity sees a Planck spectrum.

The route integrates the excitation probability of a two-level atom in radial free
fall (its own geodesic, `_infall_amplitude`), coupled to outgoing modes
exp(-i nu u), fits the temperature T(w) of the Planck factor in nu at several gaps
w, and extrapolates T(w) in 1/w (the fit is low by O(kappa/w), PHYSICS.md).  The
result is the temperature with respect to the time t of the observers at rest at
infinity (E = 1), times the claim's normalisation N.  A route of a completely
different kind from the horizon-geometry ones, so it also covers static horizon
claims on T and, through Tolman's law T_loc = T/sqrt(-g_tt) (for xi = d/dt), T_loc.

Numerics in double precision (numpy; F and G near the horizon from their Taylor series,
`_infall_arrays.OffsetFunction`): the stated error is the largest of the extrapolation's
change between orders, its change when the window of gaps shifts, and the change when the
phase step halves.  Near extremality the gaps are widened so that the fit sees the thermal
(linear) regime (`_gap_stretch`); a degenerate horizon (kappa = 0) is declined.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import ClassVar, Literal

import mpmath
import numpy
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes._infall_amplitude import DECAY, fall, fit_temperature, nodes, probability_tables, radial_rates
from crosscheck.routes._infall_arrays import (
    OffsetFunction,
    leading_extent,
    leading_order,
    offset_function,
    switch_mismatch,
)
from crosscheck.routes.base import NumericResult, Problem, SymbolicResult, claim_kind
from crosscheck.spacetimes.horizon import horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor_numeric

GAPS = numpy.array([20.0, 40.0, 80.0, 160.0, 320.0])  # w / kappa_u, kappa_u = lim 1/(du/dy) along the fall
NOISE_FLOOR = 1e-8  # relative: double-precision phases of up to ~1e6 rad, the fit (measured ~3e-9, isotropic Schwarzschild)
NODES_MAX = 5e6  # ~3 s of CPU and ~0.3 GB; reached near q = 0.99999 for Reissner-Nordstrom (~ 1/eps nodes)
NUS = numpy.linspace(0.2, 1.2, 10)  # nu / kappa_u: the Planck factor falls from 0.28 to 5e-4 of nu/T


class InfallAtomRoute:
    """Excitation of an atom in radial free fall from rest at infinity: Planck fit in nu."""

    name: ClassVar[str] = "infall-atom"
    title: ClassVar[str] = "Atom in radial free fall from rest at infinity: Planck factor of its excitation"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "2"
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
        return _degenerate(static, spacetime.horizon.expression)

    def symbolic(self, problem: Problem) -> SymbolicResult:
        raise CannotCompute("the excitation probability is integrated numerically")

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        spacetime = problem.spacetime
        static = spacetime.metric.static
        r_h_exact = horizon_radius_numeric(spacetime, point, 20).value
        r_h = float(r_h_exact)
        F, G = (offset_function(e, static.r, point, r_h_exact) for e in (static.F, static.G))
        stretch, note = _gap_stretch(F, G, r_h)
        coarse, fine = _temperatures(F, G, r_h, stretch, note)
        N = normalization_factor_numeric(spacetime, point, 20)
        precision = max(10 * switch_mismatch(F), 10 * switch_mismatch(G), NOISE_FLOOR)  # F, G near r_h set kappa
        error = max(fine["error"], abs(fine["T"] - coarse["T"])) + precision * fine["T"]
        T = Measured(mpmath.mpf(fine["T"]) * N.value, mpmath.mpf(error) * N.value + mpmath.mpf(fine["T"]) * N.error)
        values = {"T": T}
        functions = {"T_loc": _tolman(static.F, static.r, point, T, N)} if "T_loc" in problem.wanted else {}
        spectrum = {"verdict": "bose" if fine["residual"] < 1e-2 else "non-thermal", "spread": fine["spread"],
                    "detail": f"|A|^2 follows nu/(exp(nu/T) - 1) to rms {fine['residual']:.1e} in log at the largest gap"}
        evidence = {"spectrum": spectrum, "series": fine["series"], "r_h": r_h, "kappa_u": fine["kappa_u"]}
        provenance = ("geodesic from rest at infinity: dtau/dr = -sqrt(F/(G(1-F))), du/dr = -(1+sqrt(1-F))/sqrt(FG(1-F))",
                      "amplitude by the trapezoidal rule in xi = w_max tau + y (y = -ln(r/r_h - 1)), erf window in tau, double precision",
                      f"Planck fit in nu at w/kappa_u = {', '.join(f'{g * stretch:.4g}' for g in GAPS)}, extrapolated in 1/w (orders 2 and 3)",
                      f"redshift rate along the fall kappa_u/(2 pi) = {fine['kappa_u'] / (2 * 3.141592653589793):.12g} (cross-check)",
                      "error: max(extrapolation orders, gap window shifted by one, node spacing 0.2 vs 0.1 rad) + max(10 x the precision of F, G at the Taylor switch, 1e-8) relative")
        return NumericResult(values=values, functions=functions, evidence=evidence, provenance=provenance)


def _degenerate(static, horizon: sympy.Expr | None) -> str | None:
    """The reason to decline when the horizon is degenerate identically (extremal, e.g. Q = M):
    kappa^2 = F'^2 G/(4 F) at r_h vanishes when F'(r_h) = 0 and G(r_h) = 0 (F = G = (1 - M/r)^2),
    so there is no Planck factor for the fit (T = 0 is what the geometric routes give; this
    route can only fit a non-zero temperature).  A double root of F alone is no degeneracy:
    isotropic Schwarzschild has F ~ (r - r_h)^2 and G(r_h) > 0.  Points that are merely close
    to extremal are handled (or declined) numerically in `_gap_stretch` / `_temperatures`."""
    if horizon is None:
        return None
    r = static.r
    if sympy.simplify(sympy.diff(static.F, r).subs(r, horizon)) == 0 and sympy.simplify(static.G.subs(r, horizon)) == 0:
        return ("degenerate (extremal) horizon: F'(r_h) = 0 = G(r_h), so kappa = 0 and there is no thermal flux "
                "for the Planck fit to measure")
    return None


SCHWARZSCHILD_WINDOW = (2**1.5 - 1) / 3  # kappa * proper time of the fall from r = 2 r_h to r_h, Schwarzschild


def _gap_stretch(F: OffsetFunction, G: OffsetFunction, r_h: float) -> tuple[float, str]:
    """Factor >= 1 on the gaps, so that the fit sees the horizon's thermal regime, and a note.

    The Planck factor comes from the part of the fall where F and G follow their leading
    terms at r_h (x = r/r_h - 1 < x_lin = `leading_extent`), i.e. u ~ y/kappa exactly; at gap w
    the atom resolves proper times ~ 1/w before the crossing, so w must exceed 1/dtau_lin, the
    proper time spent there.  In units of kappa: need = W/(kappa dtau_lin), W its Schwarzschild
    value (so need = 1 where GAPS were tuned), but ~ 1.2/eps^2 near extremality (Reissner-
    Nordstrom: x_lin ~ eps = (r_+ - r_-)/r_+, kappa ~ eps/(2 r_h)), where the fixed GAPS fell
    short and the extrapolation in 1/w missed T by 7% against a stated 0.4%.  The stretch
    2 need - 1 (1 for Schwarzschild) puts the smallest gap's fit within ~2% of T near
    extremality as for Schwarzschild (measured at q = 0.99, 0.999).  Declines for a
    degenerate horizon (kappa = 0: no thermal flux for the fit to measure)."""
    orders = (leading_order((0.0,) + F.coefficients[1:]), leading_order(G.coefficients))  # F(r_h) = 0
    if sum(orders) < 2:
        raise CannotCompute(f"not a regular horizon: F vanishes to order {orders[0]} and G to order {orders[1]} at r_h "
                            "(kappa^2 = F'^2 G/(4F) diverges there)")
    if sum(orders) > 2:  # kappa^2 = F'^2 G/(4F) ~ x^(n_F + n_G - 2): zero unless n_F + n_G = 2
        raise CannotCompute(f"degenerate horizon: F vanishes to order {orders[0]} and G to order {orders[1]} at r_h "
                            f"(r_h F'(r_h) = {F.coefficients[1]:.3g}, G(r_h) = {G.coefficients[0]:.3g}), so kappa = 0 "
                            "(extremal): there is no thermal flux for the Planck fit to measure")
    x_lin = min(leading_extent((0.0,) + F.coefficients[1:]), leading_extent(G.coefficients))
    kappa = _redshift_rate(F, G, r_h)
    y = numpy.linspace(-numpy.log(x_lin), DECAY, 4001)
    dtau, _ = radial_rates(F, G, r_h, y)
    window = float(numpy.sum((dtau[1:] + dtau[:-1]) / 2 * numpy.diff(y)))  # proper time with x < x_lin
    need = SCHWARZSCHILD_WINDOW / (kappa * window)
    note = f"kappa r_h = {kappa * r_h:.3g}, leading-order regime x = r/r_h - 1 < {x_lin:.3g}, kappa tau_lin = {kappa * window:.3g}"
    return max(1.0, 2 * need - 1), note


def _temperatures(F, G, r_h: float, stretch: float = 1.0, note: str = "") -> tuple[dict[str, object], dict[str, object]]:
    """`_temperature` at the node spacings 0.2 and 0.1 rad: the fall is integrated once, and
    the 0.2 rad nodes are every other 0.1 rad node (the same xi), so the phases are shared.
    Declines when the quadrature would need more than NODES_MAX nodes (near extremality)."""
    scale = _redshift_rate(F, G, r_h)
    gaps = GAPS * scale * stretch
    path = fall(F, G, r_h, float(gaps.max()), float(10 / gaps.min()))
    count = (path.xi[1] - path.xi[0]) / 0.1
    if count > NODES_MAX:
        raise CannotCompute(f"near-extremal: the thermal window is narrower than the fit can resolve ({note}): "
                            f"the gaps must be {stretch:.3g} times the usual ones and the quadrature would need "
                            f"{count:.2g} nodes (limit {NODES_MAX:.0e})")
    path = nodes(path, F, G, r_h, 0.1)
    kappa_u = float((path.y[-1] - path.y[-2]) / (path.u[-1] - path.u[-2]))  # du/dy -> 1/kappa_t
    nus = NUS * kappa_u
    coarse, fine = probability_tables(path, gaps, nus, 2)
    return _temperature(coarse, nus, kappa_u), _temperature(fine, nus, kappa_u)


def _temperature(table: numpy.ndarray, nus: numpy.ndarray, kappa_u: float) -> dict[str, object]:
    """Fitted T at each gap (rows of `table`: |A|^2 against nu) and its extrapolation to
    1/w -> 0 (cubic through the four largest gaps).  Error: the larger change when the order
    drops (quadratic through the three largest) or the window of gaps shifts down by one
    (cubic through the four smallest).  The order change alone was no bound between
    q = 0.93 and 0.98 (Reissner-Nordstrom), where T(w) - T is not yet a clean series in
    1/w: true error up to 6x the order change; the window shift exceeded the true error by
    >= 4.7x at every q measured from 0 to 0.9999."""
    fits = []
    for p in table:
        guess = float((nus[-1] - nus[-4]) / numpy.log(p[-4] / p[-1]))
        fits.append(fit_temperature(nus, p, guess))
    inverse = 1 / GAPS
    temperatures = numpy.array([t for t, _ in fits])
    order3 = float(numpy.polyval(numpy.polyfit(inverse[1:], temperatures[1:], 3), 0.0))
    order2 = float(numpy.polyval(numpy.polyfit(inverse[2:], temperatures[2:], 2), 0.0))
    shifted = float(numpy.polyval(numpy.polyfit(inverse[:4], temperatures[:4], 3), 0.0))
    series = [{"name": "Planck-fit temperature", "x_label": "kappa_u / gap", "y_label": "T(gap) / kappa_u",
               "x": [float(v) for v in inverse], "y": [float(v) for v in temperatures / kappa_u],
               "fit_x": [0.0], "fit_y": [order3 / kappa_u], "fit_label": "extrapolated to 1/gap -> 0"}]
    return {"T": order3, "error": max(abs(order3 - order2), abs(order3 - shifted)), "residual": fits[-1][1],
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
