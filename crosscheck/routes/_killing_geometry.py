"""Geometry of the horizon generator for the killing-horizon route.

`geometry(metric)` builds, once per metric (cached), everything the route's
two sides share: the inverse metric, the covector chi_mu with Omega_H kept as
a symbol, the field kappa_t^2(r, angles) and its mpmath version.  Keeping
Omega_H symbolic until the end means the field is built once and the exact
and numeric horizon values are substituted afterwards.

The rest are the cross-section area, the electric potential chi.A and the
acceleration of static Killing orbits, each symbolic and numeric.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit
from crosscheck.routes import _killing_algebra as ka
from crosscheck.routes import _killing_quadrature as kq
from crosscheck.spacetimes.base import Metric, angle_symbols
from crosscheck.spacetimes.evaluation import as_sympy
from crosscheck.spacetimes.forms import unit_sphere
from crosscheck.spacetimes.horizon import equatorial, killing_norm
from crosscheck.spacetimes.normalize import geodesic_radius, normalization_radius_numeric

# Largest angular factor (sympy operations) handed to `integrate`.
INTEGRATE_MAX_OPS = 40
# Polar angles used to test signs of angular factors (all inside (0, pi)).
PROBE_ANGLES = (sympy.Rational(11, 10), sympy.Rational(2, 5), sympy.Rational(5, 2), sympy.Rational(19, 10))


@dataclass(frozen=True)
class Geometry:
    """What both sides of the route need from one metric."""

    metric: Metric
    params: tuple[sympy.Symbol, ...]
    axial_index: int | None
    W: sympy.Dummy
    ginv: sympy.ImmutableMatrix
    chi: tuple[sympy.Expr, ...]
    field: sympy.Expr
    field_eq: sympy.Expr
    norm_eq: sympy.Expr
    omega_eq: sympy.Expr
    polar: tuple[sympy.Symbol, ...]
    angular: bool

    @property
    def r(self) -> sympy.Symbol:
        return self.metric.radial

    @property
    def axial(self) -> sympy.Symbol | None:
        return self.metric.axial

    @property
    def axial_name(self) -> str:
        return str(self.metric.axial) if self.metric.axial is not None else "phi (Omega_H = 0: static)"

    @property
    def coord_names(self) -> str:
        return "(" + ", ".join(map(str, self.metric.coords)) + ")"

    @property
    def where_eq(self) -> str:
        return " at theta = pi/2" if self.angular else ""

    def vector(self, shown) -> sympy.Tuple:
        n = sympy.Symbol("N")
        comps = [sympy.Integer(0)] * self.metric.dim
        comps[0] = n
        if self.axial_index is not None:
            comps[self.axial_index] = n * self.W
        return sympy.Tuple(*comps).xreplace(shown)

    @functools.cached_property
    def field_fn(self):
        """kappa_t^2 field as an mpmath function of (r, *polar, Omega_H, *params)."""
        return ka.numeric_function(self.field, [self.r, *self.polar, self.W, *self.params])

    @functools.cached_property
    def omega_fn(self):
        return ka.numeric_function(self.omega_eq, [self.r, *self.params])


@functools.lru_cache(maxsize=32)
def geometry(metric: Metric) -> Geometry:
    """Inverse metric, chi_mu, the Killing gradient and the kappa_t^2 field of `metric`."""
    coords = metric.coords
    g = metric.g
    k = coords.index(metric.axial) if metric.axial is not None else None
    w = sympy.Dummy("Omega_H", real=True)
    ginv = ka.block_inverse(g)
    chi = ka.killing_covector(g, k, w)
    dchi = ka.killing_gradient(chi, coords)
    field = ka.kappa_squared_field(dchi, ginv)
    eq = {c: sympy.pi / 2 for c in coords[2:]}
    field_eq = ka.kappa_squared_field({key: v.subs(eq) for key, v in dchi.items()}, ginv.subs(eq))
    omega_eq = sympy.Integer(0) if k is None else sympy.cancel(sympy.together(equatorial(-g[0, k] / g[k, k], metric)))
    symbols = set(g.free_symbols)
    for component in metric.potential or ():
        symbols |= as_sympy(component).free_symbols
    params = tuple(sorted(symbols - set(coords), key=str))
    polar = tuple(c for c in coords[2:] if c != metric.axial)
    return Geometry(
        metric=metric, params=params, axial_index=k, W=w, ginv=ginv, chi=tuple(chi), field=field,
        field_eq=field_eq, norm_eq=equatorial(killing_norm(metric), metric), omega_eq=omega_eq,
        polar=polar, angular=bool(field.free_symbols & set(polar)),
    )


def args_of(geo: Geometry, point) -> list:
    """Parameter values in the order of geo.params (ValueError if one is missing)."""
    missing = [str(p) for p in geo.params if p not in point]
    if missing:
        raise ValueError(f"no value for parameter(s) {', '.join(missing)}")
    return [point[p] for p in geo.params]


# ---------------------------------------------------------------------------
# area of the cross-section t = const, r = r_h
# ---------------------------------------------------------------------------


def angle_ranges(metric: Metric) -> list[tuple[sympy.Symbol, sympy.Expr]]:
    """(angle, upper limit) of each cross-section coordinate (all start at 0).

    They must be the standard sphere angles (polar in (0, pi), the last one
    the azimuth in (0, 2 pi)); anything else (planes) has no finite area.
    """
    others = metric.coords[2:]
    if not others:
        raise CannotCompute("area: a 1+1 dimensional horizon is a point")
    standard = angle_symbols(len(others))
    if [str(c) for c in others] != [str(a) for a in standard]:
        raise CannotCompute(f"area: the cross-section coordinates {', '.join(map(str, others))} are not sphere angles "
                            "(infinite or undefined area)")
    return [(c, sympy.pi) for c in others[:-1]] + [(others[-1], 2 * sympy.pi)]


def _round_sphere(geo: Geometry) -> bool:
    """Whether the cross-section is R(r)^2 times the unit sphere (then A = R^n Omega_n)."""
    static, metric = geo.metric.static, geo.metric
    if static is None or static.R is None or geo.axial is not None or metric.dim < 3:
        return False
    block = metric.g[2:, 2:]
    expected = sympy.diag(*(static.R**2 * h for h in unit_sphere(metric.coords[2:])))
    return all(sympy.cancel(block[i, j] - expected[i, j]) == 0 for i in range(block.rows) for j in range(block.cols))


def area_symbolic(geo: Geometry, r_h: sympy.Expr, rep, probes) -> tuple[sympy.Expr, str]:
    """Closed-form area, or CannotCompute when the angular integral has no simple form."""
    ranges = angle_ranges(geo.metric)
    r = geo.r
    if _round_sphere(geo):
        static = geo.metric.static
        n = static.dim - 2
        x = sympy.Dummy("x")
        volume = 2 * sympy.pi * sympy.Mul(*(sympy.integrate(sympy.sin(x) ** k, (x, 0, sympy.pi))
                                            for k in range(1, n)))
        radius = ka.simplify_radical(static.R.subs(static.r, r_h), probes)
        return radius**n * volume, (f"area: R(r_h)^{n} times the unit {n}-sphere volume {volume} "
                                    "(sympy integrals of the sin powers)")
    h = geo.metric.g[2:, 2:]
    det = sympy.cancel(sympy.together(sympy.Matrix(h).det(method="berkowitz")))
    det_h = ka.simplify_radical(det.subs(r, r_h))
    polar = [c for c, upper in ranges if upper == sympy.pi]
    # Sign tests need angles too: the representative point at several polar angles, then the other probes.
    points = [{**rep, **{c: a for c in polar}} for a in PROBE_ANGLES]
    points += [{**p, **{c: PROBE_ANGLES[0] for c in polar}} for p in probes[1:]]
    integrand = ka.positive_sqrt(det_h, points)
    area = _integrate_separable(integrand, ranges)
    return ka.simplify_radical(area, probes), "area: sqrt(det) of the induced metric at t = const, r = r_h, integrated over the angles (sympy)"


def _integrate_separable(integrand: sympy.Expr, ranges) -> sympy.Expr:
    """Integral of a product of one-angle factors made of sin and cos; CannotCompute otherwise."""
    angles = [c for c, _ in ranges]
    constant, angular = integrand.as_independent(*angles, as_Add=False)
    by_angle = {c: sympy.Integer(1) for c in angles}
    for part in sympy.Mul.make_args(angular):
        inside = part.free_symbols & set(angles)
        if len(inside) != 1:
            raise CannotCompute(f"area: the integrand {integrand} does not separate in the angles")
        by_angle[inside.pop()] *= part
    total = constant
    for c, upper in ranges:
        part = by_angle[c]
        funcs = {f.func for f in part.atoms(sympy.Function)}
        if not funcs <= {sympy.sin, sympy.cos} or sympy.count_ops(part) > INTEGRATE_MAX_OPS:
            raise CannotCompute(f"area: no simple closed-form integral of {part} over {c}")
        total *= sympy.integrate(part, (c, 0, upper))
    if total.has(sympy.Integral):
        raise CannotCompute("area: sympy could not integrate the angular factor")
    return total


def area_numeric(geo: Geometry, point, r_h: Measured, digits: int) -> tuple[Measured, str]:
    """Area by quadrature (`_quad`: two degrees and two precisions compared), the r_h error propagated
    (the area is recomputed at r_h + error)."""
    ranges = angle_ranges(geo.metric)
    args = args_of(geo, point)
    if _round_sphere(geo):
        area_at, how = _round_area(geo, args, digits)
    else:
        area_at, how = _induced_area(geo, ranges, args, digits)
    area = area_at(r_h.value)
    shift = abs(area_at(r_h.value + r_h.error).value - area.value) if r_h.error else mpmath.mpf(0)
    return Measured(area.value, area.error + shift + mpmath.mpf(10) ** (-(digits + 5)) * abs(area.value)), how


def _round_area(geo: Geometry, args, digits: int):
    """r -> 2 pi R(r)^n prod_k quad(sin^k, 0, pi): the angular factor integrated numerically too."""
    static = geo.metric.static
    n = static.dim - 2
    radius = ka.numeric_function(static.R, [static.r, *geo.params])
    pieces = [_sine_power_integral(k, digits, mpmath.mp.prec) for k in range(1, n)]
    angular = 2 * mpmath.pi * mpmath.fprod(p.value for p in pieces)
    relative = mpmath.fsum(p.error / p.value for p in pieces)

    def area_at(rv) -> Measured:
        value = angular * mpmath.re(radius(rv, *args)) ** n
        return Measured(value, abs(value) * relative)

    return area_at, f"area: R(r_h)^{n} times 2 pi and quadratures of sin^k over (0, pi), k = 1..{n - 1}"


@functools.lru_cache(maxsize=64)
def _sine_power_integral(k: int, digits: int, prec: int) -> Measured:
    """quad(sin^k, 0, pi), the same at every parameter point: computed once per precision."""
    with mpmath.workprec(prec):
        return _quad(lambda x: mpmath.sin(x) ** k, [[0, mpmath.pi]], digits)


def _induced_area(geo: Geometry, ranges, args, digits: int):
    """r -> quadrature of sqrt(det h) over the angles it depends on (times the others' ranges)."""
    det = sympy.cancel(sympy.together(geo.metric.g[2:, 2:].det(method="berkowitz")))
    present = [(c, upper) for c, upper in ranges if det.has(c)]
    if len(present) > 2:
        raise CannotCompute("area: more than two angles in a non-separable integrand")
    fn = ka.numeric_function(det, [geo.r, *[c for c, _ in present], *geo.params])
    length = mpmath.fprod(ka.to_mp(u) for c, u in ranges if (c, u) not in present)
    limits = [[0, ka.to_mp(u)] for _, u in present]

    def area_at(rv) -> Measured:
        if not limits:
            return Measured(length * mpmath.sqrt(abs(fn(rv, *args))), mpmath.mpf(0))
        q = _quad(lambda *x: mpmath.sqrt(abs(fn(rv, *x, *args))), limits, digits)
        return Measured(length * q.value, length * q.error)

    return area_at, "area: Gauss-Legendre quadrature (degrees and precisions compared) of sqrt(det) of the induced metric at t = const, r = r_h"


def _quad(f, limits, digits: int) -> Measured:
    """Gauss-Legendre, degree doubled until converged and repeated with 15 more digits (the
    error covers both differences); tanh-sinh at two precisions if it does not converge."""
    return kq.quad(f, limits, digits)


# ---------------------------------------------------------------------------
# electric potential chi.A
# ---------------------------------------------------------------------------


def potential_field(geo: Geometry) -> sympy.Expr:
    """chi^mu A_mu / N = A_t + Omega_H A_axial (Omega_H as the symbol geo.W)."""
    potential = geo.metric.potential
    if potential is None:
        raise CannotCompute("Phi needs the electromagnetic potential A_mu of the metric (none given)")
    field = as_sympy(potential[0])
    if geo.axial_index is not None:
        field += geo.W * as_sympy(potential[geo.axial_index])
    return field


def phi_symbolic(geo: Geometry, spacetime, r_h, omega, n_factor, rep, checks) -> tuple[sympy.Expr, str]:
    """N (chi.A at the reference - chi.A on the horizon), at theta = pi/2."""
    r = geo.r
    pot_eq = sympy.cancel(sympy.together(equatorial(potential_field(geo), geo.metric).xreplace({geo.W: omega})))
    at_h = ka.simplify_radical(pot_eq.subs(r, r_h), checks)
    kind = spacetime.normalization.kind
    if kind == "as-written":
        ref, where = sympy.limit(pot_eq, r, sympy.oo), "r -> oo"
    else:
        r0 = spacetime.normalization.radius if kind == "radius" else geodesic_radius(spacetime, rep)
        ref, where = pot_eq.subs(r, r0), f"r = {r0}"
    if not ref.is_finite:
        raise CannotCompute(f"Phi: chi.A has no finite value at the reference ({where})")
    phi = ka.simplify_radical(n_factor * (ref - at_h), checks)
    return phi, f"Phi = chi^mu A_mu at {where} minus on the horizon (theta = pi/2), chi = N (d/dt + Omega_H d/d{geo.axial_name})"


def phi_numeric(geo: Geometry, spacetime, point, r_h: Measured, omega: Measured, n_factor: Measured, digits: int,
                thetas, guard: int, steps: int):
    """(Phi, chi.A on the horizon at each theta, provenance); ValueError if chi.A varies on the horizon."""
    fn = ka.numeric_function(potential_field(geo), [geo.r, *geo.polar, geo.W, *geo.params])
    args = args_of(geo, point)
    k = len(geo.polar)
    tiny = mpmath.mpf(10) ** (-(digits + 5))
    with mpmath.workdps(digits + guard):
        def at(r, theta=mpmath.pi / 2, w=omega.value):
            return mpmath.re(fn(r, *([theta] * k), w, *args))

        horizon = at(r_h.value)
        shift = abs(at(r_h.value + r_h.error) - horizon) + abs(at(r_h.value, w=omega.value + omega.error) - horizon)
        phis = [at(r_h.value, t) for t in thetas]
        scale = max(abs(horizon), tiny)
        if max(abs(p - horizon) for p in phis) > mpmath.mpf(10) ** (-(digits // 2)) * scale + 10 * shift:
            raise ValueError("Phi: chi.A is not constant on the horizon (check the potential and Omega_H)")
        r0 = normalization_radius_numeric(spacetime, point, digits)
        if r0 is None:
            u0 = 1 / (4 * abs(r_h.value)) if r_h.value else mpmath.mpf("0.25")
            ref, _ = richardson_limit(lambda u: at(1 / u), u0, steps=steps)
            where = "r -> oo (Richardson extrapolation in 1/r)"
            if ref.error > mpmath.mpf(10) ** (-(digits // 3)) * max(abs(ref.value), scale):
                raise CannotCompute("Phi: chi.A has no finite limit at infinity")
        else:
            ref, where = Measured(at(r0), tiny * abs(at(r0))), f"r = {mpmath.nstr(r0, 10)}"
        diff = Measured(ref.value - horizon, ref.error + shift + tiny * scale)
    phi = Measured(n_factor.value * diff.value, abs(n_factor.value) * diff.error + abs(diff.value) * n_factor.error)
    return phi, [float(p) for p in phis], f"Phi = chi^mu A_mu at {where} minus on the horizon, constant across theta"


# ---------------------------------------------------------------------------
# static Killing orbits: acceleration and Tolman temperature
# ---------------------------------------------------------------------------


def static_acceleration(geo: Geometry) -> tuple[sympy.Expr, sympy.Expr]:
    """(|a|, V) for the orbits of d/dt: a_mu = d_mu ln V, V = sqrt(-g_tt).

    Only a_r is non-zero when g_tt depends on r alone, so |a| = sqrt(g^rr) |a_r|
    whatever the off-diagonal terms (Painleve-Gullstrand has g^tr != 0 but a_t = 0).
    """
    if geo.axial is not None:
        raise CannotCompute("a_loc and T_loc are for static observers; this metric rotates")
    r = geo.r
    v2 = -geo.metric.g[0, 0]
    if v2.free_symbols & (set(geo.metric.coords) - {r}):
        raise CannotCompute("a_loc: g_tt depends on more than the radius; no single function of r")
    a_r = sympy.factor(sympy.cancel(sympy.diff(v2, r) / (2 * v2)))
    return sympy.sqrt(sympy.factor(geo.ginv[1, 1])) * sympy.Abs(a_r), sympy.sqrt(v2)


def static_functions_numeric(geo: Geometry, point, kappa_t: Measured, digits: int) -> dict:
    """Callables r -> Measured for a_loc and T_loc (errors: difference of two precisions)."""
    a_loc, v_t = static_acceleration(geo)
    a_fn = ka.numeric_function(a_loc, [geo.r, *geo.params])
    v_fn = ka.numeric_function(v_t, [geo.r, *geo.params])
    args = args_of(geo, point)

    def two_precisions(fn, r):
        values = []
        for extra in (10, 25):
            with mpmath.workdps(digits + extra):
                values.append(mpmath.re(fn(ka.to_mp(r), *args)))
        return values[1], abs(values[1] - values[0]) + mpmath.mpf(10) ** (-(digits + 5)) * abs(values[1])

    def acceleration(r) -> Measured:
        return Measured(*two_precisions(a_fn, r))

    def tolman(r) -> Measured:
        v, ev = two_precisions(v_fn, r)
        with mpmath.workdps(digits + 10):
            value = kappa_t.value / (2 * mpmath.pi * v)
            return Measured(value, kappa_t.error / (2 * mpmath.pi * abs(v)) + abs(value) * ev / abs(v))

    return {"a_loc": acceleration, "T_loc": tolman}
