"""The singularities of the pulled-back two-point function, and what they imply.

`continued_wightman` continues W from just below the real axis to complex proper
time along a straight path, fixing the square root of odd dimensions by
continuity (the principal branch can be the wrong one a full period down).

`circular_rate` is the excitation rate on a circle in 3+1 from the poles of W in
the lower half plane: closing the contour downwards (exp(-i w z) decays there),
F(w) = -2 pi i sum_n Res_(z_n) exp(-i w z) C/sigma2(z), over the zeros z_n of
sigma2 = 4 R^2 sin^2(k z/2) - gamma^2 z^2.  Besides z = -i y0 they come in pairs
z, -conj z near k z/2 = pi/2 + pi m - i log(2 (pi/2 + pi m)/v), m = 1, 2, ...
(sin u = (-1)^m u/v).  A thermal state would have them on one line repeating
with the period beta; here they are not, which is why the rate is not Planckian.
"""

from __future__ import annotations

import mpmath

from crosscheck.measure import Measured
from crosscheck.trajectories import Worldline, wightman, wightman_constant


def continued_wightman(line: Worldline, coupling: str, start: mpmath.mpf, end: mpmath.mpc, steps: int = 48) -> mpmath.mpc:
    """W at `end`, continued from the real point `start` (just below the axis)."""
    if coupling == "derivative" or line.dim % 2 == 0:
        return wightman(line, coupling)(end)
    root = mpmath.sqrt(line.lapse_ratio(start))
    for k in range(1, steps + 1):
        z = start + (end - start) * mpmath.mpf(k) / steps
        candidate = mpmath.sqrt(line.lapse_ratio(z))
        root = candidate if abs(candidate - root) <= abs(candidate + root) else -candidate
    z = mpmath.mpmathify(end)
    return wightman_constant(line.dim) * (1j * z * root) ** (2 - line.dim)


def _zero(line: Worldline, m: int) -> mpmath.mpc:
    v, k = line.radius * line.angular_velocity, line.gamma * line.angular_velocity
    p = mpmath.pi / 2 + mpmath.pi * m
    sign = (-1) ** m
    u = mpmath.findroot(lambda u: mpmath.sin(u) - sign * u / v, mpmath.mpc(p, -mpmath.log(2 * p / v)))
    if abs(u.real - p) > mpmath.pi / 2:
        raise ValueError(f"pole search: zero {m} of sigma2 not found near its asymptotic place")
    return 2 * u / k


def circular_rate(line: Worldline, gap: mpmath.mpf, digits: int) -> Measured:
    """F(gap > 0) on a circle in 3+1 by the residue sum; the slowly converging tail
    (terms ~ m^(-1 - 2 w/k), with a rotating phase) is summed by Levin's u-transform
    of the partial sums; the error is the change from 50 to 100 terms."""
    if line.kind != "circular" or line.dim != 4:
        raise ValueError("the pole sum is implemented for circular motion in 3+1")
    with mpmath.workdps(digits + 10):
        C = wightman_constant(4)
        g, R = line.gamma, line.radius
        k = g * line.angular_velocity

        def slope(z: mpmath.mpc) -> mpmath.mpc:  # d sigma2/dz
            return 2 * R**2 * k * mpmath.sin(k * z) - 2 * g**2 * z

        def pair(m: int) -> mpmath.mpf:  # the poles z_m and -conj z_m together
            z = _zero(line, m)
            return 4 * mpmath.pi * C * mpmath.im(mpmath.exp(-1j * gap * z) / slope(z))

        y0 = line.singular_depth()
        axis = mpmath.re(-2j * mpmath.pi * C * mpmath.exp(-gap * y0) / slope(-1j * y0))
        partial, sums = mpmath.mpf(0), []
        for m in range(1, 2 * TERMS + 1):
            partial += pair(m)
            sums.append(partial)
        short, long = (_levin(sums[:n]) for n in (TERMS, 2 * TERMS))
        value = axis + long
        # Levin's error is not monotone in the number of terms: ten times the change, to be safe.
        return Measured(value, 10 * abs(long - short) + mpmath.mpf(10) ** (-min(digits, 20)) * abs(value))


TERMS = 50


def _levin(sums: list) -> mpmath.mpf:
    """Levin's u-transform of the partial sums (mpmath.levin)."""
    transform = mpmath.levin(method="levin", variant="u")
    value, _ = transform.update_psum(sums)
    return value


def deexcitation_from_poles(line: Worldline, gap: mpmath.mpf, excitation: Measured) -> Measured:
    """F(-w) = F(w) + 2 pi i Res_0 exp(i w z) C/sigma2(z): the poles above the axis mirror
    those below (sigma2 is real-analytic), leaving the double pole at z = 0, whose residue
    is i w C/(sigma2''(0)/2) (sigma2 is even)."""
    curvature = line.sigma2_derivatives(mpmath.mpf(0))[2] / 2
    residue = 1j * gap * wightman_constant(4) / curvature  # e^{i w z}/(curvature z^2)
    return Measured(excitation.value + mpmath.re(2j * mpmath.pi * residue), excitation.error)
