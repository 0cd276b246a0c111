"""Radial null rays near a horizon and the late-time ray map of a null-shell collapse.

Shared by the ray-peeling and Bogoliubov routes (private helpers).  Everything
is written in x = side (r - r_h) > 0, the distance into the static region
(side = +1 outside a black hole, -1 inside a cosmological horizon).

The (t, r) block is -F dt^2 + dr^2/G (rotating metrics: the co-rotating block,
F = -(g_tt - g_tphi^2/g_phiphi), G = 1/g_rr at a fixed polar angle).  Radial null
rays obey dr/dt = +- sqrt(F G).  With the tortoise coordinate
tau(x) = integral dx/sqrt(F G) = ln(x)/s + g(x) (s^2 = lim F G/x^2; g analytic,
the log-singular part split off), rays leaving the horizon have u = t - tau
constant.  Collapse picture: flat space inside a null shell at v = v0; a ray from
past null infinity at v passes the centre, meets the shell at areal radius R
and leaves with u = v0 - 2 tau(x), while v = v0 - 2 R; so, up to constants,
u(x) = -2 tau(x), p(x) = -2 b(x), b = side (R(r) - R(r_h)).  Without an areal
radius (planar Rindler-type metrics) the matching uses the regular null
coordinate b = integral sqrt(F/G) dx of ingoing Eddington-Finkelstein form
(the affine-type coordinate in which the metric is smooth on the horizon).
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit
from crosscheck.routes._ray_peeling_compiled import at_horizon, compiled
from crosscheck.spacetimes.base import Metric, Spacetime
from crosscheck.spacetimes.evaluation import as_sympy, to_mp
from crosscheck.spacetimes.forms import lone_time_radial_term
from crosscheck.spacetimes.horizon import equatorial, killing_norm, positive_roots_numeric

Point = Mapping[sympy.Symbol, object]


# --------------------------------------------------------------------------- the (t, r) block


@dataclass(frozen=True)
class RadialForm:
    """F, G of the (t, r) block at fixed angles, R the areal radius (None if not round)."""

    F: sympy.Expr
    G: sympy.Expr
    R: sympy.Expr | None
    r: sympy.Symbol
    how: str


def radial_form(metric: Metric, theta: sympy.Expr = sympy.pi / 2) -> RadialForm:
    """F, G (and R) from the claim's metric; CannotCompute if t and r mix with other coordinates."""
    g, r = metric.g, metric.radial
    if metric.static is not None and metric.axial is None:
        s = metric.static
        return RadialForm(as_sympy(s.F), as_sympy(s.G), None if s.R is None else as_sympy(s.R), s.r, "static F, G, R")
    angles = {c: theta for c in metric.coords[2:] if c != metric.axial}
    if lone_time_radial_term(metric):
        return _completed_square(metric, angles)
    if any(g[1, j] != 0 for j in range(2, metric.dim)):
        raise CannotCompute("radial null rays: g_rr mixes with angular coordinates")
    if metric.axial is not None:
        k = metric.coords.index(metric.axial)
        others = [j for j in range(1, metric.dim) if j != k and g[0, j] != 0]
        if others:
            raise CannotCompute("radial null rays: g_t mixes with coordinates other than the axial angle")
        F = -(g[0, 0] - g[0, k] ** 2 / g[k, k])
        how = f"co-rotating frame F = -(g_tt - g_tphi^2/g_phiphi), G = 1/g_rr at theta = {theta}"
    else:
        if any(g[0, j] != 0 for j in range(1, metric.dim)):
            raise CannotCompute("radial null rays: g_t mixes with other coordinates")
        F, how = -g[0, 0], "F = -g_tt, G = 1/g_rr"
    F, G = as_sympy(F).subs(angles), as_sympy(1 / g[1, 1]).subs(angles)
    if (F.free_symbols | G.free_symbols) & set(metric.coords[2:]):
        raise CannotCompute("radial null rays: F or G depends on the angles")
    return RadialForm(F, G, None, r, how)


def _completed_square(metric: Metric, angles: dict) -> RadialForm:
    """A static (t, r) block with a dt dr term, e.g. Painleve-Gullstrand coordinates.

    g_tt dt^2 + 2 g_tr dt dr + g_rr dr^2 = g_tt (dt + g_tr/g_tt dr)^2 + (g_rr - g_tr^2/g_tt) dr^2:
    the shifted time t' = t + f(r) has the same Killing vector d/dt, so F = -g_tt and
    1/G = g_rr - g_tr^2/g_tt describe the same radial null rays outside the horizon.
    """
    g = metric.g
    F = as_sympy(-g[0, 0]).subs(angles)
    G = sympy.cancel(as_sympy(g[0, 0] / (g[0, 0] * g[1, 1] - g[0, 1] ** 2)).subs(angles))
    if (F.free_symbols | G.free_symbols) & set(metric.coords[2:]):
        raise CannotCompute("radial null rays: F or G depends on the angles")
    return RadialForm(F, G, None, metric.radial, "F = -g_tt, 1/G = g_rr - g_tr^2/g_tt (square completed in dt)")


# --------------------------------------------------------------------------- compiled functions


def compile_at(expr: sympy.Expr, r: sympy.Symbol, point: Point) -> Callable:
    """r -> expr at the parameter point, mpmath arithmetic (complex r allowed); the sympy
    translation is cached per expression, so the per-point calls of a problem share it."""
    return compiled(expr, r, point)


def static_side_numeric(f: Callable, g: Callable, r_h: mpmath.mpf, scale: mpmath.mpf) -> int:
    """+1 when the static region (F > 0 and G > 0) is at r > r_h (also when both are), else -1."""
    for side in (1, -1):
        try:
            values = [mpmath.mpc(h(r_h + side * scale / 1000)) for h in (f, g)]
        except (ZeroDivisionError, ValueError):
            continue
        if all(mpmath.isfinite(v) and v.real > 0 and abs(v.imag) <= 1e-20 * abs(v) for v in values):
            return side
    raise ValueError(f"horizon: no static region (F > 0, G > 0) next to r_h = {mpmath.nstr(r_h, 12)}")


# --------------------------------------------------------------------------- numeric radial functions


@functools.lru_cache(maxsize=64)
def _equatorial_norm(metric: Metric) -> sympy.Expr:
    """The Killing norm in the equatorial plane, once per metric (its trigonometric
    simplification costs more than a whole parameter point)."""
    return equatorial(killing_norm(metric), metric)


class Radial:
    """F G, F/G and the matching function near r_h at one parameter point, in x (complex allowed)."""

    def __init__(self, form: RadialForm, spacetime: Spacetime, point: Point, r_h: Measured, dps: int,
                 scale: mpmath.mpf | None = None) -> None:
        """`scale`: the near-horizon size found by an earlier Radial at the same point (it
        depends on the metric and r_h only), to skip its root finding."""
        self.form, self.dps, self.r_h = form, dps, r_h
        with mpmath.workdps(dps):
            point = {s: to_mp(v, dps) for s, v in point.items()}
            F, G = compile_at(form.F, form.r, point), compile_at(form.G, form.r, point)
            self.scale = +scale if scale is not None else self._scale(spacetime, point)
            self.side = static_side_numeric(F, G, r_h.value, self.scale)
            # F G and F/G in x, prepared once: two Horner sums per call (`_ray_peeling_compiled`)
            self._fg = at_horizon(form.F * form.G, form.r, point, r_h.value, self.side, dps)
            self._f_over_g = at_horizon(form.F / form.G, form.r, point, r_h.value, self.side, dps)
            self.areal = None
            if form.R is not None and form.R.has(form.r):
                R, dR = compile_at(form.R, form.r, point), compile_at(sympy.diff(form.R, form.r), form.r, point)
                self.areal = (R, dR, R(r_h.value))

    def _scale(self, spacetime: Spacetime, point: Point) -> mpmath.mpf:
        """Distance from r_h to the nearest other zero of the Killing norm (or to r = 0):
        the size of the near-horizon region, where offsets and windows must stay."""
        r_h = self.r_h.value
        scale = abs(r_h) or mpmath.mpf(1)
        try:
            metric = spacetime.metric
            roots = positive_roots_numeric(_equatorial_norm(metric), metric.radial, point, self.dps - 15)
        except (CannotCompute, ValueError, ZeroDivisionError):
            roots = []
        for root in roots:
            gap = abs(root.value - r_h)
            if gap > 100 * (root.error + self.r_h.error) + mpmath.mpf(10) ** (5 - self.dps) * scale:
                scale = min(scale, gap)
        return scale

    def r(self, x: object) -> object:
        return self.r_h.value + self.side * x

    def fg(self, x: object) -> object:
        return self._fg(x)

    def f_over_g(self, x: object) -> object:
        return self._f_over_g(x)

    def order(self, f: Callable, x0: mpmath.mpf | None = None) -> int:
        """Order of the zero of f at x = 0, from |f(2 x0)/f(x0)| with x0 well inside the region."""
        x0 = x0 or self.scale * mpmath.mpf(10) ** -6
        with mpmath.workdps(self.dps):
            a, b = abs(f(x0)), abs(f(2 * x0))
            if a == 0 or not mpmath.isfinite(a) or not mpmath.isfinite(b):
                raise ValueError("horizon: F G is not finite or vanishes identically near r_h")
            return int(mpmath.nint(mpmath.log(b / a, 2)))


def limit_at_zero(f: Callable[[mpmath.mpf], object], scale: mpmath.mpf, digits: int, steps: int,
                  exponents: Sequence[int] = (2, 3, 4, 5)) -> tuple[Measured, list]:
    """lim_{x -> 0+} f(x) for f analytic in x: Richardson over x = scale 10^-j 2^-k, j grown
    until the estimate is converged to the requested digits (relative to the larger of the
    limit and the first sample, so that a zero limit, a degenerate horizon, converges too)."""
    best = None
    for exponent in exponents:
        h0 = scale * mpmath.mpf(10) ** (-exponent)
        measured, samples = richardson_limit(lambda x: mpmath.re(f(x)), h0, steps=steps, ratio=mpmath.mpf(1) / 2)
        if best is None or measured.error < best[0].error:
            best = (measured, samples)
        if measured.error <= mpmath.mpf(10) ** (-digits - 2) * max(abs(measured.value), abs(mpmath.mpf(samples[0][1]))):
            break
    return best


def log_coefficient(radial: Radial, digits: int, steps: int) -> Measured:
    """s = sqrt(lim F G / x^2): the coefficient of the logarithm in the tortoise coordinate,
    tau ~ ln(x)/s (measured, so that the singular part can be split off numerically)."""
    with mpmath.workdps(radial.dps):
        limit, samples = limit_at_zero(lambda x: radial.fg(x) / x**2, radial.scale, digits, steps)
        if limit.value <= 0:
            raise ValueError("horizon: F G / (r - r_h)^2 has no positive limit")
        s = mpmath.sqrt(limit.value)
        slope = abs(mpmath.mpf(samples[0][1]) - limit.value) / mpmath.mpf(samples[0][0])  # shifting r_h moves x
        return Measured(s, (limit.error + slope * radial.r_h.error) / (2 * s))


# --------------------------------------------------------------------------- the collapse ray map


class RayMap:
    """p(u) of a null-shell collapse (or the regular-null-coordinate map), parametrised by x.

    u(x) = -2 tau(x), p(x) = -2 b(x) with b the matching function (module docstring);
    dp/du = b'(x) sqrt(F G)(x).  `s` is the measured log coefficient of tau.
    """

    def __init__(self, radial: Radial, s: Measured) -> None:
        self.radial, self.s = radial, s
        self.matching = "areal radius R (flat interior, null shell)" if radial.areal else "regular null coordinate integral sqrt(F/G) dr"
        with mpmath.workdps(radial.dps):
            self.order = radial.order(self.db) + 1  # b ~ x^m

    def db(self, x: object) -> object:
        """db/dx (real x > 0 or complex x near 0 on the principal branch of sqrt(F/G)/x^(m-1))."""
        radial = self.radial
        if radial.areal is not None:
            return radial.areal[1](radial.r(x))
        return mpmath.sqrt(radial.f_over_g(x))

    def late_time_rates(self, x0: mpmath.mpf, count: int, tol: mpmath.mpf) -> tuple[list, list]:
        """Secant slopes -d ln(dp/du)/du between traced rays x_k = x0 2^-k and x_(k+1), with
        u = -2 tau(x) from the tortoise coordinate on the real axis (`ContinuedRay` at
        theta = 0: log part split off, regular part by Chebyshev quadrature).  Returns
        (x_k, rate_k) and (u_k, rate_k) at the midpoints; rate -> kappa_t as x -> 0."""
        ray = ContinuedRay(self, mpmath.mpf(0), x0, tol)
        xs = [x0 / mpmath.mpf(2) ** k for k in range(count + 1)]
        logs = [mpmath.log(abs(self.db(x)) * mpmath.sqrt(mpmath.re(self.radial.fg(x)))) for x in xs]
        us = [-2 * mpmath.re(ray.tau(x)) for x in xs]
        rates = [-(logs[k + 1] - logs[k]) / (us[k + 1] - us[k]) for k in range(count)]
        return list(zip(xs, rates)), [((us[k] + us[k + 1]) / 2, rates[k]) for k in range(count)]


# --------------------------------------------------------------------------- continuation to complex x


class Chebyshev:
    """A complex function of t on [0, Y] by Chebyshev interpolation, with its integral from 0.

    Used for the regular parts of the tortoise coordinate (and of the regular matching
    coordinate) along a ray x = e^(i theta) t in the complex plane: analytic integrands,
    so the interpolant converges geometrically and the nodes avoid t = 0, where F G
    loses digits to cancellation."""

    def __init__(self, f: Callable[[mpmath.mpf], object], Y: mpmath.mpf, tol: mpmath.mpf, reference: object = 0) -> None:
        """`tol`: size of the last coefficients, relative to the largest one or to
        `reference` if that is larger (the size below which f does not matter), at which
        the series is accepted: the accuracy wanted, above the rounding noise of f."""
        self.Y, n = Y, 8
        while True:
            coefficients = self._fit(f, n)
            top = max([abs(c) for c in coefficients] + [abs(reference)]) or mpmath.mpf(1)
            self.converged = max(abs(coefficients[-1]), abs(coefficients[-2])) <= tol * top
            if self.converged or n >= 128:
                break
            n *= 2
        while len(coefficients) > 2 and abs(coefficients[-1]) <= tol * top / 100:
            coefficients.pop()  # negligible tail: cheaper evaluations
        self.coefficients = coefficients
        self.integral = self._antiderivative(coefficients)
        self.at_zero = self._clenshaw(self.integral, mpmath.mpf(0))

    def _fit(self, f: Callable, n: int) -> list:
        angles = [mpmath.pi * (j + mpmath.mpf(1) / 2) / n for j in range(n)]
        cosines = [mpmath.cos(a) for a in angles]
        values = [f(self.Y * (1 + c) / 2) for c in cosines]
        coefficients, previous, current = [], [mpmath.mpf(1)] * n, list(cosines)  # cos(k a) by recurrence
        coefficients.append(2 * mpmath.fsum(values) / n)
        for _ in range(1, n):
            coefficients.append(2 * mpmath.fsum(v * c for v, c in zip(values, current)) / n)
            previous, current = current, [2 * c1 * c - p for c1, c, p in zip(cosines, current, previous)]
        return coefficients

    def _antiderivative(self, c: list) -> list:
        """Coefficients of the integral in t (the interval has half-length Y/2)."""
        n, half = len(c), self.Y / 2
        c = list(c) + [mpmath.mpf(0), mpmath.mpf(0)]
        out = [mpmath.mpf(0)] * (n + 1)
        out[1] = half * (c[0] - c[2]) / 2  # f = c0/2 + sum c_k T_k; the T_1 part of the integral
        for k in range(2, n + 1):
            out[k] = half * (c[k - 1] - c[k + 1]) / (2 * k)
        return out

    def _clenshaw(self, c: list, t: object) -> object:
        z = 2 * t / self.Y - 1
        b1 = b2 = mpmath.mpf(0)
        for coefficient in reversed(c[1:]):
            b1, b2 = 2 * z * b1 - b2 + coefficient, b1
        return z * b1 - b2 + c[0] / 2

    def value(self, t: object) -> object:
        return self._clenshaw(self.coefficients, t)

    def integral_from_zero(self, t: object) -> object:
        return self._clenshaw(self.integral, t) - self.at_zero


class ContinuedRay:
    """The map continued along x = e^(i theta) t, 0 <= t <= Y: tau, b and b' there.

    t tau'(t) = k(t) = 1/sqrt(H), H = F G/x^2 (principal branch: H -> s^2 > 0 at the
    horizon, which continues sqrt(F G) = x sqrt(H) from the real axis).  k is analytic, so
    tau = k(0) (ln t + i theta) + integral_0^t (k - k(0)) dt'/t': the log-singular part is
    split off numerically, with 1/k(0) = s read from the interpolant itself."""

    def __init__(self, ray_map: RayMap, theta: mpmath.mpf, Y: mpmath.mpf, tol: mpmath.mpf) -> None:
        self.map, self.theta, self.phase = ray_map, theta, mpmath.expj(theta)
        radial, m = ray_map.radial, ray_map.order
        k = Chebyshev(lambda t: 1 / mpmath.sqrt(radial.fg(self.phase * t) / (self.phase * t) ** 2), Y, tol)
        self.k0 = k.value(mpmath.mpf(0))
        self.g = Chebyshev(lambda t: (k.value(t) - self.k0) / t, Y, tol, abs(self.k0) / Y)
        self.q = None
        if radial.areal is None:  # b' = x^(m-1) q(x), q analytic
            self.q = Chebyshev(lambda t: mpmath.sqrt(radial.f_over_g(self.phase * t) / (self.phase * t) ** (2 * m - 2)), Y, tol)
            q0 = self.q.value(mpmath.mpf(0))
            self.b_integrand = Chebyshev(lambda t: self.q.value(t) * t ** (m - 1), Y, tol, abs(q0) * Y ** (m - 1))
        self.converged = k.converged and self.g.converged and (self.q is None or self.q.converged)

    def x(self, t: object) -> object:
        return self.phase * t

    def tau(self, t: object, log_t: object = None) -> object:
        log_t = mpmath.log(t) if log_t is None else log_t
        return self.k0 * mpmath.mpc(log_t, self.theta) + self.g.integral_from_zero(t)

    def b(self, t: object) -> object:
        radial = self.map.radial
        if radial.areal is not None:
            R, _, R_h = radial.areal
            return radial.side * (R(radial.r(self.x(t))) - R_h)
        return self.phase ** self.map.order * self.b_integrand.integral_from_zero(t)

    def db(self, t: object) -> object:
        if self.q is None:
            return self.map.db(self.x(t))
        return self.x(t) ** (self.map.order - 1) * self.q.value(t)
