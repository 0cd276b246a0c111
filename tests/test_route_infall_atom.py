"""The infall-atom route: the Planck temperature seen by an atom in free fall.

Reference values are the horizon temperatures kappa/(2 pi), typed here
(Hawking 1975; Gibbons & Hawking 1977), not computed by the route's code.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.routes.base import Problem
from crosscheck.routes.infall_atom import InfallAtomRoute
from crosscheck.spacetimes.base import HorizonSpec, Spacetime
from crosscheck.spacetimes.forms import static_metric

M, Q = sympy.symbols("M Q", positive=True)
r = sympy.Symbol("r", positive=True)


def problem(F, horizon, wanted=frozenset({"T"})) -> Problem:
    spacetime = Spacetime(static_metric(F), HorizonSpec(expression=horizon))
    return Problem(spacetime=spacetime, detector=None, parameters=(M, Q), wanted=wanted)


@pytest.mark.parametrize("m, q", [("1", "0"), ("3", "0"), ("1", "0.6"), ("2", "0.8")])
def test_fitted_temperature_is_the_horizon_temperature(m, q):
    # Source: Hawking 1975; Gibbons & Hawking, Phys. Rev. D 15, 2752 (1977):
    # T = (r_+ - r_-)/(4 pi r_+^2) for Reissner-Nordstrom (from memory)
    F = 1 - 2 * M / r + Q**2 / r**2
    result = InfallAtomRoute().numeric(problem(F, M + sympy.sqrt(M**2 - Q**2)), {M: mpmath.mpf(m), Q: mpmath.mpf(q)}, 20)
    mass, charge = float(m), float(q)
    r_plus, r_minus = mass + (mass**2 - charge**2) ** 0.5, mass - (mass**2 - charge**2) ** 0.5
    expected = (r_plus - r_minus) / (4 * 3.141592653589793 * r_plus**2)
    T = result.values["T"]
    assert abs(float(T.value) / expected - 1) < 1e-4
    assert 0 < float(T.error) / expected < 1e-4  # the fit's uncertainty is reported, and small
    assert abs(float(T.value) - expected) <= 10 * float(T.error) + 1e-9 * expected
    assert result.evidence["spectrum"]["verdict"] == "bose"


def test_not_applicable_without_asymptotic_flatness():
    # Source: common practice: a fall from rest at infinity needs F -> 1 there
    H = sympy.Symbol("H", positive=True)
    assert InfallAtomRoute().applies(problem(1 - H**2 * r**2, 1 / H)) is not None


def test_tolman_local_temperature():
    # Source: Tolman, Phys. Rev. 35, 904 (1930): T_loc = T/sqrt(F)
    F = 1 - 2 * M / r
    result = InfallAtomRoute().numeric(problem(F, 2 * M, frozenset({"T_loc"})), {M: mpmath.mpf(1), Q: mpmath.mpf(0)}, 20)
    value = result.functions["T_loc"](mpmath.mpf("2.2"))
    expected = 1 / (8 * 3.141592653589793) / (1 - 2 / 2.2) ** 0.5
    assert abs(float(value.value) / expected - 1) < 1e-4


def test_coarse_table_is_the_trapezoid_sum_at_twice_the_step():
    # Source: independent computation written here: the route reads the 0.2 rad quadrature off every
    # other 0.1 rad node; it must equal the trapezoid sum over nodes laid at 0.2 rad directly.
    import numpy

    from crosscheck.routes._infall_amplitude import fall, nodes, probability_tables

    def F(x):  # Schwarzschild with r_h = 2 as a function of x = r/r_h - 1: 1 - 2/r = x/(1 + x)
        return x / (1 + x)

    path = fall(F, F, 2.0, 80.0, 0.5)
    fine, coarse = nodes(path, F, F, 2.0, 0.1), nodes(path, F, F, 2.0, 0.2)
    gaps, nus = numpy.array([10.0, 40.0, 80.0]), numpy.array([0.1, 0.3, 0.5])
    from_fine = probability_tables(fine, gaps, nus, 2)
    direct = numpy.array([[abs(numpy.sum(coarse.weight * numpy.exp(1j * (g * coarse.tau + n * coarse.u)))) ** 2
                           for n in nus] for g in gaps])
    assert numpy.allclose(from_fine[0], direct, rtol=1e-9, atol=0)
    fine_direct = numpy.array([[abs(numpy.sum(fine.weight * numpy.exp(1j * (g * fine.tau + n * fine.u)))) ** 2
                                for n in nus] for g in gaps])
    assert numpy.allclose(from_fine[1], fine_direct, rtol=1e-9, atol=0)


def closed_form_rn(m: str, q: str) -> mpmath.mpf:
    # Source: Gibbons & Hawking, Phys. Rev. D 15, 2752 (1977):
    # T = sqrt(M^2 - Q^2)/(2 pi (M + sqrt(M^2 - Q^2))^2), evaluated here with mpmath at 40 digits
    with mpmath.workdps(40):
        mass = mpmath.mpf(m)
        root = mpmath.sqrt(mass**2 - (mpmath.mpf(q) * mass) ** 2)
        return root / (2 * mpmath.pi * (mass + root) ** 2)


@pytest.mark.parametrize("m, q", [("1", "0.9"), ("1", "0.99"), ("19.99998", "0.99675"), ("1", "0.999"),
                                  ("20", "0.9999")])
def test_near_extremal_error_bounds_the_true_error(m, q):
    # Source: Gibbons & Hawking 1977 (closed form above).  Before the fix the route missed by 7% against
    # a stated 0.4% at q = 0.99675, and stopped with "needs 0 < F < 1" at M = 20, q = 0.9999.
    F = 1 - 2 * M / r + Q**2 / r**2
    point = {M: mpmath.mpf(m), Q: mpmath.mpf(q) * mpmath.mpf(m)}
    T = InfallAtomRoute().numeric(problem(F, M + sympy.sqrt(M**2 - Q**2)), point, 20).values["T"]
    expected = closed_form_rn(m, q)
    assert abs(T.value - expected) <= T.error
    assert T.error < 1e-5 * expected  # and the bound is tight enough to be useful


def test_extremal_horizon_declines():
    # Source: Gibbons & Hawking 1977: at Q = M the horizon r = M is a double root of F, kappa = 0
    F = (1 - M / r) ** 2
    assert "degenerate" in InfallAtomRoute().applies(problem(F, M))
    with pytest.raises(CannotCompute, match="degenerate"):  # the numeric side also declines, never crashes
        InfallAtomRoute().numeric(problem(1 - 2 * M / r + Q**2 / r**2, M), {M: mpmath.mpf(3), Q: mpmath.mpf(3)}, 20)


def test_beyond_the_node_limit_declines_with_the_reason():
    # Source: common practice: a route that cannot resolve the thermal window says why instead of guessing
    F = 1 - 2 * M / r + Q**2 / r**2
    point = {M: mpmath.mpf(1), Q: mpmath.mpf("0.999999")}
    with pytest.raises(CannotCompute, match="near-extremal.*kappa r_h"):
        InfallAtomRoute().numeric(problem(F, M + sympy.sqrt(M**2 - Q**2)), point, 20)


def test_offset_function_keeps_its_digits_at_the_horizon():
    # Source: independent computation written here: F(r_h (1 + x)) for Reissner-Nordstrom at q = 0.9999
    # with mpmath at 50 digits; direct double evaluation there has relative errors ~1 at x ~ 1e-14.
    import numpy

    from crosscheck.routes._infall_arrays import offset_function

    F = 1 - 2 * M / r + Q**2 / r**2
    mass, charge = mpmath.mpf(20), mpmath.mpf("0.9999") * 20
    r_h = mass + mpmath.sqrt(mass**2 - charge**2)
    f = offset_function(F, r, {M: mass, Q: charge}, r_h)
    xs = numpy.array([1e-14, 1e-10, 1e-6, 1e-3, 0.5, 3.0])
    values = f(xs)
    with mpmath.workdps(50):
        for x, value in zip(xs, values):
            radius = r_h * (1 + mpmath.mpf(float(x)))
            exact = 1 - 2 * mass / radius + charge**2 / radius**2
            assert abs(value / exact - 1) < 1e-9


def test_double_zero_of_F_alone_is_not_degenerate():
    # Source: Misner, Thorne & Wheeler, Gravitation (1973), eq. 31.22 (from memory): Schwarzschild in
    # isotropic coordinates, F = ((1 - M/2r)/(1 + M/2r))^2 has a double zero at r = M/2 but G does not;
    # T = 1/(8 pi M) all the same.
    F = ((1 - M / (2 * r)) / (1 + M / (2 * r))) ** 2
    G = (1 + M / (2 * r)) ** -4
    spacetime = Spacetime(static_metric(F, G, r * (1 + M / (2 * r)) ** 2), HorizonSpec(expression=M / 2))
    iso = Problem(spacetime=spacetime, detector=None, parameters=(M,), wanted=frozenset({"T"}))
    assert InfallAtomRoute().applies(iso) is None
    T = InfallAtomRoute().numeric(iso, {M: mpmath.mpf("5.375")}, 20).values["T"]
    expected = 1 / (8 * mpmath.pi * mpmath.mpf("5.375"))
    assert abs(T.value - expected) <= T.error < 1e-6 * expected
