"""Where the horizon is: the zeros of the Killing norm in the radial coordinate.

The horizon generator is d/dt for a static metric and d/dt + Omega d/d(axial)
for a rotating one.  Its norm, up to a positive factor, is g_tt in the first
case and g_tt - g_t,ax^2 / g_ax,ax = -(lapse)^2 in the second; a horizon is a
zero of that function of the radial coordinate.  This module finds those zeros
in closed form (when sympy can) and numerically at a parameter point (always,
when there is one), and picks the one a claim asked for.

The numeric side never trusts a closed form: it clears denominators, and for a
polynomial numerator uses `mpmath.polyroots` on each square-free factor (so a
double zero such as an extremal or isotropic horizon is found), otherwise it
scans for sign changes and minima of |norm|.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping, Sequence

import mpmath
import sympy
from sympy.polys.polyerrors import BasePolynomialError

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.spacetimes.base import Metric, Spacetime
from crosscheck.spacetimes.evaluation import as_sympy, evaluate, real_function, to_mp
from crosscheck.spacetimes.evaluation import describe_point as _describe

# Digits used to order symbolic root candidates at the representative point.
_CHOICE_DIGITS = 30
# Extra digits carried by numeric work beyond what the caller asks for.
_GUARD_DIGITS = 15
# Largest polynomial degree handed to sympy.roots (Ferrari is the last formula).
_MAX_SYMBOLIC_DEGREE = 4
# Coefficients larger than this (in sympy operations) are not solved symbolically.
_MAX_COEFF_OPS = 400


# ---------------------------------------------------------------------------
# the Killing norm
# ---------------------------------------------------------------------------


@functools.lru_cache(maxsize=64)
def killing_norm(metric: Metric) -> sympy.Expr:
    """Norm of the horizon generator up to a positive factor.

    Static (no axial coordinate): g_tt.  With metric.axial: g_tt -
    g_t,ax^2 / g_ax,ax, the norm of d/dt + Omega d/d(axial) with the frame
    velocity Omega = -g_t,ax/g_ax,ax; it equals -lapse^2 and vanishes where
    the Killing horizon is.  Returned with denominators combined (cancel), so
    its numerator is what the root finders solve.  Cached per metric (value
    objects are immutable), since every route asks for it.
    """
    g = metric.g
    g_tt = g[0, 0]
    if metric.axial is None:
        return _trig_cancel(g_tt, metric.coords[1:])
    k = metric.coords.index(metric.axial)
    return _trig_cancel(g_tt - g[0, k] ** 2 / g[k, k], metric.coords[1:])


def _trig_cancel(expr: sympy.Expr, coords) -> sympy.Expr:
    """cancel() after writing sin(x) = sqrt(1 - cos(x)^2) for each angle-like coordinate.

    Plain cancel cannot see that sin^2 + cos^2 = 1, so the Kerr norm would
    keep a spurious common factor; with one variable per angle the rational
    function cancels exactly (for Kerr to -Delta Sigma / A).
    """
    expr = sympy.together(expr)
    back = {}
    for x in coords:
        if not expr.has(sympy.sin(x)) and not expr.has(sympy.cos(x)):
            continue
        c = sympy.Dummy(f"cos_{x}", real=True)
        expr = expr.subs(sympy.sin(x), sympy.sqrt(1 - c**2)).subs(sympy.cos(x), c)
        back[c] = sympy.cos(x)
    result = sympy.cancel(expr)
    return sympy.factor_terms(result.xreplace(back)) if back else result


def equatorial(expr: sympy.Expr, metric: Metric) -> sympy.Expr:
    """expr with every coordinate other than time and radius set to pi/2.

    For round spheres and axisymmetric metrics that is the equator; for a
    Killing horizon the norm's zeros do not depend on the angles, so any
    regular value would do, and pi/2 avoids the axis where sin(theta) = 0.
    """
    others = {c: sympy.pi / 2 for c in metric.coords[2:]}
    return as_sympy(expr).subs(others)


def _numerator(expr: sympy.Expr, r: sympy.Symbol) -> sympy.Expr:
    numerator, _ = sympy.fraction(sympy.cancel(sympy.together(expr)))
    return sympy.expand(numerator)


@functools.lru_cache(maxsize=256)  # every numeric root search of a claim asks again
def _polynomial(expr: sympy.Expr, r: sympy.Symbol) -> sympy.Poly | None:
    """The numerator of expr as a polynomial in r, or None if it is not one."""
    numerator = _numerator(expr, r)
    if not numerator.has(r) or not numerator.is_polynomial(r):
        return None
    try:
        return sympy.Poly(numerator, r)
    except BasePolynomialError:
        return None


# ---------------------------------------------------------------------------
# closed form
# ---------------------------------------------------------------------------


def symbolic_roots(expr: sympy.Expr, r: sympy.Symbol) -> list[sympy.Expr]:
    """Distinct closed-form roots in r of expr's numerator (a polynomial of degree <= 4
    or a binomial); raise CannotCompute otherwise.

    Guarded so that sympy cannot hang: no general `solve`, bounded degree and
    coefficient size.
    """
    poly = _polynomial(expr, r)
    if poly is None:
        raise CannotCompute(f"no closed-form horizon: the numerator of {expr} is not a polynomial in {r}")
    if any(sympy.count_ops(c) > _MAX_COEFF_OPS for c in poly.all_coeffs()):
        raise CannotCompute("no closed-form horizon: polynomial coefficients too large to solve symbolically")
    # Strip the power of r that clearing denominators may have introduced.
    low = min(m[0] for m in poly.monoms())
    if low:
        poly = sympy.Poly(sympy.expand(poly.as_expr() / r**low), r)
    binomial = len(poly.terms()) == 2
    if poly.degree() > _MAX_SYMBOLIC_DEGREE and not binomial:
        raise CannotCompute(f"no closed-form horizon: degree {poly.degree()} polynomial in {r}")
    found = sympy.roots(poly, r)
    if sum(found.values()) < poly.degree():
        raise CannotCompute(f"no closed-form horizon: sympy found only part of the roots of {poly.as_expr()}")
    return list(found)


def choose_root(
    candidates: Sequence[sympy.Expr],
    selector: str | int,
    representative: Mapping[sympy.Symbol, object],
    bracket: tuple[sympy.Expr, sympy.Expr] | None = None,
    what: str = "horizon",
    allow_zero: bool = False,
) -> sympy.Expr:
    """Pick a closed-form root by where it falls at the representative point.

    Candidates are evaluated with mpmath at 30 digits; real positive ones
    (within the bracket if given) are sorted, and candidates that coincide
    there are merged.  `selector` is 'largest', 'smallest' or a 1-based index.
    `allow_zero` keeps a root at 0 (the centre of de Sitter space).
    """
    valued: list[tuple[mpmath.mpf, sympy.Expr]] = []
    lo, hi = _bracket_values(bracket, representative, _CHOICE_DIGITS)
    for cand in candidates:
        try:
            value = evaluate(cand, representative, _CHOICE_DIGITS)
        except ValueError:
            continue
        with mpmath.workdps(_CHOICE_DIGITS):
            scale = max(abs(value), 1)
            if abs(mpmath.im(value)) > mpmath.mpf(10) ** (-_CHOICE_DIGITS // 2) * scale:
                continue
            real = mpmath.re(value)
            if real < 0 or (real == 0 and not allow_zero) or (lo is not None and not lo <= real <= hi):
                continue
            if any(abs(real - v) <= mpmath.mpf(10) ** (-_CHOICE_DIGITS // 2) * scale for v, _ in valued):
                continue
            valued.append((real, cand))
    valued.sort(key=lambda pair: pair[0])
    picked = _select(valued, selector, what, representative)
    return picked[1]


def _select(items: list, selector: str | int, what: str, point: Mapping[sympy.Symbol, object]):
    if not items:
        raise ValueError(f"no {what}: no real positive root at {_describe(point)}")
    if selector == "largest":
        return items[-1]
    if selector == "smallest":
        return items[0]
    if isinstance(selector, int) and not isinstance(selector, bool):
        if 1 <= selector <= len(items):
            return items[selector - 1]
        raise ValueError(f"no {what} number {selector}: only {len(items)} positive root(s) at {_describe(point)}")
    raise ValueError(f"horizon root selector must be 'largest', 'smallest' or a positive integer, got {selector!r}")


def _bracket_values(bracket, point, digits):
    if bracket is None:
        return None, None
    lo, hi = (mpmath.re(evaluate(b, point, digits)) for b in bracket)
    return (lo, hi) if lo <= hi else (hi, lo)


def horizon_radius(spacetime: Spacetime, representative: Mapping[sympy.Symbol, object] | None = None) -> sympy.Expr:
    """Closed form of the chosen horizon radius r_h.

    HorizonSpec.expression is returned as given.  For a root selector the
    equatorial Killing norm is solved in closed form (see `symbolic_roots`)
    and the root is chosen at `representative`, a parameter point; without
    one, only a single positive candidate can be chosen.  Raises
    CannotCompute when no closed form is available.
    """
    spec = spacetime.horizon
    if spec.expression is not None:
        return spec.expression
    if spec.root is None:
        raise CannotCompute("the spacetime has no horizon (none given and the family has none)")
    metric = spacetime.metric
    candidates = symbolic_roots(equatorial(killing_norm(metric), metric), metric.radial)
    if representative is None:
        distinct = [c for c in candidates if c.is_positive is not False]
        if len(distinct) == 1 and spec.bracket is None:
            return distinct[0]
        raise CannotCompute("choosing among closed-form horizon roots needs a representative parameter point")
    try:
        return choose_root(candidates, spec.root, representative, spec.bracket)
    except ValueError as exc:
        raise CannotCompute(str(exc)) from exc


# ---------------------------------------------------------------------------
# numeric roots
# ---------------------------------------------------------------------------


@functools.lru_cache(maxsize=256)
def _square_free_factors(poly: sympy.Poly) -> tuple[sympy.Poly, ...]:
    """Square-free factors of poly (symbolic coefficients), or (poly,) if sympy cannot."""
    try:
        _, factors = sympy.sqf_list(poly)
        return tuple(f for f, _ in factors if f.degree() > 0) or (poly,)
    except (BasePolynomialError, NotImplementedError, TypeError, ValueError):
        return (poly,)


def _poly_positive_roots(poly: sympy.Poly, point, dps: int) -> list[tuple[mpmath.mpf, mpmath.mpf]]:
    """Real positive roots (value, error) of a polynomial at the parameter point."""
    roots: list[tuple[mpmath.mpf, mpmath.mpf]] = []
    for factor in _square_free_factors(poly):
        coeffs = [evaluate(c, point, dps) for c in factor.all_coeffs()]
        with mpmath.workdps(dps):
            while coeffs and coeffs[0] == 0:
                coeffs.pop(0)
            if len(coeffs) < 2:
                continue
            try:
                found, err = mpmath.polyroots(coeffs, maxsteps=200, extraprec=8 * dps, error=True)
            except mpmath.libmp.NoConvergence:
                found, err = mpmath.polyroots(coeffs, maxsteps=2000, extraprec=32 * dps, error=True)
            half = mpmath.mpf(10) ** (-(dps // 2))
            for z in found:
                z = mpmath.mpc(z)
                scale = max(abs(z), mpmath.mpf(10) ** (-dps))
                if abs(z.imag) > half * scale + 10 * err or z.real <= 0:
                    continue
                roots.append(_polish(coeffs, z.real, err, dps))
    return _merge(roots, dps)


def _polish(coeffs, x: mpmath.mpf, err: mpmath.mpf, dps: int) -> tuple[mpmath.mpf, mpmath.mpf]:
    """Newton steps on the polynomial; the error is the size of the last step.

    At a simple root the last step is at rounding level; at a (near-)double
    root Newton converges only linearly and the last step honestly shows the
    remaining uncertainty.  polyroots' own estimate `err` is a floor.
    """
    slope_coeffs = _derivative(coeffs)
    step = mpmath.mpf(0)
    for _ in range(6):
        slope = mpmath.polyval(slope_coeffs, x)
        if slope == 0:
            break
        step = mpmath.polyval(coeffs, x) / slope
        x = x - step
    return x, max(abs(step), min(err, abs(x)), mpmath.mpf(10) ** (-dps) * abs(x))


def _derivative(coeffs):
    n = len(coeffs) - 1
    return [c * (n - i) for i, c in enumerate(coeffs[:-1])]


def _merge(roots: list[tuple[mpmath.mpf, mpmath.mpf]], dps: int) -> list[tuple[mpmath.mpf, mpmath.mpf]]:
    """Sort and merge roots closer than ~10^(-dps/2) relative (a split double root)."""
    roots = sorted(roots, key=lambda pair: pair[0])
    merged: list[tuple[mpmath.mpf, mpmath.mpf]] = []
    with mpmath.workdps(dps):
        tol = mpmath.mpf(10) ** (-(dps // 2))
        for x, e in roots:
            if merged and abs(x - merged[-1][0]) <= tol * max(abs(x), 1):
                x0, e0 = merged[-1]
                merged[-1] = ((x + x0) / 2, max(e, e0, abs(x - x0)))
            else:
                merged.append((x, e))
    return merged


def _scan_roots(
    fs: tuple[Callable, Callable, Callable], lo: mpmath.mpf, hi: mpmath.mpf, dps: int, points: int = 400
) -> list[tuple[mpmath.mpf, mpmath.mpf]]:
    """Zeros of f in [lo, hi] given fs = (f, f', f''): sign changes refined by
    findroot, and double zeros (local minima of |f| that reach zero) refined
    as zeros of f'.

    The grid is logarithmic when lo > 0 (horizons span many scales).
    Derivatives are exact (sympy), not finite differences: f is evaluated at a
    fixed precision, so mpmath.diff's tiny steps would see only rounding.
    """
    f = fs[0]
    with mpmath.workdps(dps):
        if lo > 0:
            grid = [lo * (hi / lo) ** (mpmath.mpf(k) / points) for k in range(points + 1)]
        else:
            grid = [lo + (hi - lo) * mpmath.mpf(k) / points for k in range(points + 1)]
        values = [f(x) for x in grid]
        roots: list[tuple[mpmath.mpf, mpmath.mpf]] = []
        for k in range(points):
            a, b, fa, fb = grid[k], grid[k + 1], values[k], values[k + 1]
            if mpmath.isnan(fa) or mpmath.isnan(fb):
                continue
            if fa == 0:
                roots.append((a, mpmath.mpf(0)))
            elif fa * fb < 0:
                found = _refine_sign_change(fs, a, b, dps)
                if found is not None:
                    roots.append(found)
        roots.extend(_double_zeros(fs, grid, values, dps))
    return _merge(roots, dps)


def _refine_sign_change(fs, a, b, dps):
    """Root in [a, b] where f changes sign; None if it is a pole, not a zero."""
    f, f1, _ = fs
    try:
        x = mpmath.re(mpmath.findroot(f, (a, b), solver="anderson", tol=mpmath.mpf(10) ** (-2 * dps)))
    except (ValueError, ZeroDivisionError):
        x = a - 1
    if not a <= x <= b:
        x = mpmath.findroot(f, (a, b), solver="bisect", tol=mpmath.mpf(10) ** (-dps))
    fx = f(x)
    scale = max(abs(f(a)), abs(f(b)))
    if mpmath.isnan(fx) or abs(fx) > mpmath.mpf(10) ** (-dps // 2) * scale:
        return None
    slope = f1(x)
    error = abs(fx / slope) if slope and not mpmath.isnan(slope) else abs(b - a)
    return x, max(error, mpmath.mpf(10) ** (-dps) * abs(x))


def _double_zeros(fs, grid, values, dps):
    """Zeros without a sign change: interior minima of |f| where f' vanishes and f ~ 0."""
    f, f1, f2 = fs
    found = []
    mags = [abs(v) for v in values]
    for k in range(1, len(grid) - 1):
        if any(mpmath.isnan(m) for m in mags[k - 1 : k + 2]):
            continue
        if not (mags[k] <= mags[k - 1] and mags[k] <= mags[k + 1]) or values[k - 1] * values[k + 1] <= 0:
            continue
        try:
            x = mpmath.re(mpmath.findroot(f1, (grid[k - 1], grid[k + 1]), solver="anderson"))
        except (ValueError, ZeroDivisionError):
            continue
        if not grid[k - 1] <= x <= grid[k + 1]:
            continue
        scale = max(mags[k - 1], mags[k + 1])
        if abs(f(x)) <= mpmath.mpf(10) ** (-dps // 2) * scale:
            # f ~ (f''/2)(x - x0)^2: a residual |f(x)| leaves x0 uncertain by sqrt(2|f|/f'').
            curvature = abs(f2(x))
            error = mpmath.sqrt(2 * abs(f(x)) / curvature) if curvature else abs(grid[k + 1] - grid[k - 1])
            found.append((x, max(error, mpmath.mpf(10) ** (-dps) * abs(x))))
    return found


def _scan_window(point: Mapping[sympy.Symbol, object], dps: int) -> tuple[mpmath.mpf, mpmath.mpf]:
    """Default scan range: 1e-6 to 1e6 times the largest parameter magnitude (or 1)."""
    with mpmath.workdps(dps):
        sizes = [abs(to_mp(value, dps)) for value in point.values()]
        scale = max([s for s in sizes if s > 0] or [mpmath.mpf(1)])
        return scale * mpmath.mpf(10) ** -6, scale * mpmath.mpf(10) ** 6


def positive_roots_numeric(
    expr: sympy.Expr,
    variable: sympy.Symbol,
    point: Mapping[sympy.Symbol, object],
    digits: int,
    bracket: tuple[mpmath.mpf, mpmath.mpf] | None = None,
) -> list[Measured]:
    """All real positive zeros of expr(variable) at `point`, sorted, merged, with errors.

    Polynomial numerators go to mpmath.polyroots (square-free factors first);
    anything else is scanned over `bracket` (default: a wide logarithmic
    window set by the parameter sizes).
    """
    dps = digits + _GUARD_DIGITS
    poly = _polynomial(expr, variable)
    pairs = None
    if poly is not None:
        try:
            pairs = _poly_positive_roots(poly, point, dps)
        except mpmath.libmp.NoConvergence:
            pairs = None  # fall back to the scan below
        if pairs is not None and bracket is not None:
            lo, hi = bracket
            pairs = [(x, e) for x, e in pairs if lo - e <= x <= hi + e]
    if pairs is None:
        lo, hi = bracket if bracket is not None else _scan_window(point, dps)
        fs = tuple(real_function(sympy.diff(expr, variable, k), variable, point, dps) for k in range(3))
        pairs = _scan_roots(fs, mpmath.mpf(lo), mpmath.mpf(hi), dps)
    with mpmath.workdps(dps):
        return [Measured(+x, +e) for x, e in pairs if x > 0]


def horizon_radius_numeric(spacetime: Spacetime, point: Mapping[sympy.Symbol, object], digits: int) -> Measured:
    """Numeric r_h at one parameter point, with an error estimate.

    An expression horizon is evaluated (error: difference of two precisions
    plus 10^-digits |r_h|); a root selector takes the chosen zero of the
    equatorial Killing norm.  ValueError when there is no such root.
    """
    spec = spacetime.horizon
    metric = spacetime.metric
    if spec.expression is not None:
        value = mpmath.re(evaluate(spec.expression, point, digits + _GUARD_DIGITS))
        check = mpmath.re(evaluate(spec.expression, point, digits + 2 * _GUARD_DIGITS))
        with mpmath.workdps(digits + _GUARD_DIGITS):
            return Measured(check, abs(check - value) + mpmath.mpf(10) ** (-digits) * abs(check))
    if spec.root is None:
        raise ValueError("no horizon: the spacetime has none (no horizon given and the family has none)")
    bracket = _bracket_values(spec.bracket, point, digits + _GUARD_DIGITS)
    norm = equatorial(killing_norm(metric), metric)
    roots = positive_roots_numeric(norm, metric.radial, point, digits, None if bracket[0] is None else bracket)
    if not roots:
        where = "(0, inf)"
        if bracket[0] is not None:
            where = f"[{mpmath.nstr(bracket[0], 8)}, {mpmath.nstr(bracket[1], 8)}]"
        raise ValueError(f"no horizon: g_tt has no positive root in {where} at {_describe(point)}")
    return _select(roots, spec.root, "horizon", point)
