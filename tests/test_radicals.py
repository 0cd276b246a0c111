"""The square-root reduction used as a proof form (crosscheck.radicals).

Identities are published closed forms of the same quantity written two ways;
each is also checked numerically here with mpmath, so the test does not rest
on the code under test.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import sympy

from crosscheck import compare
from crosscheck.claim import Parameter
from crosscheck.radicals import reduce_radicals, sign_on_box

M, chi, q = sympy.symbols("M chi q", positive=True)
BOX = {M: (Fraction(1, 2), Fraction(20)), chi: (Fraction(0), Fraction(19, 20)), q: (Fraction(0), Fraction(3, 10))}


def _numerically_zero(expr: sympy.Expr) -> bool:
    """Independent check at a point inside BOX, with mpmath at 40 digits."""
    with mpmath.workdps(40):
        value = sympy.lambdify((M, chi, q), expr, "mpmath")(mpmath.mpf(3), mpmath.mpf("0.6"), mpmath.mpf("0.2"))
        return abs(value) < mpmath.mpf(10) ** -30


def test_kerr_surface_gravity_two_ways_is_proved():
    # Source: Wald 1984, eq. 12.5.4 (from memory): kappa = (r_+ - r_-)/(2 (r_+^2 + a^2)),
    # equal to sqrt(M^2 - a^2)/(2 M r_+) because r_+^2 + a^2 = 2 M r_+.
    a = chi * M
    root = sympy.sqrt(M**2 - a**2)
    rp, rm = M + root, M - root
    first = (rp - rm) / (2 * (rp**2 + a**2))
    second = sympy.sqrt(M**2 * (1 - chi**2)) / (2 * M * (M + M * sympy.sqrt(1 - chi**2)))
    assert _numerically_zero(first - second)
    assert reduce_radicals(first - second, BOX) == 0


def test_dependent_roots_need_the_box():
    # sqrt(M^2 - M^2 chi^2) = M sqrt(1 - chi) sqrt(1 + chi) holds because every factor is
    # nonnegative for chi in [0, 0.95]; without the ranges the roots stay independent.
    # Source: elementary algebra (common practice, no source).
    difference = sympy.sqrt(M**2 - M**2 * chi**2) - M * sympy.sqrt(1 - chi**2)
    assert _numerically_zero(difference)
    assert reduce_radicals(difference, BOX) == 0
    assert reduce_radicals(difference) != 0


def test_reissner_nordstrom_temperature_two_ways():
    # Source: Hawking & Ross 1995 / any GR text (from memory): T = (r_+ - r_-)/(4 pi r_+^2)
    # with r_+- = M +- sqrt(M^2 - Q^2), Q = q M.
    Q = q * M
    root = sympy.sqrt(M**2 - Q**2)
    first = ((M + root) - (M - root)) / (4 * sympy.pi * (M + root) ** 2)
    second = root / (2 * sympy.pi * (M + root) ** 2)
    assert _numerically_zero(first - second)
    assert reduce_radicals(first - second, BOX) == 0


def test_a_wrong_identity_is_not_reduced_to_zero():
    # sqrt(M^2 - a^2) differs from M - a for 0 < a < M (at a = 0.6 M: 0.8 M against 0.4 M).
    difference = sympy.sqrt(M**2 - (chi * M) ** 2) - (M - chi * M)
    assert not _numerically_zero(difference)
    assert reduce_radicals(difference, BOX) != 0


def test_a_factor_of_unknown_sign_is_not_split():
    # chi - 1/2 changes sign on [0, 0.95]: sqrt((chi - 1/2)^2) is |chi - 1/2|, never chi - 1/2.
    difference = sympy.sqrt((chi - sympy.Rational(1, 2)) ** 2) - (chi - sympy.Rational(1, 2))
    assert reduce_radicals(difference, BOX) != 0


def test_sign_on_box_by_intervals():
    # Exact signs of simple polynomials on the box, checked by hand.
    assert sign_on_box(1 - chi**2, BOX) == 1
    assert sign_on_box(chi - 1, BOX) == -1
    assert sign_on_box(chi - sympy.Rational(1, 2), BOX) == 0
    # (chi - 1/2)^2 + 1/100 > 0 needs the dependency-free square, then bisection helps.
    assert sign_on_box((chi - sympy.Rational(1, 2)) ** 2 + sympy.Rational(1, 100), BOX) == 1


def test_symbolic_verdict_proves_the_kerr_temperature_quickly():
    # Source: Wald 1984, eq. 12.5.x (from memory): T = sqrt(M^2 - a^2)/(4 pi M (M + sqrt(M^2 - a^2))).
    # The route side is written with r_+ and a nested square root, as a route might return it.
    a = chi * M
    rp = M + sympy.sqrt(M**2 - a**2)
    route = (rp - M) / (2 * sympy.pi * (rp**2 + a**2))
    claim = sympy.sqrt(M**2 - a**2) / (4 * sympy.pi * M * (M + sympy.sqrt(M**2 - a**2)))
    parameters = [Parameter("M", M, sympy.Rational(1, 2), sympy.Rational(20)), Parameter("chi", chi, sympy.Rational(0), sympy.Rational(19, 20))]
    check = compare.symbolic_verdict(route, claim, parameters, time_budget=4.0)
    assert check.verdict == "proved"


def test_a_nested_root_that_is_a_square_in_the_inner_field():
    # Reissner-Nordstrom T written as a route may return it, with a nested root:
    # sqrt((1 - q^2)/(q^4 - 4 q^2 s - 8 q^2 + 8 s + 8))/(2 pi M), s = sqrt(1 - q^2); the
    # radicand is s^2/(2 + 2 s - q^2)^2. Source: Gibbons & Hawking 1977 (from memory) for
    # T = sqrt(M^2 - Q^2)/(2 pi (M + sqrt(M^2 - Q^2))^2), Q = q M.
    s = sympy.sqrt(1 - q**2)
    route = sympy.sqrt((1 - q**2) / (q**4 - 4 * q**2 * s - 8 * q**2 + 8 * s + 8)) / (2 * sympy.pi * M)
    Q = q * M
    claim = sympy.sqrt(M**2 - Q**2) / (2 * sympy.pi * (M + sympy.sqrt(M**2 - Q**2)) ** 2)
    box = {M: BOX[M], q: (Fraction(0), Fraction(19, 20))}
    assert _numerically_zero(route - claim)
    assert reduce_radicals(route - claim, box) == 0


def test_odd_factors_share_one_root():
    # sqrt(1 - q) sqrt(1 + q) and sqrt(1 - q^2) are one generator (both factors >= 0 on the box).
    # Source: elementary algebra (common practice, no source).
    difference = sympy.sqrt(M**2 * (1 - q**2)) * sympy.sqrt(1 - q**2) - M * (1 - q**2)
    assert _numerically_zero(difference)
    assert reduce_radicals(difference, BOX) == 0


def test_an_absolute_value_of_known_sign_is_resolved():
    # Schwarzschild-de Sitter surface gravity between r_b < r_c (Bousso & Hawking 1996, from
    # memory, without the normalisation): |r_b - r_c| is r_c - r_b on a box with r_c > r_b.
    rb, rc = sympy.symbols("rb rc", positive=True)
    box = {rb: (Fraction(1, 2), Fraction(1)), rc: (Fraction(3), Fraction(10))}
    route = (2 * rb + rc) * sympy.Abs(rb - rc) / (2 * rb * (rb**2 + rb * rc + rc**2))
    claim = (rc - rb) * (2 * rb + rc) / (2 * rb * (rb**2 + rb * rc + rc**2))
    assert reduce_radicals(route - claim, box) == 0
    # On a box where r_b - r_c changes sign nothing is assumed.
    wide = {rb: (Fraction(1, 2), Fraction(5)), rc: (Fraction(3), Fraction(10))}
    assert reduce_radicals(route - claim, wide) != 0


def test_cube_roots_are_reduced_like_square_roots():
    # The geodesic radius of Schwarzschild-de Sitter, r_g = (3 M/Lambda)^(1/3) (Bousso & Hawking
    # 1996, from memory), written two ways: (27 M^3 (chi + chi^2))^(1/3) = 3 M (chi + chi^2)^(1/3)
    # for M, chi >= 0 (the left radicand expanded, so sympy does not pull M out by itself).
    # Source: elementary algebra (common practice, no source).
    third = sympy.Rational(1, 3)
    difference = sympy.expand(27 * M**3 * (chi + chi**2)) ** third - 3 * M * (chi + chi**2) ** third
    assert difference != 0  # not decided by sympy's automatic evaluation
    assert _numerically_zero(difference)
    assert reduce_radicals(difference, BOX) == 0
    # (chi^(1/3))^3 = chi exactly; a wrong cube, chi^(1/3) * chi^(1/3) = chi, is not zero.
    assert reduce_radicals((chi ** sympy.Rational(1, 3)) ** 3 - chi, BOX) == 0
    assert reduce_radicals(chi ** sympy.Rational(2, 3) - chi, BOX) != 0


def test_roots_of_one_radicand_with_different_indices_share_a_generator():
    # (M^(1/6))^2 = M^(1/3): with separate generators for M^(1/6) and M^(1/3) the
    # difference would not reduce.  Source: elementary algebra (common practice, no source).
    # (M + M q)^(1/6) splits into M^(1/6) (1 + q)^(1/6); sympy keeps all three powers apart.
    sixth, third = sympy.Rational(1, 6), sympy.Rational(1, 3)
    tricky = (M + M * q) ** sixth * (1 + q) ** sixth - M**sixth * (1 + q) ** third
    assert _numerically_zero(tricky)
    assert reduce_radicals(tricky, BOX) == 0
    assert reduce_radicals((M + M * q) ** sixth * (1 + q) ** sixth - M**third * (1 + q) ** third, BOX) != 0


def test_a_nested_root_written_with_the_inner_root_as_a_product():
    # The Kerr temperature as a route writes it from a metric typed out by hand:
    # sqrt((1 - chi^2)/(2 + 2 sqrt(1 - chi) sqrt(1 + chi) - chi^2))/(2 M); the claim writes
    # sqrt(M^2 - a^2)/(2 M (M + sqrt(M^2 - a^2))) with a = chi M.  The radicand is a square in the
    # field of t = sqrt(1 - chi) sqrt(1 + chi) = sqrt(1 - chi^2) only once the product is seen.
    # Source: Wald 1984, eq. 12.5.4 (from memory), kappa = sqrt(M^2 - a^2)/(2 M r_+).
    route = sympy.sqrt((1 - chi**2) / (2 + 2 * sympy.sqrt(1 - chi) * sympy.sqrt(1 + chi) - chi**2)) / (2 * M)
    a = chi * M
    claim = sympy.sqrt(M**2 - a**2) / (2 * M * (M + sympy.sqrt(M**2 - a**2)))
    assert _numerically_zero(route - claim)
    assert reduce_radicals(route - claim, BOX) == 0
    assert reduce_radicals(route - 2 * claim, BOX) != 0


def test_one_nested_radicand_over_two_denominators():
    # The Tolman temperature of Reissner-Nordstrom at r = x r_+, written as
    # T/sqrt(F(r)) with F = (r^2 - 2 M r + Q^2)/r^2: a route writes sqrt(F) as
    # sqrt(r^2 - 2 M r + Q^2)/r, a claim as sqrt(1 - 2M/r + Q^2/r^2); r_+ = M + sqrt(M^2 - Q^2)
    # is nested inside both radicands.  Source: Tolman 1930 (from memory) for T_loc = T/sqrt(F).
    x = sympy.symbols("x", positive=True)
    Q = q * M
    rp = M + sympy.sqrt(M**2 - Q**2)
    r = x * rp
    route = 1 / (sympy.sqrt(r**2 - 2 * M * r + Q**2) / r)
    claim = 1 / sympy.sqrt(1 - 2 * M / r + Q**2 / r**2)
    box = {M: BOX[M], q: BOX[q], x: (Fraction(2), Fraction(5))}
    with mpmath.workdps(40):
        point = {M: 3, q: sympy.Rational(1, 5), x: 3}
        assert abs(sympy.N((route - claim).subs(point), 40)) < 1e-30
    assert reduce_radicals(route - claim, box) == 0
    assert reduce_radicals(route - claim * (1 + q), box) != 0
