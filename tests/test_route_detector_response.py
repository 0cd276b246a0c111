"""The detector-response route against closed forms and an independent computation.

Closed forms: Birrell & Davies 1982, sec. 3.3 (from memory) for 3+1,
F = (w/2pi)/(exp(2 pi w/a) - 1); Takagi 1986, Prog. Theor. Phys. Suppl. 88, ch. 6
(from memory) for 2+1, F = (1/2)/(exp(2 pi w/a) + 1).  Circular motion: the sum over
the complex poles of W in the lower half plane, written here with mpmath alone.
"""

from __future__ import annotations

import mpmath
import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.routes._detector_rate import transition_rates
from crosscheck.routes.detector_response import DetectorResponseRoute
from crosscheck.runner import RunOptions, run_claim
from crosscheck.trajectories import Worldline

mp = mpmath.mpf
GAPS = [mp(x) for x in ("0.01", "0.3", "1", "2.5", "5", "10")]


def bose_4d(w, a):
    return w / (2 * mpmath.pi) / mpmath.expm1(2 * mpmath.pi * w / a)


def fermi_3d(w, a):
    return mp(1) / 2 / (mpmath.exp(2 * mpmath.pi * w / a) + 1)


@pytest.mark.parametrize("dim, closed", [(4, bose_4d), (3, fermi_3d)])
def test_accelerated_rates_match_closed_forms_over_minus_10_to_10(dim, closed):
    # Source: Birrell & Davies 1982 sec. 3.3; Takagi 1986 (both from memory), see module docstring
    with mpmath.workdps(40):
        a = mp("1.7")
        gaps = [g * a for g in GAPS]
    rates = transition_rates(Worldline("uniform-acceleration", dim, acceleration=a), "monopole", gaps, 20)
    with mpmath.workdps(40):
        for w, up, down in zip(gaps, rates.excitation, rates.deexcitation):
            assert abs(up.value / closed(w, a) - 1) < 1e-12
            assert abs(down.value / closed(-w, a) - 1) < 1e-12
            assert up.error / up.value < 1e-12  # the stated error is small, and honest:
            assert abs(up.value - closed(w, a)) <= up.error + mp(10) ** -25 * up.value


def test_derivative_coupling_in_1_plus_1():
    # Source: Birrell & Davies 1982 sec. 3.3 (from memory): the 1+1 derivative-coupled rate is w/(exp(2 pi w/a) - 1)
    a = mp(1)
    rates = transition_rates(Worldline("uniform-acceleration", 2, acceleration=a), "derivative", [mp("0.5"), mp(3)], 20)
    for up, w in zip(rates.excitation, (mp("0.5"), mp(3))):
        assert abs(up.value / (w / mpmath.expm1(2 * mpmath.pi * w / a)) - 1) < 1e-12


def test_inertial_limit():
    # Source: common practice: the inertial detector in the vacuum only de-excites, F(-w) = w/(2 pi) in 3+1
    rates = transition_rates(Worldline("inertial", 4, velocity=mp("0.3")), "monopole", [mp("0.5"), mp(2)], 20)
    for w, up, down in zip((mp("0.5"), mp(2)), rates.excitation, rates.deexcitation):
        assert abs(up.value) <= 1e-25
        assert abs(down.value / (w / (2 * mpmath.pi)) - 1) < 1e-15
    # small acceleration tends to it: F(-w) -> w/(2 pi)
    weak = transition_rates(Worldline("uniform-acceleration", 4, acceleration=mp("0.05")), "monopole", [mp(1)], 20)
    with mpmath.workdps(30):
        assert abs(weak.deexcitation[0].value / (1 / (2 * mpmath.pi)) - 1) < 1e-20


def circular_rate_by_poles(R, W, w):
    """Independent reference: F(w > 0) = -2 pi i sum of residues of exp(-i w z)/(4 pi^2 sigma2)
    at the zeros of sigma2 = 4R^2 sin^2(k z/2) - gamma^2 z^2 below the real axis."""
    v = R * W
    g = 1 / mpmath.sqrt(1 - v**2)
    k = g * W
    slope = lambda z: 2 * R**2 * k * mpmath.sin(k * z) - 2 * g**2 * z  # noqa: E731
    u0 = mpmath.findroot(lambda u: mpmath.sinh(u) - u / v, mp(2))
    y0 = 2 * u0 / k
    total = mpmath.re(-2j * mpmath.pi * mpmath.exp(-w * y0) / slope(-1j * y0))

    def pair(m):
        p = mpmath.pi / 2 + mpmath.pi * int(m)
        u = mpmath.findroot(lambda u: mpmath.sin(u) - (-1) ** int(m) * u / v, mpmath.mpc(p, -mpmath.log(2 * p / v)))
        return 4 * mpmath.pi * mpmath.im(mpmath.exp(-1j * w * 2 * u / k) / slope(2 * u / k))

    return (total + mpmath.nsum(pair, [1, mpmath.inf])) / (4 * mpmath.pi**2)


@pytest.mark.parametrize("v, x", [("0.9", "1"), ("0.9", "2"), ("0.9", "3"), ("0.5", "2")])
def test_circular_effective_temperature_against_pole_sum(v, x):
    # Source: independent computation in this test (residue sum, mpmath.nsum); T_eff = w/ln(F(-w)/F(w))
    R, W = mp(1), mp(v)
    line = Worldline("circular", 4, radius=R, angular_velocity=W)
    w = mp(x) * line.proper_acceleration()
    rates = transition_rates(line, "monopole", [w], 20)
    with mpmath.workdps(30):
        reference = circular_rate_by_poles(R, W, w)
        t_ref = w / mpmath.log((reference + w / (2 * mpmath.pi)) / reference)
        t_route = w / mpmath.log(rates.deexcitation[0].value / rates.excitation[0].value)
        assert abs(t_route / t_ref - 1) < 1e-12


def run(text):
    claims, errors = load_claim_text(text, "<test>")
    assert not errors, errors
    return run_claim(claims[0], {"detector-response": DetectorResponseRoute()}, RunOptions(samples=2, digits=20)).routes[-1]


CLAIM = """
id: t/d
spacetime: {{name: minkowski, dim: {dim}}}
detector: {{trajectory: {trajectory}, {arguments}}}
parameters: {{a: [0.5, 2]}}
{claim}
"""


def test_wrong_factor_is_diagnosed():
    # Source: Unruh 1976 (T = a/(2 pi)); the claim T = a/pi is off by 2
    outcome = run(CLAIM.format(dim=4, trajectory="uniform-acceleration", arguments="acceleration: a", claim="claim: T = a/pi"))
    assert outcome.status == "disagree" and outcome.diagnosis.factor == "2"
    outcome = run(CLAIM.format(dim=4, trajectory="uniform-acceleration", arguments="acceleration: a", claim="claim: T = a/(4*pi)"))
    assert outcome.status == "disagree" and outcome.diagnosis.factor == "1/2"


def test_bose_in_three_dimensions_is_contradicted():
    # Source: Takagi 1986 (from memory): the 2+1 response is fermi-shaped
    outcome = run(CLAIM.format(dim=3, trajectory="uniform-acceleration", arguments="acceleration: a", claim="spectrum: bose"))
    assert outcome.status == "disagree" and "fermi-shaped in odd dimensions" in outcome.diagnosis.text


def test_thermal_circular_motion_is_contradicted():
    # Source: Bell & Leinaas 1983 (from memory): circular motion gives no Planck spectrum
    outcome = run(CLAIM.format(dim=4, trajectory="circular", arguments="radius: a, angular_velocity: 0.5/a", claim="spectrum: bose"))
    assert outcome.status == "disagree" and "across the band: not thermal" in outcome.diagnosis.text


def circular_rate_by_quadrature(R, W, w, length):
    """Independent reference: the 3+1 formula of PHYSICS.md on the real axis,
    F(w) = -w/(4 pi) + (1/(2 pi^2)) int_0^inf ds [cos(w s)/sigma2(s) + 1/s^2],
    by mpmath.quad over one period at a time up to `length`, plus the tail beyond it
    with sigma2 -> -gamma^2 s^2 in closed form (sine integral); the truncation error is
    O(1/length^3).  The integrand is written without cancellation: with gamma^2 = 1 + R^2 k^2,
    sigma2 = -s^2 (1 + eps), eps = 4 R^2 (x^2 - sin^2 x)/s^2, x = k s/2, k = gamma W."""
    g = 1 / mpmath.sqrt(1 - (R * W) ** 2)
    k = g * W

    def integrand(s):
        extra = 2 * int(-mpmath.log10(s)) + 10 if s < 1 else 0
        with mpmath.workdps(mpmath.mp.dps + extra):
            x = k * s / 2
            eps = 4 * R**2 * (x**2 - mpmath.sin(x) ** 2) / s**2
            return +((eps + 2 * mpmath.sin(w * s / 2) ** 2) / (s**2 * (1 + eps)))

    period = 2 * mpmath.pi / max(w, k)
    nodes = [0] + [period * (i + 1) for i in range(int(length / period) + 1)]
    end = nodes[-1]
    tail = 1 / end - (mpmath.cos(w * end) / end - w * (mpmath.pi / 2 - mpmath.si(w * end))) / g**2
    return -w / (4 * mpmath.pi) + (mpmath.quad(integrand, nodes) + tail) / (2 * mpmath.pi**2)


@pytest.mark.parametrize("v, x", [
    ("0.5", "2"), ("0.5", "1"), ("0.9", "1"),
    pytest.param("0.9", "3", marks=pytest.mark.slow),
])
def test_circular_rate_and_effective_temperature_against_real_axis_quadrature(v, x):
    # Source: independent computation in this test (real-axis mpmath.quad of the PHYSICS.md
    # 3+1 formula, measured: agrees with the route to 1e-11..1e-16 at length 4000).
    R, W = mp(1), mp(v)
    line = Worldline("circular", 4, radius=R, angular_velocity=W)
    w = mp(x) * line.proper_acceleration()
    rates = transition_rates(line, "monopole", [w], 20)
    with mpmath.workdps(20):
        reference = circular_rate_by_quadrature(R, W, w, 1000)
        assert abs(rates.excitation[0].value / reference - 1) < 1e-7
        # Takagi 1986 (from memory): F(-w) - F(w) = w/(2 pi) on any timelike worldline in 3+1.
        t_ref = w / mpmath.log((reference + w / (2 * mpmath.pi)) / reference)
        t_route = w / mpmath.log(rates.deexcitation[0].value / rates.excitation[0].value)
        assert abs(t_route / t_ref - 1) < 1e-7


@pytest.mark.parametrize("dim, closed", [(4, bose_4d), (3, fermi_3d)])
@pytest.mark.parametrize("digits", [20, 30])
def test_reported_error_bounds_the_true_error_over_the_band(dim, closed, digits):
    # Source: Birrell & Davies 1982 sec. 3.3; Takagi 1986 (both from memory), see module docstring.
    # The route's working precisions (20, 30 digits), two accelerations, gaps over the default band.
    for acceleration in ("0.3", "4"):
        with mpmath.workdps(digits + 20):
            a = mp(acceleration)
            gaps = [a * mp(x) for x in ("0.1", "0.35", "1", "2.2", "4")]
        rates = transition_rates(Worldline("uniform-acceleration", dim, acceleration=a), "monopole", gaps, digits)
        with mpmath.workdps(digits + 20):
            for w, up, down in zip(gaps, rates.excitation, rates.deexcitation):
                for measured, exact in ((up, closed(w, a)), (down, closed(-w, a))):
                    assert abs(measured.value - exact) <= measured.error  # honest
                    assert measured.error <= mp(10) ** -digits * exact  # and as accurate as asked


def test_band_samples_serve_a_gap_inside_the_band():
    # Source: Birrell & Davies 1982 sec. 3.3 (from memory): F = (w/2pi)/(exp(2 pi w/a) - 1)
    from crosscheck.routes._detector_rate import rates_from

    a = mp("1.3")
    band = transition_rates(Worldline("uniform-acceleration", 4, acceleration=a), "monopole", [a / 10, 4 * a], 20)
    w = mp("1.7") * a
    single = rates_from(band.sampling, [w])
    with mpmath.workdps(40):
        assert abs(single.excitation[0].value - bose_4d(w, a)) <= single.excitation[0].error <= mp(10) ** -20 * bose_4d(w, a)
    with pytest.raises(ValueError):
        rates_from(band.sampling, [5 * a])  # beyond the band the step is too coarse


@pytest.mark.parametrize("v", ["0.5", "0.9"])
def test_circular_rates_obey_the_commutator_identity_within_their_errors(v):
    # Source: Takagi 1986 (from memory): F(-w) - F(w) = w/(2 pi) on any timelike worldline in 3+1
    line = Worldline("circular", 4, radius=mp("1.3"), angular_velocity=mp(v) / mp("1.3"))
    gaps = [line.proper_acceleration() * mp(x) for x in ("0.1", "0.5", "2", "4")]
    for digits in (20, 30):
        rates = transition_rates(line, "monopole", gaps, digits)
        with mpmath.workdps(digits + 20):
            for w, up, down in zip(gaps, rates.excitation, rates.deexcitation):
                assert abs(down.value - up.value - w / (2 * mpmath.pi)) <= up.error + down.error
                assert up.error <= mp(10) ** -digits * up.value
