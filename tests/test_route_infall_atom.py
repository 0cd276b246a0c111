"""The infall-atom route: the Planck temperature seen by an atom in free fall.

Reference values are the horizon temperatures kappa/(2 pi), typed here
(Hawking 1975; Gibbons & Hawking 1977), not computed by the route's code.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

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

    def F(x):
        return 1 - 2 / x

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
