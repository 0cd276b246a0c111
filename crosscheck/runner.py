"""Claims x routes: run every applicable route on every claim and decide.

For each claim: the dimension check first (reported like a route, named
`dimensions`), then each route in name order.  A route's symbolic side is
compared with the claim symbolically, its numeric side at seeded sample
points; a crash becomes that route's `error`, a route over its time limit its
`timeout`, and the other routes carry on.
"""

from __future__ import annotations

import dataclasses
import time
import traceback
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from fractions import Fraction

import mpmath
import sympy

from crosscheck import compare, spectrum, units
from crosscheck.claim import Claim
from crosscheck.dimcheck import dimension_outcome
from crosscheck.errors import CannotCompute, ClaimError
from crosscheck.evaluate import NumericEvaluator, substitute_symbolic
from crosscheck.measure import Measured
from crosscheck.radicals import parameter_box
from crosscheck.results import ClaimOutcome, Diagnosis, RouteOutcome, SymbolicCheck
from crosscheck.routes.base import NumericResult, Problem, Route, SymbolicResult, claim_kind, route_scope
from crosscheck.suspects import suspicious_factors
from crosscheck.timebox import OutOfTime, run_limited


@dataclass(frozen=True)
class RunOptions:
    """Settings that change results (so they are part of what reports record)."""

    samples: int = 5
    # Working precision of the numeric sides.  The default tolerance is 1e-9 and the routes'
    # error estimates run far below it at 20 digits (the tests check the routes at 30).
    # Measured on the library (52 claims): 30 -> 20 digits takes the CPU from 107 s to 97 s,
    # every claim keeps its status, and the mutation audit catches the same 544 of 545.
    digits: int = 20
    seed: int = 0
    timeout: float = 60.0
    # Seconds for sympy to prove route = claim (and for the claim's calculus).  A proof that
    # does not come within 3/4 of it leaves the 50-digit test at 9 points ('consistent').
    # Measured on the library (52 claims): 4 s and 2.5 s prove the same 205 (claim, route)
    # pairs; 2.5 s loses one limit (a symbolic side becomes unavailable) and saves 6% of the CPU.
    symbolic_budget: float = 2.5


class RouteTimeout(BaseException):
    """A route exceeded its wall-clock limit."""


def problem_for(claim: Claim) -> Problem:
    """What routes see of a claim: its inputs, never its claimed value."""
    return Problem(
        spacetime=claim.spacetime,
        detector=claim.detector,
        parameters=claim.symbols,
        wanted=claim.observables,
        ranges={p.symbol: (p.lo, p.hi) for p in claim.parameters},
    )


def run_claims(
    claims: Iterable[Claim],
    routes: Mapping[str, Route],
    options: RunOptions = RunOptions(),
    on_result: Callable[[ClaimOutcome], None] | None = None,
) -> list[ClaimOutcome]:
    outcomes = []
    for claim in claims:
        outcome = run_claim(claim, routes, options)
        outcomes.append(outcome)
        if on_result is not None:
            on_result(outcome)
    return outcomes


def run_claim(claim: Claim, routes: Mapping[str, Route], options: RunOptions = RunOptions()) -> ClaimOutcome:
    started = time.perf_counter()
    problem = problem_for(claim)
    results = [dimension_outcome(claim)]
    selected = selected_routes(claim, routes)
    for name in sorted(selected):
        results.append(run_route(claim, selected[name], problem, options))
    status = compare.claim_status(results)
    return ClaimOutcome(
        claim_id=claim.id,
        title=claim.title,
        file=claim.path,
        line=claim.line,
        status=status,  # type: ignore[arg-type]
        claim_text=claim.text,
        routes=tuple(results),
        sources=claim.sources,
        seconds=time.perf_counter() - started,
    )


def invalid_outcome(error: ClaimError) -> ClaimOutcome:
    """A file or claim that could not be loaded, as an ordinary result."""
    return ClaimOutcome(
        claim_id=f"{error.path}:{error.line}", title="invalid claim file", file=error.path,
        line=error.line, status="invalid", error=str(error),
    )


def selected_routes(claim: Claim, routes: Mapping[str, Route]) -> Mapping[str, Route]:
    """The routes a claim asks for (its `routes:` list), or all of them."""
    return routes if claim.routes is None else {n: routes[n] for n in claim.routes if n in routes}


def route_precheck(claim: Claim, route: Route, problem: Problem) -> RouteOutcome | None:
    """The not-applicable verdicts that need no route code (scope, coverage), else None.

    Cheap and safe, so a scheduler can decide them without starting a worker.
    """
    base = RouteOutcome(route=route.name, title=route.title, grade=route.grade, status="not-applicable")
    kind = claim_kind(problem)
    if kind not in route_scope(route):
        return dataclasses.replace(base, reason=f"checks {' and '.join(sorted(route_scope(route)))} claims, not {kind} claims")
    missing = sorted(claim.observables - route.observables)
    if missing:
        return dataclasses.replace(base, reason=f"does not compute {', '.join(missing)}")
    return None


def run_route(claim: Claim, route: Route, problem: Problem, options: RunOptions) -> RouteOutcome:
    """One route on one claim, isolated: nothing it raises escapes."""
    base = RouteOutcome(route=route.name, title=route.title, grade=route.grade, status="not-applicable")
    skipped = route_precheck(claim, route, problem)
    if skipped is not None:
        return skipped
    started = time.perf_counter()
    try:
        reason = route.applies(problem)
        if reason:
            return dataclasses.replace(base, reason=reason)
        outcome = run_limited(lambda: _checked_route(claim, route, problem, options, base), options.timeout, RouteTimeout)
    except RouteTimeout:
        outcome = dataclasses.replace(base, status="timeout", reason=f"no result within {options.timeout:g} s")
    except Exception as exc:  # isolation: one route's failure is its own result
        outcome = dataclasses.replace(base, status="error", reason=_error_text(exc))
    return dataclasses.replace(outcome, seconds=time.perf_counter() - started)


def _error_text(exc: BaseException) -> str:
    where = traceback.extract_tb(exc.__traceback__)[-1:] if exc.__traceback__ else []
    origin = f" (at {where[0].name} in {where[0].filename.rsplit('/', 1)[-1]}:{where[0].lineno})" if where else ""
    return f"{type(exc).__name__}: {exc}{origin}"


def _checked_route(claim: Claim, route: Route, problem: Problem, options: RunOptions, base: RouteOutcome) -> RouteOutcome:
    if claim.spectrum is not None and not claim.text:  # a spectrum-only detector claim
        status, reason, diagnosis, evidence = _spectrum_part(claim, route, problem, options, None, None)
        return dataclasses.replace(base, status=status, reason=reason, diagnosis=diagnosis, evidence=_plain(evidence or {}))  # type: ignore[arg-type]
    recorder = spectrum.RecordingRoute(route) if claim.spectrum is not None else route
    scaling = claim.agreement == "scaling"
    notes: list[str] = []
    symbolic_result, symbolic_check, sides = _symbolic_side(claim, route, problem, options, notes)
    numeric_rows, numeric_result, points, numeric_values = _numeric_side(claim, recorder, problem, options, notes)
    status, reason = compare.route_status(symbolic_check, numeric_rows)
    if route.grade == "estimate" and not scaling and status in ("agree", "disagree"):
        # An exact claim equal to a rough estimate is no more confirmed than one that differs.
        status, reason = "inconclusive", "estimate routes vote only on 'agreement: scaling' claims; " + reason
    diagnosis = None
    if status == "disagree" or (route.grade == "estimate" and not scaling):
        diagnosis = _named_pitfall(_diagnose(claim, sides, points, numeric_values, options), numeric_result)
    elif scaling and status == "agree":
        ratio = _diagnose(claim, sides, points, numeric_values, options)
        if ratio is not None and ratio.kind in ("factor", "sign"):
            notes.append(f"equal up to a constant: claim/route = {ratio.factor or '-1'}")
    if notes:
        reason = "; ".join([reason, *notes]) if reason else "; ".join(notes)
    if claim.spectrum is not None:  # both the value and the spectrum must hold
        status, reason, diagnosis, _ = _spectrum_part(claim, route, problem, options, recorder, (status, reason, diagnosis))
    provenance = tuple(dict.fromkeys((symbolic_result.provenance if symbolic_result else ()) + (numeric_result.provenance if numeric_result else ())))
    return dataclasses.replace(
        base,
        status=status,  # type: ignore[arg-type]
        reason=reason,
        symbolic=symbolic_check,
        numeric=numeric_rows,
        max_rel_diff=max((row.rel_diff for row in numeric_rows), default=None),
        diagnosis=diagnosis,
        provenance=provenance,
        steps=tuple((step.label, sympy.sstr(step.expr)) for step in (symbolic_result.steps if symbolic_result else ())),
        values={k: sympy.sstr(v) for k, v in (symbolic_result.values.items() if symbolic_result else ())},
        evidence=_plain(numeric_result.evidence) if numeric_result else {},
    )


def _named_pitfall(diagnosis: Diagnosis | None, result: NumericResult | None) -> Diagnosis | None:
    """A constant factor that equals a route's recorded pitfall (evidence["naive"], e.g. the
    naive tunneling rate exp(-2 Im W), which doubles T) is named as that pitfall."""
    naive = result.evidence.get("naive") if result is not None else None
    if diagnosis is None or diagnosis.kind != "factor" or not isinstance(naive, dict) or not diagnosis.factor:
        return diagnosis
    try:
        factor = float(Fraction(diagnosis.factor))  # our own text ("2", "1/2"); pi factors do not parse
        expected = float(naive["factor"])
    except (KeyError, TypeError, ValueError, ZeroDivisionError):
        return diagnosis
    if abs(factor - expected) > 1e-9 * abs(expected):
        return diagnosis
    label = str(naive.get("label", "the route's naive value"))
    text = (f"{diagnosis.text}; the claim equals the {label}: if the derivation used tunneling, "
            "it took the naive value instead of the emission/absorption ratio")
    return dataclasses.replace(diagnosis, text=text)


def _spectrum_part(claim, route, problem, options, recorder, value):
    """(status, reason, diagnosis, evidence) with the claim's `spectrum:` judged (crosscheck.spectrum).
    `value` is the value comparison's (status, reason, diagnosis), None for a spectrum-only claim."""
    if not spectrum.judges_spectrum(route):
        if value is None:
            return "not-applicable", "does not judge spectra", None, None
        status, reason, diagnosis = value
        if status == "agree":
            return "inconclusive", f"{reason}; agrees on the value but does not judge the claimed spectrum", diagnosis, None
        return status, reason, diagnosis, None
    if value is None:
        points = compare.sample_points(claim.parameters, options.samples, options.seed)
        judgement = spectrum.spectrum_only(claim.spectrum, route, problem, points, options.digits)
        return judgement.status, judgement.reason, judgement.diagnosis, judgement.evidence
    judgement = spectrum.judge(claim.spectrum, [spectrum.evidence_of(r) for r in recorder.results])
    return (*spectrum.combine(*value, judgement), None)


# -- symbolic side -----------------------------------------------------------------------------
def _symbolic_side(claim, route, problem, options, notes):
    result = None
    try:
        result = _to_claim_units_symbolic(route.symbolic(problem), claim)
        box = parameter_box(claim.parameters)
        # sympy's limit and integrate can run for ever: the numeric side decides then.
        route_side, claim_side = run_limited(
            lambda: (substitute_symbolic(claim.lhs, result, box, notes), substitute_symbolic(claim.rhs, result, box, notes)),
            options.symbolic_budget,
        )
    except OutOfTime:
        message = f"sympy did not finish the claim's calculus within {options.symbolic_budget:g} s"
        notes.append(f"symbolic side unavailable: {message}")
        return result, SymbolicCheck(verdict="unavailable", method=message), None
    except CannotCompute as exc:
        notes.append(f"symbolic side unavailable: {exc}")
        return result, SymbolicCheck(verdict="unavailable", method=str(exc)), None
    check = compare.symbolic_verdict(
        route_side, claim_side, claim.parameters, time_budget=options.symbolic_budget,
        seed=options.seed, scaling=claim.agreement == "scaling",
    )
    return result, check, (route_side, claim_side)


def _to_claim_units_symbolic(result: SymbolicResult, claim: Claim) -> SymbolicResult:
    if claim.units == "geometric":
        return result
    dim = _dim(claim)
    values = {k: units.to_claim_units(k, v, claim.units, dim) for k, v in result.values.items()}
    functions = {
        k: sympy.Lambda(f.variables, units.to_claim_units(k, f.expr, claim.units, dim)) for k, f in result.functions.items()
    }
    return dataclasses.replace(result, values=values, functions=functions)


def _dim(claim: Claim) -> int:
    return claim.spacetime.metric.dim if claim.spacetime is not None else 4


# -- numeric side ------------------------------------------------------------------------------
def _numeric_side(claim, route, problem, options, notes):
    points = compare.sample_points(claim.parameters, options.samples, options.seed)
    first: list[NumericResult] = []  # the first point's result, kept for evidence and provenance

    def provider(point):
        result = _to_claim_units_numeric(route.numeric(problem, point, options.digits), claim)
        if not first:
            first.append(result)
        return result

    evaluator = NumericEvaluator(provider, options.digits)
    route_values, claim_values, used = [], [], []
    with mpmath.workdps(options.digits + 10):
        for point in points:
            numeric_point = compare.mp_point(point)
            try:
                route_values.append(evaluator.evaluate(claim.lhs, numeric_point))
                claim_values.append(evaluator.evaluate(claim.rhs, numeric_point))
            except CannotCompute as exc:
                notes.append(f"numeric side unavailable: {exc}")
                return (), None, points, None
            used.append(point)
    rows = compare.numeric_rows(used, route_values, claim_values, claim.tolerance, scaling=claim.agreement == "scaling")
    return rows, (first[0] if first else None), used, (route_values, claim_values)


def _to_claim_units_numeric(result: NumericResult, claim: Claim) -> NumericResult:
    if claim.units == "geometric":
        return result
    dim = _dim(claim)

    def convert(name: str, m: Measured) -> Measured:
        factor = units.to_claim_units(name, mpmath.mpf(1), claim.units, dim)
        return Measured(m.value * factor, m.error * abs(factor))

    values = {k: convert(k, m) for k, m in result.values.items()}
    functions = {k: (lambda r, f=f, k=k: convert(k, f(r))) for k, f in result.functions.items()}
    return dataclasses.replace(result, values=values, functions=functions)


# -- diagnosis ---------------------------------------------------------------------------------
def _diagnose(claim, sides, points, numeric_values, options) -> Diagnosis | None:
    """Diagnose from high-precision values: the closed forms if any, else the numbers."""
    if not points:
        return None
    route_values, claim_values = _diagnosis_values(sides, points, numeric_values, options.digits)
    if route_values is None:
        return None
    candidates = suspicious_factors(claim, points, options.digits)
    return compare.diagnose(points, route_values, claim_values, claim.parameters, candidates=candidates,
                            digits=options.digits, relative_error=_relative_error(sides, numeric_values))


def _relative_error(sides, numeric_values) -> float:
    """The route values' largest relative error when the diagnosis uses them (no closed forms)."""
    if sides is not None or numeric_values is None:
        return 0.0
    errors = [float(m.error / abs(m.value)) for m in numeric_values[0] if m.value != 0]
    return max(errors, default=0.0)


def _diagnosis_values(sides, points, numeric_values, digits):
    if sides is not None:
        try:
            with mpmath.workdps(digits + 10):
                route = [_evalf(sides[0], p, digits) for p in points]
                claim = [_evalf(sides[1], p, digits) for p in points]
            return route, claim
        except (TypeError, ValueError, ArithmeticError):
            pass
    if numeric_values is None:
        return None, None
    return [m.value for m in numeric_values[0]], [m.value for m in numeric_values[1]]


def _evalf(expr: sympy.Expr, point, digits: int):
    value = expr.evalf(digits + 10, subs=dict(point))
    if value.is_real:
        return mpmath.mpf(sympy.Float(value, digits + 10)._mpf_)
    return mpmath.mpc(complex(value))


def _plain(evidence: Mapping[str, object]) -> dict[str, object]:
    """Evidence as JSON-friendly data (floats, strings, lists of them)."""

    def clean(value):
        if isinstance(value, (str, int, float, bool)) or value is None:
            return value
        if isinstance(value, (list, tuple)):
            return [clean(v) for v in value]
        if isinstance(value, dict):
            return {str(k): clean(v) for k, v in value.items()}
        try:
            return float(value)
        except (TypeError, ValueError):
            return str(value)

    return {str(k): clean(v) for k, v in evidence.items()}
