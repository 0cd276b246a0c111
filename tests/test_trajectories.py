"""Worldline geometry against the explicit embeddings typed here (independent of the module)."""

from __future__ import annotations

import mpmath
import pytest

from crosscheck.trajectories import Worldline, infall_rates, infall_rates_arrays, wightman

mp = mpmath.mpf


def interval(x, s):
    """|x(s) - x(0)|^2 - (t(s) - t(0))^2 from an embedding x(tau) = (t, x1, x2, ...)."""
    a, b = x(s), x(mp(0))
    return sum((p - q) ** 2 for p, q in zip(a[1:], b[1:])) - (a[0] - b[0]) ** 2


@pytest.mark.parametrize("s", ["0.3", "1.7", "-2.5"])
def test_uniform_acceleration_matches_the_rindler_hyperbola(s):
    # Source: Rindler 1966; x = (sinh(a tau)/a, cosh(a tau)/a) (from memory)
    with mpmath.workdps(30):
        a = mp("1.3")
        hyperbola = lambda tau: (mpmath.sinh(a * tau) / a, mpmath.cosh(a * tau) / a)  # noqa: E731
        line = Worldline("uniform-acceleration", 4, acceleration=a)
        assert abs(line.sigma2(mp(s)) - interval(hyperbola, mp(s))) < mp(10) ** -25


@pytest.mark.parametrize("s", ["0.4", "3.1"])
def test_circle_and_drift_match_their_embeddings(s):
    # Source: Letaw, Phys. Rev. D 23, 1709 (1981), stationary worldlines (from memory); embeddings typed here
    with mpmath.workdps(30):
        R, W = mp("0.8"), mp("0.9")
        g = 1 / mpmath.sqrt(1 - (R * W) ** 2)
        circle = lambda tau: (g * tau, R * mpmath.cos(W * g * tau), R * mpmath.sin(W * g * tau))  # noqa: E731
        assert abs(Worldline("circular", 3, radius=R, angular_velocity=W).sigma2(mp(s)) - interval(circle, mp(s))) < mp(10) ** -25
        alpha, v = mp(2), mp("0.6")
        gv = 1 / mpmath.sqrt(1 - v**2)
        b = alpha / gv
        drift = lambda tau: (gv / b * mpmath.sinh(b * tau), gv / b * mpmath.cosh(b * tau), gv * v * tau)  # noqa: E731
        line = Worldline("drift", 3, acceleration=alpha, velocity=v)
        assert abs(line.sigma2(mp(s)) - interval(drift, mp(s))) < mp(10) ** -25
        assert abs(line.proper_acceleration() - alpha) < mp(10) ** -25


def test_first_singularity_below_the_axis_is_a_zero_of_sigma2():
    # Source: common practice (definition); sigma2(-i y0) = 0 checked directly
    with mpmath.workdps(30):
        for line in (Worldline("circular", 4, radius=mp(1), angular_velocity=mp("0.9")),
                     Worldline("drift", 4, acceleration=mp(1), velocity=mp("0.5"))):
            y0 = line.singular_depth()
            assert abs(line.sigma2(mpmath.mpc(0, -y0))) < mp(10) ** -20
            assert all(abs(line.sigma2(mpmath.mpc(0, -y0 * k / 10))) > mp(10) ** -3 for k in range(1, 10))


def test_wightman_function_in_3_plus_1_is_one_over_4_pi2_sigma2():
    # Source: Birrell & Davies 1982, eq. 3.59 (from memory): W = 1/(4 pi^2 sigma2) for the massless field
    with mpmath.workdps(30):
        line = Worldline("uniform-acceleration", 4, acceleration=mp(1))
        z = mpmath.mpc("0.7", "-0.4")
        assert abs(wightman(line)(z) - 1 / (4 * mpmath.pi**2 * line.sigma2(z))) < mp(10) ** -25


@pytest.mark.parametrize("z", [("0.7", "-0.4"), ("2.5", "-1.2"), ("0.3", "-0.01")])
def test_wightman_function_in_2_plus_1_is_one_over_4_pi_sqrt_sigma2(z):
    # Source: Takagi 1986, Prog. Theor. Phys. Suppl. 88, ch. 2 (from memory): W = 1/(4 pi sqrt(sigma2))
    # in 2+1 with the root continued from s - i eps; the points are near enough to the real
    # axis that this root is the principal one
    with mpmath.workdps(30):
        line = Worldline("uniform-acceleration", 3, acceleration=mp("1.1"))
        z = mpmath.mpc(*z)
        assert abs(wightman(line)(z) - 1 / (4 * mpmath.pi * mpmath.sqrt(line.sigma2(z)))) < mp(10) ** -25


def test_schwarzschild_free_fall_from_rest():
    # Source: Wald 1984, sec. 6.3 (from memory): dr/dtau = -sqrt(2M/r) from rest at infinity
    with mpmath.workdps(30):
        M, r = mp(1), mp(5)
        F = 1 - 2 * M / r
        rates = infall_rates(F, F)
        assert abs(1 / rates.dtau_dr + mpmath.sqrt(2 * M / r)) < mp(10) ** -25
        # du/dr = (du/dtau)/(dr/dtau) with dt/dtau = 1/F and dr*/dr = 1/F
        expected = (1 / F + mpmath.sqrt(2 * M / r) / F) / (-mpmath.sqrt(2 * M / r))
        assert abs(rates.du_dr - expected) < mp(10) ** -25
        arrays = infall_rates_arrays([float(F)], [float(F)])
        assert abs(arrays[0][0] - float(rates.dtau_dr)) < 1e-14 and abs(arrays[1][0] - float(rates.du_dr)) < 1e-13
