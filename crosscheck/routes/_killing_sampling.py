"""The numeric limit at the horizon for the killing-horizon route.

The route's own field kappa_t^2(r, theta) (see `_killing_geometry`) is
evaluated at r_h +- delta_k with delta_k = delta0 2^-k, on the side where the
generator is timelike, and Richardson-extrapolated to the horizon.  The
field is analytic there, so the extrapolation converges fast; delta0 is kept
well inside the distance to any other zero of the Killing norm (near-extremal
holes) and the field is evaluated with FIELD_GUARD extra digits because its
numerator and denominator both vanish at the horizon.  On rotating horizons
the limit is taken at several polar angles: the zeroth law says they agree.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit
from crosscheck.routes import _killing_algebra as ka
from crosscheck.routes import _killing_geometry as kg
from crosscheck.spacetimes.horizon import positive_roots_numeric

# Polar angles at which the zeroth law is checked (pi/2 is the reference).
ZEROTH_LAW_THETAS = ("0.3", "0.9", "pi/2", "2.2")
# Richardson sampling: delta_k = delta0 * 2^-k, k < STEPS, delta0 = DELTA0 * r_h.
STEPS = 10
DELTA0 = mpmath.mpf("0.01")
# Extra digits for the field near the horizon (cancellation ~ log10(r_h/delta)).
FIELD_GUARD = 30


def theta_value(text: str) -> mpmath.mpf:
    """One of ZEROTH_LAW_THETAS as a number at the current precision."""
    return mpmath.pi / 2 if text == "pi/2" else mpmath.mpf(text)


def check_null(geo: kg.Geometry, point, r_h: Measured, digits: int) -> None:
    """ValueError unless the Killing norm vanishes at the numeric r_h (relative to its size nearby)."""
    norm = ka.numeric_function(geo.norm_eq, [geo.r, *geo.params])
    args = kg.args_of(geo, point)
    step = abs(r_h.value) / 10 if r_h.value != 0 else mpmath.mpf("0.1")
    with mpmath.workdps(digits + FIELD_GUARD):
        at = abs(norm(r_h.value, *args))
        scale = max(abs(norm(r_h.value + step, *args)), abs(norm(r_h.value - step, *args)))
    if not at <= mpmath.mpf(10) ** (-(digits // 3)) * scale:
        raise ValueError(f"horizon: the Killing vector is not null at r = {mpmath.nstr(r_h.value, 12)} "
                         f"(norm {mpmath.nstr(at, 5)}): not a horizon")


@dataclass
class Sampled:
    """The numeric limit at the horizon and the data behind it (evidence for reports)."""

    kappa_t: Measured
    omega: Measured
    delta0: mpmath.mpf
    side: str
    offsets: list[float] = field(default_factory=list)
    samples: list[float] = field(default_factory=list)
    zeroth: list = field(default_factory=list)


@dataclass
class _Limit:
    """One Richardson limit at one r_h: kappa_t^2 at theta = pi/2, Omega_H, the raw samples, every theta."""

    k2: Measured
    omega: mpmath.mpf
    samples: list[tuple[float, float]]
    per_theta: list[Measured]


def sample_horizon(geo: kg.Geometry, point, r_h: Measured, digits: int, propagate: bool = True) -> Sampled:
    """kappa_t (un-normalised) and Omega_H at a parameter point, with errors.

    With `propagate` the whole computation is repeated at r_h + error so that
    the error of the horizon radius is propagated, not assumed negligible.
    """
    delta0 = _delta0(geo, point, r_h, digits)
    sign = _timelike_side(geo, point, r_h.value, delta0, digits)
    first = _limit_at(geo, point, r_h.value, delta0, sign, digits)
    second = _limit_at(geo, point, r_h.value + r_h.error, delta0, sign, digits) if r_h.error and propagate else first
    k2 = Measured(first.k2.value, first.k2.error + abs(second.k2.value - first.k2.value))
    if geo.angular:
        _check_zeroth_law(first.per_theta, k2, r_h.value, digits)
    return Sampled(
        kappa_t=_sqrt(k2, digits),
        omega=Measured(first.omega, abs(second.omega - first.omega)),
        delta0=delta0,
        side="+" if sign > 0 else "-",
        offsets=[h for h, _ in first.samples],
        samples=[v for _, v in first.samples],
        zeroth=[m.value for m in first.per_theta],
    )


def _delta0(geo, point, r_h: Measured, digits) -> mpmath.mpf:
    """DELTA0 r_h, but at most a quarter of the distance to another zero of the norm."""
    scale = abs(r_h.value) if r_h.value != 0 else mpmath.mpf(1)
    delta0 = DELTA0 * scale
    roots = _other_zeros(geo, point, digits)
    if roots is None:
        try:
            roots = positive_roots_numeric(_norm_numerator(geo.norm_eq, geo.r), geo.r, point, digits)
        except (ValueError, CannotCompute, ZeroDivisionError):
            roots = []
    for root in roots:
        gap = abs(root.value - r_h.value)
        if gap > mpmath.mpf(10) ** (-(digits // 3)) * scale + 10 * (root.error + r_h.error):
            delta0 = min(delta0, gap / 4)
    return delta0


def _other_zeros(geo, point, digits) -> list[Measured] | None:
    """Positive zeros of the norm's square-free polynomial numerator at this point (coefficients
    compiled once per metric, mpmath.polyroots with its error estimate); None when the numerator
    is not a polynomial in r or polyroots does not converge (the caller then uses the general
    root finder)."""
    coefficients = _norm_coefficients(geo.norm_eq, geo.r, geo.params)
    if coefficients is None:
        return None
    with mpmath.workdps(digits + 15):
        values = [mpmath.mpmathify(c) for c in coefficients(*kg.args_of(geo, point))]
        while values and values[0] == 0:  # the leading coefficient may vanish at this point
            values.pop(0)
        if len(values) < 2:
            return []
        try:
            roots, error = mpmath.polyroots(values, maxsteps=100, extraprec=60, error=True)
        except (mpmath.libmp.NoConvergence, ZeroDivisionError):
            return None
        tiny = mpmath.mpf(10) ** (-(digits + 5))
        return [Measured(mpmath.re(z), error * max(abs(z), 1)) for z in roots
                if abs(mpmath.im(z)) <= tiny * max(abs(z), 1) and mpmath.re(z) > 0]


@functools.lru_cache(maxsize=32)
def _norm_coefficients(norm: sympy.Expr, r: sympy.Symbol, params: tuple) -> object | None:
    """Compiled coefficients (highest power first) of the square-free part of the norm's numerator
    as a polynomial in r, or None if it is not one."""
    numerator = _norm_numerator(norm, r)
    try:
        poly = sympy.Poly(numerator, r)
    except sympy.PolynomialError:
        return None
    if poly.degree() < 1 or any(c.has(r) for c in poly.all_coeffs()):
        return None
    square_free = sympy.quo(poly, sympy.gcd(poly, poly.diff(r)))
    return ka.numeric_function(sympy.Tuple(*square_free.all_coeffs()), list(params))


@functools.lru_cache(maxsize=32)
def _norm_numerator(norm: sympy.Expr, r: sympy.Symbol) -> sympy.Expr:
    """The Killing norm's numerator, expanded, once per metric: it has the norm's zeros (where the
    denominator is finite), and the root finder then skips the symbolic cancel at every point."""
    return sympy.expand(sympy.fraction(sympy.cancel(sympy.together(norm)))[0])


def _timelike_side(geo, point, r_h, delta0, digits) -> int:
    """+1 or -1: the side of the horizon where the generator is timelike (the static region)."""
    norm = ka.numeric_function(geo.norm_eq, [geo.r, *geo.params])
    args = kg.args_of(geo, point)
    with mpmath.workdps(digits + FIELD_GUARD):
        for sign in (1, -1):
            try:
                value = norm(r_h + sign * delta0, *args)
            except (ValueError, ZeroDivisionError):
                continue
            if abs(mpmath.im(value)) == 0 and mpmath.re(value) < 0:
                return sign
    return 1


def _limit_at(geo, point, r_h, delta0, sign, digits) -> _Limit:
    """Richardson limits of the field at r_h + sign * delta0 2^-k, at pi/2 (and every zeroth-law theta)."""
    args = kg.args_of(geo, point)
    with mpmath.workdps(digits + FIELD_GUARD):
        omega = mpmath.re(geo.omega_fn(r_h, *args)) if geo.axial is not None else mpmath.mpf(0)
        thetas = [theta_value(t) for t in ZEROTH_LAW_THETAS] if geo.angular else [mpmath.pi / 2]
        results = []
        for theta in thetas:
            def f(h, theta=theta):
                return mpmath.re(geo.field_fn(r_h + sign * h, *([theta] * len(geo.polar)), omega, *args))

            results.append(richardson_limit(f, delta0, steps=STEPS))
    reference = results[ZEROTH_LAW_THETAS.index("pi/2")] if geo.angular else results[0]
    return _Limit(k2=reference[0], omega=omega, samples=reference[1], per_theta=[m for m, _ in results])


def _check_zeroth_law(per_theta: list[Measured], reference: Measured, r_h, digits) -> None:
    """kappa^2 must converge, and agree, at every theta (else the horizon spec is likely wrong)."""
    scale = max(abs(reference.value), 1 / r_h**2 if r_h else mpmath.mpf(1))
    worst = max(m.error for m in per_theta)
    spread = max(abs(m.value - reference.value) for m in per_theta)
    if worst > mpmath.mpf(10) ** (-(digits // 3)) * scale or spread > max(10 * worst, mpmath.mpf(10) ** (-(digits // 2)) * scale):
        shown = ", ".join(mpmath.nstr(m.value, 10) for m in per_theta)
        raise ValueError(f"zeroth law fails: kappa differs across the horizon (kappa_t^2 = {shown} at theta = "
                         f"{', '.join(ZEROTH_LAW_THETAS)}); the horizon spec is likely wrong")


def _sqrt(k2: Measured, digits: int) -> Measured:
    """sqrt of a Measured kappa^2 >= 0; near zero the error is the half-width of sqrt([k2 - e, k2 + e]).

    The error is at least the working precision's rounding (10^-(digits+5) relative).
    """
    if k2.value < -10 * k2.error:
        raise ValueError(f"kappa^2 = {mpmath.nstr(k2.value, 10)} < 0 on the horizon: not a Killing horizon")
    value = mpmath.sqrt(max(k2.value, 0))
    upper = mpmath.sqrt(max(k2.value, 0) + k2.error)
    lower = mpmath.sqrt(max(k2.value - k2.error, 0))
    return Measured(value, max(upper - value, value - lower, mpmath.mpf(10) ** (-(digits + 5)) * value))
