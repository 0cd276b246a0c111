"""Benchmark: the accelerated detector's rate at 15 digits, contour method vs naive quadosc.

Same gaps, one run.  The baseline is the real-axis formula of PHYSICS.md,
F = -w/(4 pi) + (1/(2 pi^2)) integral_0^inf [cos(w s)/sigma2(s) + 1/s^2] ds, with
mpmath.quadosc.  The reference is the closed form (w/(2 pi))/(exp(2 pi w/a) - 1)
(Birrell & Davies 1982, sec. 3.3, from memory).  A point is correct when its
relative error is below 1e-12.  Run: python benchmarks/detector_rate.py
"""

from __future__ import annotations

import os
import sys
import time

import mpmath

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

from crosscheck.routes._detector_rate import transition_rates  # noqa: E402
from crosscheck.trajectories import Worldline  # noqa: E402

GAPS = ("0.25", "0.5", "1", "2", "3")
DIGITS = 15


def closed_form(w: mpmath.mpf, a: mpmath.mpf) -> mpmath.mpf:
    return w / (2 * mpmath.pi) / mpmath.expm1(2 * mpmath.pi * w / a)


def baseline(line: Worldline, w: mpmath.mpf) -> mpmath.mpf:
    with mpmath.workdps(DIGITS):
        f = lambda s: mpmath.cos(w * s) / mpmath.re(line.sigma2(s)) + 1 / s**2  # noqa: E731
        return -w / (4 * mpmath.pi) + mpmath.quadosc(f, [0, mpmath.inf], omega=w) / (2 * mpmath.pi**2)


def main() -> None:
    a = mpmath.mpf(1)
    line = Worldline("uniform-acceleration", 4, acceleration=a)
    gaps = [mpmath.mpf(g) for g in GAPS]
    started = time.perf_counter()
    naive = [baseline(line, w) for w in gaps]
    naive_time = time.perf_counter() - started
    started = time.perf_counter()
    single = [transition_rates(line, "monopole", [w], DIGITS).excitation[0].value for w in gaps]
    single_time = time.perf_counter() - started
    started = time.perf_counter()  # the route's way: one set of contour samples serves the band
    ours = [m.value for m in transition_rates(line, "monopole", gaps, DIGITS).excitation]
    ours_time = time.perf_counter() - started
    print(f"{'w/a':>6} {'closed form':>24} {'quadosc rel. error':>20} {'contour rel. error':>20}")
    good_naive = good_ours = 0
    with mpmath.workdps(30):
        for w, n, o in zip(gaps, naive, ours):
            exact = closed_form(w, a)
            en, eo = abs(n / exact - 1), abs(o / exact - 1)
            good_naive += en < 1e-12
            good_ours += eo < 1e-12
            print(f"{mpmath.nstr(w, 3):>6} {mpmath.nstr(exact, 16):>24} {mpmath.nstr(en, 3):>20} {mpmath.nstr(eo, 3):>20}")
    print(f"quadosc: {naive_time:.2f} s ({naive_time / len(gaps):.2f} s per gap), {good_naive}/{len(gaps)} correct")
    agree = all(abs(x / y - 1) < 1e-20 for x, y in zip(single, ours))
    print(f"contour, all gaps in one call (as the route does): {ours_time:.3f} s, {good_ours}/{len(gaps)} correct")
    print(f"contour, one call per gap: {single_time:.3f} s ({single_time / len(gaps):.3f} s per gap), same values: {agree}")
    print(f"speed-up: {naive_time / ours_time:.1f}x (band call), {naive_time / single_time:.1f}x (per-gap calls)")


if __name__ == "__main__":
    main()
