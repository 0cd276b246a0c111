"""Tests of the killing-horizon route's sampling helpers (other zeros of the Killing norm).

Reference: the Reissner-Nordstrom horizons r_+- = M +- sqrt(M^2 - Q^2) (Wald 1984,
ch. 12, from memory), evaluated here with mpmath.
"""

from __future__ import annotations

import mpmath
import sympy

from crosscheck.measure import Measured
from crosscheck.routes import _killing_geometry as kg
from crosscheck.routes import _killing_sampling as ks
from crosscheck.spacetimes.base import R_COORD
from crosscheck.spacetimes.forms import static_metric

M, Q = sympy.symbols("M Q", positive=True)


def test_other_zeros_are_both_reissner_nordstrom_horizons():
    geo = kg.geometry(static_metric(1 - 2 * M / R_COORD + Q**2 / R_COORD**2))
    with mpmath.workdps(40):
        point = {M: mpmath.mpf(1), Q: mpmath.mpf(3) / 5}
        roots = ks._other_zeros(geo, point, 30)
        expected = [1 - mpmath.mpf(4) / 5, 1 + mpmath.mpf(4) / 5]
        assert len(roots) == 2
        for root, value in zip(sorted(roots, key=lambda m: m.value), expected):
            assert abs(root.value - value) <= max(root.error, mpmath.mpf(10) ** -35)


def test_delta0_stays_inside_the_gap_to_the_inner_horizon():
    # Near-extremal: r_+ - r_- = 2 sqrt(M^2 - Q^2) = 0.02 for Q = sqrt(0.9999); delta0 must be at most a quarter of it.
    geo = kg.geometry(static_metric(1 - 2 * M / R_COORD + Q**2 / R_COORD**2))
    with mpmath.workdps(40):
        q = mpmath.sqrt(mpmath.mpf("0.9999"))
        r_plus = 1 + mpmath.sqrt(1 - q**2)
        delta0 = ks._delta0(geo, {M: mpmath.mpf(1), Q: q}, Measured(r_plus, mpmath.mpf(10) ** -35), 30)
        assert delta0 <= 2 * mpmath.sqrt(1 - q**2) / 4 * (1 + mpmath.mpf(10) ** -20)
