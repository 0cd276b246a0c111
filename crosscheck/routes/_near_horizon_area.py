"""Numeric horizon area for the near-horizon route (private helpers).

The area is the integral of sqrt(det h) of the angular block over the polar
angles (2 pi for the azimuth).  When the block is regular at r_h (its
determinant's denominator does not vanish there, as in Boyer-Lindquist
coordinates) the integral is taken at r_h itself by Gauss-Legendre
quadrature, whose degree is doubled until two degrees agree: their
difference bounds the error of the lower one, and so (the rule converges
geometrically on an analytic integrand) of the higher one, which is kept.
Only a block singular at r_h, or an integrand on which Gauss-Legendre does
not converge, needs the slower route of tanh-sinh quadratures at r_h +
side h, extrapolated to h = 0 (`area_by_quadrature`).
"""

from __future__ import annotations

from collections.abc import Callable

import mpmath
from mpmath.calculus.quadrature import GaussLegendre

from crosscheck.measure import Measured
from crosscheck.routes._near_horizon_fields import Limit, horizon_limit, richardson_amplification

MAX_DEGREE = 7  # 3 * 2^6 = 192 nodes per angle
_RULE = GaussLegendre(mpmath.mp)  # caches its nodes per degree and precision
_TEST_ANGLES = ("0.7", "1.1", "2.3")


def _nodes(degree: int) -> list[tuple[mpmath.mpf, mpmath.mpf]]:
    return _RULE.get_nodes(mpmath.mpf(0), mpmath.pi, degree, mpmath.mp.prec)


def _rule(f: Callable, polar: int, degree: int) -> mpmath.mpf:
    """The product Gauss-Legendre sum of f over (0, pi)^polar."""
    nodes = _nodes(degree)
    if polar == 1:
        return mpmath.fdot((w, f(x)) for x, w in nodes)
    return mpmath.fdot((w, _rule(lambda *rest, x=x: f(x, *rest), polar - 1, degree)) for x, w in nodes)


def gauss_legendre(f: Callable, polar: int, digits: int) -> Measured | None:
    """Integral of f over (0, pi)^polar to about 10^-(digits+3) relative, or None when two
    successive degrees never agree (an endpoint singularity: Gauss-Legendre is the wrong rule)."""
    if not polar:
        value = f()
        return Measured(value, 10 * mpmath.eps * abs(value))
    previous = _rule(f, polar, 2)
    for degree in range(3, MAX_DEGREE + 1):
        value = _rule(f, polar, degree)
        difference = abs(value - previous)
        if difference <= mpmath.mpf(10) ** (-digits - 3) * abs(value):
            return Measured(value, difference + 10 * polar * mpmath.eps * abs(value))
        previous = value
    return None


def regular_at(denominator: Callable, polar: int, r_h: mpmath.mpf, side: int, scale: mpmath.mpf, digits: int) -> bool:
    """Whether the determinant's denominator stays away from zero at r_h (at test angles),
    judged against its size a little way into the static region."""
    for angle in _TEST_ANGLES:
        angles = [mpmath.mpf(angle)] * polar
        try:
            at, away = (abs(denominator(r, *angles)) for r in (r_h, r_h + side * scale / 100))
        except (ZeroDivisionError, ValueError):
            return False
        if not (mpmath.isfinite(at) and at > mpmath.mpf(10) ** (-(digits // 2)) * away):
            return False
    return True


def area_at_horizon(density: Callable, polar: int, r_h: Measured, digits: int) -> Measured | None:
    """2 pi times the Gauss-Legendre integral of sqrt|det h| at r_h; r_h's error is propagated by
    integrating again at r_h + error.  None if the rule does not converge (or r_h is singular)."""
    with mpmath.workdps(digits + 10):
        def integral(r: mpmath.mpf) -> Measured | None:
            try:
                return gauss_legendre(lambda *a: mpmath.sqrt(abs(mpmath.re(density(r, *a)))), polar, digits)
            except (ZeroDivisionError, ValueError):
                return None

        at = integral(r_h.value)
        shifted = integral(r_h.value + r_h.error) if r_h.error else at
        if at is None or shifted is None:
            return None
        two_pi = 2 * mpmath.pi
        value = two_pi * at.value
        error = two_pi * (at.error + shifted.error + abs(shifted.value - at.value)) + 10 * mpmath.eps * abs(value)
        return Measured(value, error)


def area_by_quadrature(density: Callable, polar: int, r_h: mpmath.mpf, side: int, scale: mpmath.mpf, digits: int, steps: int) -> tuple[Limit, mpmath.mpf]:
    """Area at r_h + side h by mpmath.quad of sqrt(det) over the polar angles (2 pi for the
    azimuth), extrapolated to h = 0, and the propagated quadrature error."""
    errors = [mpmath.mpf(0)]

    def area(h: mpmath.mpf) -> mpmath.mpf:
        integrand = lambda *a: mpmath.sqrt(abs(mpmath.re(density(r_h + side * h, *a))))  # noqa: E731
        if not polar:
            return 2 * mpmath.pi * integrand()
        value, error = mpmath.quad(integrand, *([[0, mpmath.pi]] * polar), error=True)
        errors.append(error)
        return 2 * mpmath.pi * value

    limit = horizon_limit(area, scale, digits, steps)
    return limit, 2 * mpmath.pi * max(errors) * richardson_amplification(steps)
