"""Every built-in claim is confirmed, by the dimension check and both routes.

The claims' values are published results (each file names its source); the
routes compute them independently, so a failure here means a route or a
claim file is wrong.  Claims on the Kerr-Newman metric take tens of seconds
in the near-horizon route's symbolic limit and run with the slow tests.
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
HEAVY = ("kerr-newman", "local-unruh")


def _param(claim):
    heavy = any(word in Path(claim.path).read_text() or word in claim.id for word in HEAVY)
    return pytest.param(claim, id=claim.id, marks=[pytest.mark.slow] if heavy else [])


def test_library_loads_without_errors():
    assert LOADED.errors == ()
    assert len(LOADED.claims) >= 12
    assert all(claim.sources for claim in LOADED.claims)


@pytest.mark.parametrize("claim", [_param(c) for c in LOADED.claims])
def test_builtin_claim_is_confirmed_by_both_routes(claim):
    outcome = run_claim(claim, ROUTES, RunOptions(samples=3, timeout=120))
    statuses = {r.route: (r.status, r.reason) for r in outcome.routes}
    assert outcome.status == "confirmed", statuses
    for route in ("dimensions", "killing-horizon", "near-horizon"):
        assert statuses[route][0] == "agree", (route, statuses[route])
