"""Exponentially convergent quadrature for the detector rates (generic tools).

Both rules estimate their error from a halving of the step:
- `trapezoid_samples` / `trapezoid_transforms`: the trapezoidal rule for a
  function analytic in a strip |Im x| < d around the real axis and decaying
  fast.  Its error is about max|f| exp(-2 pi d/h) (the strip theorem of
  exponentially convergent trapezoidal rules, Trefethen & Weideman, SIAM Rev. 56
  (2014) 385, from memory), so halving h squares it.  The samples do not depend
  on the frequency, so one set serves a whole band of gaps.
- `principal_part`: Laurent coefficients at 0 by the trapezoidal rule on a circle.

Nothing here knows about detectors; the routes pass the integrands in.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

import mpmath
from mpmath.libmp import to_fixed

from crosscheck.measure import Measured


def square_law_error(fine: object, coarse: object, floor: mpmath.mpf, scale: object = None) -> mpmath.mpf:
    """Error of the finer of two exponentially convergent results whose step differs
    by 2: the error is A q^(1/h), so err(h) = err(2h)^2/A ~ |fine - coarse|^2/A with
    A the size of the integrand on the edge of its strip of analyticity (`scale`,
    default |fine|); times 10 for safety, never below `floor` (the rounding level)."""
    delta = abs(fine - coarse)
    size = max(abs(fine) if scale is None else scale, floor)
    return max(10 * delta**2 / size, floor)


def trapezoid_samples(f: Callable[[mpmath.mpf], object], h: mpmath.mpf, tiny: mpmath.mpf, limit: int = 200000) -> list:
    """f(k h) for k = 0, 1, ... until |f| stays below `tiny` for 8 consecutive nodes."""
    values, quiet, k = [], 0, 0
    while quiet < 8:
        value = f(k * h)
        values.append(value)
        quiet = quiet + 1 if abs(value) < tiny else 0
        k += 1
        if k > limit:
            raise ValueError("trapezoid: the integrand does not decay (more than 200000 nodes)")
    return values


def trapezoid_transforms(values: Sequence, h: mpmath.mpf, omegas: Sequence[mpmath.mpf]) -> list[tuple[mpmath.mpf, mpmath.mpf]]:
    """For every omega, Re of integral_0^inf exp(-i omega x) f(x) dx by the trapezoidal rule on
    x_k = k h (half weight at k = 0), with steps h and 2 h: [(fine, coarse), ...].

    Re(e^{-i w x} f) = cos(w x) Re f + sin(w x) Im f.  The sums run in fixed-point integers
    (exact products and additions; the samples scaled to their largest, the phases
    e^{-i w k h} by repeated multiplication with e^{-i w h}), which is what makes a band of
    gaps cheap.  Guard bits 2 log2(n) + 16 cover the rounding of the n-step recurrence
    (it grows linearly in k), so the sums are exact to below the working precision."""
    n = len(values)
    bits = mpmath.mp.prec + 2 * n.bit_length() + 16
    largest = max((abs(v) for v in values), default=mpmath.mpf(0))
    if largest == 0:
        return [(mpmath.mpf(0), mpmath.mpf(0)) for _ in omegas]
    shift = bits - int(mpmath.mag(largest))  # samples carry `shift` fractional bits
    real = [to_fixed(mpmath.mpf(mpmath.re(v))._mpf_, shift) for v in values]
    imag = [to_fixed(mpmath.mpf(mpmath.im(v))._mpf_, shift) for v in values]
    results = []
    for omega in omegas:
        with mpmath.workprec(bits + 10):
            c1, s1 = (to_fixed(t._mpf_, bits) for t in mpmath.cos_sin(omega * h))
        cosine, sine, even, odd = 1 << bits, 0, 0, 0
        for k in range(n):
            term = cosine * real[k] + sine * imag[k]
            if k % 2:
                odd += term
            else:
                even += term
            cosine, sine = (cosine * c1 - sine * s1) >> bits, (cosine * s1 + sine * c1) >> bits
        first = (real[0] << bits) // 2
        scale = -(bits + shift)
        fine = h * mpmath.ldexp(mpmath.mpf(even + odd - first), scale)
        coarse = 2 * h * mpmath.ldexp(mpmath.mpf(even - first), scale)
        results.append((fine, coarse))
    return results


def principal_part(f: Callable[[mpmath.mpc], mpmath.mpc], radius: mpmath.mpf, order: int, n: int, digits: int) -> list[Measured]:
    """Laurent coefficients a_-1 ... a_-order of f at 0, a_-k = (1/2 pi i) integral of f z^(k-1)
    over |z| = radius, by the trapezoidal rule with 2n and n nodes (geometric convergence when f
    is analytic in an annulus around the circle; the n-node rule reuses every other node).
    Error by the square law, never below 10^-digits of S_k = max|f| radius^k (Cauchy's bound on
    |a_-k|, the size of the sums' terms); raises if the two rules disagree beyond its reach."""
    nodes = [radius * mpmath.expjpi(mpmath.mpf(2 * k) / (2 * n)) for k in range(2 * n)]
    values = [f(z) for z in nodes]
    largest = max(abs(v) for v in values)
    coefficients = []
    for k in range(1, order + 1):
        weights = [z**k / (2 * n) for z in nodes]
        fine = mpmath.fdot(weights, values)
        coarse = 2 * mpmath.fdot(weights[::2], values[::2])
        bound = largest * radius**k
        floor = mpmath.mpf(10) ** (-digits) * bound
        if abs(fine - coarse) > mpmath.mpf(10) ** (-digits / 2) * max(abs(fine), bound) * 10:
            raise ValueError(f"residue: the circle rule with {2 * n} nodes has not converged")
        coefficients.append(Measured(fine, square_law_error(fine, coarse, floor, max(abs(fine), floor))))
    return coefficients
