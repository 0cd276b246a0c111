"""SI claims through the routes, against handbook values computed with scipy.constants.

The routes compute in geometric form and the unit layer converts to kelvin
and m/s^2; here the converted route values at the sampled points are
compared with an independent computation with CODATA values from
scipy.constants (2022 values in current scipy, which agree with the 2018 ones
crosscheck uses to far better than the tolerance).
"""

from __future__ import annotations

import pytest
import scipy.constants as sc

from crosscheck.claimfile import load_claim_text
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

ROUTES, _ = load_routes()
SOLAR_MASS = 1.98847e30  # kg, IAU 2015 nominal solar mass (from memory)


def route_rows(text: str):
    [claim], errors = load_claim_text(text, "si.yaml", known_routes=ROUTES)
    assert not errors, errors
    outcome = run_claim(claim, ROUTES, RunOptions(samples=3))
    assert outcome.status == "confirmed", [(r.route, r.status, r.reason) for r in outcome.routes]
    # Exact routes only: the dimensional estimate is right up to an O(1) factor by design.
    rows = [(r.route, row) for r in outcome.routes if r.grade == "exact" for row in r.numeric]
    assert {"killing-horizon", "near-horizon"} <= {name for name, _ in rows}
    return rows


def test_hawking_temperature_in_kelvin():
    # Source: Hawking 1975, T = hbar c^3/(8 pi G M k_B); about 6.17e-8 K for one solar mass (from memory).
    def kelvin(mass: float) -> float:
        return sc.hbar * sc.c**3 / (8 * sc.pi * sc.G * mass * sc.k)

    assert kelvin(SOLAR_MASS) == pytest.approx(6.17e-8, rel=2e-3)
    text = """
    id: test/solar-kelvin
    units: si
    spacetime: {name: schwarzschild}
    parameters: {M: [1.0e30, 4.0e30]}
    claim: T = hbar*c**3/(8*pi*G*M*k_B)
    """
    for _, row in route_rows(text):
        assert row.route_value == pytest.approx(kelvin(float(row.point["M"])), rel=1e-8)


def test_unruh_temperature_per_unit_acceleration():
    # Source: Unruh 1976, T = hbar a/(2 pi c k_B): about 4.05e-21 K per m/s^2 (from memory).
    per_unit = sc.hbar / (2 * sc.pi * sc.c * sc.k)
    assert per_unit == pytest.approx(4.05e-21, rel=2e-3)
    text = """
    id: test/unruh-kelvin
    units: si
    spacetime: {name: rindler}
    parameters: {a: [1, 1.0e20]}
    claim: T = hbar*a/(2*pi*c*k_B)
    """
    for _, row in route_rows(text):
        assert row.route_value == pytest.approx(per_unit * float(row.point["a"]), rel=1e-8)


def test_surface_gravity_in_si():
    # Source: kappa = c^4/(4 G M) (Wald 1984, sec. 12.5, in SI units): about 1.52e13 m/s^2 for the Sun (from memory).
    def kappa(mass: float) -> float:
        return sc.c**4 / (4 * sc.G * mass)

    assert kappa(SOLAR_MASS) == pytest.approx(1.52e13, rel=5e-3)
    text = """
    id: test/solar-kappa
    units: si
    spacetime: {name: schwarzschild}
    parameters: {M: [1.0e30, 4.0e30]}
    claim: kappa = c**4/(4*G*M)
    """
    for _, row in route_rows(text):
        assert row.route_value == pytest.approx(kappa(float(row.point["M"])), rel=1e-8)
