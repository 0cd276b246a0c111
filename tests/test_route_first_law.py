"""The first-law route against published entropies and temperatures.

The route never uses the area: it integrates dS = (dM - Phi dQ)/T from a hole
of zero size.  So every published S = A/4 below is an independent check
(Bekenstein 1973, Hawking 1975: S = A/4; the areas are elementary geometry).
Claims are built with the claim loader and run through the runner, as a user
would run them.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

from crosscheck.claimfile import load_claim_text
from crosscheck.routes.first_law import FirstLawRoute
from crosscheck.runner import RunOptions, problem_for, run_claim

ROUTE = FirstLawRoute()
ROUTES = {ROUTE.name: ROUTE}
OPTIONS = RunOptions(samples=3, digits=15, timeout=120)


def claim_of(spacetime: str, parameters: str, claim: str, where: str = "", extra: str = ""):
    text = f"id: test/first-law\nspacetime: {spacetime}\nparameters: {parameters}\n{where}claim: {claim}\n{extra}"
    claims, errors = load_claim_text(text, "test.yaml", known_routes=ROUTES)
    assert not errors, errors
    return claims[0]


def outcome(spacetime: str, parameters: str, claim: str, where: str = "", options: RunOptions = OPTIONS):
    result = run_claim(claim_of(spacetime, parameters, claim, where), ROUTES, options)
    return next(r for r in result.routes if r.route == ROUTE.name)


def assert_agrees(route, symbolic: bool = True):
    assert route.status == "agree", (route.status, route.reason)
    assert route.numeric and all(row.agree for row in route.numeric)
    if symbolic:
        assert route.symbolic.verdict in ("proved", "consistent"), route.symbolic


ISOTROPIC = """
  static:
    F: ((1 - M/(2*r))/(1 + M/(2*r)))**2
    G: (1 + M/(2*r))**(-4)
    R: r*(1 + M/(2*r))**2
  horizon: M/2"""

# Reissner-Nordstrom written with the radial coordinate rho = r (areal radius R = r^2/L):
# F != G, R != r, simple zeros.  G = f(R) (dr/dR)^2 = f L^2/(4 r^2).
RN_STRETCHED = """
  static:
    F: 1 - 2*M*L/r**2 + Q**2*L**2/r**4
    G: (1 - 2*M*L/r**2 + Q**2*L**2/r**4)*L**2/(4*r**2)
    R: r**2/L
    A_t: -Q*L/r**2
  horizon: sqrt(L*(M + sqrt(M**2 - Q**2)))"""

# Reissner-Nordstrom-Tangherlini in 5 dimensions with Gaussian units, A_t = -sqrt((D-2)/(2(D-3))) q/r^(D-3).
RN5 = """
  static:
    F: 1 - m/r**2 + q**2/r**4
    A_t: -sqrt(3)*q/(2*r**2)
    dim: 5
  horizon: sqrt((m + sqrt(m**2 - 4*q**2))/2)"""


@pytest.mark.parametrize(
    "spacetime, parameters, claim, where",
    [
        # Source: Bekenstein-Hawking S = A/4 = 4 pi M^2 for Schwarzschild (Hawking 1975; from memory).
        ("{name: schwarzschild}", "{M: [0.5, 20]}", "S = 4*pi*M**2", ""),
        # Source: RN S = pi r_+^2, r_+ = M + sqrt(M^2 - Q^2) (Wald 1984, sec. 12.5; from memory).
        ("{name: reissner-nordstrom}", "{M: [0.5, 20], Q: [0.1, 0.4]}", "S = pi*(M + sqrt(M**2 - Q**2))**2", ""),
        # Source: Tangherlini D = 5: S = A/4, A = 2 pi^2 r_h^3, r_h = sqrt(mu) (from memory).
        ("{name: tangherlini, dim: 5}", "{mu: [0.5, 4]}", "S = 2*pi**2*mu**(3/2)/4", ""),
        # Source: BTZ S = A/4 with A = 2 pi r_+, r_+ = l sqrt(M) (Banados, Teitelboim & Zanelli 1992; from memory).
        ("{name: btz}", "{M: [0.5, 3], l: [1, 4]}", "S = 2*pi*l*sqrt(M)/4", ""),
        # Source: GHS dilaton hole S = A/4 = pi R(2M)^2 = pi (4 M^2 - 2 Q^2) (Garfinkle, Horowitz & Strominger 1991; from memory).
        ("{name: charged-dilaton}", "{M: [0.5, 3], q: [0.1, 0.9]}", "S = pi*(4*M**2 - 2*Q**2)", "where: {Q: q*M}\n"),
        # Source: Schwarzschild in isotropic coordinates (Wald 1984, problem 6.1; from memory): same S = 4 pi M^2.
        (ISOTROPIC, "{M: [0.5, 3]}", "S = 4*pi*M**2", ""),
        # Source: RN S = pi r_+^2 (from memory), written in a stretched radial coordinate.
        pytest.param(RN_STRETCHED, "{M: [1, 3], Q: [0.1, 0.5], L: [1, 2]}", "S = pi*(M + sqrt(M**2 - Q**2))**2", "",
                     marks=pytest.mark.slow),
        # Source: S = A/4 = 2 pi^2 r_+^3/4 for the 5-dimensional charged hole (Myers & Perry 1986 form; from memory).
        (RN5, "{m: [1, 3], q: [0.1, 0.4]}", "S = 2*pi**2*((m + sqrt(m**2 - 4*q**2))/2)**(3/2)/4", ""),
    ],
    ids=["schwarzschild", "reissner-nordstrom", "tangherlini-5", "btz", "dilaton", "isotropic", "stretched-rn", "rn-5d"],
)
def test_entropy_from_the_first_law_is_a_quarter_of_the_area(spacetime, parameters, claim, where):
    assert_agrees(outcome(spacetime, parameters, claim, where))


def test_ads_entropy_at_fixed_curvature_radius():
    # Source: Hawking & Page 1983: S = pi r_+^2 with M = r_+ (1 + r_+^2/L^2)/2 (from memory).
    route = outcome("{name: schwarzschild-anti-de-sitter}", "{rp: [0.5, 3], L: [1, 4]}", "S = pi*rp**2",
                    "where: {M: rp*(1 + rp**2/L**2)/2}\n")
    assert route.status == "agree", route.reason
    assert route.evidence["path_scaled"] == ["rp"] and route.evidence["path_fixed"] == ["L"]


def test_black_hole_horizon_of_schwarzschild_de_sitter():
    # Source: Gibbons & Hawking 1977: S = pi r_b^2 for the black-hole horizon, with
    # M = r_b (1 - Lambda r_b^2/3)/2 (from memory); the hole shrinks as r_b -> 0 at fixed Lambda.
    route = outcome("{name: schwarzschild-de-sitter, normalize: geodesic}", "{rb: [0.2, 0.4], Lambda: [0.5, 1]}",
                    "S = pi*rb**2", "where: {M: rb*(1 - Lambda*rb**2/3)/2}\n")
    assert route.status == "agree", route.reason


@pytest.mark.parametrize(
    "spacetime, parameters, claim, where",
    [
        # Source: Schwarzschild T = 1/(8 pi M) (Hawking 1975).
        ("{name: schwarzschild}", "{M: [0.5, 20]}", "T = 1/(8*pi*M)", ""),
        # Source: isotropic Schwarzschild has the same T (a double zero of F, G finite; from memory).
        (ISOTROPIC, "{M: [0.5, 3]}", "T = 1/(8*pi*M)", ""),
        # Source: RN Phi = Q/r_+ (Wald 1984, sec. 12.5; from memory).
        ("{name: reissner-nordstrom}", "{M: [0.5, 20], Q: [0.1, 0.4]}", "Phi = Q/(M + sqrt(M**2 - Q**2))", ""),
        # Source: first law of Schwarzschild, dS/dM = 1/T (Bardeen, Carter & Hawking 1973).
        ("{name: schwarzschild}", "{M: [0.5, 20]}", "diff(S, M) = 1/T", ""),
        # Source: Smarr 1973, M = 2 T S + Phi Q for Reissner-Nordstrom (from memory).
        ("{name: reissner-nordstrom}", "{M: [0.5, 20], Q: [0.1, 0.4]}", "M = 2*T*S + Phi*Q", ""),
    ],
    ids=["schwarzschild-T", "isotropic-T", "rn-Phi", "first-law", "smarr"],
)
def test_temperature_potential_and_thermodynamic_identities(spacetime, parameters, claim, where):
    assert_agrees(outcome(spacetime, parameters, claim, where))


@pytest.mark.slow
def test_smarr_with_a_charge_ratio_parameter():
    # Source: Smarr 1973 (from memory); Q = q M makes the path (lambda M, lambda q): Q ~ lambda^2.
    route = outcome("{name: reissner-nordstrom}", "{M: [0.5, 20], q: [0.1, 0.9]}", "M = 2*T*S + Phi*Q", "where: {Q: q*M}\n")
    assert_agrees(route, symbolic=False)


@pytest.mark.slow
def test_entropy_with_a_charge_ratio_up_to_near_extremality():
    # Source: Bekenstein 1973 / Hawking 1975 (from memory): S = pi r_+^2, r_+ = M + sqrt(M^2 - Q^2).
    # With Q = q M the path (lambda M, lambda q) bends the horizon track between lambda = 1
    # and 1/2 (r_+ = lambda M (1 + sqrt(1 - lambda^2 q^2))); at q = 0.95 it must still be followed.
    route = outcome("{name: reissner-nordstrom}", "{M: [0.5, 20], q: [0, 0.95]}", "S = pi*(M + sqrt(M**2 - Q**2))**2",
                    "where: {Q: q*M}\n")
    assert_agrees(route, symbolic=False)


def test_wrong_entropy_is_diagnosed():
    # Source: S = 4 pi M^2 (Hawking 1975); the factor 2 is this test's corruption.
    route = outcome("{name: schwarzschild}", "{M: [0.5, 20]}", "S = 8*pi*M**2")
    assert route.status == "disagree"
    assert route.diagnosis.kind == "factor" and route.diagnosis.factor == "2"


@pytest.mark.parametrize(
    "spacetime, parameters, words",
    [
        ("{name: kerr}", "{M: [1, 2], a: [0.1, 0.5]}", "rotating"),
        ("{name: de-sitter}", "{H: [1, 2]}", "no parameter changes only the hole"),
        ("{name: schwarzschild-de-sitter, horizon: {root: largest}}", "{M: [0.1, 0.15], Lambda: [0.5, 1]}", "does not shrink"),
    ],
)
def test_declines_where_no_path_to_a_zero_size_hole_exists(spacetime, parameters, words):
    route = outcome(spacetime, parameters, "S = 1")
    assert route.status == "not-applicable"
    assert words in route.reason


def _values_at(claim, point: dict, digits: int):
    problem = problem_for(claim)
    symbolic = ROUTE.symbolic(problem).values
    with mpmath.workdps(digits + 20):
        numeric_point = {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}
    numeric = ROUTE.numeric(problem, numeric_point, digits).values
    return symbolic, numeric


@pytest.mark.parametrize(
    "spacetime, parameters, point",
    [
        ("{name: schwarzschild}", "{M: [0.5, 20]}", {"M": "7/3"}),
        ("{name: reissner-nordstrom}", "{M: [0.5, 20], Q: [0.1, 0.4]}", {"M": "3/2", "Q": "1/3"}),
        ("{name: tangherlini, dim: 5}", "{mu: [0.5, 4]}", {"mu": "5/4"}),
        ("{name: btz}", "{M: [0.5, 3], l: [1, 4]}", {"M": "2", "l": "3/2"}),
    ],
)
def test_numeric_matches_symbolic_to_1e_12_at_30_digits(spacetime, parameters, point):
    # Source: common practice -- the two sides of one route must agree with each other.
    claim = claim_of(spacetime, parameters, "S = T")
    exact = {next(s for s in claim.symbols if s.name == k): sympy.Rational(v) for k, v in point.items()}
    symbolic, numeric = _values_at(claim, exact, 30)
    for name in ("S", "T"):
        with mpmath.workdps(40):
            reference = mpmath.mpf(sympy.N(symbolic[name].subs(exact), 40))
            assert abs(numeric[name].value - reference) <= 1e-12 * abs(reference), name
            assert numeric[name].error <= 1e-12 * abs(reference), name


@pytest.mark.parametrize(
    "spacetime, parameters, alpha",
    [
        # Source: S ~ lambda^(alpha + 1) along the path: Schwarzschild S ~ M^2 (alpha = 1),
        # Tangherlini-5 S ~ mu^(3/2) (alpha = 1/2), BTZ S ~ sqrt(M) (alpha = -1/2) -- from the formulas above.
        ("{name: schwarzschild}", "{M: [0.5, 20]}", 1.0),
        ("{name: tangherlini, dim: 5}", "{mu: [0.5, 4]}", 0.5),
        ("{name: btz}", "{M: [0.5, 3], l: [1, 4]}", -0.5),
    ],
)
def test_endpoint_behaviour_and_first_law_consistency_in_evidence(spacetime, parameters, alpha):
    route = FirstLawRoute()  # a fresh instance computes the consistency figure
    claim = claim_of(spacetime, parameters, "S = 1")
    problem = problem_for(claim)
    with mpmath.workdps(40):
        point = {s: mpmath.mpf(3) / 2 for s in claim.symbols}
    evidence = route.numeric(problem, point, 15).evidence
    assert abs(evidence["endpoint_exponent"] - alpha) < 1e-6
    assert evidence["first_law_check"]["relative_difference"] < 1e-6
    series = evidence["series"][0]
    assert len(series["x"]) == len(series["y"]) and all(y > 0 for y in series["y"])
