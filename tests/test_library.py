"""Every built-in claim is confirmed, and by enough independent routes.

The claims' values are published results (each file names its source); the
routes compute them independently, so a failure here means a route or a
claim file is wrong.  The library runs once per session on two forked workers
(the way `crosscheck run` does it); each test then asserts on one claim.  The
slow variant repeats the run with more sample points at higher precision.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from crosscheck.claimfile import load_paths
from crosscheck.observables import observable_function
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions
from crosscheck.scheduler import make_executor, run_all
from crosscheck.workers import Limits

LIBRARY = Path(__file__).resolve().parent.parent / "claims"
ROUTES, _ = load_routes()
LOADED = load_paths([str(LIBRARY)], known_routes=ROUTES)
IDS = [claim.id for claim in LOADED.claims]
# DESIGN.md and the issue on horizon routes: a horizon temperature or surface gravity is
# confirmed by at least five exact routes; entropy and first-law claims by at least two.
LEAST_ROUTES = {"T": 5, "kappa": 5}


def test_library_loads_without_errors():
    assert LOADED.errors == ()
    assert len(LOADED.claims) >= 42
    assert all(claim.sources for claim in LOADED.claims)
    assert all(claim.title != claim.id for claim in LOADED.claims)


# Source: DESIGN.md section 3, the built-in families the claim format promises.
DESIGN_FAMILIES = frozenset({
    "minkowski", "rindler", "schwarzschild", "reissner-nordstrom", "kerr", "kerr-newman", "de-sitter",
    "schwarzschild-de-sitter", "schwarzschild-anti-de-sitter", "btz", "tangherlini", "charged-dilaton",
})


def test_library_covers_every_family_form_and_observable():
    # Source: DESIGN.md section 3 (families, the static/stationary/metric forms, the observables, SI units).
    spacetimes = [claim.spacetime for claim in LOADED.claims if claim.spacetime is not None]
    assert DESIGN_FAMILIES <= {s.family for s in spacetimes}
    written_out = {s.metric.form for s in spacetimes if s.family is None}
    assert {"static", "stationary", "metric"} <= written_out
    mentioned = set().union(*(claim.observables for claim in LOADED.claims))
    assert {"T", "kappa", "A", "S", "Omega", "Phi", "r_h", "a_loc", "T_loc", "T_eff", "rate"} <= mentioned
    assert {"uniform-acceleration", "circular"} <= {c.detector.trajectory for c in LOADED.claims if c.detector}
    si = [claim for claim in LOADED.claims if claim.units == "si"]
    assert {"T", "S"} <= set().union(*(claim.observables for claim in si))


def run_library(options: RunOptions) -> dict:
    executor = make_executor(2, Limits(timeout=options.timeout))
    try:
        result = run_all(list(LOADED.claims), ROUTES, options, executor)
    finally:
        executor.shutdown()
    assert result.complete
    return {outcome.claim_id: outcome for outcome in result.outcomes}


@pytest.fixture(scope="module")
def library() -> dict:
    return run_library(RunOptions(samples=3, timeout=120))


def bare_horizon_value(claim) -> str | None:
    """'T' or 'kappa' for a horizon claim `T = ...` / `kappa = ...`, else None."""
    if claim.detector is not None or claim.spacetime is None:
        return None
    for name in LEAST_ROUTES:
        if claim.lhs == observable_function(name)(*claim.symbols):
            return name
    return None


def assert_confirmed(claim, outcome) -> None:
    statuses = {r.route: (r.status, r.reason[:200]) for r in outcome.routes}
    assert outcome.status == "confirmed", statuses
    assert statuses["dimensions"][0] == "agree", statuses["dimensions"]
    agreeing = [r.route for r in outcome.routes if r.status == "agree" and r.grade == "exact" and r.route != "dimensions"]
    least = LEAST_ROUTES.get(bare_horizon_value(claim) or "", 2)
    assert len(agreeing) >= least, (least, statuses)
    assert not [r.route for r in outcome.routes if r.status in ("error", "timeout")], statuses


@pytest.mark.parametrize("claim", LOADED.claims, ids=IDS)
def test_builtin_claim_is_confirmed(claim, library):
    assert_confirmed(claim, library[claim.id])


@pytest.fixture(scope="module")
def precise_library() -> dict:
    return run_library(RunOptions(samples=9, digits=50, seed=7, timeout=300))


@pytest.mark.slow
@pytest.mark.parametrize("claim", LOADED.claims, ids=IDS)
def test_builtin_claim_is_confirmed_at_50_digits_and_9_points(claim, precise_library):
    assert_confirmed(claim, precise_library[claim.id])
