"""The near-horizon route: redshifted proper acceleration of static observers.

The proper acceleration a_loc of the observer at fixed r diverges at the
horizon; times the redshift V it tends to kappa_t (PHYSICS.md, "near-horizon"):
kappa = N kappa_t, T = kappa/(2 pi), T_loc = kappa_t/(2 pi V).  Rotating
metrics use zero-angular-momentum observers (ZAMO).  Fields come from
Christoffel symbols (`_near_horizon_fields`), never the Killing-norm gradient.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes import _near_horizon_area as na
from crosscheck.routes import _near_horizon_closed as nc
from crosscheck.routes import _near_horizon_fields as nh
from crosscheck.routes._near_horizon_fields import sample_points, static_side
from crosscheck.routes.base import NumericResult, Problem, Step, SymbolicResult
from crosscheck.spacetimes.evaluation import as_sympy
from crosscheck.spacetimes.horizon import horizon_radius, horizon_radius_numeric
from crosscheck.spacetimes.normalize import (
    geodesic_radius,
    normalization_factor,
    normalization_factor_numeric,
    normalization_radius_numeric,
)

OBSERVABLES = frozenset({"kappa", "T", "a_loc", "T_loc", "A", "S", "Omega", "Phi", "r_h"})
FUNCTIONS = frozenset({"a_loc", "T_loc"})
_OTHER_THETAS = (sympy.pi / 3, sympy.pi / 4)  # zeroth-law check


class NearHorizonRoute:
    """Redshifted proper acceleration of static (or ZAMO) observers, limit at the horizon."""

    name: ClassVar[str] = "near-horizon"
    title: ClassVar[str] = "Redshifted proper acceleration of static observers, limit at the horizon"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "1"
    observables: ClassVar[frozenset[str]] = OBSERVABLES

    def applies(self, problem: Problem) -> str | None:
        horizon = problem.spacetime.horizon if problem.spacetime else None
        if horizon is None or (horizon.expression is None and horizon.root is None):
            return "needs a spacetime with a horizon"
        missing = problem.wanted - OBSERVABLES
        return f"does not compute {', '.join(sorted(missing))}" if missing else None

    def symbolic(self, problem: Problem) -> SymbolicResult:
        return _Symbolic(problem).result()

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        return _Numeric(problem, point, digits).result()


class _Side:
    """Shared by both sides: the observers' fields, the targets, assembling the values."""

    def __init__(self, problem: Problem) -> None:
        if problem.spacetime is None:
            raise CannotCompute("no spacetime")
        self.problem, self.spacetime, self.metric = problem, problem.spacetime, problem.spacetime.metric
        self.r, self.rotating = self.metric.radial, self.metric.axial is not None
        self.targets = (problem.wanted & OBSERVABLES) or frozenset({"kappa", "T", "r_h"})
        if self.rotating and self.targets & FUNCTIONS:
            raise CannotCompute("a_loc and T_loc are for static observers; this metric rotates")
        self.fields, self.potential = nh.observers(self.metric), None  # A_t + omega A_phi at the equator
        if self.metric.potential is not None:
            self.potential = self.metric.potential[0]
            if self.rotating:
                self.potential += self.fields.omega * self.metric.potential[self.metric.coords.index(self.metric.axial)]
            self.potential = nh.at_angles(self.potential, self.metric)
        self.steps: list[Step] = []
        self.provenance: list[str] = []

    def values(self, kappa_t: object | None, N: object) -> dict[str, object]:
        values = {"r_h": self.r_h}
        if kappa_t is not None:  # None: neither kappa nor T wanted (symbolic side)
            values["kappa"] = kappa = self.times(N, kappa_t, "kappa = N kappa_t", "kappa")
            values["T"] = self.times(kappa, 1 / (2 * sympy.pi), "T = kappa/(2 pi)", "T")
        if self.targets & {"A", "S"}:
            values["A"] = self.area()
            values["S"] = self.times(values["A"], sympy.Rational(1, 4), "S = A/4 (area law of general relativity, geometric units)", "S")
        if "Omega" in self.targets:
            values["Omega"] = self.omega(N)
        if "Phi" in self.targets:
            values["Phi"] = self.phi(N)
        return {k: v for k, v in values.items() if k in self.targets}

    def function_fields(self) -> nh.Observers:
        if (self.fields.accel2.free_symbols | self.fields.redshift2.free_symbols) & set(self.metric.coords[2:]):
            raise CannotCompute("a_loc and T_loc depend on the angles here")
        return self.fields


class _Symbolic(_Side):
    """Closed forms: leading Taylor terms at r_h of the fields."""

    def __init__(self, problem: Problem) -> None:
        super().__init__(problem)
        self.points = sample_points(problem)
        self.rep = {s: v for s, v in self.points[0].items() if s not in self.metric.coords}
        self.provenance.append("Christoffel symbols; leading Taylor terms at r_h, zero tests at 2 points")

    def step(self, label: str, name: str, expr: sympy.Expr) -> sympy.Expr:
        self.steps.append(Step(label, sympy.Eq(sympy.Symbol(name), expr, evaluate=False)))
        return expr

    def times(self, a: sympy.Expr, b: sympy.Expr, label: str, name: str) -> sympy.Expr:
        return self.step(label, name, nc.tidy(a * b))

    def result(self) -> SymbolicResult:
        r, self.r_h = self.r, horizon_radius(self.spacetime, self.rep)
        v2 = nh.at_angles(self.fields.redshift2, self.metric)
        side = static_side(lambda x: nh.value_at(v2, {**self.rep, r: x}, 30), nh.value_at(self.r_h, self.rep, 30).real)
        self.at = nh.Place(r, self.r_h, side, self.points, nh.horizon_modulus(v2, r, self.r_h, self.points))
        try:
            vanishes = nh.is_zero(self.at.limit(v2), self.points)
        except CannotCompute:  # V^2 diverges there
            vanishes = False
        if not vanishes:
            raise ValueError(f"horizon: the redshift V^2 = {v2} does not vanish at r_h = {self.r_h}")
        kappa_t = self.kappa_t() if self.targets & (FUNCTIONS | {"kappa", "T"}) else None
        N = self.step("normalisation of the Killing time, xi = N d/dt", "N", normalization_factor(self.spacetime, self.rep))
        values = self.values(kappa_t, N)
        functions = self.functions(kappa_t) if self.targets & FUNCTIONS else {}
        self.provenance.append(f"r_h = {self.r_h}; normalisation '{self.spacetime.normalization.kind}': N = {N}")
        return SymbolicResult(values=values, functions=functions, steps=tuple(self.steps), provenance=tuple(self.provenance))

    def kappa_t(self) -> sympy.Expr:
        """kappa_t^2 = lim kappa2 at the equator (the zeroth law is checked on the numeric side)."""
        fields = self.fields
        if self.rotating:
            self.step("ZAMO lapse alpha^2 = -(g_tt - g_tphi^2/g_phiphi)", "alpha**2", fields.redshift2)
            self.step("ZAMO angular velocity omega = -g_tphi/g_phiphi", "omega", fields.omega)
        else:
            self.step("static observer u^t = 1/sqrt(-g_tt); redshift V = sqrt(-g_tt)", "V", sympy.sqrt(fields.redshift2))
            self.step("a^mu = Gamma^mu_tt (u^t)^2, a_loc = sqrt(g_mu nu a^mu a^nu)", "a_loc", sympy.sqrt(sympy.factor(fields.accel2)))
        squared = self.at.limit(sympy.cancel(nh.at_angles(fields.kappa2, self.metric)))
        kappa_t = nc.positive_sqrt(squared, self.points)
        what = "alpha |grad alpha| (ZAMO, theta = pi/2)" if self.rotating else "V a_loc (static observer)"
        self.step(f"kappa_t = lim_(r -> r_h) {what}", "kappa_t", kappa_t)
        if not self.rotating:
            self.rindler(squared)
        return kappa_t

    def rindler(self, squared: sympy.Expr) -> None:
        """Proper distance rho to the horizon and -g_tt ~ kappa_R^2 rho^2 (a step when it works)."""
        g = self.metric.g
        if g[0, 1] != 0 or g[1, 1] == 0:  # the proper distance needs g_rr, without dt dr terms
            return
        try:
            k_f, c_f, _ = self.at.leading(sympy.cancel(self.fields.redshift2))
            k_g, c_g, _ = self.at.leading(sympy.cancel(1 / g[1, 1]))
        except (CannotCompute, ValueError):
            return
        x, rho, power = sympy.Symbol("x", positive=True), sympy.Symbol("rho", positive=True), 1 - sympy.Rational(k_g, 2)
        if power > 0 and k_f / power == 2:  # else degenerate: no Rindler region
            self.step("proper distance rho = integral dr/sqrt(G), x = |r - r_h|", "rho", x**power / (power * sympy.sqrt(nc.tidy(c_g))))
            kappa_r2 = nc.tidy(c_f * power**2 * c_g)  # (the square: its root is not needed for the comparison)
            same = "= kappa_t" if nh.is_zero(kappa_r2 - squared, self.points) else "DIFFERS from kappa_t"
            self.step(f"Rindler form -g_tt ~ kappa_R^2 rho^2, kappa_R {same}", "-g_tt", kappa_r2 * rho**2)

    def area(self) -> sympy.Expr:
        nh.check_area(self.metric)
        n = nh.round_sphere_power(self.metric)
        if n is not None:
            area_r = self.step("A(r) = R^n times the integrated unit-sphere element", "A(r)", self.metric.static.R**n * nh.sphere_factor(n))
            return self.step("A = lim_(r -> r_h) A(r)", "A", nc.tidy(self.at.limit(area_r)))
        density = nh.angular_density(nc.tidy(self.at.limit(nh.angular_determinant(self.metric))), self.metric)
        for angle in nh.polar_angles(self.metric):
            density = sympy.integrate(density, (angle, 0, sympy.pi))
        if density.has(sympy.Integral):
            raise CannotCompute("area: sympy could not integrate the induced horizon metric over the angles")
        return self.step("A = integral of sqrt(det) of the angular block at r_h", "A", nc.tidy(2 * sympy.pi * density))

    def omega(self, N: sympy.Expr) -> sympy.Expr:
        if not self.rotating:
            return self.step("Omega = 0 (static metric)", "Omega", sympy.Integer(0))
        omega = self.at.limit(sympy.cancel(nh.at_angles(self.fields.omega, self.metric)))
        return self.step("Omega = N lim_(r -> r_h) omega (ZAMO angular velocity)", "Omega", nc.tidy(N * omega))

    def phi(self, N: sympy.Expr) -> sympy.Expr:
        if self.potential is None:
            raise CannotCompute("Phi: the spacetime has no electromagnetic potential")
        kind = self.spacetime.normalization.kind
        if kind == "as-written":
            reference = nh.limit_at_infinity(self.potential, self.r, self.points)
        else:
            r0 = self.spacetime.normalization.radius if kind == "radius" else geodesic_radius(self.spacetime, self.rep)
            reference = self.potential.subs(self.r, r0)
        where = "infinity" if kind == "as-written" else "the normalisation radius"
        phi = nc.tidy(N * (reference - self.at.limit(self.potential)))
        return self.step(f"Phi = N [(A_t + omega A_phi) at {where} minus at r_h]", "Phi", phi)

    def functions(self, kappa_t: sympy.Expr) -> dict[str, sympy.Lambda]:
        fields = self.function_fields()
        t_loc = self.step("Tolman: T_loc = kappa_t/(2 pi V(r)), independent of N", "T_loc",
                          kappa_t / (2 * sympy.pi * sympy.sqrt(sympy.factor(fields.redshift2))))
        functions = {"a_loc": sympy.Lambda(self.r, sympy.sqrt(sympy.factor(fields.accel2))), "T_loc": sympy.Lambda(self.r, t_loc)}
        return {k: v for k, v in functions.items() if k in self.targets}


def _times(a: Measured, b: Measured) -> Measured:
    return Measured(a.value * b.value, abs(a.value) * b.error + abs(b.value) * a.error)


class _Numeric(_Side):
    """Values at one point: fields sampled at r_h + side delta_k, Richardson-extrapolated."""

    def __init__(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> None:
        super().__init__(problem)
        self.point, self.digits, self.evidence = dict(point), digits, {}
        self.offsets = max(10, digits // 3 + 2)
        self.dps = digits + 18 + int(0.31 * self.offsets)  # guard + digits lost in g_tt at 1e-6 2^-offsets

    def radial(self, expr: sympy.Expr, theta: sympy.Expr = sympy.pi / 2, keep_angles: bool = False) -> Callable:
        """x (and the polar angles if keep_angles) -> expr at this point."""
        angles = nh.polar_angles(self.metric) if keep_angles else ()
        expr = as_sympy(expr) if keep_angles else nh.at_angles(expr, self.metric, theta)
        symbols = sorted(expr.free_symbols - {self.r, *angles}, key=str)
        function, arguments = nh.compile_expr(expr, (self.r, *angles, *symbols)), [self.point[s] for s in symbols]
        return lambda x, *a: function(x, *a, *arguments)

    def times(self, a: Measured, b: object, label: str, name: str) -> Measured:
        return _times(a, b if isinstance(b, Measured) else Measured(nh.value_at(b, {}, self.dps).real, mpmath.mpf(0)))

    def result(self) -> NumericResult:
        with mpmath.workdps(self.dps):
            self.r_h = horizon_radius_numeric(self.spacetime, self.point, self.digits + 10)
            self.scale = abs(self.r_h.value) or mpmath.mpf(1)
            redshift2 = self.radial(self.fields.redshift2)
            self.side = static_side(redshift2, self.r_h.value)
            self.check_redshift(redshift2)
            kappa_t = self.kappa_t()
            N = normalization_factor_numeric(self.spacetime, self.point, self.digits + 5)
            values = self.values(kappa_t, N)
            functions = self.functions(kappa_t) if self.targets & FUNCTIONS else {}
            self.evidence.update(r_h=float(self.r_h.value), N=float(N.value), side="r > r_h" if self.side > 0 else "r < r_h")
            self.provenance.append(f"r_h = {mpmath.nstr(self.r_h.value, 15)}; {self.dps} digits; errors: Richardson + inputs")
        return NumericResult(values=values, functions=functions, evidence=self.evidence, provenance=tuple(self.provenance))

    def check_redshift(self, redshift2: Callable) -> None:
        """V^2 must vanish at r_h, compared with its value a little way into the static region."""
        r_h = self.r_h.value
        away, at = abs(redshift2(r_h + self.side * self.scale / 1000)), redshift2(r_h)
        if not mpmath.isfinite(at) or abs(at) > mpmath.mpf(10) ** (-(self.digits // 2)) * away:
            raise ValueError(f"horizon: V^2 = {mpmath.nstr(mpmath.re(at), 6)} does not vanish at r_h = {mpmath.nstr(r_h, 12)}")

    def limit(self, expr: sympy.Expr, theta: sympy.Expr = sympy.pi / 2, root: bool = False) -> Measured:
        function, r_h, side = self.radial(expr, theta), self.r_h.value, self.side
        at = lambda h: mpmath.re(function(r_h + side * h))  # noqa: E731
        self.last = limit = nh.horizon_limit((lambda h: mpmath.sqrt(abs(at(h)))) if root else at, self.scale, self.digits, self.offsets)
        return Measured(limit.value.value, limit.value.error + limit.shift_error(self.r_h.error))

    def kappa_t(self) -> Measured:
        kappa_t, limit = self.limit(self.fields.kappa2, root=True), self.last
        self.evidence.update(offsets=[h for h, _ in limit.samples], redshifted_acceleration=[v for _, v in limit.samples])
        what = "ZAMO alpha |grad alpha|" if self.rotating else "static V a_loc"
        self.provenance.append(f"kappa_t: {what} at {self.offsets} offsets halving from {mpmath.nstr(limit.h0, 3)}, Richardson")
        g = self.metric.g
        if self.rotating:
            others = [self.limit(self.fields.kappa2, theta, root=True) for theta in _OTHER_THETAS]
            spread = max(abs(o.value - kappa_t.value) for o in others)
            holds = bool(spread <= 10 * max([kappa_t.error] + [o.error for o in others]))
            self.evidence["zeroth_law"] = {"theta": ["pi/2", "pi/3", "pi/4"], "kappa_t": [float(m.value) for m in [kappa_t, *others]],
                                           "max_difference": float(spread), "holds": holds}
            self.provenance.append(f"zeroth law at theta = pi/3, pi/4: {'holds' if holds else 'FAILS'}")
        elif g[0, 1] == 0 and g[1, 1] != 0:
            offsets, ratios = nh.rindler_ratios(self.radial(g[1, 1]), self.radial(self.fields.redshift2), self.r_h.value, self.side, self.scale)
            self.evidence.update(rindler_offsets=offsets, rindler_ratio=ratios)
        return kappa_t

    def area(self) -> Measured:
        nh.check_area(self.metric)
        n, polar = nh.round_sphere_power(self.metric), nh.polar_angles(self.metric)
        if n is not None:
            self.provenance.append("A: R(r)^n extrapolated, times unit-sphere quadratures")
            return _times(nh.sphere_factor_numeric(n), self.limit(self.metric.static.R**n))
        if len(polar) > 2:
            raise CannotCompute("area: over two polar angles in a non-round metric (quadrature too slow)")
        det = nh.angular_determinant(self.metric)
        density, r_h = self.radial(det, keep_angles=True), self.r_h.value
        if na.regular_at(self.radial(sympy.denom(det), keep_angles=True), len(polar), r_h, self.side, self.scale, self.digits):
            area = na.area_at_horizon(density, len(polar), self.r_h, self.digits)
            if area is not None:
                self.provenance.append("A: Gauss-Legendre quadrature of sqrt(det) of the angular block at r_h (regular there)")
                return area
        limit, propagated = na.area_by_quadrature(density, len(polar), r_h, self.side, self.scale, self.digits, self.offsets)
        self.provenance.append("A: quadrature of sqrt(det) of the angular block, extrapolated")
        return Measured(limit.value.value, limit.value.error + limit.shift_error(self.r_h.error) + propagated)

    def omega(self, N: Measured) -> Measured:
        return _times(N, self.limit(self.fields.omega)) if self.rotating else Measured(mpmath.mpf(0), mpmath.mpf(0))

    def phi(self, N: Measured) -> Measured:
        if self.potential is None:
            raise CannotCompute("Phi: the spacetime has no electromagnetic potential")
        potential = self.radial(self.potential)
        if self.spacetime.normalization.kind == "as-written":  # r = scale/h, h -> 0: expansion in 1/r
            reference, _ = nh.richardson_limit(lambda h: mpmath.re(potential(self.scale / h)), mpmath.mpf(1) / 20, steps=self.offsets)
        else:
            value = mpmath.re(potential(normalization_radius_numeric(self.spacetime, self.point, self.digits + 10)))
            reference = Measured(value, mpmath.mpf(10) ** (-self.digits - 5) * abs(value))
        on_horizon = self.limit(self.potential)
        return _times(N, Measured(reference.value - on_horizon.value, reference.error + on_horizon.error))

    def functions(self, kappa_t: Measured) -> dict[str, Callable]:
        fields = self.function_fields()
        functions = nh.local_functions(self.radial(fields.accel2), self.radial(fields.redshift2), kappa_t, self.dps)
        return {k: f for k, f in functions.items() if k in self.targets}
