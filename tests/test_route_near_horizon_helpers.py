"""Tests of the near-horizon route's quadrature and closed-form helpers.

Integrals are checked against elementary closed forms and the Beta-function
formula evaluated here with mpmath's Gamma function; tidied expressions are
compared with the untouched input at exact rational points with mpmath.
"""

from __future__ import annotations

import mpmath
import sympy

from crosscheck.routes import _near_horizon_area as na
from crosscheck.routes import _near_horizon_closed as nc
from crosscheck.routes.base import Problem
from crosscheck.routes.near_horizon import NearHorizonRoute
from crosscheck.spacetimes.base import R_COORD, THETA, HorizonSpec, Normalization, Spacetime
from crosscheck.spacetimes.forms import stationary_metric

r = R_COORD
M, Q, a = sympy.symbols("M Q a", positive=True)
ROUTE = NearHorizonRoute()


def at(expr: sympy.Expr, point: dict) -> mpmath.mpf:
    with mpmath.workdps(50):
        return mpmath.mpmathify(sympy.N(expr.subs(point), 50))


def test_gauss_legendre_smooth_integrals_with_honest_errors():
    # Source: int_0^pi sin^3 = 4/3 and int_0^pi int_0^pi sin(x) sin(y)^2 = 2 * pi/2 (elementary, common practice).
    with mpmath.workdps(40):
        one = na.gauss_legendre(lambda x: mpmath.sin(x) ** 3, 1, 30)
        two = na.gauss_legendre(lambda x, y: mpmath.sin(x) * mpmath.sin(y) ** 2, 2, 30)
        assert abs(one.value - mpmath.mpf(4) / 3) <= one.error < 1e-31
        assert abs(two.value - mpmath.pi) <= two.error < 1e-30


def test_gauss_legendre_declines_an_endpoint_singularity():
    # sqrt(sin x) has infinite slope at the ends: Gauss-Legendre converges only algebraically,
    # so the helper must say so (None) instead of returning an optimistic error.
    with mpmath.workdps(40):
        assert na.gauss_legendre(lambda x: mpmath.sqrt(mpmath.sin(x)), 1, 30) is None


def _kerr(angular_factor) -> Problem:
    """Kerr in Boyer-Lindquist form with g_thth multiplied by angular_factor."""
    sigma, delta, s2 = r**2 + a**2 * sympy.cos(THETA) ** 2, r**2 - 2 * M * r + a**2, sympy.sin(THETA) ** 2
    metric = stationary_metric(g_tt=-(1 - 2 * M * r / sigma), g_tphi=-2 * M * a * r * s2 / sigma,
                               g_phiphi=((r**2 + a**2) ** 2 - a**2 * delta * s2) * s2 / sigma,
                               g_rr=sigma / delta, g_thth=sigma * angular_factor)
    horizon = HorizonSpec(expression=M + sympy.sqrt(M**2 - a**2))
    return Problem(spacetime=Spacetime(metric, horizon, Normalization()), detector=None, parameters=(M, a),
                   wanted=frozenset({"A"}), ranges={M: ("1", "2"), a: ("0.1", "0.5")})


def test_area_at_the_horizon_regular_and_singular_blocks():
    # Source: Kerr horizon area 4 pi (r_+^2 + a^2) (Wald 1984, ch. 12, from memory).  The second
    # block carries sin(x)/x, x = r - r_+, in g_thth: singular-looking at r_h with limit 1 (the
    # same area), so the route must fall back to the extrapolated limit there.
    x = r - M - sympy.sqrt(M**2 - a**2)
    point = {M: mpmath.mpf(1), a: mpmath.mpf(1) / 2}
    with mpmath.workdps(40):
        r_plus = 1 + mpmath.sqrt(mpmath.mpf(3) / 4)
        expected = 4 * mpmath.pi * (r_plus**2 + mpmath.mpf(1) / 4)
    for factor, how in ((sympy.Integer(1), "Gauss-Legendre"), (sympy.sin(x) / x, "extrapolated")):
        result = ROUTE.numeric(_kerr(factor), point, 20)
        with mpmath.workdps(40):
            assert abs(result.values["A"].value - expected) <= result.values["A"].error < 1e-18 * expected
        assert any(how in line for line in result.provenance)


def test_tidy_keeps_the_value_in_the_quadratic_field():
    # Independent check: the tidied form and the input agree at exact points (50 digits).
    root = sympy.sqrt(M**2 - Q**2)
    r_h = M + root
    expr = (r_h**2 + Q**2) / (2 * r_h**3) - Q * (r_h - M) / (r_h**2 + 1)
    tidied = nc.tidy(expr)
    assert nc._square_root_bases(tidied) == {M**2 - Q**2}
    for point in ({M: sympy.Rational(3, 2), Q: sympy.Rational(1, 3)}, {M: 5, Q: sympy.Rational(7, 2)}):
        assert abs(at(tidied, point) - at(expr, point)) < 1e-40 * abs(at(expr, point))


def test_positive_sqrt_of_a_negative_over_negative_square():
    # kappa^2 often arrives as (-top)/(-bottom); the root must still denest to u + v sqrt(D) form
    # and square back to the input (checked here at exact points with mpmath).
    D = M**2 - Q**2
    top = -sympy.expand((M + 2 * sympy.sqrt(D)) ** 2)
    bottom = -sympy.expand(4 * M**2 * (M + sympy.sqrt(D)) ** 2)
    points = [{M: sympy.Rational(3, 2), Q: sympy.Rational(1, 2)}, {M: 2, Q: sympy.Rational(3, 2)}]
    root = nc.positive_sqrt(top / bottom, points)
    assert not any(p.base.has(sympy.sqrt(D)) for p in root.atoms(sympy.Pow) if p.exp == sympy.Rational(1, 2))
    for point in points:
        expected = at((M + 2 * sympy.sqrt(D)) / (2 * M * (M + sympy.sqrt(D))), point)
        assert abs(at(root, point) - expected) < 1e-40 * expected
