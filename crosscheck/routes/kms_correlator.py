"""The kms-correlator route: imaginary-time periodicity of the pulled-back two-point function.

A thermal state at inverse temperature beta obeys the KMS condition
W(s - i beta) = W(-s) (PHYSICS.md, "kms-correlator").  The route pulls the
vacuum Wightman function back to the worldline, continues it to complex proper
time (`_kms_poles.Continuation`) and, at several real s, solves
W(s - i beta) = W(-s) for beta: the best of a scan over real beta, refined by the
secant method in the complex beta plane.  The same real beta at every s means a KMS state, T = 1/beta; roots
that differ, are complex or do not exist mean no beta satisfies the condition
over the range: not thermal.  The response shape of a KMS state follows from
W's parity: W(-s) = W(s) (even dimensions) gives a bose-shaped, W(-s) = -W(s)
(odd dimensions) a fermi-shaped response.

T_eff(w): 1/beta at every gap for a KMS state (detailed balance is KMS in
frequency); on a circle in 3+1 from the poles of W (`_kms_poles.circular_rate`).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes._kms_poles import Continuation, circular_rate, deexcitation_from_poles
from crosscheck.routes.base import NumericResult, Problem, SymbolicResult
from crosscheck.trajectories import Worldline, detector_worldline, minkowski_applies, wightman

SAMPLES = (mpmath.mpf("0.35"), mpmath.mpf("0.7"), mpmath.mpf("1.1"), mpmath.mpf("1.6"), mpmath.mpf("2.2"), mpmath.mpf(3))


class KmsCorrelatorRoute:
    """KMS periodicity in imaginary proper time of the pulled-back Wightman function."""

    name: ClassVar[str] = "kms-correlator"
    title: ClassVar[str] = "Imaginary-time (KMS) periodicity of the pulled-back two-point function"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "2"
    observables: ClassVar[frozenset[str]] = frozenset({"T", "T_eff", "rate", "spectrum"})
    scope: ClassVar[frozenset[str]] = frozenset({"detector"})

    def applies(self, problem: Problem) -> str | None:
        return minkowski_applies(problem)

    def symbolic(self, problem: Problem) -> SymbolicResult:
        raise CannotCompute("beta is found numerically (root search on the continued correlator)")

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        line, coupling = detector_worldline(problem, point, digits)
        with mpmath.workdps(digits + 15):
            search = kms_search(line, coupling, digits)
        values, spectrum = {}, search["spectrum"]
        if search["beta"] is not None:
            beta = search["beta"]
            values["T"] = Measured(1 / beta.value, beta.error / beta.value**2)
        elif line.kind == "inertial":
            values["T"] = Measured(mpmath.mpf(0), mpmath.mpf(0))
        functions = _functions(line, values.get("T") if search["beta"] is not None else None, digits)
        evidence = {"spectrum": spectrum, "series": search["series"], "beta_roots": search["roots"]}
        provenance = (f"worldline: {line.kind}, dim {line.dim}, {coupling} coupling; W continued to s - i beta",
                      f"roots of W(s - i beta) = W(-s) at {len(SAMPLES)} proper times; {spectrum['detail']}")
        return NumericResult(values=values, functions=functions, evidence=evidence, provenance=provenance)


def kms_search(line: Worldline, coupling: str, digits: int) -> dict[str, object]:
    """Roots beta(s) of W(s - i beta) = W(-s) at the sample proper times, and the verdict."""
    scale = line.natural_scale()
    W = wightman(line, coupling)
    depth = line.singular_depth()
    tolerance = mpmath.mpf(10) ** (-(digits // 2))
    if not mpmath.isfinite(depth):
        detail = "W has no singularity off s = 0: no finite beta (the vacuum, T = 0)"
        return {"beta": None, "roots": [], "series": [], "spectrum": {"verdict": "non-thermal", "detail": detail, "spread": 0.0}}
    roots = [_root(line, coupling, W, x / scale, depth, digits) for x in SAMPLES]
    found = [b for b in roots if b is not None]
    series = [{"name": "KMS roots", "x_label": "s x natural scale", "y_label": "Re beta(s) x natural scale",
               "x": [float(x) for x, b in zip(SAMPLES, roots) if b is not None], "y": [float(mpmath.re(b) * scale) for b in found]}]
    plain = [[float(mpmath.re(b) * scale), float(mpmath.im(b) * scale)] if b is not None else None for b in roots]
    if len(found) < len(roots):
        detail = "no beta satisfies W(s - i beta) = W(-s) at some proper times: not thermal"
        return {"beta": None, "roots": plain, "series": series, "spectrum": {"verdict": "non-thermal", "detail": detail, "spread": 1.0}}
    mean = mpmath.fsum(mpmath.re(b) for b in found) / len(found)
    spread = max(abs(b - mean) for b in found) / abs(mean)
    if spread > tolerance:
        detail = f"beta(s) varies by {float(spread) * 100:.3g}% over the proper times (or is complex): no KMS state, not thermal"
        return {"beta": None, "roots": plain, "series": series, "spectrum": {"verdict": "non-thermal", "detail": detail, "spread": float(spread)}}
    ratio = mpmath.re(W(-SAMPLES[2] / scale) / W(SAMPLES[2] / scale))
    shape = "bose" if ratio > 0 else "fermi"
    detail = (f"KMS at beta = {mpmath.nstr(mean * scale, 12)}/scale (same root at {len(found)} proper times to {float(spread):.1e}); "
              f"W(-s)/W(s) = {mpmath.nstr(ratio, 6)}: {shape}-shaped response")
    spectrum = {"verdict": shape, "detail": detail, "spread": float(spread), "temperature": float(1 / mean)}
    return {"beta": Measured(mean, spread * abs(mean) + mpmath.mpf(10) ** (-digits) * abs(mean)), "roots": plain,
            "series": series, "spectrum": spectrum}


def _root(line: Worldline, coupling: str, W, s: mpmath.mpf, depth: mpmath.mpf, digits: int) -> mpmath.mpc | None:
    """beta with W(s - i beta) = W(-s): the best of a scan over real beta in
    (0.3, 1.7) x depth, refined by the secant method in the complex plane; None if
    the refinement fails or the residual stays above the tolerance.

    W(s - i beta) is continued down the vertical from s once (`Continuation`, steps of
    depth/48), so the scan and the secant steps, all near the vertical, reuse the path.
    The secant stops when a step is below 10^-(digits + 8) |beta|: it converges
    superlinearly, so the last iterate is closer still."""
    target = W(-s)
    continued = Continuation(line, coupling, s, depth / 48)

    def mismatch(b: mpmath.mpc) -> mpmath.mpc:
        return continued(s - 1j * b) - target

    grid = [depth * (mpmath.mpf(3) / 10 + mpmath.mpf(k) / 10) for k in range(15)]
    start = min(grid, key=lambda b: abs(mismatch(b)))
    beta = _secant(mismatch, mpmath.mpc(start), mpmath.mpc(start * (1 + mpmath.mpf(10) ** -4)), 3 * depth, digits + 8)
    if beta is None:
        return None
    return beta if abs(mismatch(beta)) <= mpmath.mpf(10) ** (-digits) * abs(target) else None


def _secant(f, b0: mpmath.mpc, b1: mpmath.mpc, reach: mpmath.mpf, digits: int, steps: int = 60) -> mpmath.mpc | None:
    """The secant iteration from b0, b1 until a step is below 10^-digits |b|; None when it
    leaves |b| < reach (it has left the strip it was started in) or does not settle."""
    f0, f1 = f(b0), f(b1)
    for _ in range(steps):
        if f1 == f0:
            return b1 if f1 == 0 else None
        b0, b1, f0 = b1, b1 - f1 * (b1 - b0) / (f1 - f0), f1
        if abs(b1) > reach:
            return None
        if abs(b1 - b0) <= mpmath.mpf(10) ** (-digits) * abs(b1):
            return b1
        f1 = f(b1)
    return None


def _functions(line: Worldline, kms_temperature: Measured | None, digits: int) -> dict[str, Callable[[object], Measured]]:
    """T_eff(w) = 1/beta for a KMS state; on a circle in 3+1, from the poles of W."""
    if kms_temperature is not None:
        return {"T_eff": lambda w: kms_temperature}
    if line.kind != "circular" or line.dim != 4:
        return {}

    cache: dict[str, tuple[mpmath.mpf, Measured, Measured]] = {}

    def rates(w: object) -> tuple[mpmath.mpf, Measured, Measured]:
        """F(+w), F(-w), computed once per gap (T_eff and rate at one gap share them)."""
        gap = abs(mpmath.mpf(mpmath.re(w)))
        key = mpmath.nstr(gap, digits + 5)
        if key not in cache:
            up = circular_rate(line, gap, digits)
            cache[key] = (gap, up, deexcitation_from_poles(line, gap, up))
        return cache[key]

    def t_eff(w: object) -> Measured:
        gap, up, down = rates(w)
        log_ratio = mpmath.log(down.value / up.value)
        value = gap / log_ratio
        return Measured(value, value * (up.error / up.value + down.error / down.value) / abs(log_ratio))

    def rate(w: object) -> Measured:
        _, up, down = rates(w)
        return up if mpmath.re(w) > 0 else down

    return {"T_eff": t_eff, "rate": rate}
