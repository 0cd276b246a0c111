"""Suspicious factors the diagnosis should recognise beyond plain constants.

A wrong Killing normalisation gives a ratio claim/route that is not a
constant but sqrt(F(r0)) at each parameter point.  This module computes, for
a claim, the per-point values of such factors -- the ratio between the
claim's normalisation and each alternative one -- so that `compare.diagnose`
can name them.  It uses the spacetime package's normalisation, an input of
the claim, never any route's result.

A claim for the wrong horizon (the inner horizon of a charged hole, the
cosmological instead of the black-hole horizon) gives the ratio
Q(r_other)/Q(r_h) of the same quantity at two zeros of the Killing norm.
`_horizons` evaluates the claim's left side with the elementary static
horizon formulas (kappa = N sqrt(|F'G'|)/2, A = Omega_n R^n, S = A/4, r_h)
at every other positive root and divides by its value at the chosen one.
Those formulas only *propose* an explanation: `diagnose` accepts it only
when the ratio matches at every sample point to 1e-8, and the verdict is
still the routes' own.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping, Sequence

import mpmath
import sympy

from crosscheck.claim import Claim
from crosscheck.compare import mp_point
from crosscheck.diagnose import Suspect
from crosscheck.errors import CannotCompute
from crosscheck.evaluate import NumericEvaluator
from crosscheck.measure import Measured
from crosscheck.observables import mentioned_observables
from crosscheck.routes.base import NumericResult
from crosscheck.spacetimes.base import Normalization, Spacetime
from crosscheck.spacetimes.evaluation import real_function
from crosscheck.spacetimes.horizon import equatorial, horizon_radius_numeric, killing_norm, positive_roots_numeric
from crosscheck.spacetimes.normalize import normalization_factor_numeric
from crosscheck.units import SI_CONSTANTS

#: Observables the wrong-horizon suspect can evaluate at another horizon.
_AT_A_HORIZON = frozenset({"T", "kappa", "r_h", "A", "S"})

_ALTERNATIVES = {
    "as-written": Normalization("as-written"),
    "geodesic": Normalization("geodesic"),
}


#: Recent suspect tables, keyed by what they depend on (the claim's inputs, never its
#: value): a mutation audit diagnoses many variants of one claim at the same points.
_RECENT: dict[tuple, dict[str, list]] = {}
_RECENT_SIZE = 64


def suspicious_factors(
    claim: Claim, points: Sequence[Mapping[sympy.Symbol, sympy.Rational]], digits: int
) -> dict[str, list]:
    """name -> per-point factor by which the claim would differ if it used that choice
    (another Killing normalisation, or another horizon of the same metric)."""
    key = (claim.spacetime, claim.lhs, bool(mentioned_observables(claim.rhs)), claim.observables, claim.units,
           tuple(tuple(sorted((str(s), v) for s, v in p.items())) for p in points), digits)
    if key not in _RECENT:
        if len(_RECENT) >= _RECENT_SIZE:
            _RECENT.pop(next(iter(_RECENT)))
        _RECENT[key] = _suspicious_factors(claim, points, digits)
    return dict(_RECENT[key])


def _suspicious_factors(claim: Claim, points, digits: int) -> dict[str, list]:
    spacetime = claim.spacetime
    if spacetime is None:
        return {}
    candidates: dict[str, list] = dict(_horizons(claim, points, digits))
    if claim.units == "si":
        candidates.update(_si_constants(len(points), digits))
    if not claim.observables & {"T", "kappa", "T_loc"}:
        return candidates
    ours = spacetime.normalization
    for label, alternative in _ALTERNATIVES.items():
        if alternative.kind == ours.kind:
            continue
        factors = _ratios(spacetime, alternative, points, digits)
        if factors is not None:
            name = f"Killing normalisation: the claim uses the {label} normalisation, not {_describe(ours)}"
            candidates[name] = Suspect(factors, "choice")
    return candidates


#: SI constants (and the products that convert between kappa, T and energies) that a
#: derivation in SI units drops or doubles; "constant factor 1.38e-23" helps nobody.
_SI_SUSPECTS = {
    "k_B": ("k_B",), "c": ("c",), "c^2": ("c", "c"), "c^3": ("c", "c", "c"), "hbar": ("hbar",),
    "G": ("G",), "hbar/k_B": ("hbar", "/k_B"), "hbar*c/k_B": ("hbar", "c", "/k_B"),
}


def _si_constants(count: int, digits: int) -> dict[str, Suspect]:
    """name -> the constant at every point, for SI claims."""
    suspects = {}
    with mpmath.workdps(digits + 10):
        for name, parts in _SI_SUSPECTS.items():
            value = mpmath.mpf(1)
            for part in parts:
                constant = mpmath.mpf(SI_CONSTANTS[part.lstrip("/")].evalf(digits + 10))
                value = value / constant if part.startswith("/") else value * constant
            suspects[name] = Suspect([value] * count, "constant")
    return suspects


def _ratios(spacetime, alternative: Normalization, points, digits: int) -> list | None:
    other = dataclasses.replace(spacetime, normalization=alternative)
    values = []
    try:
        with mpmath.workdps(digits + 10):
            for point in points:
                numeric = mp_point(point)
                mine = normalization_factor_numeric(spacetime, numeric, digits).value
                theirs = normalization_factor_numeric(other, numeric, digits).value
                values.append(theirs / mine)
    except Exception:  # an alternative that does not exist here is simply no suspect
        return None
    if all(abs(v - 1) < mpmath.mpf(10) ** (-digits // 2) for v in values):
        return None
    return values


def _describe(norm: Normalization) -> str:
    if norm.kind == "radius":
        return f"the normalisation at r0 = {norm.radius}"
    return f"the {norm.kind} normalisation"


# ------------------------------------------------------------------ wrong horizon


def _horizons(claim: Claim, points, digits: int) -> dict[str, Suspect]:
    """Wrong-horizon suspects: lhs at each other root over lhs at the chosen root.

    Only for static metrics and claims `lhs(observables) = rhs(parameters)`
    whose observables are horizon quantities; the other roots must exist at
    every point with the same ordering, else there is no suspect.
    """
    spacetime = claim.spacetime
    static = spacetime.metric.static
    wanted = mentioned_observables(claim.lhs)
    if static is None or not wanted or not wanted <= _AT_A_HORIZON or mentioned_observables(claim.rhs):
        return {}
    if wanted & {"A", "S"} and static.R is None:
        return {}
    try:
        with mpmath.workdps(digits + 10):
            layout = _root_layout(spacetime, [mp_point(p) for p in points], digits)
            if layout is None:
                return {}
            chosen, count = layout
            own = NumericEvaluator(_HorizonValues(spacetime, chosen, count, digits), digits)
            suspects = {}
            for other in range(count):
                if other == chosen:
                    continue
                theirs = NumericEvaluator(_HorizonValues(spacetime, other, count, digits), digits)
                values = []
                for point in points:
                    numeric = mp_point(point)
                    values.append(theirs.evaluate(claim.lhs, numeric).value / own.evaluate(claim.lhs, numeric).value)
                if all(abs(v - 1) < mpmath.mpf(10) ** (-digits // 2) for v in values):
                    continue
                suspects[_horizon_name(spacetime, other, chosen, count, mp_point(points[0]), digits)] = Suspect(values, "horizon")
            return suspects
    except Exception:  # a suspect that cannot be evaluated here is simply no suspect
        return {}


def _roots(spacetime: Spacetime, point, digits: int) -> list[Measured]:
    metric = spacetime.metric
    return positive_roots_numeric(equatorial(killing_norm(metric), metric), metric.radial, point, digits)


def _root_layout(spacetime: Spacetime, points, digits: int) -> tuple[int, int] | None:
    """(index of the chosen horizon among the positive roots, number of roots), the same
    at every point; None when there is only one root or the layout changes."""
    layouts = set()
    for point in points:
        roots = _roots(spacetime, point, digits)
        chosen = horizon_radius_numeric(spacetime, point, digits).value
        distances = [abs(root.value - chosen) for root in roots]
        if not roots or min(distances) > mpmath.mpf(10) ** (-digits // 2) * abs(chosen):
            return None
        layouts.add((distances.index(min(distances)), len(roots)))
    if len(layouts) != 1:
        return None
    chosen, count = layouts.pop()
    return (chosen, count) if count > 1 else None


def _horizon_name(spacetime: Spacetime, other: int, chosen: int, count: int, point, digits: int) -> str:
    """'the claim matches the inner horizon r_- (root 1 of 2 of the Killing norm) ...'."""
    static = spacetime.metric.static
    roots = _roots(spacetime, point, digits)
    where = f"root {other + 1} of {count} of the Killing norm, not the chosen root {chosen + 1}"
    if other < chosen:
        label = "the inner horizon r_-" if other == chosen - 1 else f"inner horizon number {other + 1}"
    else:
        f = real_function(static.F, static.r, point, digits + 10)
        beyond = f(roots[other].value * (1 + mpmath.mpf(10) ** -3))
        label = "the cosmological horizon" if other == count - 1 and beyond < 0 else f"the outer horizon number {other + 1}"
    return f"the claim matches {label} ({where})"


class _HorizonValues:
    """Provider for NumericEvaluator: elementary static horizon quantities at root `index`."""

    def __init__(self, spacetime: Spacetime, index: int, count: int, digits: int) -> None:
        static = spacetime.metric.static
        self.spacetime, self.index, self.count, self.digits = spacetime, index, count, digits
        self.static = static
        self.slopes = (sympy.diff(static.F, static.r), sympy.diff(static.G, static.r))

    def __call__(self, point) -> NumericResult:
        roots = _roots(self.spacetime, point, self.digits)
        if len(roots) != self.count:
            raise CannotCompute("the number of horizons changes near this point")
        static, dps = self.static, self.digits + 10
        r = roots[self.index].value
        f1, g1 = (real_function(s, static.r, point, dps)(r) for s in self.slopes)
        N = normalization_factor_numeric(self.spacetime, point, self.digits).value
        kappa = N * mpmath.sqrt(abs(f1 * g1)) / 2
        values = {"r_h": r, "kappa": kappa, "T": kappa / (2 * mpmath.pi)}
        if static.R is not None:
            n = static.dim - 2
            sphere = 2 * mpmath.pi ** (mpmath.mpf(n + 1) / 2) / mpmath.gamma(mpmath.mpf(n + 1) / 2)
            values["A"] = sphere * real_function(static.R, static.r, point, dps)(r) ** n
            values["S"] = values["A"] / 4
        zero = mpmath.mpf(0)
        return NumericResult(values={k: Measured(v, zero) for k, v in values.items()})
