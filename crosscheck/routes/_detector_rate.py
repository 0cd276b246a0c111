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

Accuracy: the rates aim at `digits` + GUARD digits.  The answer F(O) ~ exp(-O y0) is
exp(-O (y0 - c)) times the size of the integrand: that many digits are added to the
quadrature's design accuracy, so the small excitation rates at large gaps keep their
relative accuracy.  The samples on the line and on the circle do not depend on the gap
(`Sampling`): one set serves every gap up to the largest it was designed for.  They are
taken at two working precisions CHECK digits apart on the *same* nodes, so the two
results differ by rounding alone; the error is the quadrature's (square law of a step
halving, plus a bound on the truncated tail and on rounding) plus that difference.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import mpmath

from crosscheck.measure import Measured
from crosscheck.routes._detector_asymptotic import circular_remainder, subtracted_transform
from crosscheck.routes._detector_fourier import (
    principal_part,
    square_law_error,
    trapezoid_samples,
    trapezoid_transforms,
)
from crosscheck.trajectories import Worldline, monopole_from_root, parity, wightman, wightman_constant

GUARD = 2  # digits beyond the requested ones that the rates aim at
ROUNDING = 4  # working digits beyond the design accuracy: rounding stays 10^4 below it
CHECK = 4  # digits added for the second precision (same nodes)
TAIL = 2  # the line's samples stop TAIL digits below the design accuracy


@dataclass(frozen=True)
class Pass:
    """The gap-independent samples at one working precision."""

    dps: int
    line: tuple  # the integrand on Im z = -c at x_k = k h (empty when inertial)
    laurent: tuple[Measured, ...]  # a_-1 ... a_-m of W at z = 0
    scale: mpmath.mpf  # |W(-i c)|, the integrand's size on the line


@dataclass(frozen=True)
class Sampling:
    """Everything of the quadrature that does not depend on the gap; serves gaps up to `top`."""

    line: Worldline
    coupling: str
    digits: int
    top: mpmath.mpf
    design: int
    h: mpmath.mpf
    passes: tuple[Pass, Pass]


@dataclass(frozen=True)
class Rates:
    """F(+O) and F(-O) at positive gaps O, with how they were obtained."""

    gaps: tuple[mpmath.mpf, ...]
    excitation: tuple[Measured, ...]
    deexcitation: tuple[Measured, ...]
    provenance: tuple[str, ...] = field(default=())
    sampling: Sampling | None = field(default=None, compare=False, repr=False)


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


def transition_rates(line: Worldline, coupling: str, gaps: Sequence[mpmath.mpf], digits: int) -> Rates:
    """F(+O), F(-O) for each gap O > 0 to about `digits` digits, at two precisions."""
    if any(not g > 0 for g in gaps):
        raise ValueError("gaps must be positive (the de-excitation rates come with them)")
    return rates_from(sample(line, coupling, max(gaps), digits), gaps)


def sample(line: Worldline, coupling: str, largest_gap: mpmath.mpf, digits: int) -> Sampling:
    """The samples on the line and on the circle for gaps up to `largest_gap`, at two precisions.

    The step follows from the strip theorem: the integrand exp(-i O x) W(x - i c) is
    analytic for |Im x| < c and grows there like exp(O c), so h = 2 pi c/(loss + top c)
    (times 0.9) makes the error exp(-loss) times the integrand's size."""
    design = digits + GUARD + extra_digits(line, largest_gap)
    with mpmath.workdps(design + ROUNDING):
        _, c = contour_offset(line)
        top = largest_gap + (line.gamma * line.angular_velocity if line.kind == "circular" else 0)
        h = 2 * mpmath.pi * c / (design * mpmath.log(10) + top * c) * mpmath.mpf("0.9")
    low = _pass(line, coupling, h, design, design + ROUNDING, None)
    high = _pass(line, coupling, h, design, design + ROUNDING + CHECK, len(low.line))
    return Sampling(line, coupling, digits, largest_gap, design, h, (low, high))


def rates_from(sampling: Sampling, gaps: Sequence[mpmath.mpf]) -> Rates:
    """F(+O), F(-O) at the gaps (each at most `sampling.top`) from the stored samples."""
    if any(not 0 < g <= sampling.top for g in gaps):
        raise ValueError("gaps must be positive and within the range the samples were designed for")
    low, high = (_rates_at(sampling, p, gaps) for p in sampling.passes)
    with mpmath.workdps(sampling.passes[1].dps):
        excitation = tuple(_combine(a, b) for a, b in zip(low[0], high[0]))
        deexcitation = tuple(_combine(a, b) for a, b in zip(low[1], high[1]))
    line = sampling.line
    y0, c = contour_offset(line)
    method = {"circular": "trapezoidal rule on W - S_M plus the exact transform of S_M (residues at 0)",
              "inertial": "W singular at s = 0 only: F(+O) = 0 by closing below"}.get(line.kind, "trapezoidal rule")
    dps = [p.dps for p in sampling.passes]
    provenance = (
        f"contour Im s = -{mpmath.nstr(c, 6)} (half the depth {mpmath.nstr(y0, 6)} of the first singularity), {method}, "
        f"{len(sampling.passes[0].line)} nodes designed for {sampling.design} digits",
        "de-excitation: line above s = 0 plus the residue at s = 0 (circle rule)",
        f"two working precisions ({dps[0]} and {dps[1]} digits) on the same nodes; "
        "error = square-law estimate + tail and rounding bounds + their difference",
    )
    return Rates(tuple(gaps), excitation, deexcitation, provenance, sampling)


def _combine(low: Measured, high: Measured) -> Measured:
    return Measured(high.value, high.error + abs(high.value - low.value))


def _pass(line: Worldline, coupling: str, h: mpmath.mpf, design: int, dps: int, count: int | None) -> Pass:
    """The samples at working precision `dps`: on the line until they fall TAIL digits below
    the design accuracy (or exactly `count` of them), and the Laurent coefficients at 0."""
    with mpmath.workdps(dps):
        W = wightman(line, coupling)
        _, c = contour_offset(line)
        laurent = _laurent(line, W, c, design, coupling)
        if line.kind == "inertial":  # W is singular at z = 0 only: closing below gives 0
            return Pass(dps, (), laurent, mpmath.mpf(0))
        scale = abs(W(mpmath.mpc(0, -c)))
        integrand = circular_remainder(line) if line.kind == "circular" else None
        sampler = _line_sampler(line, coupling, W, integrand, c)
        if count is None:
            values = trapezoid_samples(sampler, h, scale * mpmath.mpf(10) ** (-design - TAIL))
        else:
            values = [sampler(k * h) for k in range(count)]
        return Pass(dps, tuple(values), laurent, scale)


def _rates_at(sampling: Sampling, samples: Pass, gaps: Sequence[mpmath.mpf]):
    with mpmath.workdps(samples.dps):
        line = sampling.line
        p = parity(line, sampling.coupling)
        _, c = contour_offset(line)
        gaps = [mpmath.mpf(g) for g in gaps]
        integrals = _line_integrals(sampling, samples, c, gaps)
        excitation, deexcitation = [], []
        for gap, integral in zip(gaps, integrals):
            damping = mpmath.exp(-gap * c)
            up = Measured(damping * integral.value, damping * integral.error)
            residue = _residue(samples.laurent, gap)
            down_value = p * up.value + mpmath.re(2j * mpmath.pi * residue.value)
            excitation.append(up)
            deexcitation.append(Measured(down_value, up.error + 2 * mpmath.pi * residue.error))
        return excitation, deexcitation


def _laurent(line: Worldline, W, c: mpmath.mpf, design: int, coupling: str) -> tuple[Measured, ...]:
    """The Laurent coefficients a_-1 ... a_-m of W at its pole of order m at z = 0 (m = D - 2;
    2 for the derivative coupling), on the circle |z| = c/4.  Nodes: enough for (1/8)^n
    (the radius over the depth y0 = 2c of the next singularity) to fall below 10^-design."""
    order = 2 if coupling == "derivative" else line.dim - 2
    n = 16
    while n < 4096 and n * mpmath.log(8) < design * mpmath.log(10) + 10:
        n *= 2
    return tuple(principal_part(W, c / 4, order, n, design))


def _residue(laurent: Sequence[Measured], gap: mpmath.mpf) -> Measured:
    """Res_0[exp(i O z) W(z)] = sum_(j < m) (i O)^j/j! a_(-1-j)."""
    terms = [(1j * gap) ** j / mpmath.factorial(j) for j in range(len(laurent))]
    value = mpmath.fsum(t * a.value for t, a in zip(terms, laurent))
    error = mpmath.fsum(abs(t) * a.error for t, a in zip(terms, laurent))
    return Measured(value, error)


def _line_integrals(sampling: Sampling, samples: Pass, c: mpmath.mpf, gaps: list) -> list[Measured]:
    """I(O) = 2 Re integral_0^inf exp(-i O x) W(x - i c) dx for every gap (the circle:
    of the remainder W - S_M, with exp(O c) times the exact transform of S_M added).

    Error: the square law of the step halving, plus the dropped tail -- below tiny = the last samples' bound for 8 nodes,
    it adds at most tiny x_N when W decays monotonically and faster than 1/x^2 (exponential
    decay; x^-(2M+D) for the circle's remainder) -- plus rounding, 10^3 ulps of the sum of
    |samples| (the second precision measures the actual rounding).  The square law's scale
    A in err(h) = A q^(1/h) is the integral of |integrand| along the strip's edge (the strip
    theorem); the integral along the line itself, times the Fourier factor's growth exp(O c)
    towards the edge, is smaller than that (W grows towards the singularities), so it
    overstates err(h) = err(2h)^2/A."""
    line, h, values = sampling.line, sampling.h, samples.line
    if not values:
        return [Measured(mpmath.mpf(0), mpmath.mpf(0)) for _ in gaps]
    tiny = samples.scale * mpmath.mpf(10) ** (-sampling.design - TAIL)
    norm = 2 * h * mpmath.fsum(abs(v) for v in values)  # integral of |integrand| along the line
    rounding = norm * mpmath.mpf(10) ** (3 - samples.dps)
    tail = 2 * tiny * h * len(values)
    results = []
    for gap, (fine, coarse) in zip(gaps, trapezoid_transforms(values, h, gaps)):
        fine, coarse = 2 * fine, 2 * coarse
        edge = norm * mpmath.exp(gap * c)  # at most the integral of |integrand| along the strip's edge
        error = square_law_error(fine, coarse, rounding, edge) + tail
        if line.kind == "circular":
            fine += mpmath.exp(gap * c) * subtracted_transform(line, gap)
        results.append(Measured(fine, error))
    return results


def _line_sampler(line: Worldline, coupling: str, W, remainder, c: mpmath.mpf) -> Callable[[mpmath.mpf], object]:
    """x -> the integrand at x - i c: W, or on the circle the remainder W - S_M.

    Odd dimensions take the principal power of h = -sigma2/z^2: along the line h must not
    cross the negative real axis (else the principal branch is not the continuation from
    the real axis).  Checked between consecutive nodes (x increasing); h is computed once
    per node and serves both the check and W."""
    integrand = remainder if remainder is not None else W
    if coupling != "monopole" or line.dim % 2 == 0:
        return lambda x: integrand(mpmath.mpc(x, -c))
    constant = wightman_constant(line.dim)
    previous: list = []

    def sample(x: mpmath.mpf) -> mpmath.mpc:
        z = mpmath.mpc(x, -c)
        h = line.lapse_ratio(z)
        if previous and h.real < 0 and previous[0].real < 0 and (h.imag > 0) != (previous[0].imag > 0):
            raise ValueError("odd dimension: -sigma2/s^2 crosses the branch cut on the contour")
        previous[:] = [h]
        return remainder(z) if remainder is not None else monopole_from_root(constant, line.dim, z, mpmath.sqrt(h))

    return sample
