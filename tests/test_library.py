"""Every built-in claim is confirmed, by the dimension check and both routes.

The claims' values are published results (each file names its source); the
routes compute them independently, so a failure here means a route or a
claim file is wrong.  The slow variant repeats the run with more sample
points at higher precision.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from crosscheck.claimfile import load_paths
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

LIBRARY = Path(__file__).resolve().parent.parent / "claims"
ROUTES, _ = load_routes()
LOADED = load_paths([str(LIBRARY)], known_routes=ROUTES)
IDS = [claim.id for claim in LOADED.claims]


def test_library_loads_without_errors():
    assert LOADED.errors == ()
    assert len(LOADED.claims) >= 12
    assert all(claim.sources for claim in LOADED.claims)


def assert_confirmed(claim, options: RunOptions) -> None:
    outcome = run_claim(claim, ROUTES, options)
    statuses = {r.route: (r.status, r.reason) for r in outcome.routes}
    assert outcome.status == "confirmed", statuses
    for route in ("dimensions", "killing-horizon", "near-horizon"):
        assert statuses[route][0] == "agree", (route, statuses[route])


@pytest.mark.parametrize("claim", LOADED.claims, ids=IDS)
def test_builtin_claim_is_confirmed_by_both_routes(claim):
    assert_confirmed(claim, RunOptions(samples=3, timeout=120))


@pytest.mark.slow
@pytest.mark.parametrize("claim", LOADED.claims, ids=IDS)
def test_builtin_claim_is_confirmed_at_50_digits_and_9_points(claim):
    assert_confirmed(claim, RunOptions(samples=9, digits=50, seed=7, timeout=300))
