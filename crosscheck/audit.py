"""The mutation audit: run every claim's mutants and count how many the checks catch.

A route computes only from the claim's inputs, never from the claimed value,
so its results are the same for the claim and for every right-hand-side
mutant.  One task per (claim, route) therefore wraps the route in a memo
(`MemoRoute`: symbolic once, numeric once per point) and runs
`runner.run_route` for the original and then each mutant; only the
comparisons are repeated.  Other-horizon mutants change the problem, so each
is a task of its own.  The dimension check of all variants is one more task
per claim.  Tasks go to the same executors as a normal run
(`scheduler.make_executor`) and return plain data.

A mutant is caught when its claim status is 'contradicted'
(`scheduler.claim_outcome`); 'weak' or 'unchecked' means it survived.  The
unmutated claims' outcomes are the run's ordinary results (`run --audit`).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Sequence
from concurrent.futures import FIRST_COMPLETED, Executor, Future, wait
from dataclasses import dataclass

from crosscheck import dimcheck
from crosscheck.claim import Claim
from crosscheck.mutants import Expected, Mutant, derive_mutants, fraction
from crosscheck.progress import Progress
from crosscheck.results import ClaimOutcome, Diagnosis, RouteOutcome
from crosscheck.results_io import outcome_from_data, outcome_to_data
from crosscheck.routes.base import Route
from crosscheck.runner import RunOptions, problem_for, route_precheck, run_route, selected_routes
from crosscheck.scheduler import claim_outcome, execute_task
from crosscheck.workers import WorkerFailure, WorkerTimeout

WIDEST = 24  # more variants than any claim has (3 parameters: 23 mutants); sets the worker limit
TARGET = 0.99  # the fraction of (non-equivalent) mutants the library's checks must catch


# -- the memoizing route --------------------------------------------------------------------------
class MemoRoute:
    """A route whose symbolic() runs once and numeric() once per (point, digits).

    Failures are remembered too (a route that cannot compute cannot for any
    mutant either).  Everything else (name, grade, applies, ...) is the route's.
    """

    def __init__(self, route: Route) -> None:
        self._route = route
        self._symbolic: tuple[str, object] | None = None
        self._numeric: dict[tuple, tuple[str, object]] = {}

    def __getattr__(self, name: str):
        return getattr(self._route, name)

    def symbolic(self, problem):
        if self._symbolic is None:
            self._symbolic = _attempt(lambda: self._route.symbolic(problem))
        return _replay(self._symbolic)

    def numeric(self, problem, point, digits):
        key = (tuple(sorted((str(k), str(v)) for k, v in point.items())), digits)
        if key not in self._numeric:
            self._numeric[key] = _attempt(lambda: self._route.numeric(problem, point, digits))
        return _replay(self._numeric[key])


def _attempt(compute: Callable[[], object]) -> tuple[str, object]:
    try:
        return "value", compute()
    except Exception as exc:  # remembered and raised again for every variant
        return "raise", exc


def _replay(memo: tuple[str, object]):
    kind, value = memo
    if kind == "raise":
        raise value  # type: ignore[misc]
    return value


# -- tasks ----------------------------------------------------------------------------------------
def route_variants_task(variants: Sequence[Claim], route: Route, options: RunOptions) -> list[dict]:
    """In a worker: the route on the original (variants[0]) and each rhs mutant, as plain data.

    When the original times out, the mutants would too (same route work): they get the
    same timeout without running it again.
    """
    memo = MemoRoute(route)
    problem = problem_for(variants[0])
    first = run_route(variants[0], memo, problem, options)  # type: ignore[arg-type]
    results = [first]
    for claim in variants[1:]:
        if first.status == "timeout":
            results.append(dataclasses.replace(first, reason=f"{first.reason} (on the unmutated claim)"))
        else:
            results.append(run_route(claim, memo, problem, options))  # type: ignore[arg-type]
    return [outcome_to_data(r) for r in results]


def dimension_task(variants: Sequence[Claim]) -> list[dict]:
    """In a worker: the dimension check of every variant."""
    return [outcome_to_data(dimcheck.dimension_outcome(c)) for c in variants]


# -- results --------------------------------------------------------------------------------------
@dataclass(frozen=True)
class MutantResult:
    """A mutant's verdict: `routes` maps route -> status, `diagnoses` route -> diagnosis text
    (routes that disagree), `diagnosed` whether one of them names the injected slip (None:
    no expectation, e.g. a substitution whose effect is not a power law)."""

    label: str
    kind: str
    text: str
    equivalent: bool = False
    equivalence: str = ""
    status: str = ""
    caught: bool = False
    diagnosed: bool | None = None
    routes: dict[str, str] = dataclasses.field(default_factory=dict)
    diagnoses: dict[str, str] = dataclasses.field(default_factory=dict)


@dataclass(frozen=True)
class ClaimAudit:
    """One claim: its unmutated outcome and its mutants."""

    original: ClaimOutcome
    mutants: tuple[MutantResult, ...] = ()

    @property
    def counted(self) -> list[MutantResult]:
        return [m for m in self.mutants if not m.equivalent]

    @property
    def caught(self) -> int:
        return sum(1 for m in self.counted if m.caught)

    @property
    def equivalent(self) -> int:
        return sum(1 for m in self.mutants if m.equivalent)

    @property
    def survivors(self) -> list[MutantResult]:
        return [m for m in self.counted if not m.caught]

    @property
    def diagnosed(self) -> int:
        return sum(1 for m in self.counted if m.caught and m.diagnosed)

    @property
    def diagnosable(self) -> int:
        return sum(1 for m in self.counted if m.caught and m.diagnosed is not None)


@dataclass(frozen=True)
class Audit:
    """The whole audit; `totals()` has the numbers the exit code and the report use."""

    claims: tuple[ClaimAudit, ...]
    complete: bool = True

    def totals(self) -> dict:
        counted = sum(len(c.counted) for c in self.claims)
        caught = sum(c.caught for c in self.claims)
        contradicted = [c.original.claim_id for c in self.claims if c.original.status == "contradicted"]
        unconfirmed = [c.original.claim_id for c in self.claims if c.original.status != "confirmed"]
        return {
            "claims": len(self.claims),
            "mutants": counted,
            "caught": caught,
            "survived": counted - caught,
            "equivalent": sum(c.equivalent for c in self.claims),
            "caught_fraction": caught / counted if counted else 1.0,
            "diagnosed": sum(c.diagnosed for c in self.claims),
            "diagnosable": sum(c.diagnosable for c in self.claims),
            "false_contradictions": contradicted,
            "unconfirmed": unconfirmed,
            "target": TARGET,
        }

    def passed(self) -> bool:
        totals = self.totals()
        return self.complete and totals["caught_fraction"] >= TARGET and not totals["false_contradictions"]

    @property
    def outcomes(self) -> list[ClaimOutcome]:
        return [c.original for c in self.claims]


def matches(expected: Expected | None, diagnosis: Diagnosis | None) -> bool:
    """Whether a diagnosis names the slip that was injected."""
    if expected is None or diagnosis is None:
        return False
    if expected.kind in ("sign", "horizon"):
        return diagnosis.kind == expected.kind
    if expected.kind == "factor":
        return diagnosis.kind == "factor" and diagnosis.factor == expected.factor
    if diagnosis.kind != "power":
        return False
    wanted = {name: fraction(k) for name, k in expected.exponents}
    found = {name: fraction(k) for name, k in diagnosis.exponents.items()}
    return wanted == found and (expected.factor is None or diagnosis.factor == expected.factor)


def mutant_result(mutant: Mutant, outcome: ClaimOutcome | None) -> MutantResult:
    base = MutantResult(label=mutant.label, kind=mutant.kind, text=_variant_text(mutant),
                        equivalent=mutant.equivalent, equivalence=mutant.equivalence)
    if outcome is None:
        return base
    shown = [r for r in outcome.routes if r.status != "not-applicable"]
    disagreeing = [r for r in shown if r.status == "disagree"]
    diagnosed = None if mutant.expected is None else any(matches(mutant.expected, r.diagnosis) for r in disagreeing)
    return dataclasses.replace(
        base, status=outcome.status, caught=outcome.status == "contradicted", diagnosed=diagnosed,
        routes={r.route: r.status for r in shown},
        diagnoses={r.route: r.diagnosis.text for r in disagreeing if r.diagnosis is not None},
    )


def _variant_text(mutant: Mutant) -> str:
    if mutant.kind == "horizon" and mutant.claim.spacetime is not None:
        return f"{mutant.claim.text}  (horizon: root {mutant.claim.spacetime.horizon.root} of the Killing norm)"
    return mutant.claim.text


# -- the run --------------------------------------------------------------------------------------
@dataclass
class _Plan:
    """Per claim: its mutants, the variants each rhs task runs, and the result slots."""

    claim: Claim
    mutants: list[Mutant]
    rhs: list[Mutant]  # the non-equivalent rhs mutants, in the order of the variants after the original
    horizon: list[Mutant]
    routes: list[Route | None]  # None: the dimension check (first)
    # slots[route index][variant index]: variant 0 the original, then rhs, then horizon mutants
    slots: list[list[RouteOutcome | None]] = dataclasses.field(default_factory=list)


def plan_claim(claim: Claim, routes, options: RunOptions, only: Callable[[Mutant], bool] | None = None) -> _Plan:
    mutants = [m for m in derive_mutants(claim, options.seed) if only is None or only(m)]
    rhs = [m for m in mutants if not m.equivalent and m.kind != "horizon"]
    horizon = [m for m in mutants if m.kind == "horizon"]
    chosen = selected_routes(claim, routes)
    entries: list[Route | None] = [None, *(chosen[n] for n in sorted(chosen))]
    plan = _Plan(claim, mutants, rhs, horizon, entries)
    width = 1 + len(rhs) + len(horizon)
    problem = problem_for(claim)
    for route in entries:
        decided = route_precheck(claim, route, problem) if route is not None else None
        plan.slots.append([decided] * width)
    return plan


def _tasks(index: int, plan: _Plan, options: RunOptions):
    """(claim index, route index, first variant, count, function, args) for every slot to compute."""
    variants = [plan.claim, *(m.claim for m in plan.rhs)]
    for slot, route in enumerate(plan.routes):
        if plan.slots[slot][0] is not None:
            continue  # decided without route code (not applicable)
        if route is None:
            yield index, slot, 0, len(variants) + len(plan.horizon), dimension_task, (variants + [m.claim for m in plan.horizon],)
            continue
        yield index, slot, 0, len(variants), route_variants_task, (variants, route, options)
        for k, mutant in enumerate(plan.horizon):
            yield index, slot, len(variants) + k, 1, _single_task, (mutant.claim, route, options)


def _single_task(claim: Claim, route: Route, options: RunOptions) -> list[dict]:
    return [execute_task(claim, route, options)]


def run_audit(
    claims: Sequence[Claim],
    routes,
    options: RunOptions,
    executor: Executor,
    progress: Progress | None = None,
    on_claim: Callable[[ClaimAudit], None] | None = None,
    only: Callable[[Mutant], bool] | None = None,
) -> Audit:
    """Run every claim's original and mutants on the executor; the audit, in claim order.

    `only` keeps the mutants it returns True for (all by default; tests audit a few).

    Ctrl-C stops the run: the executor is shut down and the claims finished so far come
    back with `complete=False`.
    """
    plans = [plan_claim(c, routes, options, only) for c in claims]
    tasks = [t for i, p in enumerate(plans) for t in _tasks(i, p, options)]
    if progress is not None:
        progress.claims, progress.tasks = len(plans), len(tasks)
    finished: list[ClaimAudit] = []
    in_flight: dict[Future, tuple] = {}
    done = 0
    try:
        for task in tasks:
            in_flight[executor.submit(task[4], *task[5])] = task
        while in_flight:
            ready, _ = wait(in_flight, timeout=0.2, return_when=FIRST_COMPLETED)
            for future in ready:
                index, slot, first, count, _, _ = in_flight.pop(future)
                route = plans[index].routes[slot]
                for k, outcome in enumerate(_outcomes(future, route, count)):
                    plans[index].slots[slot][first + k] = outcome
                done += 1
            while len(finished) < len(plans) and _complete(plans[len(finished)]):
                audit = claim_audit(plans[len(finished)])
                finished.append(audit)
                if on_claim is not None:
                    if progress is not None:
                        progress.clear()
                    on_claim(audit)
            if progress is not None:
                progress.update(claims_done=len(finished), tasks_done=done,
                                running=sum(1 for f in in_flight if f.running()), failing=0)
    except KeyboardInterrupt:
        executor.shutdown(wait=False, cancel_futures=True)
        return Audit(tuple(finished), complete=False)
    finally:
        if progress is not None:
            progress.clear()
    return Audit(tuple(finished))


def _outcomes(future: Future, route: Route | None, count: int) -> list[RouteOutcome]:
    """The task's outcomes; a lost worker becomes a timeout or error of each variant it ran."""
    try:
        return [outcome_from_data(d) for d in future.result()]
    except WorkerTimeout as exc:
        status, reason, seconds = "timeout", exc.message, exc.seconds
    except WorkerFailure as exc:
        status, reason, seconds = "error", exc.message, exc.seconds
    except Exception as exc:  # the executor itself failed
        status, reason, seconds = "error", f"{type(exc).__name__}: {exc}", 0.0
    name, title, grade = (dimcheck.NAME, dimcheck.TITLE, "exact") if route is None else (route.name, route.title, route.grade)
    failed = RouteOutcome(route=name, title=title, grade=grade, status=status, reason=reason, seconds=seconds)  # type: ignore[arg-type]
    return [failed] * count


def _complete(plan: _Plan) -> bool:
    return all(outcome is not None for row in plan.slots for outcome in row)


def claim_audit(plan: _Plan) -> ClaimAudit:
    """Claim statuses of the original and of every mutant, from the filled slots."""

    def variant(k: int, claim: Claim) -> ClaimOutcome:
        return claim_outcome(claim, [row[k] for row in plan.slots])  # type: ignore[misc]

    original = variant(0, plan.claim)
    position = {id(m): 1 + k for k, m in enumerate(plan.rhs)}
    position.update({id(m): 1 + len(plan.rhs) + k for k, m in enumerate(plan.horizon)})
    results = []
    for mutant in plan.mutants:
        k = position.get(id(mutant))
        results.append(mutant_result(mutant, None if k is None else variant(k, mutant.claim)))
    return ClaimAudit(original, tuple(results))


def task_limit(options: RunOptions) -> float:
    """A worker's wall-clock limit for audit tasks: room for every variant's route run.

    Each variant's route run is limited to options.timeout inside the worker (and the
    route work itself is done once); this outer limit only stops a worker that hangs
    outside those limits.
    """
    return options.timeout * (1 + WIDEST)
