"""The kms-correlator route: beta = 2 pi/a for uniform acceleration, no beta on a circle."""

from __future__ import annotations

import mpmath
import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.routes.kms_correlator import KmsCorrelatorRoute, kms_search
from crosscheck.runner import RunOptions, run_claim
from crosscheck.trajectories import Worldline

mp = mpmath.mpf


@pytest.mark.parametrize("dim, coupling, shape", [(4, "monopole", "bose"), (3, "monopole", "fermi"), (2, "derivative", "bose")])
def test_uniform_acceleration_is_kms_at_two_pi_over_a(dim, coupling, shape):
    # Source: Unruh 1976; Bisognano & Wichmann, J. Math. Phys. 17, 303 (1976) (from memory): beta = 2 pi/a
    with mpmath.workdps(35):
        a = mp("1.4")
        result = kms_search(Worldline("uniform-acceleration", dim, acceleration=a), coupling, 20)
        assert abs(result["beta"].value / (2 * mpmath.pi / a) - 1) < 1e-15
        assert result["spectrum"]["verdict"] == shape


@pytest.mark.parametrize("v", ["0.5", "0.9"])
def test_circular_motion_has_no_kms_beta(v):
    # Source: Bell & Leinaas 1983; Unruh 1998 (from memory): the circular response is not thermal
    with mpmath.workdps(35):
        result = kms_search(Worldline("circular", 4, radius=mp(1), angular_velocity=mp(v)), "monopole", 20)
    assert result["beta"] is None and result["spectrum"]["verdict"] == "non-thermal"


def test_fermi_claim_in_four_dimensions_is_contradicted():
    # Source: Takagi 1986 (from memory): in even dimensions the response is bose-shaped
    text = """
id: t/k
spacetime: {name: minkowski, dim: 4}
detector: {trajectory: uniform-acceleration, acceleration: a}
parameters: {a: [0.5, 2]}
claim: T = a/(2*pi)
spectrum: fermi
"""
    claims, errors = load_claim_text(text, "<test>")
    assert not errors
    outcome = run_claim(claims[0], {"kms-correlator": KmsCorrelatorRoute()}, RunOptions(samples=2, digits=20)).routes[-1]
    assert outcome.status == "disagree" and "bose-shaped" in outcome.diagnosis.text
