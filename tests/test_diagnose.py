"""crosscheck.diagnose: naming the shape of a disagreement.

Route values are built here from published formulas (Schwarzschild T =
1/(8 pi M), Hawking 1975; Schwarzschild-de Sitter blackening factor) and the
claim values from them by a known error, so every expected diagnosis is set
by the test, not by the code under test.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

from crosscheck.claim import Parameter
from crosscheck.compare import diagnose as diagnose_from_compare
from crosscheck.compare import sample_points
from crosscheck.diagnose import diagnose, identify_constant

M, a, Lam = sympy.symbols("M a Lambda")
PARAMS = [
    Parameter("M", M, sympy.Rational(1, 2), sympy.Integer(20)),
    Parameter("a", a, sympy.Rational(1, 10), sympy.Integer(3)),
]
POINTS = sample_points(PARAMS, 6, seed=3)
DIGITS = 30


def values_at(func, points=POINTS):
    """func(M, a) at each point, at DIGITS + 10 digits."""
    with mpmath.workdps(DIGITS + 10):
        return [func(mpmath.mpmathify(p[M]), mpmath.mpmathify(p[a])) for p in points]


def schwarzschild_temperature(mass, _a):
    # Source: Hawking 1975, T = 1/(8 pi M) in geometric units (from memory).
    return 1 / (8 * mpmath.pi * mass)


ROUTE = values_at(schwarzschild_temperature)


def claim_times(factor_func):
    extra = values_at(factor_func)
    with mpmath.workdps(DIGITS + 10):
        return [r * f for r, f in zip(ROUTE, extra)]


@pytest.mark.parametrize(
    ("factor", "text"),
    [
        (lambda: mpmath.mpf(2), "2"),  # the naive tunneling factor 2 (common practice)
        (lambda: mpmath.mpf(1) / 2, "1/2"),
        (lambda: mpmath.pi, "pi"),
        (lambda: 2 * mpmath.pi, "2*pi"),  # period vs frequency (common practice)
        (lambda: 4 * mpmath.pi, "4*pi"),
        (lambda: 1 / (4 * mpmath.pi), "1/(4*pi)"),
        (lambda: mpmath.sqrt(2) / 3, "sqrt(2)/3"),
    ],
)
def test_constant_factors_are_identified(factor, text):
    diagnosis = diagnose(POINTS, ROUTE, claim_times(lambda m, _a: factor()), PARAMS, digits=DIGITS)
    assert diagnosis.kind == "factor"
    assert diagnosis.factor == text
    assert f"constant factor {text}" in diagnosis.text


def test_sign_flip():
    diagnosis = diagnose(POINTS, ROUTE, claim_times(lambda m, _a: -1), PARAMS, digits=DIGITS)
    assert (diagnosis.kind, diagnosis.factor) == ("sign", "-1")


def test_negative_constant_is_a_factor_not_a_sign():
    diagnosis = diagnose(POINTS, ROUTE, claim_times(lambda m, _a: -2 * mpmath.pi), PARAMS, digits=DIGITS)
    assert (diagnosis.kind, diagnosis.factor) == ("factor", "-2*pi")


def test_unidentified_constant_reports_the_decimal():
    # Euler's gamma is not among small rationals times pi^k sqrt(2)^j sqrt(3)^l.
    diagnosis = diagnose(POINTS, ROUTE, claim_times(lambda m, _a: mpmath.euler), PARAMS, digits=DIGITS)
    assert diagnosis.kind == "factor"
    assert diagnosis.factor.startswith("0.57721566490")


@pytest.mark.parametrize(
    ("power", "exponents", "law"),
    [
        (lambda m, _a: 1 / m, {"M": "-1"}, "M^-1"),
        (lambda m, _a: m**2, {"M": "2"}, "M^2"),
        (lambda m, aa: m**2 / aa, {"M": "2", "a": "-1"}, "M^2 * a^-1"),
        (lambda m, _a: mpmath.sqrt(m), {"M": "1/2"}, "M^(1/2)"),
    ],
)
def test_wrong_power_with_two_parameters_varying(power, exponents, law):
    diagnosis = diagnose(POINTS, ROUTE, claim_times(power), PARAMS, digits=DIGITS)
    assert diagnosis.kind == "power"
    assert diagnosis.exponents == exponents
    assert f"wrong power: claim/route scales as {law}" in diagnosis.text


def test_power_with_a_simple_constant():
    diagnosis = diagnose(POINTS, ROUTE, claim_times(lambda m, _a: 8 * mpmath.pi * m), PARAMS, digits=DIGITS)
    assert diagnosis.kind == "power"
    assert diagnosis.exponents == {"M": "1"} and diagnosis.factor == "8*pi"


def test_additive_offset():
    with mpmath.workdps(DIGITS + 10):
        claim = [r + mpmath.mpf(1) / 2 for r in ROUTE]
    diagnosis = diagnose(POINTS, ROUTE, claim, PARAMS, digits=DIGITS)
    assert (diagnosis.kind, diagnosis.factor) == ("offset", "1/2")


def test_offset_when_route_value_vanishes():
    # An extremal hole has T = 0 (Carroll 2004, from memory): the ratio is undefined there.
    route = [mpmath.mpf(0)] + ROUTE[1:]
    with mpmath.workdps(DIGITS + 10):
        claim = [r + mpmath.mpf(3) for r in route]
    assert diagnose(POINTS, route, claim, PARAMS, digits=DIGITS).kind == "offset"


def sds_points_and_factor():
    """Schwarzschild-de Sitter F(r) = 1 - 2M/r - Lambda r^2/3 at a reference radius r0 = 3.

    Source: Gibbons & Hawking 1977 for the metric (from memory).  The
    Killing vector normalised at r0 has norm sqrt(F(r0)) there.
    """
    params = [
        Parameter("M", M, sympy.Rational(1, 10), sympy.Rational(1, 2)),
        Parameter("Lambda", Lam, sympy.Rational(1, 100), sympy.Rational(1, 20)),
    ]
    points = sample_points(params, 5, seed=1)
    with mpmath.workdps(DIGITS + 10):
        r0 = mpmath.mpf(3)
        norm = [mpmath.sqrt(1 - 2 * mpmath.mpmathify(p[M]) / r0 - mpmath.mpmathify(p[Lam]) * r0**2 / 3) for p in points]
        route = [1 / (8 * mpmath.pi * mpmath.mpmathify(p[M])) for p in points]  # a stand-in route value
    return params, points, route, norm


@pytest.mark.parametrize("inverted", [False, True])
def test_candidate_normalisation_is_named(inverted):
    params, points, route, norm = sds_points_and_factor()
    with mpmath.workdps(DIGITS + 10):
        claim = [r / n if inverted else r * n for r, n in zip(route, norm)]
    name = "Killing normalisation sqrt(F(r0))"
    candidates = {"naive tunneling factor 2": [2] * len(points), name: norm}
    diagnosis = diagnose(points, route, claim, params, candidates=candidates, digits=DIGITS)
    assert diagnosis.kind == "normalization"
    assert name in diagnosis.text
    assert diagnosis.factor == (f"1/({name})" if inverted else name)


def test_constant_candidate_is_mentioned_with_the_factor():
    params, points, route, norm = sds_points_and_factor()
    candidates = {"naive tunneling factor 2": [2] * len(points), "Killing normalisation": norm}
    claim = [2 * r for r in route]
    diagnosis = diagnose(points, route, claim, params, candidates=candidates, digits=DIGITS)
    assert (diagnosis.kind, diagnosis.factor) == ("factor", "2")
    assert "naive tunneling factor 2" in diagnosis.text


def test_unidentified_reports_the_ratio_range():
    diagnosis = diagnose(POINTS, ROUTE, claim_times(lambda m, aa: 1 + mpmath.sin(m * aa)), PARAMS, digits=DIGITS)
    assert diagnosis.kind == "unidentified"
    assert "ratio claim/route ranges from" in diagnosis.text


def test_identify_constant_confirms_and_prefers_simple_forms():
    with mpmath.workdps(DIGITS):
        assert identify_constant([1 / mpmath.sqrt(2)]) == "sqrt(2)/2"
        assert identify_constant([mpmath.pi**2 / 6]) == "pi**2/6"  # zeta(2), Euler (from memory)
        assert identify_constant([mpmath.pi, mpmath.pi * (1 + mpmath.mpf("1e-9"))]) is None
        assert identify_constant([mpmath.e]) is None


def test_compare_reexports_diagnose_and_rejects_mismatched_lengths():
    assert diagnose_from_compare is diagnose
    with pytest.raises(ValueError):
        diagnose(POINTS, ROUTE[:2], ROUTE, PARAMS)
    with pytest.raises(ValueError):
        diagnose(POINTS, ROUTE, ROUTE, PARAMS, candidates={"short": [1]})


# -- kinds of suspects (wrong horizon) and the ratio in the factor text -----------------------


def test_horizon_suspect_is_named_as_a_wrong_horizon():
    # Source: RN kappa_-/kappa_+ = r_+^2/r_-^2 (Wald 1984, sec. 12.5; from memory), with
    # r_+- = M +- sqrt(M^2 - a^2) standing in for the charge a here.
    from crosscheck.diagnose import Suspect

    ratios = values_at(lambda m, q: ((m + mpmath.sqrt(m**2 + q**2)) / (m - mpmath.sqrt(m**2 + q**2))) ** 2)
    with mpmath.workdps(DIGITS + 10):
        claim = [r * x for r, x in zip(ROUTE, ratios)]
    name = "the claim matches the inner horizon r_- (root 1 of 2)"
    as_horizon = diagnose(POINTS, ROUTE, claim, PARAMS, candidates={name: Suspect(ratios, "horizon")}, digits=DIGITS)
    assert as_horizon.kind == "horizon" and name in as_horizon.text
    # A plain sequence keeps its original meaning: a normalisation suspect.
    as_plain = diagnose(POINTS, ROUTE, claim, PARAMS, candidates={name: list(ratios)}, digits=DIGITS)
    assert as_plain.kind == "normalization"


def test_constant_factor_text_states_the_ratio():
    # Source: the estimate T ~ 1/r_h against Hawking's 1/(8 pi M): claim/route = 1/(4 pi) (PHYSICS.md).
    diagnosis = diagnose(POINTS, ROUTE, claim_times(lambda m, q: 1 / (4 * mpmath.pi)), PARAMS, digits=DIGITS)
    assert "claim/route = 1/(4*pi)" in diagnosis.text
