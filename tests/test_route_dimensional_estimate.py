"""The dimensional-estimate route: T ~ N/r_h, an O(1) factor away from the truth.

Reference temperatures are published (sources beside each check); the
route's own value is checked against r_h and N computed here with mpmath.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

from crosscheck.claimfile import load_claim_text
from crosscheck.routes.dimensional_estimate import DimensionalEstimateRoute
from crosscheck.runner import RunOptions, problem_for, run_claim

ROUTE = DimensionalEstimateRoute()
ROUTES = {ROUTE.name: ROUTE}
OPTIONS = RunOptions(samples=5, digits=30, timeout=60)


def claim_of(spacetime: str, parameters: str, claim: str, extra: str = ""):
    text = f"id: test/estimate\nspacetime: {spacetime}\nparameters: {parameters}\nclaim: {claim}\n{extra}"
    claims, errors = load_claim_text(text, "test.yaml", known_routes=ROUTES)
    assert not errors, errors
    return claims[0]


def outcome(spacetime: str, parameters: str, claim: str, extra: str = ""):
    result = run_claim(claim_of(spacetime, parameters, claim, extra), ROUTES, OPTIONS)
    return next(r for r in result.routes if r.route == ROUTE.name)


def test_exact_claim_gets_the_famous_factor_one_over_four_pi():
    # Source: Hawking 1975, T = 1/(8 pi M); the estimate 1/r_h = 1/(2M) is 4 pi too large
    # (PHYSICS.md, dimensional-estimate).
    route = outcome("{name: schwarzschild}", "{M: [0.5, 20]}", "T = 1/(8*pi*M)")
    assert route.status == "inconclusive"
    assert "estimate routes vote only" in route.reason
    assert route.diagnosis.kind == "factor" and route.diagnosis.factor == "1/(4*pi)"
    assert "claim/route = 1/(4*pi)" in route.diagnosis.text


def test_scaling_claim_is_confirmed_with_its_ratio():
    # Source: Hawking 1975: T = 1/(8 pi M) scales as 1/M; 1/M over 1/(2M) is 2.
    route = outcome("{name: schwarzschild}", "{M: [0.5, 20]}", "T = 1/M", "agreement: scaling\n")
    assert route.status == "agree", route.reason
    assert "claim/route = 2" in route.reason


def test_scaling_claim_that_misses_a_dependence_disagrees():
    # Source: Gibbons & Hawking 1977, T_RN = sqrt(M^2 - Q^2)/(2 pi r_+^2): at fixed M it is not
    # a constant times 1/r_+, so T ~ 1/M is not a scaling law once q varies -- the estimate
    # sees that r_+ depends on q.
    route = outcome("{name: reissner-nordstrom}", "{M: [0.5, 20], q: [0.1, 0.9]}", "T = 1/M",
                    "agreement: scaling\nwhere: {Q: q*M}\n")
    assert route.status == "disagree"


def test_tangherlini_factor_in_five_dimensions():
    # Source: T = (D - 3)/(4 pi r_h) for Schwarzschild-Tangherlini (from memory): D = 5 gives
    # 1/(2 pi r_h), the estimate's 1/r_h times 1/(2 pi).
    route = outcome("{name: tangherlini, dim: 5}", "{mu: [0.5, 4]}", "T = 1/(2*pi*sqrt(mu))")
    assert route.diagnosis.kind == "factor" and route.diagnosis.factor == "1/(2*pi)"


def test_normalisation_is_applied_between_two_horizons():
    # Source: PHYSICS.md, normalisation: geodesic N = 1/sqrt(F(r_g)), F'(r_g) = 0; for
    # F = 1 - 2M/r - Lambda r^2/3, r_g = (3M/Lambda)^(1/3) (elementary calculus).
    claim = claim_of("{name: schwarzschild-de-sitter, normalize: geodesic}", "{M: [0.1, 0.2], Lambda: [0.1, 0.3]}", "T = 1")
    problem = problem_for(claim)
    m_sym, lam_sym = claim.symbols
    with mpmath.workdps(40):
        m, lam = mpmath.mpf("0.15"), mpmath.mpf("0.2")
        F = lambda r: 1 - 2 * m / r - lam * r**2 / 3  # noqa: E731
        r_b = mpmath.findroot(F, 2 * m * 1.1)
        r_g = mpmath.cbrt(3 * m / lam)
        expected = 1 / (mpmath.sqrt(F(r_g)) * r_b)
        value = ROUTE.numeric(problem, {m_sym: m, lam_sym: lam}, 30).values["T"]
        assert abs(value.value - expected) <= 1e-25 * expected
        assert 0 < value.error <= 1e-20 * expected


def test_symbolic_and_numeric_sides_agree():
    # Source: common practice; the closed form is N/r_h with r_h = M + sqrt(M^2 - Q^2).
    claim = claim_of("{name: reissner-nordstrom}", "{M: [0.5, 20], Q: [0.1, 0.4]}", "T = 1")
    problem = problem_for(claim)
    symbolic = ROUTE.symbolic(problem).values["T"]
    point = {claim.symbols[0]: sympy.Rational(3), claim.symbols[1]: sympy.Rational(1, 3)}
    with mpmath.workdps(40):
        numeric = ROUTE.numeric(problem, {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}, 30).values["T"]
        reference = 1 / (3 + mpmath.sqrt(9 - mpmath.mpf(1) / 9))
        assert abs(mpmath.mpf(sympy.N(symbolic.subs(point), 40)) - reference) <= 1e-35 * reference
        assert abs(numeric.value - reference) <= 1e-28 * reference


def test_evidence_has_the_transmission_curve():
    claim = claim_of("{name: schwarzschild}", "{M: [0.5, 20]}", "T = 1")
    with mpmath.workdps(40):
        evidence = ROUTE.numeric(problem_for(claim), {claim.symbols[0]: mpmath.mpf(2)}, 15).evidence
    series = evidence["series"][0]
    # ln transmission = -E r_h: slope -r_h = -4 for M = 2 (the estimate's 1/T).
    slope = (series["y"][-1] - series["y"][0]) / (series["x"][-1] - series["x"][0])
    assert slope == pytest.approx(-4, rel=1e-12)


def test_declines_for_an_acceleration_horizon():
    claim = claim_of("{name: rindler}", "{a: [0.5, 2]}", "T = a/(2*pi)")
    assert "no length scale" in ROUTE.applies(problem_for(claim))


def test_horizon_scale_is_the_areal_radius():
    # Source: Schwarzschild in isotropic coordinates (Wald 1984, problem 6.1; from memory): the
    # horizon is at r = M/2 with areal radius 2M, so the estimate is 1/(2M) as in Schwarzschild
    # coordinates and Hawking's 1/(8 pi M) is 1/(4 pi) of it.
    spacetime = """
  static:
    F: ((1 - M/(2*r))/(1 + M/(2*r)))**2
    G: (1 + M/(2*r))**(-4)
    R: r*(1 + M/(2*r))**2
  horizon: M/2"""
    route = outcome(spacetime, "{M: [0.5, 3]}", "T = 1/(8*pi*M)")
    assert route.diagnosis.kind == "factor" and route.diagnosis.factor == "1/(4*pi)"
