"""Deciding agreement between a claim and a route (DESIGN.md section 5).

Four verdicts, never a bare `simplify(...) == 0` (PITFALLS.md): *proved* (a
canonical form, `simplify` last, gives exactly 0 within a time limit),
*consistent* (equal to nearly the working precision at points spread over
the ranges, ends included), *disproved* (different at a point, reproduced
with 20 more digits), *inconclusive* (anything else; never a pass).
Numeric rows compare route numbers with their error estimates; the
statuses fold it all into words.  The proof attempts live in
`crosscheck.proofs`; `diagnose` is re-exported from `crosscheck.diagnose` so
the runner needs only this module.
"""

from __future__ import annotations

import random
import time
from collections.abc import Mapping, Sequence
from fractions import Fraction
from itertools import islice

import mpmath
import sympy

from crosscheck.claim import Parameter
from crosscheck.diagnose import diagnose
from crosscheck.measure import Measured
from crosscheck.mpfunctions import MPMATH_FUNCTIONS
from crosscheck.proofs import prove_zero
from crosscheck.results import NumericRow, RouteOutcome, SymbolicCheck
from crosscheck.timebox import run_limited

__all__ = ["sample_points", "symbolic_verdict", "numeric_rows", "route_status", "claim_status", "diagnose"]

#: Points keep this fraction of the width from each end (ends may be degenerate).
END_OFFSET = Fraction(1, 10**6)
DIFFERENT = 1e-12  # relative difference above which two sides differ
SCREEN_DIGITS = 30  # precision of the quick look before proof attempts
SCREEN_DIFFERENT = 1e-8  # a difference this large at 30 digits is no rounding
MAX_TEXT = 2000  # SymbolicCheck text fields are cut to this length


class _OutOfTime(BaseException):
    """Our own limit ran out (a caller's limit raises its own exception and propagates)."""


def _run_limited(func, seconds: float):
    return run_limited(func, seconds, exception=_OutOfTime)


def _rational(value: object) -> Fraction:
    """Exact Fraction for a range end (sympy Rational, int, float or Fraction)."""
    if isinstance(value, sympy.Rational):
        return Fraction(int(value.p), int(value.q))
    if isinstance(value, float):
        # repr gives the shortest decimal that round-trips: 0.95 means 19/20.
        return Fraction(repr(value))
    return Fraction(value)  # type: ignore[arg-type]


def _strata(lo: Fraction, hi: Fraction, n: int) -> list[Fraction]:
    """n values from lo to hi at u = k/(n-1), each pulled in by END_OFFSET*(hi-lo)."""
    if lo == hi:
        return [lo] * n
    if n == 1:
        return [(lo + hi) / 2]
    # u has denominator (n-1)*10**6, so the values stay exact and short.
    return [lo + (hi - lo) * (END_OFFSET + Fraction(k, n - 1) * (1 - 2 * END_OFFSET)) for k in range(n)]


def mp_point(point: Mapping[sympy.Symbol, sympy.Rational]) -> dict[sympy.Symbol, mpmath.mpf]:
    """A sample point as mpmath numbers at the current precision (exact p/q division)."""
    return {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}


def sample_points(
    parameters: Sequence[Parameter], n: int = 5, seed: int = 0
) -> list[dict[sympy.Symbol, sympy.Rational]]:
    """n reproducible points spread over the parameter box, Latin-hypercube style.

    Each parameter takes its n stratum values once, in an order drawn per
    parameter from random.Random(seed): every parameter is sampled near both
    ends (a tiny box gives false positives, e.g. sqrt(x**2) vs x).
    """
    if n < 1:
        raise ValueError(f"sample_points: n must be >= 1, got {n}")
    rng = random.Random(seed)
    columns = []
    for parameter in parameters:
        values = _strata(_rational(parameter.lo), _rational(parameter.hi), n)
        rng.shuffle(values)
        columns.append(values)
    return [
        {p.symbol: sympy.Rational(col[k].numerator, col[k].denominator) for p, col in zip(parameters, columns)}
        for k in range(n)
    ]


def _assumed_symbol(parameter: Parameter) -> sympy.Symbol:
    """The parameter's symbol with the assumptions its range implies (always real)."""
    lo, hi = _rational(parameter.lo), _rational(parameter.hi)
    sign = "positive" if lo > 0 else "nonnegative" if lo == 0 else "negative" if hi < 0 else "nonpositive" if hi == 0 else None
    return sympy.Symbol(parameter.name, real=True, **({sign: True} if sign else {}))


def _as_expr(value: object) -> sympy.Expr:
    """A sympy expression from a sympy object or a Python number (text is refused)."""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return sympy.Float(value) if isinstance(value, float) else sympy.Integer(value)
    if not isinstance(value, sympy.Basic):
        raise TypeError(f"expected a sympy expression or a number, got {type(value).__name__}")
    return value


def _with_assumptions(
    exprs: Sequence[sympy.Expr], parameters: Sequence[Parameter]
) -> tuple[list[sympy.Expr], dict[str, sympy.Symbol]]:
    """Parameter symbols -> symbols with range assumptions, matched by name (so a
    route's own Symbol('M', positive=True) still meets the claim's M)."""
    by_name = {p.name: _assumed_symbol(p) for p in parameters}
    replaced = []
    for expr in exprs:
        expr = _as_expr(expr)
        mapping = {s: by_name[s.name] for s in expr.free_symbols if getattr(s, "name", None) in by_name}
        replaced.append(expr.xreplace(mapping))
    return replaced, by_name


def _mp_value(expr: sympy.Expr, values: Mapping[sympy.Symbol, object], memo: dict, digits: int):
    """expr at the current mpmath precision, walking the tree (no code generation):
    much faster than evalf(subs=...), shared subtrees once; other nodes use evalf."""
    if expr in memo:
        return memo[expr]
    if expr.is_Symbol:
        value = mpmath.mpmathify(values[expr])
    elif expr.is_Rational:
        value = mpmath.mpf(int(expr.p)) / int(expr.q)
    elif expr.is_Float or expr.is_NumberSymbol or expr is sympy.I:
        value = mpmath.mpmathify(expr.evalf(digits + 10))
    elif expr.is_Add:
        value = mpmath.fsum(_mp_value(a, values, memo, digits) for a in expr.args)
    elif expr.is_Mul:
        value = mpmath.fprod(_mp_value(a, values, memo, digits) for a in expr.args)
    elif expr.is_Pow:
        base = _mp_value(expr.base, values, memo, digits)
        exponent = expr.exp
        if exponent == sympy.S.Half:
            value = mpmath.sqrt(base)
        elif exponent.is_Integer:
            value = base ** int(exponent)
        else:
            value = mpmath.power(base, _mp_value(exponent, values, memo, digits))
    elif expr.func in MPMATH_FUNCTIONS and len(expr.args) == 1:
        value = MPMATH_FUNCTIONS[expr.func](_mp_value(expr.args[0], values, memo, digits))
    elif expr.func in (sympy.Min, sympy.Max):
        args = [_mp_value(a, values, memo, digits) for a in expr.args]
        value = min(args) if expr.func is sympy.Min else max(args)
    else:
        subs = {s: values[s] for s in expr.free_symbols if s in values}
        value = mpmath.mpmathify(expr.evalf(digits + 10, subs=subs))
    memo[expr] = value
    return value


def _evaluate(expr: sympy.Expr, point: Mapping[sympy.Symbol, sympy.Rational], digits: int):
    """expr at point as a real mpmath number (digits + 10 working digits), or a reason string."""
    with mpmath.workdps(digits + 10):
        try:
            value = _mp_value(expr, point, {}, digits)
        except ZeroDivisionError:
            return "division by zero"
        except (ValueError, TypeError, OverflowError, KeyError) as exc:
            return f"not a number ({type(exc).__name__})"
        if isinstance(value, mpmath.mpc):
            if abs(value.imag) > mpmath.mpf(10) ** (-0.8 * digits) * max(abs(value.real), mpmath.mpf(1)):
                return "complex value"
            value = value.real
        if not isinstance(value, mpmath.mpf) or not mpmath.isfinite(value):
            return "infinite or undefined"
        return value


def _relative(a, b) -> mpmath.mpf:
    """|a - b| / max(|a|, |b|); 0 when both vanish."""
    scale = max(abs(a), abs(b))
    return abs(a - b) / scale if scale != 0 else mpmath.mpf(0)


def _point_text(point: Mapping[sympy.Symbol, object], digits: int = 15) -> dict[str, str]:
    with mpmath.workdps(max(digits, 15) + 5):
        return {str(s): mpmath.nstr(mpmath.mpmathify(v), digits) for s, v in point.items()}


def _point_difference(route: sympy.Expr, claim: sympy.Expr, point, reference, digits: int, scaling: bool):
    """(relative difference, ratio) at one point, or a reason string.  Scaling
    compares route/claim with `reference`, the first good point's ratio."""
    r, c = _evaluate(route, point, digits), _evaluate(claim, point, digits)
    if isinstance(r, str) or isinstance(c, str):
        return f"route side {r}" if isinstance(r, str) else f"claim side {c}"
    with mpmath.workdps(digits + 10):
        if not scaling:
            return _relative(r, c), None
        if c == 0:
            return "claim side is zero (ratio undefined)"
        ratio = r / c
        return (mpmath.mpf(0) if reference is None else _relative(ratio, reference)), ratio


def _numeric_verdict(route, claim, points, digits: int, scaling: bool, deadline: float, skipped: list[str]):
    """(verdict, method, counterexample) from all points; the counterexample is
    the largest difference reproduced at higher precision (most convincing)."""
    good: list[tuple[mpmath.mpf, dict]] = []
    reference = None
    for point in points:
        try:
            outcome = _run_limited(
                lambda p=point, ref=reference: _point_difference(route, claim, p, ref, digits, scaling),
                deadline - time.monotonic(),
            )
        except _OutOfTime:
            skipped.append(f"evaluation ran out of time after {len(good)} points")
            break
        if isinstance(outcome, str):
            skipped.append(f"{outcome} at {_point_text(point, 6)}")
            continue
        rel, ratio = outcome
        if scaling and reference is None:
            reference = ratio
        good.append((rel, point))
    suspicious = sorted((g for g in good if g[0] > DIFFERENT), key=lambda g: g[0], reverse=True)
    for _, point in suspicious[:3]:
        try:  # reproduce with 20 more digits (allowing 1 s even past the deadline)
            again = _run_limited(
                lambda p=point: _point_difference(route, claim, p, reference, digits + 20, scaling),
                max(deadline - time.monotonic(), 1.0),
            )
        except _OutOfTime:
            again = "out of time"
        if not isinstance(again, str) and again[0] > DIFFERENT:
            what = "route/claim ratio changes by" if scaling else "relative difference"
            method = f"{what} {mpmath.nstr(again[0], 6)} at a sample point, reproduced at {digits + 20} digits"
            return "disproved", method, _point_text(point)
        skipped.append(f"difference at {_point_text(point, 6)} not reproduced at {digits + 20} digits")
    needed = min(3, len(points))
    if len(good) < needed:
        return "inconclusive", f"numeric evaluation possible at only {len(good)} of {len(points)} points", None
    worst = max(g[0] for g in good)
    if worst < mpmath.mpf(10) ** (-0.8 * digits):
        return "consistent", f"equal to {digits} digits at {len(good)} points", None
    method = f"agree only to relative {mpmath.nstr(worst, 3)} at {len(good)} points ({digits} digits)"
    return "inconclusive", method, None


def _text(expr: sympy.Expr) -> str:
    """sstr cut to MAX_TEXT; large trees skip term ordering (it dominates the time)."""
    large = len(list(islice(sympy.preorder_traversal(expr), 2001))) > 2000
    return _truncate(sympy.sstr(expr, order="none") if large else sympy.sstr(expr))


def _truncate(text: str) -> str:
    return text if len(text) <= MAX_TEXT else text[: MAX_TEXT - 3] + "..."


def _unique_points(parameters: Sequence[Parameter], n: int, seed: int, symbols: Mapping[str, sympy.Symbol]):
    """Sample points plus the range midpoint, keyed by the assumption-carrying symbols."""
    points = sample_points(parameters, n, seed) + sample_points(parameters, 1, seed)
    unique = []
    for point in points:
        keyed = {symbols[p.name]: point[p.symbol] for p in parameters}
        if keyed not in unique:
            unique.append(keyed)
    return unique


def symbolic_verdict(
    route_side: sympy.Expr,
    claim_side: sympy.Expr,
    parameters: Sequence[Parameter],
    *,
    time_budget: float = 10.0,
    digits: int = 50,
    seed: int = 0,
    scaling: bool = False,
) -> SymbolicCheck:
    """Compare two closed forms: proved / consistent / disproved / inconclusive.

    Canonical forms get at most 3/4 of `time_budget`, so a hard `simplify`
    leaves time for the numeric test (8 sample points plus the midpoint).
    scaling=True claims equality up to a constant: the derivatives of
    route/claim by every varying parameter must vanish.
    """
    started = time.monotonic()
    (route, claim), symbols = _with_assumptions([route_side, claim_side], parameters)
    varying = [symbols[p.name] for p in parameters if _rational(p.lo) != _rational(p.hi)]
    if scaling:
        ratio = route / claim
        targets = [sympy.diff(ratio, s) for s in varying]
        difference = ratio
    else:
        difference = route - claim
        targets = [difference]
    texts = {"route_side": _text(route), "claim_side": _text(claim), "difference": _text(difference)}

    if scaling and not varying:
        return SymbolicCheck("proved", "no parameter varies, so the ratio is constant", **texts)
    known = set(symbols.values())
    strays = sorted(str(s) for s in (route.free_symbols | claim.free_symbols) - known)
    points = _unique_points(parameters, 8, seed, symbols)
    notes: list[str] = []
    if not strays and _clearly_different(route, claim, points, scaling, started + 0.25 * time_budget):
        notes.append("the sides differ at a sample point, so no proof was attempted")
    else:
        box = {symbols[p.name]: (_rational(p.lo), _rational(p.hi)) for p in parameters}
        proof, notes = prove_zero(targets, started + 0.75 * time_budget, box)
        if proof is not None:
            what = "d/d(parameters) of route/claim" if scaling else "route - claim"
            return SymbolicCheck("proved", f"{proof}: {what} reduces to 0", **texts)
    if strays:
        notes.append("free symbols that are not parameters: " + ", ".join(strays))
        return SymbolicCheck("inconclusive", "; ".join(notes), **texts)
    skipped: list[str] = []
    verdict, method, counterexample = _numeric_verdict(route, claim, points, digits, scaling, started + time_budget, skipped)
    details = notes + skipped
    if details:
        method += " (" + "; ".join(details[:6]) + ("; ..." if len(details) > 6 else "") + ")"
    return SymbolicCheck(verdict, _truncate(method), counterexample=counterexample, **texts)


def _clearly_different(route, claim, points, scaling: bool, deadline: float) -> bool:
    """A cheap look before the proof attempts: at 30 digits, do the sides differ
    (or, for scaling claims, their ratios) by far more than rounding at the first
    two points?  Proof attempts on a wrong claim only burn their budget; the
    numeric verdict then decides and reproduces the difference at higher
    precision, so a wrong guess here costs time, never a verdict."""
    try:
        outcomes = _run_limited(
            lambda: [_point_difference(route, claim, p, None, SCREEN_DIGITS, scaling) for p in points[:2]],
            deadline - time.monotonic(),
        )
    except _OutOfTime:
        return False
    values = [o for o in outcomes if not isinstance(o, str)]
    if scaling:
        ratios = [ratio for _, ratio in values]
        return len(ratios) == 2 and _relative(ratios[0], ratios[1]) > SCREEN_DIFFERENT
    return any(rel > SCREEN_DIFFERENT for rel, _ in values)


def _float(x) -> float:
    """A real float for reports (NaN becomes inf so it can never look like agreement)."""
    value = float(mpmath.re(x))
    return float("inf") if value != value else value


def numeric_rows(
    points: Sequence[Mapping[sympy.Symbol, object]],
    route_side: Sequence[Measured],
    claim_side: Sequence[Measured],
    tolerance: float,
    *,
    scaling: bool = False,
) -> tuple[NumericRow, ...]:
    """One NumericRow per point: agree when rel_diff <= max(tolerance, error).

    error is (err_route + err_claim) / max(|route|, |claim|); for scaling
    (route/claim compared with the first point's) the sum of the relative
    errors of both ratios.
    """
    if not (len(points) == len(route_side) == len(claim_side)):
        raise ValueError(f"numeric_rows: {len(points)} points, {len(route_side)}/{len(claim_side)} values")
    rows = []
    with mpmath.workdps(60):
        reference = None
        reference_error = mpmath.mpf(0)
        for point, r, c in zip(points, route_side, claim_side):
            if scaling:
                ratio = r.value / c.value if c.value != 0 else mpmath.nan
                ratio_error = r.relative_error() + c.relative_error()
                if reference is None:
                    reference, reference_error = ratio, ratio_error
                rel = _relative(ratio, reference)
                error = ratio_error + reference_error
            else:
                rel = _relative(r.value, c.value)
                scale = max(abs(r.value), abs(c.value))
                total = r.error + c.error
                error = (total / scale) if scale != 0 else (mpmath.mpf(0) if total == 0 else mpmath.inf)
            rel_f, error_f = _float(rel), _float(error)
            bound = max(float(tolerance), error_f)
            rows.append(NumericRow(_point_text(point, 12), _float(r.value), _float(c.value), rel_f, error_f, bound, rel_f <= bound))
    return tuple(rows)


def _numeric_summary(rows: Sequence[NumericRow]) -> str:
    worst = max(r.rel_diff for r in rows)
    return f"numeric agreement at {len(rows)} points (largest relative difference {worst:.2g})"


def route_status(symbolic: SymbolicCheck | None, rows: Sequence[NumericRow]) -> tuple[str, str]:
    """(status, reason) of one route from its symbolic check and numeric rows."""
    if symbolic is not None and symbolic.verdict == "disproved":
        where = ", ".join(f"{k}={v}" for k, v in (symbolic.counterexample or {}).items())
        return "disagree", f"symbolic: the sides differ at {where or 'a sample point'} ({symbolic.method})"
    failing = [r for r in rows if not r.agree]
    if failing:
        worst = max(failing, key=lambda r: r.rel_diff)
        where = ", ".join(f"{k}={v}" for k, v in worst.point.items())
        return "disagree", (
            f"numeric: {len(failing)} of {len(rows)} points differ; largest relative difference "
            f"{worst.rel_diff:.3g} exceeds the bound {worst.bound:.3g} at {where or 'the point'}"
        )
    verdict = symbolic.verdict if symbolic is not None else "unavailable"
    said = f"symbolic: {verdict}" + (f" ({symbolic.method})" if symbolic is not None and symbolic.method else "")
    if verdict in ("proved", "consistent"):
        return "agree", f"{said}; " + (_numeric_summary(rows) if rows else "no numeric rows")
    if rows and verdict == "inconclusive":
        return "agree", f"numeric evidence only: {_numeric_summary(rows)}; {said}"
    if rows:
        return "agree", f"{_numeric_summary(rows)}; no symbolic comparison"
    return "inconclusive", f"{said}; no numeric rows"


DIMENSION_CHECK = "dimensions"


def claim_status(outcomes: Sequence[RouteOutcome]) -> str:
    """Claim status (DESIGN.md section 5): an exact-grade disagreement (the
    dimension check included) contradicts; two agreeing exact routes confirm;
    otherwise any agreeing route makes it weak.  The dimension check never
    counts as coverage: it says nothing about the value."""
    if any(o.grade == "exact" and o.status == "disagree" for o in outcomes):
        return "contradicted"
    agreeing = [o for o in outcomes if o.status == "agree" and o.route != DIMENSION_CHECK]
    if sum(1 for o in agreeing if o.grade == "exact") >= 2:
        return "confirmed"
    if agreeing:
        return "weak"
    return "unchecked"
