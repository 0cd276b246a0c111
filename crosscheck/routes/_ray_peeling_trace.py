"""Tracing pairs of neighbouring outgoing null rays near a horizon (ray-peeling helpers).

A ray leaving the horizon obeys dx/dv = sqrt(F G)/2 in the advanced time
v = t + tau (v is the Killing parameter along the horizon generators, where
d/dt = d/dv; on t = const slices, which all meet at the bifurcation surface, the
separation grows twice as fast).  The separation of two neighbouring rays is
measured in the regular coordinate rho = integral sqrt(F/G) dr, d rho = sqrt(F/G) dx,
in which the metric is smooth on the horizon; it grows as exp(kappa_t v).

The ODE is integrated in y = ln x (dy/dv = sqrt(F G)/(2x), smooth and nearly
constant near the horizon) by the Gragg-Bulirsch-Stoer method: modified midpoint
rule, polynomial extrapolation in h^2, at the working precision.  mpmath.odefun
(Taylor series) was measured on the same Schwarzschild ray: 2.3 s per ray at 33
digits and 29 s at 60, against 2 ms and 9 ms here, so it is not used.
"""

from __future__ import annotations

from collections.abc import Callable

import mpmath

from crosscheck.measure import Measured
from crosscheck.routes._null_rays import Radial, limit_at_zero

MAX_LEVELS = 16  # extrapolation levels of one Bulirsch-Stoer step
# First offsets delta = scale 10^-j tried, j in this order.  Measured (Kerr, SdS at 15 and 30
# digits): from j = 3 the Richardson error is 1e-5 of the ODE error that dominates the
# estimate, with digits/3 offsets instead of digits/3 + 2 from j = 2, and rays launched
# nearer the horizon need fewer Bulirsch-Stoer levels: 25-40 % fewer ODE calls.
_START_EXPONENTS = (3, 4, 5)


def midpoint(phi: Callable, y0: mpmath.mpf, H: mpmath.mpf, n: int) -> mpmath.mpf:
    """Gragg's modified midpoint rule with n substeps (error even in h = H/n)."""
    h = H / n
    previous, current = y0, y0 + h * phi(y0)
    for _ in range(n - 1):
        previous, current = current, previous + 2 * h * phi(current)
    return (current + previous + h * phi(current)) / 2


def bulirsch_stoer(phi: Callable, y0: mpmath.mpf, H: mpmath.mpf, tol: mpmath.mpf, depth: int = 0) -> tuple[mpmath.mpf, mpmath.mpf, int]:
    """y(H) for y' = phi(y), y(0) = y0: (value, error estimate, calls of phi).
    The step is halved recursively when the extrapolation has not converged; when the
    estimate stops improving for three levels, phi's rounding noise has been reached
    (F G loses digits near r_h) and the noise level is returned as the error."""
    rows: list[list[mpmath.mpf]] = []
    calls, errors = 0, []
    for level in range(MAX_LEVELS):
        n = 2 * (level + 1)
        calls += n + 1
        row = [midpoint(phi, y0, H, n)]
        for k in range(1, level + 1):
            factor = (mpmath.mpf(n) / (2 * (level - k + 1))) ** 2 - 1
            row.append(row[k - 1] + (row[k - 1] - rows[-1][k - 1]) / factor)
        rows.append(row)
        if level >= 2:
            error = abs(row[-1] - row[-2])
            errors.append(error)
            if error <= tol * max(1, abs(row[-1])):
                return row[-1], error, calls
            if len(errors) > 3 and min(errors[-3:]) >= errors[-4] / 4:
                return row[-1], max(errors[-3:]), calls
    if depth > 6:
        return rows[-1][-1], abs(rows[-1][-1] - rows[-1][-2]), calls
    half, e1, c1 = bulirsch_stoer(phi, y0, H / 2, tol, depth + 1)
    end, e2, c2 = bulirsch_stoer(phi, half, H / 2, tol, depth + 1)
    return end, e1 + e2, calls + c1 + c2


class PeelingRate:
    """The separation rate of a pair of rays launched at x = delta e^(+-eps), over the time
    V in which x grows by a factor of about `growth`; rate(delta) -> kappa_t as delta -> 0."""

    def __init__(self, radial: Radial, digits: int, growth: mpmath.mpf) -> None:
        self.radial, self.digits, self.log_growth = radial, digits, mpmath.log(growth)
        self.eps = mpmath.mpf(10) ** (-(digits + 6) // 2)  # pair half-separation: error O(eps^2)
        self.tol = mpmath.mpf(10) ** (-radial.dps + 8)
        self.calls, self.ode_error = 0, mpmath.mpf(0)

    def phi(self, y: mpmath.mpf) -> mpmath.mpf:
        x = mpmath.exp(y)
        return mpmath.sqrt(mpmath.re(self.radial.fg(x))) / (2 * x)

    def __call__(self, delta: mpmath.mpf) -> mpmath.mpf:
        radial, eps, y0 = self.radial, self.eps, mpmath.log(delta)
        k0 = self.phi(y0)
        if not k0 > 0:
            raise ValueError(f"horizon: sqrt(F G) is not positive at r_h + {mpmath.nstr(delta, 5)} (no outgoing rays)")
        V = self.log_growth / k0  # x grows by about `growth`; a power law must stay far from its blow-up
        ends = []
        for sign in (1, -1):
            end, error, calls = bulirsch_stoer(self.phi, y0 + sign * eps, V, self.tol)
            ends.append(end)
            self.calls += calls
            self.ode_error = max(self.ode_error, error / eps)
        dy, y_mid = ends[0] - ends[1], (ends[0] + ends[1]) / 2
        growth = mpmath.log(mpmath.sinh(dy / 2) / mpmath.sinh(eps)) + (y_mid - y0)  # separation in x
        metric = mpmath.log(mpmath.re(radial.f_over_g(mpmath.exp(y_mid))) / mpmath.re(radial.f_over_g(delta))) / 2  # x -> rho
        return (growth + metric) / V


def peeling_rate(radial: Radial, digits: int, steps: int, degenerate: bool = False) -> tuple[Measured, list, PeelingRate]:
    """kappa_t from pairs of rays: Richardson extrapolation of rate(delta) to delta = 0.
    Error: the extrapolation's, plus the ODE error amplified by Richardson, plus the
    shift of the offsets by r_h's uncertainty (slope of rate(delta) times that error), plus
    the rounding of the pair's separation.
    A degenerate horizon (rate(delta) ~ delta -> 0) is sampled from one starting offset only."""
    rate = PeelingRate(radial, digits, mpmath.mpf(9) / 8 if degenerate else mpmath.sqrt(2))
    with mpmath.workdps(radial.dps):
        limit, samples = limit_at_zero(rate, radial.scale, digits, steps, (2,) if degenerate else _START_EXPONENTS)
        amplification = mpmath.fprod((2**p + 1) / mpmath.mpf(2**p - 1) for p in range(1, steps))
        slope = abs(mpmath.mpf(samples[0][1]) - limit.value) / mpmath.mpf(samples[0][0])
        # the pair's separation is a difference of two ends ~ ln(delta): it keeps dps - log10(1/eps)
        # digits, rounding noise that an exactly constant rate (Rindler) shows in no other term
        rounding = amplification * mpmath.mpf(10) ** (3 - radial.dps) / rate.eps * abs(limit.value)
        error = limit.error + amplification * rate.ode_error + slope * radial.r_h.error + rounding
        return Measured(limit.value, error), samples, rate
