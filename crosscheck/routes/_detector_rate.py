"""Transition rates of a detector on a stationary worldline, by shifted contours.

F(w) = integral ds exp(-i w s) W(s - i eps) (PHYSICS.md, "detector-response").
W(z) is analytic in the strip between z = 0 and its first singularity below
the real axis, at z = -i y0 (`Worldline.singular_depth`).  So:

- excitation, w = O > 0: move the contour to the line Im z = -c, c = y0/2,
  halfway between the singularities.  There F(O) = exp(-O c) I(O) with
  I(O) = 2 Re integral_0^inf exp(-i O x) W(x - i c) dx (W(-conj z) = conj W(z)
  pairs the two half lines).  No singularity is near the line: the trapezoidal
  rule converges like exp(-2 pi c/h) when W decays exponentially (uniform
  acceleration, with or without drift).  On a circle W decays only like s^(2-D):
  its slowly decaying part S_M is subtracted and transformed exactly by residues
  (`_detector_asymptotic`), the remainder goes to the trapezoidal rule.  Inertial
  motion: W is singular at s = 0 only, closing below gives F(O) = 0.
- de-excitation, w = -O: move the contour up past z = 0 to Im z = +c.  That line
  gives p exp(-O c) I(O) by symmetry (p = W's parity), and z = 0 leaves the
  residue: F(-O) = p F(O) + 2 pi i Res_0[exp(i O z) W(z)], taken on a circle
  (trapezoidal rule, geometric convergence).  In 3+1 the residue is O/(2 pi), in
  2+1 it is 1/2 (Huygens in even dimensions, Takagi's inversion in odd ones):
  both follow here, they are not put in.

The answer F(O) ~ exp(-O y0) is exp(-O (y0 - c)) times the size of the integrand:
that many digits are added to the working precision, so the small excitation
rates at large gaps keep their relative accuracy.  Every rate is computed at
two working precisions 6 digits apart; the error is the larger of their
difference and the quadrature estimate (square law of a step halving).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import mpmath

from crosscheck.measure import Measured
from crosscheck.routes._detector_asymptotic import circular_remainder, subtracted_transform
from crosscheck.routes._detector_fourier import principal_part, square_law_error, trapezoid_samples, trapezoid_transform
from crosscheck.trajectories import Worldline, parity, wightman

GUARD = 5
CHECK = 6  # digits added for the second precision


@dataclass(frozen=True)
class Rates:
    """F(+O) and F(-O) at positive gaps O, with how they were obtained."""

    gaps: tuple[mpmath.mpf, ...]
    excitation: tuple[Measured, ...]
    deexcitation: tuple[Measured, ...]
    provenance: tuple[str, ...] = field(default=())


def contour_offset(line: Worldline) -> tuple[mpmath.mpf, mpmath.mpf]:
    """(y0, c): the depth of the first singularity below the axis and the line's offset."""
    y0 = line.singular_depth()
    c = y0 / 2 if mpmath.isfinite(y0) else 1 / line.natural_scale()
    return y0, c


def extra_digits(line: Worldline, largest_gap: mpmath.mpf) -> int:
    """Digits cancelled on the line at the largest gap: O (y0 - c)/ln 10."""
    y0, c = contour_offset(line)
    if not mpmath.isfinite(y0):
        return 0
    if line.kind == "circular":  # the O(1) residue terms of S_M cancel down to F ~ exp(-O y0)
        return int(largest_gap * y0 / mpmath.log(10)) + 6
    return int(largest_gap * (y0 - c) / mpmath.log(10)) + 1


def exponential_decay(line: Worldline) -> bool:
    return line.kind in ("uniform-acceleration", "drift")


def transition_rates(line: Worldline, coupling: str, gaps: Sequence[mpmath.mpf], digits: int) -> Rates:
    """F(+O), F(-O) for each gap O > 0 to about `digits` digits, at two precisions."""
    if any(not g > 0 for g in gaps):
        raise ValueError("gaps must be positive (the de-excitation rates come with them)")
    base = digits + GUARD + extra_digits(line, max(gaps))
    low, high = (_rates_at(line, coupling, gaps, digits, dps) for dps in (base, base + CHECK))
    with mpmath.workdps(base + CHECK):
        excitation = tuple(_combine(a, b) for a, b in zip(low[0], high[0]))
        deexcitation = tuple(_combine(a, b) for a, b in zip(low[1], high[1]))
    y0, c = contour_offset(line)
    method = {"circular": "trapezoidal rule on W - S_M plus the exact transform of S_M (residues at 0)",
              "inertial": "W singular at s = 0 only: F(+O) = 0 by closing below"}.get(line.kind, "trapezoidal rule")
    provenance = (
        f"contour Im s = -{mpmath.nstr(c, 6)} (half the depth {mpmath.nstr(y0, 6)} of the first singularity), {method}",
        "de-excitation: line above s = 0 plus the residue at s = 0 (circle rule)",
        f"two working precisions ({base} and {base + CHECK} digits); error = max(their difference, square-law estimate)",
    )
    return Rates(tuple(gaps), excitation, deexcitation, provenance)


def _combine(low: Measured, high: Measured) -> Measured:
    return Measured(high.value, max(high.error, low.error if low.error > 0 else 0, abs(high.value - low.value)))


def _rates_at(line: Worldline, coupling: str, gaps: Sequence[mpmath.mpf], digits: int, dps: int):
    with mpmath.workdps(dps):
        W = wightman(line, coupling)
        p = parity(line, coupling)
        _, c = contour_offset(line)
        gaps = [mpmath.mpf(g) for g in gaps]
        integrals = _line_integrals(line, W, c, gaps, dps, coupling)
        residues = _residues(line, W, c, gaps, dps, coupling)
        excitation, deexcitation = [], []
        for gap, integral, residue in zip(gaps, integrals, residues):
            damping = mpmath.exp(-gap * c)
            up = Measured(damping * integral.value, damping * integral.error)
            down_value = p * up.value + mpmath.re(2j * mpmath.pi * residue.value)
            excitation.append(up)
            deexcitation.append(Measured(down_value, up.error + 2 * mpmath.pi * residue.error))
        return excitation, deexcitation


def _residues(line: Worldline, W, c: mpmath.mpf, gaps: list, dps: int, coupling: str) -> list[Measured]:
    """Res_0[exp(i O z) W(z)] = sum_(j < m) (i O)^j/j! a_(-1-j), with a_k the Laurent
    coefficients of W at its pole of order m at z = 0 (m = D - 2; 2 for the derivative
    coupling), taken once on the circle |z| = c/4 for all gaps.  Nodes: enough for
    (1/8)^n (the radius over the depth y0 = 2c of the next singularity) to
    fall below 10^-dps."""
    order = 2 if coupling == "derivative" else line.dim - 2
    radius = c / 4
    n = 16
    while n < 4096 and n * mpmath.log(8) < dps * mpmath.log(10) + 10:
        n *= 2
    laurent = principal_part(W, radius, order, n, dps - 4)
    results = []
    for gap in gaps:
        terms = [(1j * gap) ** j / mpmath.factorial(j) for j in range(order)]
        value = mpmath.fsum(t * a.value for t, a in zip(terms, laurent))
        error = mpmath.fsum(abs(t) * a.error for t, a in zip(terms, laurent))
        results.append(Measured(value, error))
    return results


def _line_integrals(line: Worldline, W, c: mpmath.mpf, gaps: list, dps: int, coupling: str) -> list[Measured]:
    """I(O) = 2 Re integral_0^inf exp(-i O x) W(x - i c) dx for every gap (the circle:
    of the remainder W - S_M, with exp(O c) times the exact transform of S_M added)."""
    if line.kind == "inertial":  # W is singular at z = 0 only: closing below gives 0
        return [Measured(mpmath.mpf(0), mpmath.mpf(0)) for _ in gaps]
    if line.kind != "circular":
        return _trapezoid_integrals(line, W, c, gaps, dps, coupling, max(gaps))
    remainder = circular_remainder(line)
    k = line.gamma * line.angular_velocity
    integrals = _trapezoid_integrals(line, remainder, c, gaps, dps, coupling, max(gaps) + k, scale=abs(W(mpmath.mpc(0, -c))))
    return [Measured(i.value + mpmath.exp(g * c) * subtracted_transform(line, g), i.error) for g, i in zip(gaps, integrals)]


def _trapezoid_integrals(line: Worldline, W, c: mpmath.mpf, gaps: list, dps: int, coupling: str, top: mpmath.mpf, scale=None) -> list[Measured]:
    """One set of samples on the line serves all gaps; h from the strip theorem:
    the integrand is analytic for |Im x| < c and grows there like exp(O c)."""
    loss = dps * mpmath.log(10)
    h = 2 * mpmath.pi * c / (loss + top * c) * mpmath.mpf("0.9")
    start = W(mpmath.mpc(0, -c)) if scale is None else scale
    sample = _branch_checked(line, W, c) if coupling == "monopole" and line.dim % 2 == 1 else (lambda x: W(mpmath.mpc(x, -c)))
    values = trapezoid_samples(sample, h, abs(start) * mpmath.mpf(10) ** (-dps))
    floor = abs(start) * mpmath.mpf(10) ** (-dps + 6) * len(values) * h
    results = []
    for gap in gaps:
        fine, coarse = (2 * value for value in trapezoid_transform(values, h, gap))
        edge = 2 * abs(start) * mpmath.exp(gap * c) / c  # integrand size on the strip's edge
        results.append(Measured(fine, square_law_error(fine, coarse, floor, edge)))
    return results


def _branch_checked(line: Worldline, W, c: mpmath.mpf):
    """x -> W(x - i c) for odd dimensions, which take the principal power of
    h = -sigma2/z^2: along the line h must not cross the negative real axis (else
    the principal branch is not the continuation from the real axis).  Checked
    between consecutive nodes (x increasing)."""
    previous: list = []

    def sample(x: mpmath.mpf) -> mpmath.mpc:
        z = mpmath.mpc(x, -c)
        h = line.lapse_ratio(z)
        if previous and h.real < 0 and previous[0].real < 0 and (h.imag > 0) != (previous[0].imag > 0):
            raise ValueError("odd dimension: -sigma2/s^2 crosses the branch cut on the contour")
        previous[:] = [h]
        return W(z)

    return sample
