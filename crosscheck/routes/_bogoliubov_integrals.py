"""Bogoliubov coefficients of a traced late-time ray map, by contour rotation (private helpers).

alpha, beta_(omega omega') = (1/2 pi) sqrt(omega'/omega) integral du exp(-i omega u +- i omega' p(u)).
In the ray map's parameter x (`_null_rays.RayMap`: u = -2 tau(x), p = -2 b(x)) and after
one integration by parts (d/dx exp(2 i omega tau) = 2 i omega tau' exp(2 i omega tau); the
boundary terms vanish with the usual adiabatic switching x^(i nu) -> x^(i nu + 0)):

    alpha, beta ~ +-(2 omega'/omega) J_(+-),   J_(+-) = integral_0^inf b'(x) e^(2 i omega tau(x)) e^(-+ 2 i omega' b(x)) dx.

With b ~ b_m x^m the rotation x = e^(i theta) t, theta = -+ pi/(2m), turns the oscillation
into decay exp(-2 omega' b_m t^m); the map is continued to complex x (`ContinuedRay`),
where the logarithm of tau picks up i theta/s: the thermal factor.  For a map that is
exactly exponential the ratio |alpha/beta|^2 is exp(2 pi omega/kappa) at every omega';
for a traced map it is so as omega' -> infinity (late times).  omega' is tied to the
window scale h by 2 omega' b_m h^m = D (D = digits ln 10: the integrand has decayed
below the working precision at t = h), and L(omega) = ln|alpha/beta|^2 is extrapolated
to h = 0 (Richardson: the corrections are powers of h, the map's Taylor series).
"""

from __future__ import annotations

from dataclasses import dataclass

import mpmath

from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit
from crosscheck.routes._null_rays import ContinuedRay, RayMap


@dataclass(frozen=True)
class LogRatio:
    """L(omega) = ln|alpha/beta|^2 extrapolated to late times, with the samples L(h)."""

    omega: mpmath.mpf
    value: Measured
    samples: list[tuple[float, float]]


class LateTimeCoefficients:
    """J_(+-)(omega, h) along the two rotated rays of one traced map (built once per point)."""

    def __init__(self, ray_map: RayMap, window: mpmath.mpf, omega_unit: mpmath.mpf, digits: int, dps: int,
                 multiples: tuple[int, ...] = (1, 2, 3)) -> None:
        """`window`: the largest late-time window h; frequencies are `multiples` of `omega_unit`
        (all summed in one pass over the nodes)."""
        self.map, self.window, self.dps, self.omega_unit = ray_map, window, dps, omega_unit
        self.multiples = tuple(sorted(multiples))
        m = ray_map.order
        x0 = window / 1000
        self.b_m = abs(ray_map.db(x0)) / (m * x0 ** (m - 1))  # leading coefficient of b: sets omega' only
        self.decay = dps * mpmath.log(10)
        self.rays = {sign: ContinuedRay(ray_map, -sign * mpmath.pi / (2 * m), window, mpmath.mpf(10) ** (-digits - 6)) for sign in (1, -1)}
        self.converged = all(ray.converged for ray in self.rays.values())
        self.quad_error = mpmath.mpf(0)
        self.places = digits + 4  # relative accuracy wanted of each J
        self.cache: dict = {}
        self.map_cache: dict = {}
        self.decays: dict = {}
        self.sums: dict = {}
        self.evaluations = 0
        width = 0.8 * mpmath.pi / (2 * m)  # strip of analyticity used (the rotation leaves pi/(2m))
        self.per_octave = int(mpmath.ceil(mpmath.log(2) * self.places * mpmath.log(10) / (2 * mpmath.pi * width)))
        self.step = mpmath.log(2) / self.per_octave
        self.log_window = mpmath.log(window)

    def omega_prime(self, h: mpmath.mpf) -> mpmath.mpf:
        return self.decay / (2 * self.b_m * h**self.map.order)

    def decay_factor(self, sign: int, j: int, level: int) -> mpmath.mpc:
        """exp(-+ 2 i omega'(h) b) at node j for the window h = window 2^-level.  omega' grows
        by exactly 2^m per level, so the factor is the previous level's raised to 2^m
        (m squarings instead of a complex exponential; the relative rounding error grows
        2^m-fold per level, at most 16-fold, far inside the guard digits)."""
        key = (sign, j, level)
        if key not in self.decays:
            if level == 0:
                _, _, b, _ = self.map_at(sign, j)
                value = mpmath.exp(-sign * 2j * self.omega_prime(self.window) * b)
            else:
                value = self.decay_factor(sign, j, level - 1)
                for _ in range(self.map.order):
                    value = value * value
            self.decays[key] = value
        return self.decays[key]

    def nodes(self, sign: int, h: mpmath.mpf) -> list[tuple[mpmath.mpc, mpmath.mpc]]:
        """Trapezoidal nodes in z = ln t for J on the rotated ray, as (weight, exp(2 i omega_unit tau)):
        the integrand t f(t) is analytic in the strip |Im z| < pi/(2m) and decays at both ends
        (like t^m as t -> 0, like exp(-D (t/h)^m) beyond h), so the rule converges
        geometrically, error ~ exp(-2 pi d/step).  The step divides ln 2, so the windows
        h = window 2^-l share their nodes and the map is evaluated once per node; each omega
        then only raises the cached phase to a power."""
        key = (sign, h)
        if key not in self.cache:
            m, level = self.map.order, int(mpmath.nint(mpmath.log(self.window / h, 2)))
            if abs(h * 2**level / self.window - 1) > mpmath.mpf(10) ** (5 - self.dps):
                raise ValueError(f"late-time window {mpmath.nstr(h, 5)} is not window 2^-k")
            shift = level * self.per_octave
            count = int(mpmath.ceil((self.places + 2) * mpmath.log(10) / m / self.step))
            rows = []
            for j in range(shift, shift + count + 1):
                t, weight, b, phase = self.map_at(sign, j)
                rows.append((weight * self.decay_factor(sign, j, level), phase))
            self.cache[key] = rows
        return self.cache[key]

    def map_at(self, sign: int, j: int) -> tuple:
        """(t, step t e^(i theta) b'(x), b(x), exp(2 i omega_unit tau(x))) at node j, t = window e^(-j step)."""
        key = (sign, j)
        if key not in self.map_cache:
            ray = self.rays[sign]
            t = self.window * mpmath.exp(-j * self.step)
            tau = ray.tau(t, self.log_window - j * self.step)
            self.map_cache[key] = (t, self.step * t * ray.phase * ray.db(t), ray.b(t), mpmath.expj(2 * self.omega_unit * tau))
            self.evaluations += 1
        return self.map_cache[key]

    def J(self, sign: int, multiple: int, h: mpmath.mpf) -> mpmath.mpc:
        """J_+ (sign +1, alpha) or J_- (sign -1, beta) at omega = multiple * omega_unit
        (exp(2 i omega tau) as a power of the cached exp(2 i omega_unit tau)); the error is
        estimated from the rule with twice the step (geometric convergence: error ~ that
        change squared)."""
        if (sign, h, multiple) not in self.sums:
            self._sum_all(sign, h, sorted(set(self.multiples) | {multiple}))
        value, coarse = self.sums[sign, h, multiple]
        change = abs(coarse - value) / abs(value)
        self.quad_error = max(self.quad_error, change**2 + mpmath.mpf(10) ** (-self.places - 2))
        return value

    def _sum_all(self, sign: int, h: mpmath.mpf, multiples: list[int]) -> None:
        """The trapezoidal sums (step and twice the step) of J for all multiples in one pass:
        the phase powers by successive multiplication."""
        top = multiples[-1]
        fine, coarse = [mpmath.mpc(0)] * (top + 1), [mpmath.mpc(0)] * (top + 1)
        for index, (weight, phase) in enumerate(self.nodes(sign, h)):
            term, even = weight, index % 2 == 0
            for k in range(1, top + 1):
                term = term * phase
                fine[k] += term
                if even:
                    coarse[k] += term
        for k in multiples:
            self.sums[sign, h, k] = fine[k], 2 * coarse[k]

    def log_ratio_at(self, multiple: int, h: mpmath.mpf) -> mpmath.mpf:
        return 2 * (mpmath.log(abs(self.J(1, multiple, h))) - mpmath.log(abs(self.J(-1, multiple, h))))

    def log_ratio(self, multiple: int, levels: int) -> LogRatio:
        """L(omega) at omega = multiple * omega_unit, extrapolated over windows h = window 2^-k, k < levels."""
        measured, samples = richardson_limit(lambda h: self.log_ratio_at(multiple, h), self.window, steps=levels, ratio=mpmath.mpf(1) / 2)
        amplification = mpmath.fprod((2**p + 1) / mpmath.mpf(2**p - 1) for p in range(1, levels))
        error = measured.error + 4 * amplification * self.quad_error + mpmath.mpf(10) ** (10 - self.dps)
        return LogRatio(multiple * self.omega_unit, Measured(measured.value, error), samples)


@dataclass(frozen=True)
class ThermalFit:
    """L = omega/T fitted through the origin, and how linear the data are."""

    T: Measured
    slope: mpmath.mpf
    intercept: mpmath.mpf  # of a free straight-line fit: 0 for a Planck spectrum
    max_relative_residual: mpmath.mpf


def thermal_fit(points: list[LogRatio]) -> ThermalFit:
    """Least squares L_j = omega_j / T; the error of 1/T combines the data errors and the
    residuals (a non-thermal spectrum shows up as residuals and an intercept)."""
    omegas = [p.omega for p in points]
    values = [p.value.value for p in points]
    errors = [p.value.error for p in points]
    norm = mpmath.fsum(w * w for w in omegas)
    slope = mpmath.fsum(w * v for w, v in zip(omegas, values)) / norm
    residuals = [v - slope * w for w, v in zip(omegas, values)]
    slope_error = mpmath.fsum(w * e for w, e in zip(omegas, errors)) / norm + max(abs(r) / w for r, w in zip(residuals, omegas))
    n = len(points)
    mean_w, mean_v = mpmath.fsum(omegas) / n, mpmath.fsum(values) / n
    free_slope = mpmath.fsum((w - mean_w) * (v - mean_v) for w, v in zip(omegas, values)) / mpmath.fsum((w - mean_w) ** 2 for w in omegas)
    intercept = mean_v - free_slope * mean_w
    T = 1 / slope
    relative = max(abs(r) / abs(v) for r, v in zip(residuals, values))
    return ThermalFit(Measured(T, T * T * slope_error), slope, intercept, relative)
