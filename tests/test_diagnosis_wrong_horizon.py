"""Claims for the wrong horizon, or with the wrong Killing normalisation between two horizons.

Each correct formula is published (source beside it); the mistake is the
test's own: the same quantity at the inner (or cosmological) horizon, or the
as-written clock where the claim file asks for the geodesic one.  The
routes are the exact built-in ones; the diagnosis must name the mistake.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

from crosscheck.claim import Parameter
from crosscheck.claimfile import load_claim_text
from crosscheck.compare import sample_points
from crosscheck.diagnose import Suspect, diagnose
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

ALL, _ = load_routes()
ROUTES = {name: ALL[name] for name in ("killing-horizon", "near-horizon") if name in ALL}
OPTIONS = RunOptions(samples=4, digits=20, timeout=120)

RN = """
id: test/wrong-horizon
spacetime: {{name: reissner-nordstrom}}
parameters: {{M: [0.5, 20], q: [0.1, 0.9]}}
where: {{Q: q*M, rp: M + sqrt(M**2 - Q**2), rm: M - sqrt(M**2 - Q**2)}}
claim: {claim}
"""

SDS = """
id: test/sds
spacetime:
  name: schwarzschild-de-sitter
  horizon: rb
  normalize: {normalize}
parameters: {{rb: [0.5, 1], rc: [3, 10]}}
where:
  Lambda: 3/(rb**2 + rb*rc + rc**2)
  M: rb*rc*(rb + rc)/(2*(rb**2 + rb*rc + rc**2))
claim: {claim}
"""


def disagreements(text: str):
    claims, errors = load_claim_text(text, "test.yaml", known_routes=ROUTES)
    assert not errors, errors
    outcome = run_claim(claims[0], ROUTES, OPTIONS)
    return outcome, {r.route: r.diagnosis for r in outcome.routes if r.status == "disagree" and r.route != "dimensions"}


# Source: Reissner-Nordstrom, kappa_+- = (r_+ - r_-)/(2 r_+-^2) (Wald 1984, sec. 12.5; from memory):
# the inner-horizon value put where the outer one belongs.
@pytest.mark.parametrize(
    "claim",
    ["T = (rp - rm)/(4*pi*rm**2)", pytest.param("kappa = (rp - rm)/(2*rm**2)", marks=pytest.mark.slow),
     "S = pi*rm**2", pytest.param("r_h = rm", marks=pytest.mark.slow)],
    ids=["T", "kappa", "S", "r_h"],
)
def test_inner_horizon_claim_is_named(claim):
    outcome, diagnoses = disagreements(RN.format(claim=claim))
    assert outcome.status == "contradicted"
    assert set(diagnoses) == set(ROUTES)
    for diagnosis in diagnoses.values():
        assert diagnosis.kind == "horizon", diagnosis
        assert "the claim matches the inner horizon r_-" in diagnosis.text


def test_cosmological_instead_of_black_hole_horizon():
    # Source: Gibbons & Hawking 1977: F = -(Lambda/(3r))(r - rb)(r - rc)(r + rb + rc), so
    # |F'(rc)|/2 = (rc - rb)(2 rc + rb)/(2 rc (rb^2 + rb rc + rc^2)) with d/dt as written.
    claim = "kappa = (rc - rb)*(2*rc + rb)/(2*rc*(rb**2 + rb*rc + rc**2))"
    outcome, diagnoses = disagreements(SDS.format(normalize="as-written", claim=claim))
    assert outcome.status == "contradicted" and diagnoses
    for diagnosis in diagnoses.values():
        assert diagnosis.kind == "horizon"
        assert "cosmological horizon" in diagnosis.text


@pytest.mark.slow
def test_as_written_temperature_where_the_file_says_geodesic():
    # Source: Bousso & Hawking 1996: between the horizons the Killing time is normalised where
    # F' = 0; the claim gives kappa_b/(2 pi) with d/dt as written (kappa_b as above, at rb).
    claim = "T = (rc - rb)*(2*rb + rc)/(4*pi*rb*(rb**2 + rb*rc + rc**2))"
    outcome, diagnoses = disagreements(SDS.format(normalize="geodesic", claim=claim))
    assert outcome.status == "contradicted" and diagnoses
    for diagnosis in diagnoses.values():
        assert diagnosis.kind == "normalization"
        assert "as-written" in diagnosis.text


def test_correct_outer_horizon_claim_is_not_diagnosed():
    # Source: T_RN = (r_+ - r_-)/(4 pi r_+^2) (Gibbons & Hawking 1977; from memory).
    outcome, diagnoses = disagreements(RN.format(claim="T = (rp - rm)/(4*pi*rp**2)"))
    assert outcome.status == "confirmed" and not diagnoses


@pytest.mark.slow
def test_a_factor_two_is_still_a_factor_not_a_horizon():
    # Source: as above; the factor 2 is the corruption.
    _, diagnoses = disagreements(RN.format(claim="T = (rp - rm)/(2*pi*rp**2)"))
    assert diagnoses
    assert all(d.kind == "factor" and d.factor == "2" for d in diagnoses.values())


def test_wrong_horizon_suspect_needs_every_point():
    """A ratio that matches the other horizon at some points only is not a horizon diagnosis."""
    M, q = sympy.symbols("M q", positive=True)
    params = [Parameter("M", M, sympy.Rational(1, 2), sympy.Rational(20)), Parameter("q", q, sympy.Rational(1, 10), sympy.Rational(9, 10))]
    points = sample_points(params, 4, 0)
    with mpmath.workdps(40):
        # Source: r_+-^2 ratio of the RN surface gravities (Wald 1984, from memory); computed here.
        ratios = []
        for p in points:
            m, qq = mpmath.mpf(p[M].p) / p[M].q, mpmath.mpf(p[q].p) / p[q].q
            root = mpmath.sqrt(m**2 - (qq * m) ** 2)
            ratios.append(((m + root) / (m - root)) ** 2)
        route = [mpmath.mpf(1)] * len(points)
        claim = list(ratios)
        claim[-1] *= 1 + mpmath.mpf("1e-6")
    name = "the claim matches the inner horizon r_- (root 1 of 2)"
    candidates = {name: Suspect(ratios, "horizon")}
    assert diagnose(points, route, ratios, params, candidates=candidates).kind == "horizon"
    assert diagnose(points, route, claim, params, candidates=candidates).kind != "horizon"
