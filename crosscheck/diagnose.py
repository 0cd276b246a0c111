"""Why a claim and a route disagree: sign, factor, normalisation, power, offset.

Most wrong horizon results are wrong in a recognisable way: a factor 2 (the
naive tunneling count), 2*pi or 4*pi (period versus frequency, area versus
radius), a sign, a missing Killing normalisation, a wrong power of the mass.
`diagnose` looks at the claim and route values at the sample points and
tests those shapes in a fixed order, so the first simple explanation wins.

Constants are identified only among a short list of expected factors (small
rationals times powers of pi, sqrt(2), sqrt(3)) and confirmed at working
precision: `mpmath.identify` on a generic list finds nonsense at low
precision and evaluates strings (PITFALLS.md), so it is not used.
"""

from __future__ import annotations

import contextvars
from collections.abc import Mapping, Sequence
from fractions import Fraction
from functools import lru_cache
from math import gcd, pi, sqrt

import mpmath
import sympy

from crosscheck.claim import Parameter
from crosscheck.results import Diagnosis

#: Ratios (or offsets) equal within this relative spread count as constant.
CONSTANT = 1e-8
#: An identified constant must match every ratio this closely.
CONFIRM = 1e-10
#: Least-squares residual (in log space) below which a power law is accepted.
POWER_RESIDUAL = 1e-8
#: A fitted exponent must be this close to a rational with denominator <= 6.
EXPONENT_SNAP = 1e-6
#: The route's own relative error (times 10) while a diagnosis runs: values known to 1e-7
#: (a fitted temperature) cannot show a ratio constant to 1e-8.  Set by `diagnose`.
_SLACK: contextvars.ContextVar[float] = contextvars.ContextVar("diagnosis_slack", default=0.0)


def _constant_tolerance() -> float:
    return max(CONSTANT, _SLACK.get())


def _confirm_tolerance() -> float:
    return max(CONFIRM, _SLACK.get())


def _power_tolerance() -> float:
    return max(POWER_RESIDUAL, _SLACK.get())


def _mp(value: object):
    """An mpmath number from an mpmath/sympy/Python number or a Measured."""
    value = getattr(value, "value", value)  # a Measured carries its number in .value
    return mpmath.mpmathify(value)


def _real(values: Sequence) -> list | None:
    """Real parts when every imaginary part is negligible, else None."""
    out = []
    for v in values:
        if isinstance(v, mpmath.mpc):
            if abs(v.imag) > mpmath.mpf(10) ** (-0.8 * mpmath.mp.dps) * max(abs(v.real), 1):
                return None
            v = v.real
        out.append(v)
    return out


def _spread(values: Sequence) -> mpmath.mpf:
    """Largest relative deviation of the values from the first one."""
    first = values[0]
    scale = abs(first)
    if scale == 0:
        return mpmath.mpf(0) if all(v == 0 for v in values) else mpmath.inf
    return max(abs(v - first) for v in values) / scale


def _all_close(a: Sequence, b: Sequence, tolerance: float) -> bool:
    for x, y in zip(a, b):
        scale = max(abs(x), abs(y))
        if scale != 0 and abs(x - y) > tolerance * scale:
            return False
    return True


# ---------------------------------------------------------------- constants


@lru_cache(maxsize=1)
def _constant_table() -> tuple[tuple[float, int, int, int, int, int], ...]:
    """(value, p, q, k, j2, j3) for p/q * pi**k * sqrt(2)**j2 * sqrt(3)**j3, simplest first."""
    entries = []
    for q in range(1, 13):
        for p in range(-12, 13):
            if p == 0 or gcd(p, q) != 1:
                continue
            for k in range(-3, 4):
                for j2 in (-1, 0, 1):
                    for j3 in (-1, 0, 1):
                        value = p / q * pi**k * sqrt(2) ** j2 * sqrt(3) ** j3
                        irrational = (k != 0) + (j2 != 0) + (j3 != 0)
                        cost = (irrational, abs(k) + abs(j2) + abs(j3), max(abs(p), q), p < 0)
                        entries.append((cost, value, p, q, k, j2, j3))
    entries.sort()
    return tuple(entry[1:] for entry in entries)


def _constant_value(p: int, q: int, k: int, j2: int, j3: int):
    return mpmath.mpf(p) / q * mpmath.pi**k * mpmath.sqrt(2) ** j2 * mpmath.sqrt(3) ** j3


def _constant_text(p: int, q: int, k: int, j2: int, j3: int) -> str:
    expr = sympy.Rational(p, q) * sympy.pi**k * sympy.sqrt(2) ** j2 * sympy.sqrt(3) ** j3
    return sympy.sstr(expr)


def identify_constant(values: Sequence) -> str | None:
    """Text of the simplest expected constant matching every value to CONFIRM, or None."""
    reals = _real([_mp(v) for v in values])
    if not reals or any(v == 0 for v in reals):
        return None
    try:
        target = float(reals[0])
    except OverflowError:
        return None
    for value, p, q, k, j2, j3 in _constant_table():
        if abs(value - target) <= _confirm_tolerance() * abs(target):
            exact = _constant_value(p, q, k, j2, j3)
            if all(abs(v - exact) <= _confirm_tolerance() * abs(exact) for v in reals):
                return _constant_text(p, q, k, j2, j3)
    return None


# --------------------------------------------------------------- power law


def _exponent_text(k: Fraction) -> str:
    return str(k.numerator) if k.denominator == 1 else f"{k.numerator}/{k.denominator}"


def _power_term(name: str, k: Fraction) -> str:
    text = _exponent_text(k)
    return f"{name}^{text}" if k.denominator == 1 else f"{name}^({text})"


def _parameter_columns(points, parameters: Sequence[Parameter]) -> dict[str, list]:
    """name -> values at the points, for parameters that vary and are > 0 everywhere."""
    columns = {}
    for parameter in parameters:
        values = []
        for point in points:
            by_name = {str(key): val for key, val in point.items()}
            if parameter.name not in by_name:
                break
            values.append(_mp(by_name[parameter.name]))
        else:
            reals = _real(values)
            if reals and all(v > 0 for v in reals) and _spread(reals) > _constant_tolerance():
                columns[parameter.name] = reals
    return columns


def _fit_power(ratios: list, columns: dict[str, list]) -> tuple[dict[str, Fraction], mpmath.mpf] | None:
    """Exponents k_i and constant C with ratio = C * prod p_i**k_i, or None."""
    names = list(columns)
    unknowns = 1 + len(names)
    if not names or len(ratios) <= unknowns:
        return None
    signs = {v > 0 for v in ratios}
    if len(signs) != 1:
        return None
    a = mpmath.matrix(len(ratios), unknowns)
    b = mpmath.matrix(len(ratios), 1)
    for row, ratio in enumerate(ratios):
        a[row, 0] = 1
        for col, name in enumerate(names, start=1):
            a[row, col] = mpmath.log(columns[name][row])
        b[row] = mpmath.log(abs(ratio))
    singular = mpmath.svd_r(a, compute_uv=False)
    if min(singular) <= mpmath.mpf(1e-12) * max(singular):
        return None  # the sample points cannot separate the parameters' powers
    solution, residual = mpmath.qr_solve(a, b)
    if residual >= _power_tolerance():
        return None
    exponents = {}
    for col, name in enumerate(names, start=1):
        k = solution[col]
        snapped = Fraction(float(k)).limit_denominator(6)
        if abs(k - mpmath.mpf(snapped.numerator) / snapped.denominator) > EXPONENT_SNAP:
            return None
        if snapped != 0:
            exponents[name] = snapped
    if not exponents:
        return None
    sign = 1 if signs.pop() else -1
    return exponents, sign * mpmath.exp(solution[0])


# ----------------------------------------------------------------- diagnose


def _candidate_match(ratios: list, candidates: Mapping[str, list], constant: bool) -> tuple[str, bool] | None:
    """(name, inverted) of the first candidate whose values (or inverses) equal the ratios."""
    for name, values in candidates.items():
        if (_spread(values) <= _constant_tolerance()) != constant or any(v == 0 for v in values):
            continue
        if _all_close(ratios, values, _constant_tolerance()):
            return name, False
        if _all_close(ratios, [1 / v for v in values], _constant_tolerance()):
            return name, True
    return None


class Suspect(list):
    """Per-point values of a suspicious factor, with the kind of mistake it stands for.

    A plain sequence of values in `diagnose(candidates=...)` is a Killing
    normalisation suspect named by its factor (the original meaning); a
    `Suspect` says what else it is -- kind 'horizon' for "the claim is the same
    quantity at another horizon", kind 'choice' for another normalisation whose
    name is the whole sentence -- so that the diagnosis names the mistake
    instead of calling every non-constant ratio a normalisation.
    """

    def __init__(self, values: Sequence, kind: str = "normalization") -> None:
        super().__init__(values)
        self.kind = kind


def _suspect(match: tuple[str, bool], kinds: Mapping[str, str]) -> Diagnosis:
    """The diagnosis for a matching candidate, worded by its kind."""
    name, inverted = match
    if kinds.get(name) == "horizon":
        if inverted:  # the route, not the claim, is at the other horizon: still worth saying
            text = f"wrong horizon: route/claim (not claim/route) is the ratio of the quantity at two horizons ({name})"
            return Diagnosis("horizon", text)
        text = f"wrong horizon: {name}: claim/route is the ratio of the quantity at the two horizons at every point"
        return Diagnosis("horizon", text)
    if kinds.get(name) == "constant":
        factor = f"1/({name})" if inverted else name
        text = f"constant factor {factor}: the claim is {factor} times the route's value (an SI constant lost or doubled?)"
        return Diagnosis("factor", text, factor=factor)
    if kinds.get(name) == "choice":  # the name is already the sentence saying which choice
        which = "route/claim (not claim/route)" if inverted else "claim/route"
        return Diagnosis("normalization", f"{name}: {which} is the ratio of the two normalisation factors at every point")
    return _normalization(match)


def _normalization(match: tuple[str, bool]) -> Diagnosis:
    name, inverted = match
    if inverted:
        text = f"normalisation: the ratio claim/route is 1/({name}) at every point; the route is {name} times the claim"
        return Diagnosis("normalization", text, factor=f"1/({name})")
    text = f"normalisation: the ratio claim/route is {name} at every point; the claim is {name} times the route's value"
    return Diagnosis("normalization", text, factor=name)


def _constant_factor(ratios: list, candidates: Mapping[str, list], kinds: Mapping[str, str]) -> Diagnosis:
    known = identify_constant(ratios)
    match = _candidate_match(ratios, candidates, constant=True)
    if known is not None:
        text = f"constant factor {known}: the claim is {known} times the route's value (claim/route = {known})"
        if match is not None:
            text += f" (the expected suspect '{match[0]}')"
        return Diagnosis("factor", text, factor=known)
    if match is not None:
        return _suspect(match, kinds)
    value = mpmath.nstr(ratios[0], 12)
    return Diagnosis("factor", f"constant factor {value} (not a simple multiple of pi, sqrt(2), sqrt(3))", factor=value)


def _power(fit: tuple[dict[str, Fraction], mpmath.mpf]) -> Diagnosis:
    exponents, constant = fit
    law = " * ".join(_power_term(name, k) for name, k in exponents.items())
    text = f"wrong power: claim/route scales as {law}"
    known = identify_constant([constant])
    if known is not None and known != "1":
        text += f" (claim/route = {known} * {law})"
    return Diagnosis(
        "power",
        text,
        factor=known,
        exponents={name: _exponent_text(k) for name, k in exponents.items()},
    )


def _edge_hint(ratios: list, points, parameters: Sequence[Parameter]) -> str:
    """Where the two sides meet only at one end of a parameter's range, say so.

    The classic case: a formula for the uncharged hole used for a charged one
    agrees at q = 0 and drifts away as q grows -- a dependence the claim lacks.
    """
    ones = [abs(r - 1) <= _constant_tolerance() for r in ratios]
    if all(ones) or not any(ones):
        return ""
    for parameter in parameters:
        width = _mp(parameter.hi) - _mp(parameter.lo)
        for end, label in ((parameter.lo, "lower"), (parameter.hi, "upper")):
            near = [abs(_mp(_value_of(point, parameter.name)) - _mp(end)) <= width * mpmath.mpf("1e-4") for point in points]
            if any(near) and all(one for one, close in zip(ones, near) if close) and not all(
                one for one, close in zip(ones, near) if not close
            ):
                return (f"; they agree only where {parameter.name} is at the {label} end of its range "
                        f"({parameter.name} = {end}): the claim may miss a dependence on {parameter.name}")
    return ""


def _value_of(point, name: str):
    return next(value for key, value in point.items() if str(key) == name)


def _unidentified(ratios: list | None, offsets: list, hint: str = "") -> Diagnosis:
    if ratios is not None:
        values = _real(ratios)
        if values is not None:
            lo, hi = mpmath.nstr(min(values), 8), mpmath.nstr(max(values), 8)
            return Diagnosis("unidentified", f"no simple pattern: the ratio claim/route ranges from {lo} to {hi}{hint}")
    values = _real(offsets) or [abs(v) for v in offsets]
    lo, hi = mpmath.nstr(min(values), 8), mpmath.nstr(max(values), 8)
    return Diagnosis("unidentified", f"no simple pattern: claim - route ranges from {lo} to {hi} (ratio undefined)")


def diagnose(
    points: Sequence[Mapping[sympy.Symbol, object]],
    route_values: Sequence,
    claim_values: Sequence,
    parameters: Sequence[Parameter],
    *,
    candidates: Mapping[str, Sequence] | None = None,
    digits: int = 30,
    relative_error: float = 0.0,
) -> Diagnosis:
    """Explain a disagreement from the two sides' values at the sample points.

    Order (first match wins): sign flip; non-constant `candidates` (known
    suspicious factors such as a Killing normalisation or the same quantity
    at another horizon, name -> values at the points; a `Suspect` carries its
    kind, plain sequences are normalisations); a constant ratio, identified among simple constants (constant
    candidates named when they match); a power law in the varying positive
    parameters; an additive offset; otherwise 'unidentified' with the range
    of the ratio.  `relative_error` is the route values' own relative error:
    the tolerances widen to ten times it, so a fitted value is still recognised.
    """
    token = _SLACK.set(10 * float(relative_error))
    try:
        return _diagnose(points, route_values, claim_values, parameters, candidates, digits)
    finally:
        _SLACK.reset(token)


def _diagnose(points, route_values, claim_values, parameters, candidates, digits) -> Diagnosis:
    """`diagnose` with the tolerances already set."""
    if not (len(points) == len(route_values) == len(claim_values)) or not points:
        raise ValueError(
            f"diagnose: need equally many (> 0) points and values, got {len(points)}, "
            f"{len(route_values)}, {len(claim_values)}"
        )
    with mpmath.workdps(digits):
        route = [_mp(v) for v in route_values]
        claim = [_mp(v) for v in claim_values]
        suspects, kinds = {}, {}
        for name, values in (candidates or {}).items():
            if len(values) != len(points):
                raise ValueError(f"diagnose: candidate {name!r} has {len(values)} values for {len(points)} points")
            suspects[name] = [_mp(v) for v in values]
            kinds[name] = getattr(values, "kind", "normalization")
        offsets = [c - r for c, r in zip(claim, route)]
        ratios = None if any(r == 0 for r in route) else [c / r for c, r in zip(claim, route)]
        if ratios is not None:
            if _all_close(ratios, [-1] * len(ratios), _constant_tolerance()):
                return Diagnosis("sign", "sign flip: the claim is minus the route's value", factor="-1")
            match = _candidate_match(ratios, suspects, constant=False)
            if match is not None:
                return _suspect(match, kinds)
            if _spread(ratios) <= _constant_tolerance():
                return _constant_factor(ratios, suspects, kinds)
            reals = _real(ratios)
            if reals is not None:
                fit = _fit_power(reals, _parameter_columns(points, parameters))
                if fit is not None:
                    return _power(fit)
        if offsets[0] != 0 and _spread(offsets) <= _constant_tolerance():
            known = identify_constant(offsets)
            value = known if known is not None else mpmath.nstr(offsets[0], 12)
            return Diagnosis("offset", f"additive offset: claim - route = {value} at every point", factor=value)
        hint = _edge_hint(_real(ratios), points, parameters) if ratios is not None and _real(ratios) else ""
        return _unidentified(ratios, offsets, hint)
