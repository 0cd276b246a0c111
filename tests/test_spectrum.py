"""The spectrum assertion: verdicts folded into agree/disagree with a diagnosis in words."""

from __future__ import annotations

from crosscheck.claimfile import load_claim_text
from crosscheck.routes.detector_response import DetectorResponseRoute
from crosscheck.routes.kms_correlator import KmsCorrelatorRoute
from crosscheck.runner import RunOptions, run_claim
from crosscheck.spectrum import combine, judge

THERMAL = {"verdict": "bose", "spread": 1e-30, "detail": "thermal"}
FLAT = {"verdict": "non-thermal", "spread": 0.3, "detail": "T(omega) varies by 30% across the band: not thermal"}


def test_judge_matches_and_diagnoses():
    # Source: common practice (DESIGN.md section 5: a disagreement carries its diagnosis)
    assert judge("bose", [THERMAL, THERMAL]).status == "agree"
    wrong = judge("bose", [THERMAL, FLAT])
    assert wrong.status == "disagree" and "not thermal" in wrong.diagnosis.text
    assert "thermal" in judge("non-thermal", [THERMAL]).diagnosis.text
    assert judge("fermi", [None]).status == "inconclusive"


def test_both_the_value_and_the_spectrum_must_hold():
    # Source: common practice (a claim with claim: and spectrum: asserts both)
    assert combine("agree", "", None, judge("bose", [FLAT]))[0] == "disagree"
    assert combine("agree", "", None, judge("bose", [THERMAL]))[0] == "agree"
    assert combine("inconclusive", "", None, judge("bose", [THERMAL]))[0] == "inconclusive"


def test_spectrum_only_claim_is_confirmed_by_two_routes():
    # Source: Takagi 1986 (from memory): the 2+1 accelerated response is fermi-shaped
    text = """
id: t/s
spacetime: {name: minkowski, dim: 3}
detector: {trajectory: uniform-acceleration, acceleration: a}
parameters: {a: [0.5, 2]}
spectrum: fermi
"""
    claims, errors = load_claim_text(text, "<test>")
    assert not errors
    routes = {"detector-response": DetectorResponseRoute(), "kms-correlator": KmsCorrelatorRoute()}
    outcome = run_claim(claims[0], routes, RunOptions(samples=2, digits=20))
    assert outcome.status == "confirmed", [(r.route, r.status, r.reason) for r in outcome.routes]
