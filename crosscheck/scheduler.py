"""Claims x routes as tasks on an executor: parallel, cached, interruptible, in order.

Each claim gives one task per route it asks for, plus the dimension check
(reported like a route, first).  Verdicts that need no route code (scope,
coverage) and cache hits are decided here; the rest go to a
`concurrent.futures`-style executor (`submit`/`shutdown`): `InlineExecutor`
(`--jobs 0`), `IsolatingExecutor` (forked workers, `--jobs N`) or Dask
(`--scheduler ADDRESS`).  Results come back as plain data, are cached by the
parent, and a claim is printed once it and every claim before it are done, so
the output order never depends on timing.  The claim status is decided from
all its route outcomes (`compare.claim_status`), as in `runner.run_claim`.

Ctrl-C or SIGTERM stops the run: running workers are killed and the finished
claims come back with `complete=False`, for a partial report.
"""

from __future__ import annotations

import functools
import signal
import threading
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import FIRST_COMPLETED, Executor, Future, wait
from contextlib import contextmanager
from dataclasses import dataclass, field

from crosscheck import compare, dimcheck
from crosscheck.cache import Cache, claim_fingerprint, task_key
from crosscheck.claim import Claim
from crosscheck.progress import Progress
from crosscheck.results import ClaimOutcome, RouteOutcome
from crosscheck.results_io import outcome_from_data, outcome_to_data
from crosscheck.routes.base import Route
from crosscheck.runner import RunOptions, problem_for, route_precheck, run_route, selected_routes
from crosscheck.workers import InlineExecutor, IsolatingExecutor, Limits, WorkerFailure, WorkerTimeout, run_isolated

POLL = 0.2  # seconds between checks for finished tasks (and progress redraws)


class Interrupted(KeyboardInterrupt):
    """SIGTERM arrived; handled wherever Ctrl-C is."""

    def __init__(self, signum: int) -> None:
        super().__init__(signal.Signals(signum).name)
        self.signum = signum


@contextmanager
def signals_interrupt() -> Iterator[None]:
    """While active, SIGTERM raises `Interrupted` in the main thread (SIGINT raises KeyboardInterrupt)."""

    def on_term(signum, frame):
        raise Interrupted(signum)

    if threading.current_thread() is not threading.main_thread():
        yield  # signal handlers can only be set from the main thread
        return
    previous = signal.signal(signal.SIGTERM, on_term)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


@dataclass
class RunResult:
    """What a run produced; `unfinished` lists claim ids without a result when interrupted."""

    outcomes: list[ClaimOutcome]
    complete: bool = True
    unfinished: tuple[str, ...] = ()
    stopped_by: str | None = None
    cached: int = 0
    computed: int = 0


# -- executors ---------------------------------------------------------------------------------
def make_executor(jobs: int, limits: Limits, address: str | None = None) -> Executor:
    """Dask when an address is given, else forked workers (jobs >= 1) or this process (0)."""
    if address:
        return DaskExecutor(address, limits)
    if jobs <= 0:
        return InlineExecutor()
    return IsolatingExecutor(jobs, limits)


class DaskExecutor(Executor):
    """Tasks on a Dask cluster (`distributed`, an optional extra).

    Each task still runs in a forked child on its Dask worker, so the time and
    memory limits and crash isolation hold on the cluster too.  Tasks carry
    the parsed claim and the route object (pickled by Dask), so workers need
    crosscheck and any plugin routes installed, not the claim files.
    """

    def __init__(self, address, limits: Limits, isolate: bool = True) -> None:
        try:
            from distributed import Client
        except ImportError as exc:
            raise RuntimeError("--scheduler needs Dask: pip install 'crosscheck[cluster]'") from exc
        self._owns_client = not isinstance(address, Client)
        self.client = Client(address) if self._owns_client else address
        self._executor = self.client.get_executor(pure=False)
        self.limits = limits
        self.isolate = isolate
        threads = sum(self.client.nthreads().values()) or 1
        self.window = 2 * threads

    def submit(self, fn, /, *args, **kwargs) -> Future:
        task = functools.partial(fn, *args, **kwargs)
        if self.isolate:
            return self._executor.submit(run_isolated, task, self.limits)
        return self._executor.submit(task)

    def shutdown(self, wait: bool = True, *, cancel_futures: bool = False) -> None:
        self._executor.shutdown(wait=wait and not cancel_futures)
        if self._owns_client:
            self.client.close()


def _window(executor: Executor) -> int:
    """How many tasks to keep submitted: enough to keep every worker busy, few enough to stop fast."""
    explicit = getattr(executor, "window", None)
    if explicit:
        return int(explicit)
    workers = getattr(executor, "_max_workers", 0)
    return 2 * workers if workers else 1


# -- tasks -------------------------------------------------------------------------------------
def execute_task(claim: Claim, route: Route | None, options: RunOptions) -> dict:
    """One task, in a worker: the route (or, for None, the dimension check) as plain data."""
    if route is None:
        return outcome_to_data(dimcheck.dimension_outcome(claim))
    return outcome_to_data(run_route(claim, route, problem_for(claim), options))


@dataclass
class _Task:
    index: int  # of the claim in the run
    slot: int  # of the route in the claim's row
    claim: Claim
    route: Route | None
    key: str | None


@dataclass
class _Board:
    """Per claim, the outcome of each slot (None while pending)."""

    claims: Sequence[Claim]
    slots: list[list[RouteOutcome | None]] = field(default_factory=list)

    def done(self, index: int) -> bool:
        return all(s is not None for s in self.slots[index])


def _plan(claims: Sequence[Claim], routes, options: RunOptions, cache: Cache | None) -> tuple[_Board, list[_Task]]:
    board = _Board(claims)
    tasks: list[_Task] = []
    for index, claim in enumerate(claims):
        fingerprint = claim_fingerprint(claim) if cache is not None else ""
        problem = problem_for(claim)
        chosen = selected_routes(claim, routes)
        entries: list[Route | None] = [None, *(chosen[name] for name in sorted(chosen))]
        row: list[RouteOutcome | None] = []
        for slot, route in enumerate(entries):
            decided = route_precheck(claim, route, problem) if route is not None else None
            key = None
            if decided is None and cache is not None:
                key = task_key(fingerprint, route.name if route else dimcheck.NAME, route, options)
                decided = cache.get(key)
            row.append(decided)
            if decided is None:
                tasks.append(_Task(index, slot, claim, route, key))
        board.slots.append(row)
    return board, tasks


def _failure_outcome(route: Route | None, status: str, reason: str, seconds: float) -> RouteOutcome:
    if route is None:
        return RouteOutcome(route=dimcheck.NAME, title=dimcheck.TITLE, grade="exact", status=status,  # type: ignore[arg-type]
                            reason=reason, seconds=seconds)
    return RouteOutcome(route=route.name, title=route.title, grade=route.grade, status=status,  # type: ignore[arg-type]
                        reason=reason, seconds=seconds)


def _outcome(future: Future, route: Route | None) -> RouteOutcome:
    """The task's outcome; a lost worker becomes that task's timeout or error."""
    try:
        return outcome_from_data(future.result())
    except WorkerTimeout as exc:
        return _failure_outcome(route, "timeout", exc.message, exc.seconds)
    except WorkerFailure as exc:
        return _failure_outcome(route, "error", exc.message, exc.seconds)
    except Exception as exc:  # the executor itself failed (e.g. a lost cluster connection)
        return _failure_outcome(route, "error", f"{type(exc).__name__}: {exc}", 0.0)


def claim_outcome(claim: Claim, results: Sequence[RouteOutcome]) -> ClaimOutcome:
    """The claim's verdict from all its route outcomes (dimension check first)."""
    return ClaimOutcome(
        claim_id=claim.id, title=claim.title, file=claim.path, line=claim.line,
        status=compare.claim_status(results),  # type: ignore[arg-type]
        claim_text=claim.text, routes=tuple(results), sources=claim.sources,
        seconds=sum(r.seconds for r in results),
    )


def _failing(outcome: ClaimOutcome) -> bool:
    return outcome.status == "contradicted" or any(r.status in ("error", "timeout") for r in outcome.routes)


# -- the run -----------------------------------------------------------------------------------
def run_all(
    claims: Sequence[Claim],
    routes,
    options: RunOptions,
    executor: Executor,
    cache: Cache | None = None,
    progress: Progress | None = None,
    on_result: Callable[[ClaimOutcome], None] | None = None,
) -> RunResult:
    """Run every task; return the claim outcomes in input order (partial when interrupted)."""
    result = RunResult(outcomes=[])
    in_flight: dict[Future, _Task] = {}
    emitted = 0
    try:
        hits_before = cache.hits if cache is not None else 0
        board, tasks = _plan(claims, routes, options, cache)
        result.cached = cache.hits - hits_before if cache is not None else 0
        if progress is not None:
            progress.claims, progress.tasks = len(claims), len(tasks)
        queue = iter(tasks)
        _top_up(executor, queue, in_flight, options)
        while True:
            emitted = _emit(board, emitted, result, progress, on_result)
            if not in_flight:
                break
            finished, _ = wait(in_flight, timeout=POLL, return_when=FIRST_COMPLETED)
            for future in finished:
                task = in_flight.pop(future)
                outcome = _outcome(future, task.route)
                board.slots[task.index][task.slot] = outcome
                result.computed += 1
                if cache is not None and task.key is not None:
                    cache.put(task.key, task.claim.id, outcome)
            _top_up(executor, queue, in_flight, options)
            _show(progress, result, in_flight)
    except KeyboardInterrupt as exc:
        executor.shutdown(wait=False, cancel_futures=True)
        result.complete = False
        result.stopped_by = exc.args[0] if isinstance(exc, Interrupted) else "SIGINT"
        result.unfinished = tuple(c.id for c in claims[len(result.outcomes):])
    finally:
        if progress is not None:
            progress.clear()
    return result


def _top_up(executor: Executor, queue: Iterator[_Task], in_flight: dict, options: RunOptions) -> None:
    while len(in_flight) < _window(executor):
        task = next(queue, None)
        if task is None:
            return
        in_flight[executor.submit(execute_task, task.claim, task.route, options)] = task


def _emit(board: _Board, emitted: int, result: RunResult, progress, on_result) -> int:
    """Report every claim that is done and has no unfinished claim before it."""
    while emitted < len(board.claims) and board.done(emitted):
        outcome = claim_outcome(board.claims[emitted], board.slots[emitted])  # type: ignore[arg-type]
        result.outcomes.append(outcome)
        if on_result is not None:
            if progress is not None:
                progress.clear()
            on_result(outcome)
        emitted += 1
    return emitted


def _show(progress: Progress | None, result: RunResult, in_flight: dict) -> None:
    if progress is None:
        return
    progress.update(
        claims_done=len(result.outcomes), tasks_done=result.computed,
        running=sum(1 for f in in_flight if f.running()), failing=sum(1 for o in result.outcomes if _failing(o)),
    )
