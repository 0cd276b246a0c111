"""Quadrature over the horizon cross-section for the killing-horizon route.

The integrand sqrt(det h) at r = r_h is analytic in the angles for the usual
metrics (Boyer-Lindquist: (r_h^2 + a^2) sin theta), where Gauss-Legendre
converges geometrically with a few dozen nodes; tanh-sinh (mpmath.quad's
default) needs hundreds of evaluations per integral.  The degree is doubled
until two degrees agree; the difference bounds the error of the lower one and
so of the kept, higher one.  The converged degree is then repeated with 15
more digits, which exposes cancellation in the integrand (the role of the
two precisions of the tanh-sinh fallback).  An integrand on which
Gauss-Legendre does not converge (an endpoint singularity) goes to
mpmath.quad at two precisions, as before.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

import mpmath
from mpmath.calculus.quadrature import GaussLegendre

from crosscheck.measure import Measured

MAX_DEGREE = 7  # 3 * 2^6 = 192 nodes per angle
_RULE = GaussLegendre(mpmath.mp)  # caches its standard nodes per degree and precision


def _product_sum(f: Callable, limits: Sequence[Sequence[object]], degree: int) -> mpmath.mpf:
    """Product Gauss-Legendre sum of f over the box `limits` (one (lo, hi) per variable)."""
    lo, hi = (mpmath.mpmathify(x) for x in limits[0])
    nodes = _RULE.get_nodes(lo, hi, degree, mpmath.mp.prec)
    if len(limits) == 1:
        return mpmath.fdot((w, f(x)) for x, w in nodes)
    return mpmath.fdot((w, _product_sum(lambda *rest, x=x: f(x, *rest), limits[1:], degree)) for x, w in nodes)


def _gauss_legendre(f: Callable, limits, digits: int) -> tuple[mpmath.mpf, mpmath.mpf, int] | None:
    """(value, |difference of the last two degrees|, degree) at 10^-(digits+3) relative, or None."""
    with mpmath.workdps(digits + 10):
        previous = _product_sum(f, limits, 2)
        for degree in range(3, MAX_DEGREE + 1):
            value = _product_sum(f, limits, degree)
            if abs(value - previous) <= mpmath.mpf(10) ** (-digits - 3) * abs(value):
                return value, abs(value - previous), degree
            previous = value
    return None


def quad(f: Callable, limits, digits: int) -> Measured:
    """Integral of f over the box `limits` with an error estimate (see the module docstring)."""
    converged = _gauss_legendre(f, limits, digits)
    if converged is not None:
        value, difference, degree = converged
        with mpmath.workdps(digits + 25):
            high = _product_sum(f, limits, degree)
            rounding = 10 * len(limits) * mpmath.mpf(10) ** (-(digits + 10)) * abs(high)
            return Measured(high, difference + abs(high - value) + rounding)
    results = []
    for extra in (10, 25):
        with mpmath.workdps(digits + extra):
            results.append(mpmath.quad(f, *limits, error=True))
    (v1, e1), (v2, e2) = results
    return Measured(v2, max(e1, e2, abs(v2 - v1)))
