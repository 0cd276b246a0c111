"""Numeric side of the Euclidean period: proper distance by quadrature, then Richardson.

beta_t(delta) = 2 pi rho(r_h + side delta) / sqrt(F(r_h + side delta)) with
rho = integral_{r_h}^{r} dr'/sqrt(G) computed by Gauss-Legendre quadrature
after r' = r_h + side s^2 (the integrand 2 s / sqrt(G) is then smooth at
s = 0).  beta_t(delta) is a power series in delta whose radius is the
distance d to the nearest other zero or pole of F or G in the complex r
plane, so the samples start at delta_0 = d/100 and are extrapolated to
delta = 0 with `crosscheck.numerics.richardson_limit`.

Degenerate horizons (F G ~ x^p, p > 2) have no finite period: the route shows
the proper distance (from a reference point, when it diverges) and the ratio
growing without bound instead.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import mpmath

from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit

Function = Callable[[mpmath.mpf], mpmath.mpf]


@dataclass(frozen=True)
class Local:
    """F and G near r_h at one parameter point and angle."""

    F: Function
    G: Function
    dF: Function  # F' (for polishing r_h)
    d2F: Function  # F'' (a double zero of F is polished as a zero of F')
    r_h: mpmath.mpf
    side: int
    scale: mpmath.mpf  # distance to the nearest other zero/pole of F or G

    def at(self, f: Function, delta: mpmath.mpf) -> mpmath.mpf:
        return f(self.r_h + self.side * delta)


def degenerate_bound(local: Local, k: int, m: int, separation: mpmath.mpf) -> mpmath.mpf:
    """The largest T_t a horizon could have and still look degenerate: a simple zero split
    off by `separation` (the root resolution) gives T_t ~ sqrt(F_k G_m) separation^((k+m)/2 - 1)/(4 pi),
    with F_k, G_m the leading coefficients read at delta = scale 10^-5."""
    delta = local.scale / 10**5
    coefficients = abs(local.at(local.F, delta)) / delta**k * abs(local.at(local.G, delta)) / delta**m
    return mpmath.sqrt(coefficients) * separation ** (mpmath.mpf(k + m) / 2 - 1) / (4 * mpmath.pi)


def zero_order(f: Function, local: Local) -> int:
    """Order of the zero of f at r_h from the slope of ln|f| against ln delta."""
    d1, d2 = local.scale / 10**4, local.scale / 10**5
    f1, f2 = abs(local.at(f, d1)), abs(local.at(f, d2))
    if f1 == 0 or f2 == 0 or not (mpmath.isfinite(f1) and mpmath.isfinite(f2)):
        raise ValueError("F or G is zero or singular next to the horizon: cannot read its order")
    slope = mpmath.log(f1 / f2) / mpmath.log(d1 / d2)
    order = int(mpmath.nint(slope))
    if abs(slope - order) > mpmath.mpf("0.05") or order < 0:
        raise ValueError(f"F or G is not analytic at r_h (behaves like x^{mpmath.nstr(slope, 4)})")
    return order


def polish(local: Local, order_f: int, error: mpmath.mpf) -> Measured:
    """r_h refined by Newton steps on F (or F' for a double zero), checked against the given one."""
    f, df = (local.F, local.dF) if order_f == 1 else (local.dF, local.d2F)
    x, step = local.r_h, mpmath.mpf(0)
    for _ in range(8):
        slope = df(x)
        if not slope or not mpmath.isfinite(slope):
            break
        step = f(x) / slope
        x -= step
        if abs(step) <= mpmath.eps * max(abs(x), 1):
            break
    if abs(x - local.r_h) > 100 * error + mpmath.mpf(10) ** (-mpmath.mp.dps // 3) * max(abs(x), 1):
        raise ValueError(f"the horizon r_h = {mpmath.nstr(local.r_h, 15)} is not a zero of F (nearest: {mpmath.nstr(x, 15)})")
    return Measured(x, abs(step) + 4 * mpmath.eps * max(abs(x), 1))


def proper_distance(local: Local, delta: mpmath.mpf) -> tuple[mpmath.mpf, mpmath.mpf]:
    """rho(r_h + side delta) = integral_0^sqrt(delta) 2 s ds / sqrt(G(r_h + side s^2)), with error."""

    def element(s: mpmath.mpf) -> mpmath.mpf:
        return 2 * s / mpmath.sqrt(abs(local.at(local.G, s * s)))

    return mpmath.quad(element, [0, mpmath.sqrt(delta)], method="gauss-legendre", error=True)


@dataclass(frozen=True)
class Extrapolated:
    beta: Measured
    samples: list[tuple[float, float]]
    h_last: mpmath.mpf
    steps: int


def period(local: Local, digits: int) -> Extrapolated:
    """lim beta_t(delta): Richardson over delta = h0 2^-k; h0 shrinks until the estimate settles.

    Error: Richardson's (last two orders), plus quadrature errors times the
    extrapolation's amplification (sum of |weights| < 9 for ratio 1/2)."""
    steps = 5 + digits // 4
    best = None
    for shrink in (100, 1000, 10**4):
        h0 = local.scale / shrink
        quad_errors = [mpmath.mpf(0)]

        def ratio(delta: mpmath.mpf, quad_errors: list = quad_errors) -> mpmath.mpf:
            rho, err = proper_distance(local, delta)
            root = mpmath.sqrt(abs(local.at(local.F, delta)))
            quad_errors.append(err / root)
            return 2 * mpmath.pi * rho / root

        measured, samples = richardson_limit(ratio, h0, steps=steps, ratio=mpmath.mpf(1) / 2)
        error = measured.error + 9 * 2 * mpmath.pi * max(quad_errors)
        candidate = Extrapolated(Measured(measured.value, error), samples, h0 / 2 ** (steps - 1), steps)
        if best is None or error < best.beta.error:
            best = candidate
        if error <= mpmath.mpf(10) ** (-digits - 2) * abs(measured.value):
            break
    return best


def horizon_shift_error(result: Extrapolated, r_h_error: mpmath.mpf) -> mpmath.mpf:
    """A shift e of r_h adds a term ~ beta e/delta to each sample, which the extrapolation
    amplifies by up to 2^steps: |beta| (e / delta_last) 2^steps bounds its effect."""
    return abs(result.beta.value) * r_h_error / result.h_last * 2**result.steps


def divergence(local: Local, points: int = 8) -> dict[str, list[float]]:
    """Evidence for a degenerate horizon: rho measured from r_ref = r_h + side scale/10 (it
    diverges at r_h when G has a double zero) and beta_t(delta) = 2 pi rho/sqrt(F), at
    delta = scale 10^-(1 + j/2); integrated in u = ln(delta) where the integrand is smooth."""
    reference = local.scale / 10
    deltas = [reference * mpmath.mpf(10) ** (-mpmath.mpf(j) / 2) for j in range(1, points + 1)]

    def element(u: mpmath.mpf) -> mpmath.mpf:
        x = mpmath.exp(u)
        return x / mpmath.sqrt(abs(local.at(local.G, x)))

    with mpmath.workdps(20):
        rhos = [mpmath.quad(element, [mpmath.log(d), mpmath.log(reference)]) for d in deltas]
        ratios = [2 * mpmath.pi * p / mpmath.sqrt(abs(local.at(local.F, d))) for d, p in zip(deltas, rhos)]
    return {"delta": [float(d) for d in deltas], "rho": [float(p) for p in rhos], "ratio": [float(q) for q in ratios]}
