"""The compiled radial functions of the null-ray helpers against sympy computed here."""

from __future__ import annotations

import mpmath
import sympy

from crosscheck.routes._ray_peeling_compiled import at_horizon, horner, rational_parts, taylor_shift

r, x, M, Q = sympy.symbols("r x M Q", positive=True)


def test_taylor_shift_matches_sympy_expansion():
    # Source: p(c + s x) expanded by sympy here (an independent computation).
    p = 3 * r**4 - 2 * r**3 + 5 * r - 7
    for center, side in ((sympy.Rational(3, 2), 1), (sympy.Rational(-2, 5), -1)):
        expected = sympy.Poly(sympy.expand(p.subs(r, center + side * x)), x).all_coeffs()
        shifted = taylor_shift([sympy.Integer(c) for c in sympy.Poly(p, r).all_coeffs()], center, side)
        assert [sympy.nsimplify(c) for c in shifted] == expected


def test_at_horizon_matches_direct_evaluation_and_keeps_digits_near_r_h():
    # Source: Reissner-Nordstrom F G = (1 - 2M/r + Q^2/r^2)^2 evaluated directly at 120 digits here.
    F = 1 - 2 * M / r + Q**2 / r**2
    with mpmath.workdps(40):
        m, q = mpmath.mpf("1.5"), mpmath.mpf("0.3")
        r_h = m + mpmath.sqrt(m**2 - q**2)
        fg = at_horizon(F * F, r, {M: m, Q: q}, r_h, 1, 40)
        for offset in ("1e-3", "1e-9", "1e-15"):
            x0 = mpmath.mpf(offset)
            plain = (1 - 2 * m / (r_h + x0) + q**2 / (r_h + x0) ** 2) ** 2  # in r at 40 digits: cancels
            with mpmath.workdps(120):
                direct = (1 - 2 * m / (r_h + x0) + q**2 / (r_h + x0) ** 2) ** 2
                error, plain_error = abs(fg(x0) - direct) / abs(direct), abs(plain - direct) / abs(direct)
            assert error < plain_error and error < mpmath.mpf(10) ** -28, (offset, error, plain_error)
            if offset != "1e-15":
                assert error < mpmath.mpf(10) ** -34
        assert abs(fg(mpmath.mpc(0, 1) * mpmath.mpf("1e-3"))) > 0  # complex offsets work too


def test_rational_parts_declines_non_rational_functions():
    assert rational_parts(sympy.sqrt(r) * (1 - 2 * M / r), r) is None
    symbols, top, bottom = rational_parts((1 - 2 * M / r) ** 2, r)
    assert symbols == (M,) and top(2) == [1, -8, 16] and bottom(2) == [1, 0, 0]
    assert horner([1, -8, 16], 4) == 0  # (r - 4)^2 at r = 4
