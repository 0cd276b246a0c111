"""The `dimensions` check: family parameter kinds, SI claims, and the wrong-power slip."""

from __future__ import annotations

import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.dimcheck import KIND_DIMENSIONS, dimension_outcome
from crosscheck.spacetimes import FAMILIES


@pytest.mark.parametrize("name", sorted(FAMILIES))
def test_every_family_parameter_has_a_known_kind(name):
    family = FAMILIES[name]
    kinds = dict(family.kinds)
    assert set(kinds) == set(family.symbols)
    assert all(kind in KIND_DIMENSIONS or kind == "length^(dim-3)" for kind in kinds.values())


def check(text: str):
    [claim], errors = load_claim_text(text, "dims.yaml")
    assert not errors, errors
    return dimension_outcome(claim)


UNRUH_SI = """
id: test/unruh-si
units: si
spacetime: {name: rindler}
parameters: {a: [1, 1.0e20]}
claim: T = hbar*a/(2*pi*c*k_B)
"""


def test_unruh_temperature_in_si_is_a_temperature():
    # Source: Unruh, Phys. Rev. D 14, 870 (1976): T = hbar a/(2 pi c k_B) for proper acceleration a.
    assert check(UNRUH_SI).status == "agree"
    wrong = check(UNRUH_SI.replace("hbar*a/(2*pi*c*k_B)", "hbar*a/(2*pi*k_B)"))
    assert wrong.status == "disagree" and "needs K (temperature)" in wrong.diagnosis.text


def test_tangherlini_mass_parameter_scales_with_dimension():
    # Source: Myers & Perry 1986: F = 1 - mu/r^(D-3), so mu is a length^(D-3); T ~ 1/r_h.
    text = """
    id: test/tangherlini-6
    spacetime: {name: tangherlini, dim: 6}
    parameters: {mu: [1, 8]}
    claim: T = 3/(4*pi*mu**(1/3))
    """
    assert check(text).status == "agree"
    assert check(text.replace("mu**(1/3)", "mu**(1/2)")).status == "disagree"


def test_user_metric_dimensions_are_inferred():
    # Common practice: every term of a line element is a length squared, so F dimensionless makes b a length.
    text = """
    id: test/user-static
    spacetime:
      static:
        F: 1 - b/r
    parameters: {b: [1, 2]}
    claim: kappa = 1/(2*b)
    """
    assert check(text).status == "agree"
    assert "length^-2" in check(text.replace("1/(2*b)", "1/(2*b**2)")).diagnosis.text


DETECTOR = """
id: test/detector
spacetime: {name: minkowski, dim: 4}
detector: {trajectory: uniform-acceleration, acceleration: a}
parameters: {a: [0.1, 10]}
claim: CLAIM
"""


@pytest.mark.parametrize(("claim", "status"), [
    # Source: Unruh, Phys. Rev. D 14, 870 (1976): T = a/(2 pi), an inverse length in geometric units.
    ("T = a/(2*pi)", "agree"),
    ("T = a**2/(2*pi)", "disagree"),
    ("T = 1/(2*pi)", "disagree"),
])
def test_detector_arguments_give_the_parameters_dimensions(claim, status):
    assert check(DETECTOR.replace("CLAIM", claim)).status == status


def test_function_observable_arguments_fix_parameter_dimensions():
    # The argument of T_loc(r) is a radius (DESIGN.md section 3), so d in r = 2M(1 + d) is
    # dimensionless; Tolman's law T_loc = T/sqrt(F) (Tolman 1930) is then consistent.
    text = """
id: test/tolman
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20], d: [0.001, 0.1]}
claim: T_loc(2*M*(1 + d)) = 1/(8*pi*M*sqrt(1 - 1/(1 + d)))
"""
    assert check(text).status == "agree"
    assert check(text.replace("8*pi*M*sqrt", "8*pi*M**2*sqrt")).status == "disagree"


def test_a_zero_temperature_fits_any_dimension():
    # Source: Gibbons & Hawking 1977 (from memory): the extremal Reissner-Nordstrom hole,
    # Q = M, has T = 0; a bare 0 carries no dimension (common practice).
    text = """id: test/extremal
spacetime: {name: reissner-nordstrom, horizon: M}
parameters: {M: [0.5, 20]}
where: {Q: M}
claim: T = 0
"""
    [claim], errors = load_claim_text(text, "extremal.yaml")
    assert not errors
    assert dimension_outcome(claim).status == "agree"
