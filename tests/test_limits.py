"""Closed-form limits of algebraic near-horizon expressions (crosscheck.limits).

Each limit is a published near-horizon relation; each value is also checked
against the expression evaluated by mpmath close to the point, independently of
the code under test.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import sympy

from crosscheck.limits import algebraic_limit

M, q, H, r = sympy.symbols("M q H r", positive=True)


def _near(expr: sympy.Expr, point: sympy.Expr, values: dict, side: int = 1) -> mpmath.mpf:
    """expr at point + side * 1e-30 (50 digits), for the independent check."""
    with mpmath.workdps(50):
        at = sympy.N(point.subs(values), 50) + side * sympy.Float("1e-30", 50)
        return mpmath.mpf(sympy.N(expr.subs(values).subs(r, at), 50))


def test_local_temperature_becomes_the_unruh_temperature_at_a_charged_horizon():
    # Source: Tolman 1930 and Unruh 1976 (from memory): T_loc = T/sqrt(F) and
    # a_loc = F'/(2 sqrt(F)) for F = 1 - 2M/r + Q^2/r^2, so 2 pi T_loc/a_loc -> 1 at r_+,
    # with T = kappa/(2 pi), kappa = F'(r_+)/2 (Reissner-Nordstrom, Q = q M).
    Q = q * M
    F = 1 - 2 * M / r + Q**2 / r**2
    rp = M + sympy.sqrt(M**2 - Q**2)
    T = sympy.sqrt(M**2 - Q**2) / (2 * sympy.pi * rp**2)
    a_loc = sympy.Abs(sympy.diff(F, r)) / (2 * sympy.sqrt(F))
    body = 2 * sympy.pi * (T / sympy.sqrt(F)) / a_loc
    box = {M: (Fraction(1, 2), Fraction(20)), q: (Fraction(0), Fraction(9, 10))}
    assert algebraic_limit(body, r, rp, "+", box) == 1
    assert abs(_near(body, rp, {M: 3, q: sympy.Rational(1, 2)}) - 1) < 1e-12


def test_redshifted_acceleration_is_the_surface_gravity():
    # Source: Wald 1984, sec. 12.5 (from memory): lim sqrt(F) a_loc = kappa = 1/(4M) at r = 2M.
    F = 1 - 2 * M / r
    # As a route may write it: sqrt(F) in a form sympy does not cancel against a_loc's.
    body = sympy.sqrt(F) * (M / r**2) / sympy.sqrt((r - 2 * M) / r)
    box = {M: (Fraction(1, 2), Fraction(20))}
    value = algebraic_limit(body, r, 2 * M, "+", box)
    assert sympy.simplify(value - 1 / (4 * M)) == 0
    assert abs(_near(body, 2 * M, {M: 3}) - mpmath.mpf(1) / 12) < 1e-12


def test_de_sitter_horizon_approached_from_inside():
    # Source: Gibbons & Hawking 1977 (from memory): the static observer's acceleration in de Sitter is
    # H^2 r/sqrt(1 - H^2 r^2); redshifted by sqrt(F) it tends to kappa = H at r = 1/H, from below.
    F = 1 - H**2 * r**2
    body = sympy.sqrt(1 - H * r) * sympy.sqrt(1 + H * r) * H**2 * r / sympy.sqrt(F)
    box = {H: (Fraction(1, 10), Fraction(3))}
    value = algebraic_limit(body, r, 1 / H, "-", box)
    assert sympy.simplify(value - H) == 0
    assert abs(_near(body, 1 / H, {H: 2}, side=-1) - 2) < 1e-12


def test_a_divergent_limit_is_not_taken():
    # 1/sqrt(F) blows up at the horizon: no finite value may come out.
    F = 1 - 2 * M / r
    assert algebraic_limit(1 / sympy.sqrt(F), r, 2 * M, "+", {M: (Fraction(1, 2), Fraction(20))}) is None


def test_a_transcendental_body_is_left_to_sympy():
    # exp is outside the algebraic expressions the reduction handles.
    body = sympy.exp(r - 2 * M) * sympy.sqrt(1 - 2 * M / r)
    assert algebraic_limit(body, r, 2 * M, "+", {M: (Fraction(1, 2), Fraction(20))}) is None


def test_an_unknown_sign_is_not_assumed():
    # |r - L| at r = 2M with L anywhere in [1, 100] and M in [1/2, 20]: 2M - L takes both
    # signs on the box, so the reduction must decline rather than guess |2M - L|.
    L = sympy.Symbol("L", positive=True)
    F = 1 - 2 * M / r
    body = sympy.Abs(r - L) * sympy.sqrt(F) / sympy.sqrt(1 - 2 * M / r)
    box = {M: (Fraction(1, 2), Fraction(20)), L: (Fraction(1), Fraction(100))}
    assert algebraic_limit(body, r, 2 * M, "+", box) is None
    # With L above every 2M the sign is proved and the value is L - 2M.
    above = {M: (Fraction(1, 2), Fraction(20)), L: (Fraction(50), Fraction(100))}
    assert sympy.expand(algebraic_limit(body, r, 2 * M, "+", above) - (L - 2 * M)) == 0
