"""crosscheck.compare: sample points, symbolic verdicts, numeric rows, statuses.

Expected values come from published formulas (cited beside each check) or
from an independent mpmath computation written in the test itself.
"""

from __future__ import annotations

import time

import mpmath
import pytest
import sympy

from crosscheck.claim import Parameter
from crosscheck.compare import claim_status, numeric_rows, route_status, sample_points, symbolic_verdict
from crosscheck.measure import Measured
from crosscheck.results import NumericRow, RouteOutcome, SymbolicCheck

M, q, x, a = sympy.symbols("M q x a")
R = sympy.Rational
PI = sympy.pi


def param(symbol: sympy.Symbol, lo, hi) -> Parameter:
    return Parameter(symbol.name, symbol, sympy.Rational(lo), sympy.Rational(hi))


MASS = param(M, R(1, 2), 20)
CHARGE = param(q, 0, R(95, 100))


def rn_temperature(mass, charge):
    """Reissner-Nordstrom T = sqrt(M^2-Q^2) / (2 pi (M + sqrt(M^2-Q^2))^2).

    Source: standard result, e.g. Carroll 2004, ch. 6 (from memory)."""
    root = sympy.sqrt(mass**2 - charge**2)
    return root / (2 * PI * (mass + root) ** 2)


# ----------------------------------------------------------------- sample points


def test_sample_points_reproducible_in_range_and_near_both_ends():
    params = [MASS, CHARGE, param(a, -3, R(-1, 10))]
    first = sample_points(params, 5, seed=7)
    assert first == sample_points(params, 5, seed=7)
    assert len(first) == 5
    for p in params:
        values = [point[p.symbol] for point in first]
        assert all(isinstance(v, sympy.Rational) for v in values)
        width = p.hi - p.lo
        assert all(p.lo < v < p.hi for v in values)
        # Near both ends: within 1e-5 of the width (the design pulls in by 1e-6).
        assert min(values) - p.lo <= width * R(1, 10**5)
        assert p.hi - max(values) <= width * R(1, 10**5)


def test_sample_points_are_latin_hypercube_strata():
    # Independent computation of the strata: u_k = 1e-6 + k/(n-1) * (1 - 2e-6).
    eps = R(1, 10**6)
    expected = sorted(MASS.lo + (MASS.hi - MASS.lo) * (eps + R(k, 4) * (1 - 2 * eps)) for k in range(5))
    for seed in range(4):
        assert sorted(point[M] for point in sample_points([MASS, CHARGE], 5, seed)) == expected


def test_sample_points_seeds_differ_and_parameters_are_permuted_independently():
    params = [MASS, CHARGE, param(a, 1, 2)]
    runs = [sample_points(params, 5, seed) for seed in range(5)]
    assert len({tuple(tuple(sorted(p.items(), key=str)) for p in run) for run in runs}) > 1
    orders = set()
    for run in runs:
        for p in params:
            column = [point[p.symbol] for point in run]
            orders.add((p.name, tuple(sorted(range(5), key=column.__getitem__))))
    assert len(orders) > len(params)  # not one shared permutation


def test_sample_points_fixed_value_midpoint_and_bad_n():
    fixed = param(a, 3, 3)
    assert [p[a] for p in sample_points([fixed, MASS], 4)] == [3, 3, 3, 3]
    assert sample_points([MASS], 1) == [{M: R(41, 4)}]  # (1/2 + 20) / 2
    with pytest.raises(ValueError):
        sample_points([MASS], 0)


# --------------------------------------------------------------- symbolic verdict


def test_proved_schwarzschild_temperature_two_ways():
    # T = 1/(8 pi M) = kappa/(2 pi) with kappa = 1/(4M).  Source: Hawking 1975 (from memory); algebra.
    check = symbolic_verdict(1 / (8 * PI * M), (1 / (2 * PI)) * (1 / (4 * M)), [MASS])
    assert check.verdict == "proved"
    assert check.difference == "0"


def test_reissner_nordstrom_temperature_written_two_ways():
    # T = (r_+ - r_-)/(4 pi r_+^2), r_+- = M +- sqrt(M^2 - Q^2), and r_- = Q^2/r_+ (r_+ r_- = Q^2).
    # Source: standard result, e.g. Carroll 2004 (from memory).
    Q = q * M
    r_p = M + sympy.sqrt(M**2 - Q**2)
    for r_m in (M - sympy.sqrt(M**2 - Q**2), Q**2 / r_p):
        check = symbolic_verdict(rn_temperature(M, Q), (r_p - r_m) / (4 * PI * r_p**2), [MASS, CHARGE])
        assert check.verdict in ("proved", "consistent"), check


def test_uncharged_formula_is_disproved_for_charged_hole_at_large_charge():
    # 1/(8 pi M) is the q = 0 limit only; the difference grows with q (Carroll 2004, from memory).
    Q = q * M
    check = symbolic_verdict(1 / (8 * PI * M), rn_temperature(M, Q), [MASS, CHARGE])
    assert check.verdict == "disproved"
    point = check.counterexample
    assert set(point) == {"M", "q"} and float(point["q"]) > 0.5
    # Independent check of the counterexample with mpmath.
    with mpmath.workdps(30):
        m, qq = mpmath.mpf(point["M"]), mpmath.mpf(point["q"])
        root = mpmath.sqrt(m**2 - (qq * m) ** 2)
        rn = root / (2 * mpmath.pi * (m + root) ** 2)
        assert abs(1 / (8 * mpmath.pi * m) - rn) / rn > 0.1


def test_sqrt_of_square_is_not_x_on_a_range_with_negatives():
    # PITFALLS.md false-positive trap: sqrt(x**2) = |x|, equal to x only for x >= 0 (algebra).
    check = symbolic_verdict(sympy.sqrt(x**2), x, [param(x, -1, 1)])
    assert check.verdict == "disproved"
    assert float(check.counterexample["x"]) < 0


def test_sqrt_of_square_is_x_on_a_positive_range():
    check = symbolic_verdict(sympy.sqrt(x**2), x, [param(x, R(1, 10), 2)])
    assert check.verdict in ("proved", "consistent")


def test_nested_radical_identity_is_never_disproved():
    # (sqrt(2) + sqrt(3))**2 = 5 + 2 sqrt(6), so sqrt(5 + 2 sqrt(6)) = sqrt(2) + sqrt(3) (algebra).
    with mpmath.workdps(40):
        assert mpmath.almosteq(mpmath.sqrt(5 + 2 * mpmath.sqrt(6)), mpmath.sqrt(2) + mpmath.sqrt(3), 1e-35)
    route = M * sympy.sqrt(5 + 2 * sympy.sqrt(6))
    claim = M * (sympy.sqrt(2) + sympy.sqrt(3))
    assert symbolic_verdict(route, claim, [MASS]).verdict in ("proved", "consistent")


def test_tiny_difference_is_neither_consistent_nor_disproved():
    # Differs by 1e-20 relative: below the 1e-12 counterexample threshold, above 10^-40.
    claim = (1 + sympy.Float("1e-20", 60)) / (8 * PI * M)
    check = symbolic_verdict(1 / (8 * PI * M), claim, [MASS])
    assert check.verdict == "inconclusive"


def test_hard_simplification_respects_the_time_budget():
    big = sum(sympy.sqrt(M + k * q + 1) / (M**k + q * (k + 1)) for k in range(1, 40))
    other = sympy.together(big)
    started = time.monotonic()
    check = symbolic_verdict(big, other, [MASS, CHARGE], time_budget=0.5)
    assert time.monotonic() - started < 2.0
    assert check.verdict in ("consistent", "inconclusive", "proved")
    assert len(check.claim_side) <= 2000


def test_scaling_claims_compare_the_ratio():
    # T = kappa/(2 pi): T and kappa = 1/(4M) are proportional; 1/(4 M^2) is not (Hawking 1975, from memory).
    assert symbolic_verdict(1 / (8 * PI * M), 1 / (4 * M), [MASS], scaling=True).verdict == "proved"
    check = symbolic_verdict(1 / (8 * PI * M), 1 / (4 * M**2), [MASS], scaling=True)
    assert check.verdict == "disproved"


def test_complex_everywhere_and_stray_symbols_are_inconclusive():
    check = symbolic_verdict(sympy.sqrt(x - 2), (1 + x) * sympy.sqrt(x - 2), [param(x, -1, 1)])
    assert check.verdict == "inconclusive" and "complex" in check.method
    stray = sympy.Symbol("r")
    check = symbolic_verdict(M * stray, M * stray + M**2, [MASS])
    assert check.verdict == "inconclusive" and "r" in check.method


def test_route_symbols_are_matched_to_parameters_by_name():
    route_mass = sympy.Symbol("M", positive=True)
    check = symbolic_verdict(sympy.sqrt(route_mass**2), M, [MASS])
    assert check.verdict == "proved"


# ------------------------------------------------------------------ numeric rows


def measured(value, error=0):
    return Measured(mpmath.mpf(value), mpmath.mpf(error))


def test_numeric_rows_use_the_larger_of_tolerance_and_error():
    points = [{M: R(1)}, {M: R(2)}, {M: R(3)}]
    route = [measured(1, "1e-12"), measured(2, "2e-6"), measured(3, "1e-15")]
    claim = [measured("1.0000000001"), measured("2.000001"), measured("3.000001")]
    rows = numeric_rows(points, route, claim, 1e-9)
    assert [r.agree for r in rows] == [True, True, False]
    assert rows[1].bound == pytest.approx(1e-6, rel=1e-3)  # 2e-6 / 2.000001
    assert rows[2].bound == 1e-9
    assert rows[2].rel_diff == pytest.approx(1e-6 / 3.000001, rel=1e-6)
    assert rows[0].point == {"M": "1.0"}


def test_numeric_rows_zero_values_and_scaling():
    zero = numeric_rows([{M: R(1)}], [measured(0)], [measured(0)], 1e-9)[0]
    assert zero.rel_diff == 0 and zero.agree
    points = [{M: R(1)}, {M: R(2)}]
    # T = kappa/(2 pi) is proportional to kappa: ratio 1/(2 pi) at every point (Hawking 1975, from memory).
    with mpmath.workdps(30):
        temperature = [measured(1 / (8 * mpmath.pi * m), "1e-25") for m in (1, 2)]
        kappa = [measured(mpmath.mpf(1) / (4 * m)) for m in (1, 2)]
        wrong = [measured(mpmath.mpf(1) / (4 * m**2)) for m in (1, 2)]
    assert all(r.agree for r in numeric_rows(points, temperature, kappa, 1e-9, scaling=True))
    assert not numeric_rows(points, temperature, wrong, 1e-9, scaling=True)[1].agree
    with pytest.raises(ValueError):
        numeric_rows(points, temperature, kappa[:1], 1e-9)


# ------------------------------------------------------------------- statuses


def row(agree: bool, rel: float = 0.0) -> NumericRow:
    return NumericRow({"M": "1"}, 1.0, 1.0 + rel, rel, 0.0, 1e-9, agree)


@pytest.mark.parametrize(
    ("verdict", "rows", "status", "words"),
    [
        ("disproved", [row(True)], "disagree", "symbolic"),
        ("proved", [row(True), row(False, 0.5)], "disagree", "1 of 2"),
        ("proved", [row(True)], "agree", "proved"),
        ("consistent", [], "agree", "consistent"),
        ("inconclusive", [row(True)], "agree", "numeric evidence only"),
        ("unavailable", [row(True)], "agree", "numeric agreement"),
        (None, [row(True)], "agree", "numeric agreement"),
        ("inconclusive", [], "inconclusive", "inconclusive"),
        ("unavailable", [], "inconclusive", "no numeric"),
        (None, [], "inconclusive", "no numeric"),
    ],
)
def test_route_status_combinations(verdict, rows, status, words):
    symbolic = None if verdict is None else SymbolicCheck(verdict, "a method", counterexample={"M": "2"})
    got, reason = route_status(symbolic, rows)
    assert got == status
    assert words in reason


def outcome(route: str, grade: str, status: str) -> RouteOutcome:
    return RouteOutcome(route=route, title=route, grade=grade, status=status)


@pytest.mark.parametrize(
    ("outcomes", "expected"),
    [
        ([("killing-horizon", "exact", "agree"), ("euclidean-period", "exact", "agree")], "confirmed"),
        (
            [("killing-horizon", "exact", "agree"), ("euclidean-period", "exact", "agree"),
             ("dimensional-estimate", "estimate", "disagree")],
            "confirmed",
        ),
        ([("killing-horizon", "exact", "agree"), ("tunneling", "exact", "disagree")], "contradicted"),
        ([("killing-horizon", "exact", "agree"), ("euclidean-period", "exact", "agree"),
          ("dimensions", "exact", "disagree")], "contradicted"),
        ([("killing-horizon", "exact", "agree"), ("dimensions", "exact", "agree")], "weak"),
        ([("killing-horizon", "exact", "agree"), ("dimensional-estimate", "estimate", "agree")], "weak"),
        ([("dimensional-estimate", "estimate", "agree")], "weak"),
        ([("killing-horizon", "exact", "inconclusive"), ("tunneling", "exact", "not-applicable"),
          ("bogoliubov", "exact", "error"), ("dimensions", "exact", "agree")], "unchecked"),
        ([], "unchecked"),
    ],
)
def test_claim_status_follows_design_section_5(outcomes, expected):
    assert claim_status([outcome(*o) for o in outcomes]) == expected


def test_a_clearly_wrong_claim_skips_the_proof_attempts():
    # A factor-2 slip, T = 1/(4 pi M) against Hawking's 1/(8 pi M) (Hawking 1975): the sides
    # differ by 2 at every point, so the verdict is decided numerically, with no proof attempt.
    check = symbolic_verdict(1 / (8 * PI * M), 1 / (4 * PI * M), [MASS], time_budget=10.0)
    assert check.verdict == "disproved"
    assert "no proof was attempted" in check.method


def test_a_scaling_claim_that_scales_is_still_proved():
    # T and kappa differ by the constant 2 pi (Hawking 1975): equal up to a constant.
    check = symbolic_verdict(1 / (8 * PI * M), 1 / (4 * M), [MASS], scaling=True)
    assert check.verdict == "proved"
