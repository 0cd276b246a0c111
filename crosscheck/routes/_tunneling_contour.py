"""Numeric side of tunneling: the closed contour integral of 1/sqrt(F G) around r_h.

F G is evaluated at complex r on the circle r_h + radius e^(i theta); the
trapezoidal rule on a circle converges exponentially, like (radius/d)^nodes
with d the distance to the nearest other singularity, so the radius is a
quarter of d (found from the roots of the numerator and denominator of F G).
The winding numbers of F and G around the circle give the orders of their
zeros (argument principle); sqrt(F G) is followed continuously along the
circle (single-valued for an even total order).  Im W_out = (E/2) Im of the closed integral.
The error is the change from half the nodes plus the change at half the
radius (which would also reveal a singularity inside the circle) plus rounding.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import mpmath


@dataclass(frozen=True)
class Circle:
    """Moments (1/2 pi i) closed integral of (z - r_h)^j / sqrt(P) dz, j = 0, 1, on one circle."""

    radius: mpmath.mpf
    nodes: int
    orders: tuple[int, int]  # winding numbers of F and of G: the orders of their zeros at r_h
    residue: mpmath.mpc  # j = 0: the residue of 1/sqrt(P)
    second: mpmath.mpc  # j = 1: the coefficient of (z - r_h)^-2
    coarse: mpmath.mpc  # the residue from half the nodes
    rounding: mpmath.mpf
    history: list[tuple[int, float]]  # (nodes, residue) for the convergence plot


def winding(values: list[mpmath.mpc]) -> int:
    """Turns of a closed sequence of non-zero values around 0 (argument principle)."""
    total = mpmath.fsum(mpmath.arg(b / a) for a, b in zip(values, values[1:] + values[:1]))
    return int(mpmath.nint(total / (2 * mpmath.pi)))


def circle(FG: Callable, r_h: mpmath.mpf, radius: mpmath.mpf, nodes: int, side: int) -> Circle:
    """Trapezoidal rule with `nodes` nodes (a power of two), starting on the real axis at
    r_h + side radius where sqrt(F G) > 0 is taken (the static side).  FG(z) -> (F, G)."""
    two_pi = 2 * mpmath.pi
    zs = [side * radius * mpmath.expj(two_pi * j / nodes) for j in range(nodes)]
    pairs = [FG(r_h + z) for z in zs]
    values = [f * g for f, g in pairs]
    orders = (winding([f for f, _ in pairs]), winding([g for _, g in pairs]))
    roots, previous_root = [], None
    for v in values:
        root = mpmath.sqrt(v)
        if previous_root is not None:
            if abs(root - previous_root) > abs(root + previous_root):
                root = -root  # follow the branch continuously
        elif mpmath.re(root) < 0:
            root = -root
        roots.append(root)
        previous_root = root

    ratios = [z / w for z, w in zip(zs, roots)]  # z/sqrt(P), shared by all the sums below
    seconds = [z * q for z, q in zip(zs, ratios)]

    def moment(power: int, step: int) -> mpmath.mpc:
        # (1/2 pi i) sum dz/sqrt(P) z^power with dz = i z dtheta: (1/N) sum z^(power + 1)/sqrt(P)
        terms = (ratios if power == 0 else seconds)[::step]
        return mpmath.fsum(terms) / len(terms)

    history, step = [], nodes
    while step >= 1:
        if nodes // step >= 4:
            history.append((nodes // step, float(mpmath.re(moment(0, step)))))
        step //= 2
    rounding = mpmath.eps * max(abs(q) for q in ratios) * 10
    return Circle(radius, nodes, orders, moment(0, 1), moment(1, 1), moment(0, 2), rounding, history)


def nodes_for(digits: int) -> int:
    """Nodes so that (1/4)^(nodes/2) < 10^-(digits + 2): the coarse rule (half of them) is
    then converged, and the full one far beyond."""
    needed = int(mpmath.ceil(2 * (digits + 2) * mpmath.log(10) / mpmath.log(4)))
    n = 8
    while n < needed:
        n *= 2
    return n


@dataclass(frozen=True)
class Contour:
    residue: mpmath.mpf  # real residue of 1/sqrt(F G) at r_h
    error: mpmath.mpf
    main: Circle
    small: Circle


def contour(FG: Callable, r_h: mpmath.mpf, scale: mpmath.mpf, side: int, digits: int) -> Contour:
    """The residue on a circle of radius scale/4, checked on one of radius scale/8."""
    nodes = nodes_for(digits)
    main = circle(FG, r_h, scale / 4, nodes, side)
    small = circle(FG, r_h, scale / 8, nodes // 2, side)
    if main.orders != small.orders:
        raise ValueError(f"F, G have {main.orders} zeros inside radius {mpmath.nstr(main.radius, 5)} but "
                         f"{small.orders} inside half of it: another zero near r_h")
    error = (abs(main.residue - main.coarse) + abs(main.residue - small.residue) + main.rounding
             + abs(mpmath.im(main.residue)))
    return Contour(mpmath.re(main.residue), error, main, small)
