"""Isolation: a route that crashes or hangs is reported as such; the others carry on.

The good route here is the real killing-horizon route; the reference value
is Hawking's T = 1/(8 pi M) (Hawking 1975).
"""

from __future__ import annotations

import time

from crosscheck.claimfile import load_claim_text
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

CLAIM = """
id: test/isolation
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
"""


class _Fake:
    grade = "exact"
    observables = frozenset({"T"})
    version = "0"
    title = "fake"

    def applies(self, problem):
        return None

    def numeric(self, problem, point, digits):
        raise AssertionError("not reached")


class Crashing(_Fake):
    name = "crashing"

    def symbolic(self, problem):
        raise ZeroDivisionError("boom")


class Sleeping(_Fake):
    name = "sleeping"

    def symbolic(self, problem):
        time.sleep(30)


def test_crash_and_hang_are_isolated():
    real, _ = load_routes()
    routes = {"killing-horizon": real["killing-horizon"], "crashing": Crashing(), "sleeping": Sleeping()}
    [claim], _ = load_claim_text(CLAIM, "isolation.yaml")
    started = time.perf_counter()
    outcome = run_claim(claim, routes, RunOptions(samples=2, timeout=1.0))
    assert time.perf_counter() - started < 15
    by_name = {r.route: r for r in outcome.routes}
    assert by_name["crashing"].status == "error" and "ZeroDivisionError: boom" in by_name["crashing"].reason
    assert by_name["sleeping"].status == "timeout" and by_name["sleeping"].seconds < 3
    assert by_name["killing-horizon"].status == "agree"
    assert outcome.status == "weak"


def test_route_that_does_not_cover_the_claim_is_not_applicable():
    real, _ = load_routes()
    [claim], _ = load_claim_text(CLAIM.replace("T = 1/(8*pi*M)", "S = 4*pi*M**2"), "area.yaml")

    class OnlyT(Crashing):
        name = "only-t"

    outcome = run_claim(claim, {"only-t": OnlyT()}, RunOptions(samples=2))
    [route] = [r for r in outcome.routes if r.route == "only-t"]
    assert route.status == "not-applicable" and "does not compute S" in route.reason
    assert outcome.status == "unchecked"
