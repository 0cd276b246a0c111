"""The singularities of the pulled-back two-point function, and what they imply.

`Continuation` continues W from just below the real axis to complex proper
time, fixing the square root of odd dimensions by continuity along the path (the
principal branch can be the wrong one a full period down).

`circular_rate` is the excitation rate on a circle in 3+1 from the poles of W in
the lower half plane: closing the contour downwards (exp(-i w z) decays there),
F(w) = -2 pi i sum_n Res_(z_n) exp(-i w z) C/sigma2(z), over the zeros z_n of
sigma2 = 4 R^2 sin^2(k z/2) - gamma^2 z^2.  Besides z = -i y0 they come in pairs
z, -conj z near k z/2 = pi/2 + pi m - i log(2 (pi/2 + pi m)/v), m = 1, 2, ...
(sin u = (-1)^m u/v).  A thermal state would have them on one line repeating
with the period beta; here they are not, which is why the rate is not Planckian.
"""

from __future__ import annotations

import functools

import mpmath

from crosscheck.measure import Measured
from crosscheck.trajectories import Worldline, monopole_from_root, wightman, wightman_constant

TERMS = 50  # pole pairs in the short sum; the long one has twice as many


def _follow(previous: mpmath.mpc, candidate: mpmath.mpc) -> mpmath.mpc:
    """The sign of the square root that continues `previous` (the nearer of +-candidate)."""
    return candidate if abs(candidate - previous) <= abs(candidate + previous) else -candidate


class Continuation:
    """W continued from the real point s (just below the axis) into the lower half plane.

    Odd dimensions take a square root of h = -sigma2/z^2, followed by continuity.  The
    root is followed down the vertical s - i t (t >= 0) in steps of `step` and kept at
    every node, so a root search that evaluates W at many points near the vertical pays
    for the path once: a point z is reached from the nearest kept node by a straight path
    in steps no longer than `step` (the same continuation as one straight path from s
    while no zero of h lies between the two paths; `step` must stay well below the
    distance to the zeros of h, where the root changes sign)."""

    def __init__(self, line: Worldline, coupling: str, s: mpmath.mpf, step: mpmath.mpf) -> None:
        self.line, self.s, self.step = line, mpmath.mpf(s), mpmath.mpf(step)
        self.direct = wightman(line, coupling) if coupling == "derivative" or line.dim % 2 == 0 else None
        if self.direct is None:
            self.constant = wightman_constant(line.dim)
            self.roots = [mpmath.sqrt(line.lapse_ratio(self.s))]

    def __call__(self, z: object) -> mpmath.mpc:
        z = mpmath.mpmathify(z)
        if self.direct is not None:
            return self.direct(z)
        return monopole_from_root(self.constant, self.line.dim, z, self._root(z))

    def _root(self, z: mpmath.mpc) -> mpmath.mpc:
        depth = -mpmath.im(z)  # the vertical coordinate t of z
        while (len(self.roots) - 1) * self.step < depth:
            t = len(self.roots) * self.step
            self.roots.append(_follow(self.roots[-1], mpmath.sqrt(self.line.lapse_ratio(mpmath.mpc(self.s, -t)))))
        k = min(max(int(mpmath.nint(depth / self.step)), 0), len(self.roots) - 1)
        node = mpmath.mpc(self.s, -k * self.step)
        steps = max(1, int(mpmath.ceil(abs(z - node) / self.step)))
        root = self.roots[k]
        for j in range(1, steps + 1):
            root = _follow(root, mpmath.sqrt(self.line.lapse_ratio(node + (z - node) * mpmath.mpf(j) / steps)))
        return root


def _zero(line: Worldline, m: int) -> mpmath.mpc:
    """z_m = 2 u/k with sin u = (-1)^m u/v, by Newton's method from the asymptotic place
    (quadratic convergence: a step below 2^(8 - prec) |u| leaves u exact to the precision)."""
    v, k = line.radius * line.angular_velocity, line.gamma * line.angular_velocity
    p = mpmath.pi / 2 + mpmath.pi * m
    sign = (-1) ** m
    u = mpmath.mpc(p, -mpmath.log(2 * p / v))
    for _ in range(60):
        step = (mpmath.sin(u) - sign * u / v) / (mpmath.cos(u) - sign / v)
        u -= step
        if abs(step) <= mpmath.ldexp(abs(u), 8 - mpmath.mp.prec):
            break
    else:
        raise ValueError(f"pole search: Newton's method did not settle on zero {m} of sigma2")
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
        y0, axis_weight, poles = _poles(line, mpmath.mp.prec)
        axis = mpmath.re(-2j * mpmath.pi * C * mpmath.exp(-gap * y0) * axis_weight)
        partial, sums = mpmath.mpf(0), []
        for z, weight in poles:  # the poles z_m and -conj z_m together
            partial += 4 * mpmath.pi * C * mpmath.im(mpmath.exp(-1j * gap * z) * weight)
            sums.append(partial)
        transform = mpmath.levin(method="levin", variant="u")  # Levin's u-transform, continued from 50 to 100 terms
        short, _ = transform.update_psum(sums[:TERMS])
        long, _ = transform.update_psum(sums)
        value = axis + long
        # Levin's error is not monotone in the number of terms: ten times the change, to be safe.
        return Measured(value, 10 * abs(long - short) + mpmath.mpf(10) ** (-min(digits, 20)) * abs(value))


@functools.lru_cache(maxsize=8)
def _poles(line: Worldline, prec: int) -> tuple[mpmath.mpf, mpmath.mpc, tuple]:
    """(y0, 1/sigma2'(-i y0), ((z_m, 1/sigma2'(z_m)) for m = 1 .. 2 TERMS)): the zeros of sigma2
    in the lower half plane and the weights of their residues, which do not depend on the gap
    (cached per line and precision)."""
    g, R = line.gamma, line.radius
    k = g * line.angular_velocity

    def slope(z: mpmath.mpc) -> mpmath.mpc:  # d sigma2/dz
        return 2 * R**2 * k * mpmath.sin(k * z) - 2 * g**2 * z

    y0 = line.singular_depth()
    zeros = [_zero(line, m) for m in range(1, 2 * TERMS + 1)]
    return y0, 1 / slope(-1j * y0), tuple((z, 1 / slope(z)) for z in zeros)



def deexcitation_from_poles(line: Worldline, gap: mpmath.mpf, excitation: Measured) -> Measured:
    """F(-w) = F(w) + 2 pi i Res_0 exp(i w z) C/sigma2(z): the poles above the axis mirror
    those below (sigma2 is real-analytic), leaving the double pole at z = 0, whose residue
    is i w C/(sigma2''(0)/2) (sigma2 is even)."""
    curvature = line.sigma2_derivatives(mpmath.mpf(0))[2] / 2
    residue = 1j * gap * wightman_constant(4) / curvature  # e^{i w z}/(curvature z^2)
    return Measured(excitation.value + mpmath.re(2j * mpmath.pi * residue), excitation.error)
