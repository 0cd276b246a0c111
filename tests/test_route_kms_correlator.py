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


@pytest.mark.parametrize("dim, coupling", [(4, "monopole"), (3, "monopole"), (5, "monopole"), (2, "derivative")])
@pytest.mark.parametrize("digits", [20, 30])
def test_reported_error_of_beta_bounds_the_true_error(dim, coupling, digits):
    # Source: Unruh 1976; Bisognano & Wichmann 1976 (from memory): beta = 2 pi/a, in every dimension
    for acceleration in ("0.3", "4"):
        with mpmath.workdps(digits + 15):
            a = mp(acceleration)
            beta = kms_search(Worldline("uniform-acceleration", dim, acceleration=a), coupling, digits)["beta"]
            assert abs(beta.value - 2 * mpmath.pi / a) <= beta.error <= mp(10) ** (1 - digits) * beta.value


@pytest.mark.parametrize("v", ["0.5", "0.9"])
def test_pole_sum_rate_error_bounds_the_true_error(v):
    # Source: independent method: the shifted-contour rate of crosscheck.routes._detector_rate at
    # 30 digits (itself checked against closed forms in tests/test_route_detector_response.py;
    # its error, below 1e-28 here, is negligible against the pole sum's).
    from crosscheck.routes._detector_rate import transition_rates
    from crosscheck.routes._kms_poles import circular_rate

    line = Worldline("circular", 4, radius=mp("1.3"), angular_velocity=mp(v) / mp("1.3"))
    gaps = [line.proper_acceleration() * mp(x) for x in ("0.5", "1", "2")]
    reference = transition_rates(line, "monopole", gaps, 30)
    for w, exact in zip(gaps, reference.excitation):
        measured = circular_rate(line, w, 20)
        with mpmath.workdps(40):
            assert exact.error < mp(10) ** -28 * exact.value
            assert abs(measured.value - exact.value) <= measured.error


def test_continuation_follows_the_analytic_root_past_the_principal_branch():
    # Source: common practice: for uniform acceleration h = -sigma2/z^2 = (sinh(u)/u)^2, u = a z/2,
    # and sinh(u)/u is entire and positive on the real axis, so it is the root continued from
    # there; W = Gamma(D/2 - 1)/(4 pi^(D/2)) (i z sinh(u)/u)^(2-D) (Birrell & Davies 1982, from memory)
    from crosscheck.routes._kms_poles import Continuation

    with mpmath.workdps(30):
        a, dim = mp("1.4"), 3
        line = Worldline("uniform-acceleration", dim, acceleration=a)
        depth = line.singular_depth()
        s = mp("0.35") / a
        continued = Continuation(line, "monopole", s, depth / 48)
        constant = mpmath.gamma(mp(dim) / 2 - 1) / (4 * mpmath.pi ** (mp(dim) / 2))
        flipped = 0
        for beta in (mp("0.5"), mp("1.02"), mp("1.5"), mpmath.mpc("1.3", "0.2"), mpmath.mpc("0.9", "-0.15")):
            z = s - 1j * beta * depth
            u = a * z / 2
            exact = constant * (1j * z * mpmath.sinh(u) / u) ** (2 - dim)
            assert abs(continued(z) - exact) < mp(10) ** -25 * abs(exact)
            principal = constant * (1j * z * mpmath.sqrt(line.lapse_ratio(z))) ** (2 - dim)
            flipped += abs(principal - exact) > abs(exact)  # where the principal root is the wrong one
        assert flipped >= 1
