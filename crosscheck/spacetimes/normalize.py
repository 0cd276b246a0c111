"""Normalisation of the Killing time: xi = N d/dt (PHYSICS.md, "Normalisation").

Every temperature is N kappa_t / (2 pi), with kappa_t the surface gravity of
d/dt as written.  N is
- 1 for `as-written` (asymptotically flat, AdS, and the dS static patch);
- 1/sqrt(-norm(r0)) for `{radius: r0}` (the clock of a static observer at r0;
  -norm = F for static metrics, the lapse squared at the equator otherwise);
- 1/sqrt(F(r_g)) for `geodesic`, where F'(r_g) = 0: the one static observer
  who needs no rocket, the usual choice between a black-hole and a
  cosmological horizon.

Getting N wrong is a classic error, so the comparison layer reuses these
functions to test candidate ratios sqrt(F(r0)).
"""

from __future__ import annotations

from collections.abc import Mapping

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.spacetimes.base import Spacetime, StaticFunctions
from crosscheck.spacetimes.evaluation import evaluate, real_function
from crosscheck.spacetimes.horizon import (
    _GUARD_DIGITS,
    choose_root,
    equatorial,
    killing_norm,
    positive_roots_numeric,
    symbolic_roots,
)


def _static(spacetime: Spacetime) -> StaticFunctions:
    static = spacetime.metric.static
    if static is None:
        raise CannotCompute("geodesic normalisation needs a static metric -F dt^2 + dr^2/G + R^2 dOmega^2")
    return static


def _balanced_at_origin(F: sympy.Expr, r: sympy.Symbol) -> bool:
    """True when F'(0) = 0 exactly with F(0) finite: the centre of de Sitter space.

    The origin is a regular point there and the observer at rest at r = 0 is
    geodesic; root finders that look for positive roots would miss it.
    """
    slope, value = sympy.diff(F, r).subs(r, 0), F.subs(r, 0)
    return slope == 0 and value.is_finite is True


def _lapse_squared(spacetime: Spacetime) -> sympy.Expr:
    """-norm of the horizon generator (F for static metrics), at the equator."""
    metric = spacetime.metric
    return -equatorial(killing_norm(metric), metric)


def geodesic_radius(spacetime: Spacetime, representative: Mapping[sympy.Symbol, object] | None = None) -> sympy.Expr:
    """Closed form of r_g with F'(r_g) = 0 and F(r_g) > 0 (CannotCompute if none).

    The candidates are chosen at the representative point: real, positive,
    F > 0 there, and F'' <= 0 (a maximum of F: the observer balanced between
    the black hole's pull and the cosmological push).
    """
    static = _static(spacetime)
    F, r = static.F, static.r
    candidates = symbolic_roots(sympy.diff(F, r), r) if sympy.diff(F, r).has(r) else []
    if _balanced_at_origin(F, r):
        candidates.append(sympy.Integer(0))
    if representative is None:
        if len(candidates) == 1:
            return candidates[0]
        raise CannotCompute("choosing the geodesic radius among closed-form roots needs a representative point")
    kept = []
    for cand in candidates:
        try:
            value = evaluate(cand, representative, 30)
            if abs(mpmath.im(value)) > mpmath.mpf(10) ** -15 * max(abs(value), 1) or mpmath.re(value) < 0:
                continue
            at = {**representative, r: mpmath.re(value)}
            if mpmath.re(evaluate(F, at, 30)) > 0 and mpmath.re(evaluate(sympy.diff(F, r, 2), at, 30)) <= 0:
                kept.append(cand)
        except ValueError:
            continue
    if not kept:
        raise CannotCompute("geodesic normalisation: F has no maximum with F > 0 (no balanced static observer)")
    try:
        return choose_root(kept, "smallest", representative, what="geodesic radius", allow_zero=True)
    except ValueError as exc:
        raise CannotCompute(str(exc)) from exc


def normalization_factor(
    spacetime: Spacetime, representative: Mapping[sympy.Symbol, object] | None = None
) -> sympy.Expr:
    """N in xi = N d/dt, as a closed form in the parameters."""
    norm = spacetime.normalization
    if norm.kind == "as-written":
        return sympy.Integer(1)
    r = spacetime.metric.radial
    if norm.kind == "radius":
        if norm.radius is None:
            raise ValueError("normalisation 'radius' needs a radius expression")
        return 1 / sympy.sqrt(_lapse_squared(spacetime).subs(r, norm.radius))
    if norm.kind == "geodesic":
        static = _static(spacetime)
        r_g = geodesic_radius(spacetime, representative)
        return 1 / sympy.sqrt(static.F.subs(static.r, r_g))
    raise ValueError(f"unknown normalisation kind {norm.kind!r}; known: as-written, radius, geodesic")


def _geodesic_radius_numeric(spacetime: Spacetime, point: Mapping[sympy.Symbol, object], digits: int) -> Measured:
    """r_g at a point: zero of F' between the horizons, where F > 0 and F'' <= 0."""
    static = _static(spacetime)
    F, r = static.F, static.r
    dps = digits + _GUARD_DIGITS
    f = real_function(F, r, point, dps)
    f2 = real_function(sympy.diff(F, r, 2), r, point, dps)
    horizons = positive_roots_numeric(F, r, point, digits)
    bracket = None
    if len(horizons) >= 2:
        # Between the first pair of neighbouring zeros with F > 0 in between.
        for inner, outer in zip(horizons, horizons[1:]):
            with mpmath.workdps(dps):
                if f((inner.value + outer.value) / 2) > 0:
                    bracket = (inner.value, outer.value)
                    break
    slope = sympy.diff(F, r)
    candidates = positive_roots_numeric(slope, r, point, digits, bracket) if slope.has(r) else []
    if _balanced_at_origin(F, r):
        candidates.insert(0, Measured(mpmath.mpf(0), mpmath.mpf(0)))
    with mpmath.workdps(dps):
        good = [c for c in candidates if f(c.value) > 0 and f2(c.value) <= 0]
    if not good:
        where = "between the horizons" if bracket else "where F > 0"
        raise ValueError(f"geodesic normalisation: F' has no zero {where} with F maximal")
    return good[0]


def normalization_radius_numeric(
    spacetime: Spacetime, point: Mapping[sympy.Symbol, object], digits: int
) -> mpmath.mpf | None:
    """The radius where the normalising observer sits (r0 or r_g); None for as-written."""
    norm = spacetime.normalization
    if norm.kind == "as-written":
        return None
    if norm.kind == "radius":
        return mpmath.re(evaluate(norm.radius, point, digits + _GUARD_DIGITS))
    return _geodesic_radius_numeric(spacetime, point, digits).value


def normalization_factor_numeric(spacetime: Spacetime, point: Mapping[sympy.Symbol, object], digits: int) -> Measured:
    """N at one parameter point, with an error estimate.

    radius: 1/sqrt(lapse^2(r0)) at two precisions (their difference is the
    error); geodesic: r_g from the root finder, its error propagated through
    N'(r_g) = 0 to second order, plus the precision difference.
    """
    norm = spacetime.normalization
    if norm.kind == "as-written":
        return Measured(mpmath.mpf(1), mpmath.mpf(0))
    r = spacetime.metric.radial
    dps = digits + _GUARD_DIGITS
    if norm.kind == "radius":
        lapse2 = _lapse_squared(spacetime).subs(r, norm.radius)
        values = [mpmath.re(evaluate(lapse2, point, d)) for d in (dps, dps + _GUARD_DIGITS)]
        if values[-1] <= 0:
            raise ValueError(
                f"normalisation radius is not in a static region: F(r0) = {mpmath.nstr(values[-1], 8)} <= 0"
            )
        with mpmath.workdps(dps + _GUARD_DIGITS):
            n_low, n_high = (1 / mpmath.sqrt(v) for v in values)
            return Measured(n_high, abs(n_high - n_low) + mpmath.mpf(10) ** (-digits) * n_high)
    if norm.kind == "geodesic":
        static = _static(spacetime)
        r_g = _geodesic_radius_numeric(spacetime, point, digits)
        f = real_function(static.F, static.r, point, dps)
        f2 = real_function(sympy.diff(static.F, static.r, 2), static.r, point, dps)
        with mpmath.workdps(dps):
            value = f(r_g.value)
            n = 1 / mpmath.sqrt(value)
            # F'(r_g) = 0, so dN = -(1/4) F'' F^(-3/2) dr^2 at second order.
            error = abs(f2(r_g.value)) * r_g.error**2 / (4 * value**mpmath.mpf(1.5))
            return Measured(n, error + mpmath.mpf(10) ** (-digits) * n)
    raise ValueError(f"unknown normalisation kind {norm.kind!r}; known: as-written, radius, geodesic")
