"""Handbook figures in SI against crosscheck's unit layer and routes.

Each check has two sides from outside the code under test: a reference
computed here from CODATA values in scipy.constants, and the handbook figure
as printed (compared at its printed precision, i.e. to half a unit in its last
digit).  What crosscheck computes -- its SI constants, its conversion factors
and the converted values of real routes on SI claims, including the SI claims
of the built-in library -- is held against both.
"""

from __future__ import annotations

import math
from decimal import Decimal
from pathlib import Path

import pytest
import scipy.constants as sc
import sympy

from crosscheck import units
from crosscheck.claimfile import load_claim_text, load_paths
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

ROUTES, _ = load_routes()
LIBRARY = Path(__file__).resolve().parent.parent / "claims"
SOLAR_MASS = 1.98847e30  # kg; Source: IAU 2015 Resolution B3 nominal solar mass parameter / G (from memory)
# scipy's CODATA 2022 and crosscheck's CODATA 2018 differ only in measured constants (G,
# epsilon_0), and G did not change between them; 1e-8 leaves room for float rounding only.
REL = 1e-8


def agrees_at_printed_precision(value: float, printed: str) -> bool:
    """True when `value` rounds to the figure `printed` (e.g. '6.17e-8'): within half a
    unit in the last printed digit."""
    figure = Decimal(printed)
    half_unit = Decimal(1).scaleb(figure.as_tuple().exponent) / 2
    return abs(Decimal(repr(value)) - figure) <= half_unit


# -- references from CODATA (scipy.constants) --------------------------------------------------
def hawking_kelvin(mass: float) -> float:
    """Source: Hawking 1975, T = hbar c^3/(8 pi G M k_B)."""
    return sc.hbar * sc.c**3 / (8 * math.pi * sc.G * mass * sc.k)


def entropy_per_k_B(mass: float) -> float:
    """Source: Bekenstein 1973 / Hawking 1975, S/k_B = A c^3/(4 G hbar) = 4 pi G M^2/(hbar c)."""
    return 4 * math.pi * sc.G * mass**2 / (sc.hbar * sc.c)


def unruh_kelvin_per_acceleration() -> float:
    """Source: Unruh 1976, T = hbar a/(2 pi c k_B), per m/s^2."""
    return sc.hbar / (2 * math.pi * sc.c * sc.k)


# -- the handbook figures themselves -----------------------------------------------------------
def test_helper_rounds_to_the_last_printed_digit():
    # Common practice (no source): 6.1749 prints as 6.17, 6.1751 as 6.18.
    assert agrees_at_printed_precision(6.1749e-8, "6.17e-8")
    assert not agrees_at_printed_precision(6.1751e-8, "6.17e-8")
    assert agrees_at_printed_precision(2.4651e20, "2.47e20") and not agrees_at_printed_precision(2.4751e20, "2.47e20")


def test_handbook_figures_follow_from_codata():
    # Source: solar-mass Hawking temperature ~6.17e-8 K and entropy ~1.05e77 k_B, common
    # handbook figures (from memory); Unruh: 1 m/s^2 gives ~4.06e-21 K and 1 K needs
    # ~2.47e20 m/s^2 (from memory).  The often-quoted "4.05e-21" is the truncation of 4.055e-21.
    assert agrees_at_printed_precision(hawking_kelvin(SOLAR_MASS), "6.17e-8")
    assert agrees_at_printed_precision(entropy_per_k_B(SOLAR_MASS), "1.05e77")
    per_unit = unruh_kelvin_per_acceleration()
    assert agrees_at_printed_precision(per_unit, "4.06e-21")
    assert math.floor(per_unit * 1e23) == 405  # 4.05... e-21: the truncated figure
    assert agrees_at_printed_precision(1 / per_unit, "2.47e20")


# -- crosscheck's constants and conversion factors ---------------------------------------------
def test_si_constants_match_codata():
    # Source: CODATA via scipy.constants; hbar, c, k_B are exact in the 2019 SI.
    table = units.SI_CONSTANTS
    for name, reference in (("hbar", sc.hbar), ("c", sc.c), ("k_B", sc.k), ("G", sc.G)):
        assert float(table[name]) == pytest.approx(reference, rel=1e-12), name


@pytest.mark.parametrize(
    ("observable", "reference"),
    [
        ("T", sc.hbar * sc.c / sc.k),  # T = hbar c kappa_geo/(2 pi k_B) with kappa = c^2 kappa_geo
        ("kappa", sc.c**2),  # kappa = c^2 x (geometric 1/length)
        ("S", sc.k * sc.c**3 / (sc.G * sc.hbar)),  # S = k_B c^3 A/(4 G hbar) from A/4
    ],
)
def test_conversion_factors_match_codata(observable, reference):
    # Source: restoring G, c, hbar, k_B in the geometric-unit formulas (Wald 1984, appendix F, from memory).
    assert float(units.conversion_factor(observable, "si")) == pytest.approx(reference, rel=REL)


def test_converted_geometric_formula_gives_the_solar_figures():
    # Geometric T = 1/(8 pi m), S = 4 pi m^2 with m = G M/c^2 (a length); converted by
    # crosscheck's own factors and compared with the CODATA reference and the handbook.
    m = sympy.Float(sc.G * SOLAR_MASS / sc.c**2, 30)
    kelvin = float(units.to_claim_units("T", 1 / (8 * sympy.pi * m), "si"))
    entropy = float(units.to_claim_units("S", 4 * sympy.pi * m**2, "si"))
    assert kelvin == pytest.approx(hawking_kelvin(SOLAR_MASS), rel=REL)
    assert entropy == pytest.approx(entropy_per_k_B(SOLAR_MASS) * sc.k, rel=REL)
    assert agrees_at_printed_precision(kelvin, "6.17e-8")
    assert agrees_at_printed_precision(entropy / sc.k, "1.05e77")


# -- routes on SI claims -----------------------------------------------------------------------
def route_rows(claim, route_names: tuple[str, ...], samples: int = 3):
    """(route, row) for every numeric row of the named routes, after checking that the
    dimension check and every named route agreed (one route alone makes a claim only 'weak')."""
    routes = {name: ROUTES[name] for name in route_names}
    outcome = run_claim(claim, routes, RunOptions(samples=samples))
    statuses = {r.route: (r.status, r.reason[:200]) for r in outcome.routes}
    assert outcome.status == ("confirmed" if len(route_names) > 1 else "weak"), statuses
    assert all(statuses[name][0] == "agree" for name in ("dimensions", *route_names)), statuses
    rows = [(r.route, row) for r in outcome.routes if r.route in route_names for row in r.numeric]
    assert {name for name, _ in rows} == set(route_names), statuses
    return rows


def claim_from_text(text: str):
    [claim], errors = load_claim_text(text, "handbook-si.yaml", known_routes=ROUTES)
    assert not errors, errors
    return claim


def library_claim(claim_id: str):
    """The built-in claim with this id (its file is claims/<id>.yaml)."""
    loaded = load_paths([str(LIBRARY / f"{claim_id}.yaml")], known_routes=ROUTES)
    assert loaded.errors == ()
    [claim] = loaded.claims
    assert claim.id == claim_id
    return claim


def test_solar_mass_temperature_from_the_killing_horizon_and_euclidean_period():
    # Source: Hawking 1975; handbook ~6.17e-8 K for one solar mass (from memory).
    claim = claim_from_text("""
    id: test/solar-kelvin-narrow
    units: si
    spacetime: {name: schwarzschild}
    parameters: {M: [1.9884e30, 1.9885e30]}
    claim: T = hbar*c**3/(8*pi*G*M*k_B)
    """)
    for _, row in route_rows(claim, ("killing-horizon", "euclidean-period")):
        assert row.route_value == pytest.approx(hawking_kelvin(float(row.point["M"])), rel=REL)
        assert agrees_at_printed_precision(row.route_value, "6.17e-8")


@pytest.mark.parametrize(
    "route_names",
    [
        ("killing-horizon", "near-horizon"),  # S = A/4 from the horizon's area
        # S from integrating dM/T from a hole of zero size: ~4 s of CPU.
        pytest.param(("first-law",), marks=pytest.mark.slow),
    ],
)
def test_library_solar_mass_entropy(route_names):
    # Source: Bekenstein 1973, S = k_B A/(4 l_P^2); handbook ~1.05e77 k_B for one solar mass (from memory).
    claim = library_claim("thermodynamics/solar-mass-entropy-si")
    for _, row in route_rows(claim, route_names):
        mass = float(row.point["M"])
        assert row.route_value == pytest.approx(entropy_per_k_B(mass) * sc.k, rel=REL)
        # The entropy grows like M^2: scaled to one solar mass it rounds to the handbook figure.
        assert agrees_at_printed_precision(row.route_value / sc.k * (SOLAR_MASS / mass) ** 2, "1.05e77")


def test_library_unruh_temperature_per_acceleration_from_the_rindler_horizon():
    # Source: Unruh 1976; handbook ~4.06e-21 K per m/s^2 (from memory).
    claim = library_claim("horizons/rindler-temperature-si")
    per_unit = unruh_kelvin_per_acceleration()
    for _, row in route_rows(claim, ("killing-horizon", "euclidean-period")):
        acceleration = float(row.point["a"])
        assert row.route_value == pytest.approx(per_unit * acceleration, rel=REL)
        assert agrees_at_printed_precision(row.route_value / acceleration, "4.06e-21")


def test_one_kelvin_needs_the_handbook_acceleration():
    # Source: Unruh 1976; handbook: 1 K needs ~2.47e20 m/s^2 (from memory).  CODATA puts it
    # at 2.46608e20; a Rindler horizon at accelerations within 5e-5 of it is at 1 K to 5e-5.
    claim = claim_from_text("""
    id: test/one-kelvin
    units: si
    spacetime: {name: rindler}
    parameters: {a: [2.46600e20, 2.46612e20]}
    claim: T = hbar*a/(2*pi*c*k_B)
    """)
    for _, row in route_rows(claim, ("killing-horizon", "ray-peeling")):
        assert row.route_value == pytest.approx(1.0, rel=5e-5)
        assert agrees_at_printed_precision(float(row.point["a"]) / row.route_value, "2.47e20")


def test_si_detector_claims_are_refused_with_a_pointer():
    # A trajectory acceleration in m/s^2 read as 1/length would be off by c^2 (about 1.1e-17)
    # without any error, so the claim is refused where it says `detector:` (common practice:
    # refuse what cannot be read correctly). The SI Unruh temperature is checked above as a
    # horizon claim of the rindler family.
    text = """id: test/unruh-detector-si
units: si
spacetime: {name: minkowski, dim: 4}
detector: {trajectory: uniform-acceleration, acceleration: a}
parameters: {a: [1, 1.0e20]}
claim: T = hbar*a/(2*pi*c*k_B)
"""
    claims, errors = load_claim_text(text, "unruh-si.yaml", known_routes=ROUTES)
    assert claims == [] and len(errors) == 1
    message = str(errors[0])
    assert "unruh-si.yaml:4:1" in message and "geometric units only" in message
