"""The infalling atom's excitation probability, integrated along its own geodesic.

Radial free fall from rest at infinity (`trajectories.infall_rates`), coupled to
an outgoing mode exp(-i nu u), u = t - r*: amplitude A(w, nu) = integral dtau
window * exp(i w tau + i nu u(tau)) (PHYSICS.md, "detector-response", curved
spacetime).  The integration variable is y = -ln(r/r_h - 1): near the horizon
u grows like y/kappa while dtau/dy ~ e^-y, so the integrand decays exponentially;
the coupling is switched on smoothly (C-infinity step in y), so the trapezoidal
rule on a uniform y grid converges faster than any power.  tau(y) and u(y) are
cumulative Simpson integrals of dtau/dy and du/dy on the same grid, done once
per parameter point (`fall`); the quadrature nodes of both phase steps the route
compares are read off it, and the phases for all (gap, nu) pairs are computed
once (`probability_tables`).

|A|^2 carries the Planck factor nu/(exp(nu/T) - 1) in nu for w >> kappa; T is
fitted from the nu-dependence at several gaps w and extrapolated in 1/w
(the fitted T is low by O(kappa/w), PHYSICS.md).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy
from scipy.interpolate import CubicSpline
from scipy.optimize import minimize_scalar
from scipy.special import erf

from crosscheck.trajectories import infall_rates_arrays

FINE = 0.0005  # step in y of the auxiliary grid on which tau(y), u(y) are integrated
DECAY = 32.0  # the grid ends where e^-y is ~1e-14: the integrand has decayed


@dataclass(frozen=True)
class Geodesic:
    """tau, u and the quadrature weight window * dtau/dxi * step on nodes uniform in
    xi = w_max tau + y (a smooth monotone variable: the fastest phase advances about
    the phase step per node both far out, where w tau dominates, and near the horizon,
    where u ~ y/kappa does)."""

    y: numpy.ndarray
    tau: numpy.ndarray
    u: numpy.ndarray
    weight: numpy.ndarray


def radial_rates(F: Callable, G: Callable, r_h: float, y: numpy.ndarray) -> tuple[numpy.ndarray, numpy.ndarray]:
    """dtau/dy and du/dy along the fall (both > 0 as y grows toward the horizon).

    F and G are functions of x = r/r_h - 1 = e^-y (`_infall_arrays.OffsetFunction`), so that
    no digits are lost forming r - r_h near the horizon."""
    x = numpy.exp(-y)
    dtau_dr, du_dr = infall_rates_arrays(F(x), G(x))
    return -dtau_dr * r_h * x, -du_dr * r_h * x  # dr/dy = -r_h e^-y


def _cumulative_simpson(values: numpy.ndarray, h: float) -> numpy.ndarray:
    """Running integral on a uniform grid (Simpson on pairs; odd nodes by a 3-point half step)."""
    out = numpy.zeros_like(values)
    out[2::2] = numpy.cumsum(h / 3 * (values[0:-2:2] + 4 * values[1:-1:2] + values[2::2]))
    out[1:-1:2] = out[0:-2:2] + h / 12 * (5 * values[0:-2:2] + 8 * values[1:-1:2] - values[2::2])
    if len(values) % 2 == 0:
        out[-1] = out[-2] + h / 12 * (5 * values[-1] + 8 * values[-2] - values[-3])
    return out


@dataclass(frozen=True)
class Fall:
    """The fall integrated once on the fine y grid and splined in xi = top tau + y; the nodes
    of every phase step are read off these splines (`nodes`), so the two steps the route
    compares share the integration."""

    xi: tuple[float, float]
    splines: CubicSpline  # (tau, u, y) as functions of xi
    centre: float
    width: float
    top: float


def fall(F: Callable, G: Callable, r_h: float, top: float, width: float) -> Fall:
    """The fall from rest at infinity, with the coupling switched on by an error-function
    window in proper time, centred where r = 4 r_h, of width `width`: its spectral
    leakage at gap w is ~ exp(-(w width)^2/4), negligible for w width >= 10."""
    start = -2.0
    while True:  # extend outwards until the window has fallen to 1e-16 at the start
        y = numpy.arange(start, DECAY, FINE)
        dtau, du = radial_rates(F, G, r_h, y)
        tau, u = _cumulative_simpson(dtau, FINE), _cumulative_simpson(du, FINE)
        centre = numpy.interp(-numpy.log(3.0), y, tau)
        if centre - tau[0] > 6 * width or start < -12:
            break
        start -= 1.0
    xi = top * tau + y
    return Fall((float(xi[0]), float(xi[-1])), CubicSpline(xi, numpy.stack([tau, u, y], axis=1)), float(centre),
                width, top)


def nodes(path: Fall, F: Callable, G: Callable, r_h: float, phase_step: float) -> Geodesic:
    """Nodes uniform in xi with spacing `phase_step` and their quadrature weights."""
    xi = numpy.arange(path.xi[0], path.xi[1], phase_step)
    tau, u, y = path.splines(xi).T
    dtau_n, _ = radial_rates(F, G, r_h, y)
    window = 0.5 * (1 + erf((tau - path.centre) / path.width))
    dtau_dxi = dtau_n / (path.top * dtau_n + 1)
    return Geodesic(y, tau, u, window * dtau_dxi * phase_step)


def _every(count: int, factor: int) -> slice:
    """Every `factor`-th of `count` nodes: those of phase step factor * step (arange places
    them at the same xi)."""
    return slice(0, factor * (-(-count // factor)) - factor + 1, factor)


def _phases(frequencies: numpy.ndarray, times: numpy.ndarray) -> numpy.ndarray:
    """exp(i f t), one row per frequency.  Equally spaced frequencies (the nu grid) and
    doublings (the gaps) are built by products of rows instead of new exponentials (a few
    times faster; the rounding is that of the phases themselves, ~1e-16 of f t)."""
    rows = numpy.empty((len(frequencies), len(times)), dtype=complex)
    rows[0] = numpy.exp(1j * frequencies[0] * times)
    ratios = frequencies[1:] / frequencies[:-1]
    differences = numpy.diff(frequencies)
    if len(frequencies) > 1 and numpy.allclose(ratios, 2.0, rtol=1e-14, atol=0):
        for k in range(1, len(frequencies)):
            rows[k] = rows[k - 1] * rows[k - 1]
    elif len(frequencies) > 2 and numpy.allclose(differences, differences[0], rtol=1e-12, atol=0):
        step = numpy.exp(1j * differences.mean() * times)
        for k in range(1, len(frequencies)):
            rows[k] = rows[k - 1] * step
    else:
        rows[1:] = numpy.exp(1j * numpy.outer(frequencies[1:], times))
    return rows


CHUNK = 1 << 17  # nodes per block of phases (a multiple of every factor used): bounds the memory


def probability_tables(path: Geodesic, gaps: numpy.ndarray, nus: numpy.ndarray,
                       factor: int) -> tuple[numpy.ndarray, numpy.ndarray]:
    """|A(gap, nu)|^2 (one row per gap) on every `factor`-th node (weights times `factor`: the
    trapezoid sum at the coarser phase step) and on all nodes.  The phases exp(i nu u) and
    exp(i gap tau) are computed once for all pairs, and each set of trapezoid sums (the
    integrand vanishes at both ends) is one matrix product per block of CHUNK nodes (near
    extremality the fall needs millions of nodes: blocks keep the phase arrays small)."""
    coarse = numpy.zeros((len(gaps), len(nus)), dtype=complex)
    fine = numpy.zeros_like(coarse)
    for start in range(0, len(path.u), CHUNK):
        block = slice(start, start + CHUNK)
        by_nu = _phases(nus, path.u[block])
        by_gap = _phases(gaps, path.tau[block]) * path.weight[block][None, :]
        keep = _every(by_nu.shape[1], factor)  # block starts are multiples of factor
        coarse += (by_gap[:, keep] * factor) @ by_nu[:, keep].T
        fine += by_gap @ by_nu.T
    return numpy.abs(coarse) ** 2, numpy.abs(fine) ** 2


def fit_temperature(nus: numpy.ndarray, p: numpy.ndarray, guess: float) -> tuple[float, float]:
    """T of P(nu) = c nu/(exp(nu/T) - 1), least squares in log P; returns (T, rms residual)."""

    def residual(T: float) -> tuple[float, numpy.ndarray]:
        model = numpy.log(nus) - numpy.log(numpy.expm1(nus / T))
        offset = numpy.mean(numpy.log(p) - model)
        misfit = numpy.log(p) - model - offset
        return float(numpy.sum(misfit**2)), misfit

    best = minimize_scalar(lambda T: residual(T)[0], bounds=(0.3 * guess, 3 * guess), method="bounded",
                           options={"xatol": 1e-13 * guess})
    T = float(best.x)
    return T, float(numpy.sqrt(numpy.mean(residual(T)[1] ** 2)))
