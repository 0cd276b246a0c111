"""Isolation: a route that hangs, raises, exits, segfaults or eats memory is reported
for its own (claim, route) pair only; the other routes and claims are unaffected, and the
time limit is honoured within 2 s.

The agreeing routes give Hawking's T = 1/(8 pi M) (Hawking 1975, Commun. Math.
Phys. 43, 199); see tests/fake_routes.py.
"""

from __future__ import annotations

import dataclasses
import os
import time

import fake_routes as fake
import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.runner import RunOptions
from crosscheck.scheduler import run_all
from crosscheck.workers import IsolatingExecutor, Limits, WorkerCrashed, WorkerTimeout, run_isolated

CLAIM = """
id: test/isolation-{n}
spacetime: {{name: schwarzschild}}
parameters: {{M: [0.5, 20]}}
claim: T = 1/(8*pi*M)
"""
TIMEOUT = 1.0


def claims(count: int):
    loaded = []
    for n in range(count):
        [claim], errors = load_claim_text(CLAIM.format(n=n), f"isolation-{n}.yaml")
        assert not errors
        loaded.append(claim)
    return loaded


def test_each_failure_is_reported_for_its_pair_only():
    routes = fake.routes(fake.Hawking, fake.HawkingTwin, fake.Sleeping, fake.Stubborn, fake.Raising,
                         fake.Exiting, fake.Segfaulting, fake.Hungry)
    [troubled, clean] = claims(2)
    clean = dataclasses.replace(clean, routes=("hawking", "hawking-twin"))
    started = time.monotonic()
    with IsolatingExecutor(2, Limits(timeout=TIMEOUT, memory_mb=1024)) as executor:
        result = run_all([troubled, clean], routes, RunOptions(samples=2, timeout=TIMEOUT), executor)
    # Sleeping (1 s) and stubborn (1 s + 1 s grace) share 2 workers with quick tasks: about 2 s.
    assert time.monotonic() - started < 2 * TIMEOUT + 1 + 2
    assert result.complete and [o.claim_id for o in result.outcomes] == ["test/isolation-0", "test/isolation-1"]
    by_name = {r.route: r for r in result.outcomes[0].routes}
    assert by_name["hawking"].status == "agree" and by_name["hawking-twin"].status == "agree"
    assert result.outcomes[0].status == "confirmed"  # two agreeing exact routes; failures do not vote
    assert by_name["sleeping"].status == "timeout" and by_name["sleeping"].seconds < TIMEOUT + 2
    assert by_name["stubborn"].status == "timeout" and by_name["stubborn"].seconds < TIMEOUT + 2
    assert "killed" in by_name["stubborn"].reason
    assert by_name["raising"].status == "error" and "ZeroDivisionError: boom" in by_name["raising"].reason
    assert by_name["exiting"].status == "error" and "status 3" in by_name["exiting"].reason
    assert by_name["segfaulting"].status == "error" and "SIGSEGV" in by_name["segfaulting"].reason
    assert by_name["hungry"].status == "error" and "Cannot allocate memory" in by_name["hungry"].reason
    other = result.outcomes[1]
    assert other.status == "confirmed" and [r.route for r in other.routes] == ["dimensions", "hawking", "hawking-twin"]


def test_run_isolated_returns_values_and_reports_deaths():
    assert run_isolated(lambda: sum(range(10)), Limits(timeout=5)) == 45
    with pytest.raises(WorkerCrashed, match="status 7"):
        run_isolated(lambda: os._exit(7), Limits(timeout=5))
    with pytest.raises(WorkerCrashed, match="ValueError: nope"):
        run_isolated(lambda: (_ for _ in ()).throw(ValueError("nope")), Limits(timeout=5))
    started = time.monotonic()
    with pytest.raises(WorkerTimeout):
        run_isolated(lambda: time.sleep(30), Limits(timeout=0.3, grace=0.2))
    assert time.monotonic() - started < 2


def test_memory_limit_applies_in_the_worker_only():
    def allocate() -> int:
        return len(bytearray(900 << 20))

    with pytest.raises(WorkerCrashed, match="MemoryError"):
        run_isolated(allocate, Limits(timeout=10, memory_mb=512))
    assert run_isolated(lambda: len(bytearray(100 << 20)), Limits(timeout=10, memory_mb=0)) == 100 << 20


def test_a_job_slot_keeps_its_worker_until_it_fails():
    # Common practice (no source): one long-lived process per slot, replaced only after a death
    # or a timeout, so that caches survive from one task to the next.
    with IsolatingExecutor(1, Limits(timeout=1.0, grace=0.2, memory_mb=1024)) as executor:
        first, second = executor.submit(os.getpid).result(), executor.submit(os.getpid).result()
        assert first == second != os.getpid()
        with pytest.raises(WorkerCrashed, match="status 3"):
            executor.submit(os._exit, 3).result()
        third = executor.submit(os.getpid).result()
        assert third not in (first, os.getpid())
        with pytest.raises(WorkerTimeout):
            executor.submit(time.sleep, 30).result()
        fourth = executor.submit(os.getpid).result()
        assert fourth not in (first, third, os.getpid())
        # A task that cannot be pickled runs in a fork of its own; the slot's worker stays.
        assert executor.submit(lambda: os.getpid()).result() != fourth
        assert executor.submit(os.getpid).result() == fourth
