"""Circular motion: subtracting the slowly decaying part of W before the quadrature.

On a circle sigma2 = -gamma^2 z^2 (1 - eps), eps = 2 R^2 (1 - cos k z)/(gamma^2 z^2),
k = gamma W, so W = C (i gamma z)^(2-D) (1 - eps)^(-q), q = (D-2)/2, decays only
like z^(2-D): no exponentially convergent rule applies as it stands.  On the line
Im z = -c (c below the first singularity) |eps| < 1 (because |sin u/u| <= sinh(Im u)/Im u
there), so the binomial series converges; its first M + 1 terms

    S_M(z) = C (i gamma)^(2-D) sum_m (q)_m/m! (2R^2/gamma^2)^m sum_j b_mj e^(i j k z) z^(2-D-2m),
    (1 - cos x)^m = sum_(j=-m..m) b_mj e^(i j x),  b_mj = (-1)^j binom(2m, m - j)/2^m,

have exact transforms along the line (each term is singular only at z = 0: close
the contour downwards when O - j k > 0, giving 0, else upwards around z = 0, giving
2 pi i (-i(O - j k))^(n-1)/(n-1)! for z^-n).  The remainder W - S_M decays like
z^(2-D-2M-2) and is analytic in the same strip, so the trapezoidal rule on the line
converges exponentially after a short truncation.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable

import mpmath

from crosscheck.trajectories import Worldline, wightman_constant

ORDER = 20  # terms of the binomial series subtracted


def _coefficients(line: Worldline) -> tuple[mpmath.mpf, mpmath.mpf, mpmath.mpf, mpmath.mpc, list]:
    q = mpmath.mpf(line.dim - 2) / 2
    g, R = line.gamma, line.radius
    k = g * line.angular_velocity
    lead = wightman_constant(line.dim) * (1j * g) ** (2 - line.dim)
    series = [mpmath.rf(q, m) / mpmath.factorial(m) * (2 * R**2 / g**2) ** m for m in range(ORDER + 1)]
    return q, g, k, lead, series


def circular_remainder(line: Worldline) -> Callable[[object], mpmath.mpc]:
    """z -> W(z) - S_M(z), computed from eps(z) directly (no exponentials expanded).

    In 3+1 (q = 1) the binomial series is geometric and its tail is eps^(M+1)/(1 - eps)
    exactly; otherwise (1 - eps)^(-q) less the partial sum (Horner)."""
    q, g, k, lead, _ = _coefficients(line)
    R = line.radius
    rising = [mpmath.rf(q, m) / mpmath.factorial(m) for m in range(ORDER + 1)]

    def remainder(z: object) -> mpmath.mpc:
        z = mpmath.mpmathify(z)
        eps = 4 * R**2 * mpmath.sin(k * z / 2) ** 2 / (g * z) ** 2
        if q == 1:
            return lead * eps ** (ORDER + 1) / ((1 - eps) * z**2)
        partial = mpmath.mpf(0)
        for coefficient in reversed(rising):
            partial = partial * eps + coefficient
        whole = (1 - eps) ** (-int(q)) if q == int(q) else mpmath.power(1 - eps, -q)
        return lead * z ** (2 - line.dim) * (whole - partial)

    return remainder


def subtracted_transform(line: Worldline, gap: mpmath.mpf) -> mpmath.mpf:
    """integral along Im z = -c of exp(-i O z) S_M(z) dz, by residues at z = 0.

    Grouped by harmonic j: the terms with nu = O - j k < 0 give
    sum_m A_mj (-i nu)^(n_m - 1), n_m = D - 2 + 2m, a polynomial in -i nu whose
    coefficients (`_harmonics`) do not depend on the gap."""
    k, lead, harmonics = _harmonics(line, mpmath.mp.prec)
    total = mpmath.mpc(0)
    for j, coefficients in harmonics:
        nu = gap - j * k
        if nu >= 0:
            continue
        x = -1j * nu
        square, power = x * x, x ** (line.dim - 3 + 2 * j)  # the lowest power present: m = j
        for coefficient in coefficients:
            total += coefficient * power
            power *= square
    return mpmath.re(lead * total)


@functools.lru_cache(maxsize=16)
def _harmonics(line: Worldline, prec: int) -> tuple[mpmath.mpf, mpmath.mpc, list]:
    """(k, lead, [(j, [A_jj, A_(j+1)j, ..., A_Mj]) for j = 1..M]) with
    A_mj = w_m b_mj 2 pi i/(n_m - 1)!, b_mj = (-1)^j binom(2m, m - j)/2^m.
    Only j >= 1 can have nu < 0 (gaps are positive).  Cached per line and precision."""
    _, _, k, lead, series = _coefficients(line)
    harmonics = []
    for j in range(1, ORDER + 1):
        row = []
        for m in range(j, ORDER + 1):
            n = line.dim - 2 + 2 * m
            b = mpmath.ldexp(mpmath.mpf((-1) ** j * math.comb(2 * m, m - j)), -m)  # exact integers
            row.append(series[m] * b * 2j * mpmath.pi / math.factorial(n - 1))
        harmonics.append((j, row))
    return k, lead, harmonics
