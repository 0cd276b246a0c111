"""Richardson extrapolation that stops once converged (crosscheck.numerics.richardson_until),
as the claim evaluator uses it for derivatives.  Reference values are mpmath's own
functions, independent of the code under test."""

from __future__ import annotations

import mpmath

from crosscheck.numerics import richardson_until

ORDERS = [2, 4, 6, 8, 10]


def _central(f, x0):
    calls = []

    def central(h):
        calls.append(h)
        return (f(x0 + h) - f(x0 - h)) / (2 * h)

    return central, calls


def test_a_smooth_derivative_stops_early_and_its_error_bounds_the_truth():
    # Source: d/dx exp(x) = exp(x) (elementary calculus); the reference is mpmath.exp.
    with mpmath.workdps(30):
        central, calls = _central(mpmath.exp, mpmath.mpf(1))
        value = richardson_until(central, mpmath.mpf("1e-2"), relative=mpmath.mpf("1e-18"), orders=ORDERS)
        truth = mpmath.exp(1)
        assert abs(value.value - truth) <= value.error
        assert value.error <= mpmath.mpf("1e-18") * truth
        assert len(calls) < len(ORDERS) + 1  # converged before the last offset


def test_a_derivative_near_a_pole_uses_every_offset_and_says_it_is_inaccurate():
    # f = 1/(x - 0.98) at x = 1: the pole is 0.02 away, twice the first offset, so the
    # series in h converges slowly.  Source: d/dx (x - c)^-1 = -(x - c)^-2 (elementary calculus).
    with mpmath.workdps(30):
        c = mpmath.mpf("0.98")
        central, calls = _central(lambda x: 1 / (x - c), mpmath.mpf(1))
        value = richardson_until(central, mpmath.mpf("1e-2"), relative=mpmath.mpf("1e-28"), orders=ORDERS)
        truth = -1 / (1 - c) ** 2
        assert len(calls) == len(ORDERS) + 1
        assert abs(value.value - truth) <= value.error
        assert value.error > mpmath.mpf("1e-28") * abs(truth)
