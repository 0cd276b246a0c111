"""The scheduler: the same outcomes in the same order whatever the executor (in-process,
1 or 2 forked workers, a local Dask cluster); an interrupted run returns what finished.

Agreeing values are Hawking's T = 1/(8 pi M) (Hawking 1975); see tests/fake_routes.py.
`slow-by-mass` makes the first claims the slowest, so with two workers later claims
finish first and the order of the output is really tested.
"""

from __future__ import annotations

import dataclasses
import io
import signal
import threading

import fake_routes as fake
import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.cli import main
from crosscheck.progress import Progress
from crosscheck.runner import RunOptions, run_claim
from crosscheck.scheduler import Interrupted, run_all, signals_interrupt
from crosscheck.workers import InlineExecutor, IsolatingExecutor, Limits

OPTIONS = RunOptions(samples=2, digits=20, timeout=10)
LIMITS = Limits(timeout=10, memory_mb=2048)


def claims(count: int = 5):
    loaded = []
    for n in range(count):
        text = f"id: test/order-{n}\nspacetime: {{name: schwarzschild}}\nparameters: {{M: [0.5, {n + 1}]}}\nclaim: T = 1/(8*pi*M)\n"
        [claim], errors = load_claim_text(text, f"order-{n}.yaml")
        assert not errors
        loaded.append(claim)
    return loaded


def routes():
    return fake.routes(fake.Hawking, fake.SlowByMass)


def comparable(outcomes):
    """Outcomes without their timings (which differ from run to run)."""
    return [
        dataclasses.replace(o, seconds=0.0, routes=tuple(dataclasses.replace(r, seconds=0.0) for r in o.routes))
        for o in outcomes
    ]


def run_with(executor, on_result=None):
    with executor:
        return run_all(claims(), routes(), OPTIONS, executor, on_result=on_result)


def test_order_and_outcomes_do_not_depend_on_the_executor():
    reference = comparable([run_claim(c, routes(), OPTIONS) for c in claims()])  # the plain in-process runner
    seen: list[str] = []
    two = run_with(IsolatingExecutor(2, LIMITS), on_result=lambda o: seen.append(o.claim_id))
    one = run_with(IsolatingExecutor(1, LIMITS))
    inline = run_with(InlineExecutor())
    expected_ids = [f"test/order-{n}" for n in range(5)]
    assert seen == expected_ids
    for result in (two, one, inline):
        assert result.complete and [o.claim_id for o in result.outcomes] == expected_ids
        assert comparable(result.outcomes) == reference
    assert all(o.status == "confirmed" for o in two.outcomes)
    assert [r.route for r in two.outcomes[0].routes] == ["dimensions", "hawking", "slow-by-mass"]


def test_an_interrupt_returns_the_finished_claims():
    def stop_after_first(outcome):
        if outcome.claim_id == "test/order-0":
            raise Interrupted(signal.SIGTERM)

    result = run_with(IsolatingExecutor(1, LIMITS), on_result=stop_after_first)
    assert not result.complete and result.stopped_by == "SIGTERM"
    assert [o.claim_id for o in result.outcomes] == ["test/order-0"]
    assert result.unfinished == tuple(f"test/order-{n}" for n in range(1, 5))


def test_sigterm_raises_interrupted_only_while_installed():
    before = signal.getsignal(signal.SIGTERM)
    with signals_interrupt(), pytest.raises(Interrupted):
        signal.raise_signal(signal.SIGTERM)
        threading.Event().wait(1)  # the handler runs here at the latest
    assert signal.getsignal(signal.SIGTERM) is before


def test_dask_local_cluster_gives_the_same_results(claim_file, capsys):
    distributed = pytest.importorskip("distributed")
    from crosscheck.scheduler import DaskExecutor

    reference = comparable(run_with(InlineExecutor()).outcomes)
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=2, dashboard_address=None) as client:
        crashing = {**routes(), **fake.routes(fake.Exiting)}
        executor = DaskExecutor(client, LIMITS)
        try:
            result = run_all(claims(), crashing, OPTIONS, executor)
        finally:
            executor.shutdown()
        # The command line reaches the same cluster by its address.
        path = claim_file("id: dask/cli\nspacetime: {name: schwarzschild}\nparameters: {M: [0.5, 20]}\n"
                          "claim: T = 1/(8*pi*M)\nroutes: [killing-horizon]\n")
        address = client.scheduler.address
        code = main(["run", path, "--scheduler", address, "--no-cache", "--samples", "1", "--digits", "15"])
        assert code == 0 and "dask/cli" in capsys.readouterr().out
    assert result.complete and result.computed == 5 * 4
    for outcome, expected in zip(result.outcomes, reference):
        by_name = {r.route: r for r in outcome.routes}
        assert by_name["exiting"].status == "error" and "status 3" in by_name["exiting"].reason
        kept = comparable([dataclasses.replace(outcome, routes=tuple(r for r in outcome.routes if r.route != "exiting"))])
        assert kept == [expected]


class _Terminal(io.StringIO):
    def __init__(self, tty: bool) -> None:
        super().__init__()
        self.tty = tty

    def isatty(self) -> bool:
        return self.tty


@pytest.mark.parametrize("tty", [True, False])
def test_progress_line_on_a_terminal_only(tty, monkeypatch):
    monkeypatch.delenv("CI", raising=False)
    monkeypatch.setenv("TERM", "xterm")
    stream = _Terminal(tty)
    printed: list[str] = []
    progress = Progress(0, 0, stream=stream, interval=0.0)
    with IsolatingExecutor(2, LIMITS) as executor:
        result = run_all(claims(3), routes(), OPTIONS, executor, progress=progress, on_result=lambda o: printed.append(o.claim_id))
    assert result.complete and printed == ["test/order-0", "test/order-1", "test/order-2"]
    written = stream.getvalue()
    if not tty:
        assert written == ""
        return
    assert "/3 claims" in written and "running" in written and "ETA" in written
    assert written.endswith("\r\x1b[K")  # cleared at the end: nothing left over the shell prompt
    assert progress.tasks == 3 * 3 and progress.tasks_done == 9
