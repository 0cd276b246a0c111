"""Corrupted claims go through the whole pipeline and come out contradicted, diagnosed.

Each correct formula is published (source beside it); the corruption is the
test's own.  The expected diagnosis is the corruption we applied.
"""

from __future__ import annotations

import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

ROUTES, _ = load_routes()
OPTIONS = RunOptions(samples=4, digits=30, timeout=120)

SCHWARZSCHILD = """
id: test/corrupted
spacetime: {{name: schwarzschild}}
parameters: {{M: [0.5, 20]}}
claim: {claim}
"""


def outcome_of(text: str):
    claims, errors = load_claim_text(text, "test.yaml", known_routes=ROUTES)
    assert not errors, errors
    return run_claim(claims[0], ROUTES, OPTIONS)


def route_diagnoses(outcome):
    return {r.route: r.diagnosis for r in outcome.routes if r.status == "disagree"}


# Source: Hawking 1975, T = 1/(8 pi M) for Schwarzschild; the factors below are our corruptions.
@pytest.mark.parametrize(
    "claim, factor",
    [
        ("T = 1/(4*pi*M)", "2"),
        ("T = 1/(16*pi*M)", "1/2"),
        ("T = 1/(4*M)", "2*pi"),
        ("T = 1/(2*M)", "4*pi"),
        ("T = pi/(8*M)", "pi**2"),
    ],
)
def test_constant_factor_identified(claim, factor):
    outcome = outcome_of(SCHWARZSCHILD.format(claim=claim))
    assert outcome.status == "contradicted"
    diagnoses = route_diagnoses(outcome)
    assert {"killing-horizon", "near-horizon"} <= set(diagnoses)
    for diagnosis in diagnoses.values():
        assert diagnosis.kind == "factor"
        assert diagnosis.factor.replace(" ", "") in (factor, factor.replace("**", "^"))


def test_sign_flip():
    # Source: Wald 1984, sec. 12.5: kappa = 1/(4M) > 0.
    outcome = outcome_of(SCHWARZSCHILD.format(claim="kappa = -1/(4*M)"))
    assert outcome.status == "contradicted"
    assert all(d.kind == "sign" for d in route_diagnoses(outcome).values())


def test_wrong_power_is_a_dimension_error_and_a_power():
    # M^2 for M: in geometric units the dimension check catches it before any route.
    outcome = outcome_of(SCHWARZSCHILD.format(claim="T = 1/(8*pi*M**2)"))
    assert outcome.status == "contradicted"
    dims = next(r for r in outcome.routes if r.route == "dimensions")
    assert dims.status == "disagree"
    assert dims.diagnosis.text == "dimension: claim has length^-2, T needs length^-1"
    for diagnosis in route_diagnoses(outcome).values():
        if diagnosis.kind == "dimension":
            continue
        assert diagnosis.kind == "power" and diagnosis.exponents == {"M": "-1"}


def test_charge_dependence_missed_only_at_large_charge():
    # Source: Gibbons & Hawking 1977: T_RN = sqrt(M^2-Q^2)/(2 pi r_+^2); the uncharged 1/(8 pi M)
    # differs at order (Q/M)^4, so sampling must reach large q to catch it.
    text = """
    id: test/rn-wrong
    spacetime: {name: reissner-nordstrom}
    parameters: {M: [0.5, 20], q: [0, 0.95]}
    where: {Q: q*M}
    claim: T = 1/(8*pi*M)
    """
    outcome = outcome_of(text)
    assert outcome.status == "contradicted"
    for diagnosis in route_diagnoses(outcome).values():
        assert "may miss a dependence on q" in diagnosis.text


def test_wrong_killing_normalisation_between_two_horizons():
    # Source: Bousso & Hawking 1996: between the horizons of Schwarzschild-de Sitter the Killing
    # time is normalised where F' = 0.  The claim gives the as-written surface gravity instead.
    text = """
    id: test/sds-normalisation
    spacetime:
      name: schwarzschild-de-sitter
      horizon: rb
      normalize: geodesic
    parameters: {rb: [0.5, 1], rc: [3, 10]}
    where:
      Lambda: 3/(rb**2 + rb*rc + rc**2)
      M: rb*rc*(rb + rc)/(2*(rb**2 + rb*rc + rc**2))
    claim: kappa = (rc - rb)*(2*rb + rc)/(2*rb*(rb**2 + rb*rc + rc**2))
    """
    outcome = outcome_of(text)
    assert outcome.status == "contradicted"
    diagnoses = route_diagnoses(outcome)
    assert diagnoses
    for diagnosis in diagnoses.values():
        assert diagnosis.kind == "normalization"
        assert "as-written" in diagnosis.text


def test_wrong_dimension_in_si():
    # Source: Hawking 1975 in SI units, T = hbar c^3/(8 pi G M k_B); dropping k_B leaves an energy.
    text = """
    id: test/si-dimension
    units: si
    spacetime: {name: schwarzschild}
    parameters: {M: [1.0e30, 4.0e30]}
    claim: T = hbar*c**3/(8*pi*G*M)
    """
    outcome = outcome_of(text)
    assert outcome.status == "contradicted"
    dims = next(r for r in outcome.routes if r.route == "dimensions")
    assert dims.status == "disagree" and "K (temperature)" in dims.diagnosis.text


def test_correct_claims_are_not_contradicted():
    # Source: Hawking 1975 (T) and Wald 1984 sec. 12.5 (kappa).
    for claim in ("T = 1/(8*pi*M)", "kappa = 1/(4*M)", "S = 4*pi*M**2", "r_h = 2*M"):
        outcome = outcome_of(SCHWARZSCHILD.format(claim=claim))
        assert outcome.status == "confirmed", (claim, [(r.route, r.status, r.reason) for r in outcome.routes])


def test_scaling_claim_agrees_and_reports_the_constant():
    # Source: Hawking 1975, T = 1/(8 pi M): T scales as 1/M with the constant 1/(8 pi).
    text = SCHWARZSCHILD.format(claim="T = 1/M") + "agreement: scaling\n"
    outcome = outcome_of(text)
    assert outcome.status == "confirmed"
    for route in outcome.routes:
        if route.route != "dimensions" and route.grade == "exact" and route.status == "agree":
            assert "claim/route = 8*pi" in route.reason
    assert sum(r.status == "agree" and r.grade == "exact" for r in outcome.routes) >= 6
    # The barrier-penetration estimate is T ~ 1/r_h = 1/(2M) (PHYSICS.md, common practice).
    estimate = next(r for r in outcome.routes if r.route == "dimensional-estimate")
    assert estimate.status == "agree" and "claim/route = 2" in estimate.reason


def test_naive_tunneling_temperature_is_named():
    # Source: PHYSICS.md "tunneling" and the literature on the factor of two (e.g. Akhmedov,
    # Akhmedova and Singleton, Phys. Lett. B 642, 124 (2006), from memory): exp(-2 Im W) gives
    # kappa/pi = 1/(4 pi M) for Schwarzschild, twice Hawking's 1/(8 pi M).
    text = SCHWARZSCHILD.format(claim="T = 1/(4*pi*M)") + "routes: [tunneling, euclidean-period]\n"
    diagnoses = route_diagnoses(outcome_of(text))
    assert "naive tunneling rate" in diagnoses["tunneling"].text
    assert diagnoses["tunneling"].factor == "2"
    # A route without that pitfall names only the factor.
    assert "naive" not in diagnoses["euclidean-period"].text and diagnoses["euclidean-period"].factor == "2"
