"""The worked examples of wrong derivations (examples/*.yaml) keep their diagnoses.

Each example is a realistic slip in a scenario of our own.  The correct
result is published (source beside each check); the slip is the example's.
Every example runs through the ordinary runner with only the routes its
diagnosis needs, and the test asserts what examples/README.md quotes: the
claim is contradicted and the diagnosis names the slip.  Where the ratio
claim/route is a function rather than a number (wrong horizon, Killing
normalisation) the test recomputes it from the published formulas with
mpmath and compares it with the rows the runner reports.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import mpmath
import pytest

from crosscheck.claimfile import load_paths
from crosscheck.results import ClaimOutcome, Diagnosis, RouteOutcome
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
ALL_ROUTES, _ = load_routes()
# The command line's defaults (5 samples, 30 digits), so the test sees what the README quotes.
OPTIONS = RunOptions(timeout=120)


def run_example(name: str, routes: tuple[str, ...]) -> ClaimOutcome:
    """The outcome of examples/<name>.yaml with only `routes` (plus the dimension check)."""
    loaded = load_paths([str(EXAMPLES / f"{name}.yaml")], known_routes=ALL_ROUTES)
    assert not loaded.errors, loaded.errors
    (claim,) = loaded.claims
    return run_claim(claim, {r: ALL_ROUTES[r] for r in routes}, OPTIONS)


def outcome_of(outcome: ClaimOutcome, route: str) -> RouteOutcome:
    return next(r for r in outcome.routes if r.route == route)


def disagreeing(outcome: ClaimOutcome, routes: tuple[str, ...]) -> dict[str, Diagnosis]:
    """route -> diagnosis, after checking that every listed route disagrees with one."""
    found = {}
    for route in routes:
        result = outcome_of(outcome, route)
        assert result.status == "disagree", (route, result.status, result.reason)
        assert result.diagnosis is not None, route
        found[route] = result.diagnosis
    return found


def ratios_match(result: RouteOutcome, expected: Callable[[dict[str, mpmath.mpf]], mpmath.mpf]) -> None:
    """claim/route at every numeric row equals `expected(point)` computed by the test."""
    assert result.numeric, result.reason
    with mpmath.workdps(30):
        for row in result.numeric:
            point = {name: mpmath.mpf(value) for name, value in row.point.items()}
            ratio = row.claim_value / row.route_value
            assert ratio == pytest.approx(float(expected(point)), rel=1e-9), row.point


# -------------------------------------------------------------------------- the examples


def test_two_pi_lost_in_the_5d_draft():
    routes = ("killing-horizon", "euclidean-period")
    outcome = run_example("two-pi-lost-5d-black-hole", routes)
    assert outcome.status == "contradicted"
    for diagnosis in disagreeing(outcome, routes).values():
        # Source: Myers & Perry 1986, T = (D-3)/(4 pi r_h) = kappa/(2 pi); the claim is kappa.
        assert diagnosis.kind == "factor" and diagnosis.factor == "2*pi"
        assert "constant factor 2*pi" in diagnosis.text


def test_naive_tunneling_rate_in_the_ads_notes():
    routes = ("tunneling", "killing-horizon")
    outcome = run_example("tunneling-factor-two-ads", routes)
    assert outcome.status == "contradicted"
    diagnoses = disagreeing(outcome, routes)
    for diagnosis in diagnoses.values():
        # Source: Hawking & Page 1983, T = (1 + 3 r_h^2/L^2)/(4 pi r_h); the claim is twice it.
        assert diagnosis.kind == "factor" and diagnosis.factor == "2"
    # The tunneling route names the pitfall: exp(-2 Im W) is not the Boltzmann factor
    # (the emission/absorption ratio exp(-4 Im W_out) is; common practice, from memory).
    assert "naive tunneling rate exp(-2 Im W)" in diagnoses["tunneling"].text
    assert "emission/absorption ratio" in diagnoses["tunneling"].text
    assert "naive" not in diagnoses["killing-horizon"].text


def test_wrong_power_in_the_btz_homework():
    routes = ("killing-horizon", "euclidean-period")
    outcome = run_example("wrong-power-btz", routes)
    assert outcome.status == "contradicted"
    # M is dimensionless in 2+1 (F = -M + r^2/l^2): the dimension check has nothing to say.
    assert outcome_of(outcome, "dimensions").status == "agree"
    for diagnosis in disagreeing(outcome, routes).values():
        # Source: Banados, Teitelboim & Zanelli 1992, r_+ = l sqrt(M), T = sqrt(M)/(2 pi l);
        # the claim M/(2 pi l) is sqrt(M) times it.
        assert diagnosis.kind == "power" and diagnosis.exponents == {"M": "1/2"}
        assert "wrong power" in diagnosis.text and "M^(1/2)" in diagnosis.text


def test_inner_horizon_in_the_charged_hole_notes():
    routes = ("killing-horizon",)
    outcome = run_example("wrong-horizon-charged-hole", routes)
    assert outcome.status == "contradicted"
    (diagnosis,) = disagreeing(outcome, routes).values()
    assert diagnosis.kind == "horizon"
    assert diagnosis.text.startswith("wrong horizon")
    assert "the claim matches the inner horizon r_-" in diagnosis.text

    def squared_radius_ratio(p):
        # Source: Gibbons & Hawking 1977, T_+- = (r_+ - r_-)/(4 pi r_+-^2), r_+- = M +- sqrt(M^2 - Q^2):
        # the inner value over the outer one is (r_+/r_-)^2.
        root = mpmath.sqrt(p["M"] ** 2 - (p["q"] * p["M"]) ** 2)
        return ((p["M"] + root) / (p["M"] - root)) ** 2

    ratios_match(outcome_of(outcome, "killing-horizon"), squared_radius_ratio)


def test_static_clock_in_the_sds_draft():
    routes = ("killing-horizon",)
    outcome = run_example("killing-normalisation-sds", routes)
    assert outcome.status == "contradicted"
    (diagnosis,) = disagreeing(outcome, routes).values()
    assert diagnosis.kind == "normalization"
    assert "the claim uses the as-written normalisation, not the geodesic normalisation" in diagnosis.text

    def sqrt_f_at_rg(p):
        # Source: Bousso & Hawking 1996: kappa_b = F'(r_b)/(2 sqrt(F(r_g))), r_g = (3M/Lambda)^(1/3),
        # so the as-written F'(r_b)/2 over it is sqrt(F(r_g)); F, M, Lambda from the two radii
        # (F = 1 - 2M/r - Lambda r^2/3, the example's own parametrisation).
        rb, rc = p["rb"], p["rc"]
        lam = 3 / (rb**2 + rb * rc + rc**2)
        m = rb * rc * (rb + rc) / (2 * (rb**2 + rb * rc + rc**2))
        rg = mpmath.cbrt(3 * m / lam)
        return mpmath.sqrt(1 - 2 * m / rg - lam * rg**2 / 3)

    ratios_match(outcome_of(outcome, "killing-horizon"), sqrt_f_at_rg)


def test_missing_boltzmann_constant_in_the_kelvin_estimate():
    routes = ("killing-horizon",)
    outcome = run_example("si-missing-boltzmann", routes)
    assert outcome.status == "contradicted"
    dimensions = outcome_of(outcome, "dimensions")
    assert dimensions.status == "disagree" and dimensions.diagnosis.kind == "dimension"
    # Source: Hawking 1975, k_B T = hbar c^3/(8 pi G M): the claim is an energy, not a temperature.
    assert dimensions.diagnosis.text == "dimension: claim has J (energy), T needs K (temperature)"
    (diagnosis,) = disagreeing(outcome, routes).values()
    # The route sees claim/route = k_B in SI, and names it; Source: CODATA 2018 (exact), via scipy.constants.
    from scipy.constants import k as boltzmann

    assert diagnosis.kind == "factor" and diagnosis.factor == "k_B" and "SI constant" in diagnosis.text
    for row in outcome_of(outcome, "killing-horizon").numeric:
        assert row.claim_value / row.route_value == pytest.approx(boltzmann, rel=1e-9)


def test_unruh_period_halved_in_the_detector_notes():
    routes = ("kms-correlator",)
    outcome = run_example("unruh-half-period", routes)
    assert outcome.status == "contradicted"
    (diagnosis,) = disagreeing(outcome, routes).values()
    # Source: Unruh 1976, T = a/(2 pi); the claim a/pi is twice it.
    assert diagnosis.kind == "factor" and diagnosis.factor == "2"
    assert "constant factor 2" in diagnosis.text


@pytest.mark.slow
def test_bose_claimed_in_three_dimensions():
    routes = ("kms-correlator",)
    outcome = run_example("bose-in-three-dimensions", routes)
    assert outcome.status == "contradicted"
    result = outcome_of(outcome, "kms-correlator")
    assert result.status == "disagree"
    # Source: Takagi 1986, ch. 6 (from memory): in odd dimensions the accelerated detector's
    # response is fermi-shaped, (1/2)/(exp(2 pi w/a) + 1), at the same T = a/(2 pi).
    assert "fermi-shaped in odd dimensions" in result.reason
    assert "inversion of statistics" in result.reason


# --------------------------------------------------------------------------- coverage

COVERED = {
    "two-pi-lost-5d-black-hole": test_two_pi_lost_in_the_5d_draft,
    "tunneling-factor-two-ads": test_naive_tunneling_rate_in_the_ads_notes,
    "wrong-power-btz": test_wrong_power_in_the_btz_homework,
    "wrong-horizon-charged-hole": test_inner_horizon_in_the_charged_hole_notes,
    "killing-normalisation-sds": test_static_clock_in_the_sds_draft,
    "si-missing-boltzmann": test_missing_boltzmann_constant_in_the_kelvin_estimate,
    "unruh-half-period": test_unruh_period_halved_in_the_detector_notes,
    "bose-in-three-dimensions": test_bose_claimed_in_three_dimensions,
}


def test_every_example_has_a_test():
    """An example file cannot silently lose its assertion (nor a test its file)."""
    files = {path.stem for path in EXAMPLES.glob("*.y*ml")}
    assert files == set(COVERED)
    for name, test in COVERED.items():
        source = test.__code__.co_consts
        assert name in source, f"{test.__name__} does not run examples/{name}.yaml"


def test_every_example_says_it_is_wrong_and_tells_its_story():
    """The examples are not library claims: each is marked as wrong and explains the slip."""
    loaded = load_paths([str(EXAMPLES)], known_routes=ALL_ROUTES)
    assert not loaded.errors, loaded.errors
    assert len(loaded.claims) == len(COVERED)
    for claim in loaded.claims:
        assert claim.id.startswith("examples/")
        assert claim.title.startswith("Wrong on purpose")
        assert claim.sources, claim.id
        assert len(claim.notes.split()) >= 30, f"{claim.id}: the notes should tell how the slip happened"
