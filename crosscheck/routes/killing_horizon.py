"""Route `killing-horizon`: surface gravity from the Killing vector on the horizon.

The horizon generator chi = N (d/dt + Omega_H d/d(axial)) is null on the
horizon, and there (nabla_mu chi_nu)(nabla^mu chi^nu) = -2 kappa^2.  Because
chi is Killing, nabla_mu chi_nu = (1/2)(d_mu chi_nu - d_nu chi_mu), so the
route needs only the metric, its block-wise inverse and partial derivatives
of chi_mu = g_mu t + Omega_H g_mu axial -- no Christoffel symbols.  The field
kappa^2(r, theta) is formed away from the horizon and its limit r -> r_h is
taken exactly (common denominator, L'Hopital while 0/0; `_killing_algebra`)
or numerically (Richardson extrapolation from r_h +- delta_k;
`_killing_sampling`).  The same generator gives Omega_H, the electric
potential Phi = chi.A (reference minus horizon), the horizon area from the
induced volume element, S = A/4, and for static metrics the Killing-orbit
acceleration a = |d ln V| (V = |chi|) and the Tolman temperature
(`_killing_geometry`).
"""

from __future__ import annotations

from collections.abc import Mapping

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes import _killing_algebra as ka
from crosscheck.routes import _killing_geometry as kg
from crosscheck.routes import _killing_sampling as ks
from crosscheck.routes.base import NumericResult, Problem, Step, SymbolicResult
from crosscheck.spacetimes.base import Spacetime
from crosscheck.spacetimes.horizon import horizon_radius, horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor, normalization_factor_numeric

_AREA_NAMES = frozenset({"A", "S"})
_FUNCTION_NAMES = frozenset({"a_loc", "T_loc"})
_THETAS = ", ".join(ks.ZEROTH_LAW_THETAS)
_METHOD = (
    "chi = N (d/dt + Omega_H d/d{axial}); for a Killing vector nabla_mu chi_nu = (1/2)(d_mu chi_nu - d_nu chi_mu) "
    "(the symmetric Christoffel terms cancel), so kappa^2 = -(1/2) nabla_mu chi_nu nabla^mu chi^nu needs only "
    "the metric, its block-wise inverse and partial derivatives of chi_mu = g_mu t + Omega_H g_mu {axial}"
)
_AREA_LAW = "S = A/4: Bekenstein-Hawking area law in geometric units (general relativity)"
_TOLMAN = ("a_loc: acceleration of the Killing orbit, a_mu = d_mu ln V, |a| = sqrt(g^mu nu a_mu a_nu), V = sqrt(-g_tt); "
           "T_loc = kappa_t/(2 pi V) (Tolman), independent of N")


class KillingHorizonRoute:
    """kappa, T, A, S, Omega, Phi, r_h (and a_loc, T_loc when static) from the horizon generator."""

    name = "killing-horizon"
    title = "Surface gravity from the Killing vector on the horizon"
    grade = "exact"
    version = "1"
    observables = frozenset({"kappa", "T", "A", "S", "Omega", "Phi", "r_h", "a_loc", "T_loc"})

    def applies(self, problem: Problem) -> str | None:
        spacetime = problem.spacetime
        if spacetime is None:
            return "detector claim without spacetime" if problem.detector is not None else "no spacetime"
        spec = spacetime.horizon
        if spec is None or (spec.expression is None and spec.root is None):
            return f"no horizon ({spacetime.family or spacetime.metric.form + ' metric'})"
        if spacetime.metric.axial is not None and problem.wanted & _FUNCTION_NAMES:
            return "a_loc and T_loc are for static observers; this metric rotates"
        return None

    def symbolic(self, problem: Problem) -> SymbolicResult:
        spacetime = _spacetime(problem)
        geo = kg.geometry(spacetime.metric)
        core = _Closed(geo, spacetime, problem)
        values, steps, provenance = core.surface_gravity()
        functions = {}
        if problem.wanted & _AREA_NAMES:
            area, how = kg.area_symbolic(geo, core.r_h, core.rep, core.probes)
            values["A"], values["S"] = area, area / 4
            steps += [Step("horizon area A", area), Step("S = A/4", area / 4)]
            provenance += [how, _AREA_LAW]
        if "Phi" in problem.wanted:
            values["Phi"], how = kg.phi_symbolic(geo, spacetime, core.r_h, core.omega, core.n, core.rep, core.checks)
            steps.append(Step("Phi = chi.A at the reference minus on the horizon", values["Phi"]))
            provenance.append(how)
        if problem.wanted & _FUNCTION_NAMES:
            a_loc, v_t = kg.static_acceleration(geo)
            r = geo.r
            functions = {"a_loc": sympy.Lambda(r, a_loc), "T_loc": sympy.Lambda(r, core.kappa_t / (2 * sympy.pi * v_t))}
            steps += [Step("a_loc = |d ln V| with V = sqrt(-g_tt)", a_loc),
                      Step("T_loc = kappa_t/(2 pi V) (Tolman)", functions["T_loc"].expr)]
            provenance.append(_TOLMAN)
        return SymbolicResult(values=values, functions=functions, steps=tuple(steps), provenance=tuple(provenance))

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        spacetime, wanted = _spacetime(problem), problem.wanted
        geo = kg.geometry(spacetime.metric)
        with mpmath.workdps(digits + 10):
            point = {s: ka.to_mp(v) for s, v in point.items()}
            r_h = horizon_radius_numeric(spacetime, point, digits)
            ks.check_null(geo, point, r_h, digits)
            sampled = ks.sample_horizon(geo, point, r_h, digits)
            n = normalization_factor_numeric(spacetime, point, digits)
            kappa = _product(n, sampled.kappa_t)
            two_pi = 2 * mpmath.pi
            values = {"kappa": kappa, "T": Measured(kappa.value / two_pi, kappa.error / two_pi), "r_h": r_h,
                      "Omega": _product(n, sampled.omega)}
            provenance = [*_inputs(spacetime), _METHOD.format(axial=geo.axial_name),
                          f"kappa_t^2 field lambdified (mpmath, {digits + ks.FIELD_GUARD} digits) at r_h {sampled.side} "
                          f"delta_k, delta_k = {mpmath.nstr(sampled.delta0, 5)} * 2^-k (k < {ks.STEPS}), Richardson-"
                          "extrapolated; error: last two orders plus the r_h error propagated (recomputed at r_h + error)"]
            evidence: dict[str, object] = {"offsets": sampled.offsets,
                                           "kappa_samples": [_kappa_float(n, v) for v in sampled.samples]}
            if geo.angular:
                evidence["zeroth_law_theta"] = [float(ks.theta_value(t)) for t in ks.ZEROTH_LAW_THETAS]
                evidence["zeroth_law_kappa"] = [_kappa_float(n, k) for k in sampled.zeroth]
                provenance.append(f"zeroth law: kappa^2 agrees at theta = {_THETAS}")
            if wanted & _AREA_NAMES:
                area, how = kg.area_numeric(geo, point, r_h, digits)
                values["A"], values["S"] = area, Measured(area.value / 4, area.error / 4)
                provenance += [how, _AREA_LAW]
            if "Phi" in wanted:
                thetas = [ks.theta_value(t) for t in ks.ZEROTH_LAW_THETAS]
                values["Phi"], evidence["phi_theta"], how = kg.phi_numeric(
                    geo, spacetime, point, r_h, sampled.omega, n, digits, thetas, ks.FIELD_GUARD, ks.STEPS)
                provenance.append(how)
            functions = {}
            if wanted & _FUNCTION_NAMES:
                functions = kg.static_functions_numeric(geo, point, sampled.kappa_t, digits)
                provenance.append(_TOLMAN + "; evaluated at two precisions (error: their difference)")
        return NumericResult(values=values, functions=functions, evidence=evidence, provenance=tuple(provenance))


class _Closed:
    """The exact surface gravity of one problem, with what the extras need (r_h, Omega_H, N, kappa_t)."""

    def __init__(self, geo: kg.Geometry, spacetime: Spacetime, problem: Problem) -> None:
        self.geo, self.spacetime = geo, spacetime
        self.rep = representative(problem)
        self.probes = probe_points(problem)
        self.checks = self.probes + edge_points(problem)

    def surface_gravity(self) -> tuple[dict[str, sympy.Expr], list[Step], list[str]]:
        geo, r, rep = self.geo, self.geo.r, self.rep
        self.r_h = r_h = ka.merge_radicals(horizon_radius(self.spacetime, rep))
        if not ka.vanishes(geo.norm_eq.subs(r, r_h), rep):
            raise ValueError(f"horizon: the Killing vector is not null at r = {r_h} (norm {geo.norm_eq}): not a horizon")
        self.omega = sympy.Integer(0) if geo.axial is None else ka.simplify_radical(geo.omega_eq.subs(r, r_h), self.checks)
        field_eq = sympy.cancel(sympy.together(geo.field_eq))
        k2_t, lhopital = ka.horizon_limit(field_eq, r, r_h, {geo.W: self.omega}, rep, self.checks)
        _require_nonnegative(k2_t, rep)
        self.kappa_t = ka.positive_sqrt(k2_t, self.probes)
        self.n = normalization_factor(self.spacetime, rep)
        kappa = ka.simplify_radical(self.n * self.kappa_t, self.checks) if self.n != 1 else self.kappa_t
        values = {"kappa": kappa, "T": kappa / (2 * sympy.pi), "r_h": r_h, "Omega": self.n * self.omega}
        shown = {geo.W: sympy.Symbol("Omega_H")}
        steps = [
            Step(f"Killing vector chi^mu = N (d/dt + Omega_H d/d{geo.axial_name}) in {geo.coord_names}", geo.vector(shown)),
            Step("chi_mu = g_mu t + Omega_H g_mu axial", sympy.Tuple(*geo.chi).xreplace(shown)),
            Step(f"field kappa_t^2 = -(1/2) nabla_mu chi_nu nabla^mu chi^nu{geo.where_eq} (before the limit)",
                 field_eq.xreplace(shown)),
            Step("horizon r_h", r_h),
            Step("Omega_H = -g_t,axial/g_axial,axial at r_h (chi null on the horizon)", self.omega),
            Step(f"kappa_t^2 = lim r -> r_h ({lhopital} L'Hopital step(s))", k2_t),
            Step("normalisation N", self.n),
            Step("kappa = N kappa_t", kappa),
            Step("T = kappa/(2 pi)", values["T"]),
        ]
        provenance = [*_inputs(self.spacetime), _METHOD.format(axial=geo.axial_name),
                      f"limit r -> r_h: common denominator in {r}, {lhopital} L'Hopital step(s); zero tests at the "
                      f"representative point {_show(rep)} (40 and 80 digits)"]
        if geo.angular:
            steps.append(Step(f"zeroth law: kappa_t^2 at theta = {_THETAS} (representative point)", self._zeroth_law()))
            provenance.append(f"zeroth law checked numerically at theta = {_THETAS}; the closed form is the limit at "
                              "theta = pi/2")
        return values, steps, provenance

    def _zeroth_law(self, digits: int = 20) -> sympy.Tuple:
        """kappa_t^2 at each zeroth-law theta at the representative point (raises if they differ)."""
        with mpmath.workdps(digits + 10):
            point = {s: ka.to_mp(v) for s, v in self.rep.items()}
            r_h = horizon_radius_numeric(self.spacetime, point, digits)
            sampled = ks.sample_horizon(self.geo, point, r_h, digits, propagate=False)
            return sympy.Tuple(*(sympy.Float(mpmath.nstr(v, digits), digits) for v in sampled.zeroth))


# ---------------------------------------------------------------------------
# problem inputs
# ---------------------------------------------------------------------------


def _spacetime(problem: Problem) -> Spacetime:
    if problem.spacetime is None:
        raise CannotCompute("killing-horizon needs a spacetime")
    return problem.spacetime


def representative(problem: Problem) -> dict[sympy.Symbol, sympy.Expr]:
    """Midpoints of the parameter ranges (1 for a parameter without a range)."""
    return {p: _fraction_of(problem.ranges.get(p), sympy.Rational(1, 2)) for p in problem.parameters}


def probe_points(problem: Problem) -> list[dict[sympy.Symbol, sympy.Expr]]:
    """The representative point first, then a few more inside the ranges (sign checks)."""
    fractions = [sympy.Rational(1, 2), sympy.Rational(3, 10), sympy.Rational(7, 10), sympy.Rational(3, 20)]
    return [{p: _fraction_of(problem.ranges.get(p), f) for p in problem.parameters} for f in fractions]


def edge_points(problem: Problem) -> list[dict[sympy.Symbol, sympy.Expr]]:
    """Each parameter at an end of its range, the others at their midpoints, and the two
    corners where all are at their lower or upper ends (spurious-zero tests)."""
    middle = representative(problem)
    ranged = [p for p in problem.parameters if p in problem.ranges]
    points = [{**middle, p: _fraction_of(problem.ranges[p], f)} for p in ranged for f in (0, 1)]
    return points + [{**middle, **{p: _fraction_of(problem.ranges[p], f) for p in ranged}} for f in (0, 1)]


def _fraction_of(bounds, f) -> sympy.Expr:
    if bounds is None:
        return sympy.Integer(1)
    lo, hi = (sympy.Rational(b) for b in bounds)
    return lo + f * (hi - lo)


def _require_nonnegative(k2: sympy.Expr, rep) -> None:
    """kappa^2 < 0 at the representative point means chi is not the generator of this horizon."""
    value = ka.value_at(k2, rep, 30)
    if mpmath.re(value) < -mpmath.mpf(10) ** -20 * max(abs(value), 1):
        raise ValueError(f"kappa^2 = {mpmath.nstr(value, 10)} < 0 on the horizon: not a Killing horizon of this generator")


def _inputs(spacetime: Spacetime) -> list[str]:
    metric, spec, norm = spacetime.metric, spacetime.horizon, spacetime.normalization
    horizon = f"expression {spec.expression}" if spec.expression is not None else f"root '{spec.root}' of the Killing norm"
    which = norm.kind + (f" (r0 = {norm.radius})" if norm.kind == "radius" else "")
    return [f"inputs: metric g_mu nu ({metric.form} form, coordinates {', '.join(map(str, metric.coords))}), "
            f"horizon {horizon}, normalisation {which}"]


def _show(point) -> str:
    return ", ".join(f"{s} = {v}" for s, v in sorted(point.items(), key=lambda kv: str(kv[0])))


def _product(a: Measured, b: Measured) -> Measured:
    """a b with first-order error propagation (absolute, so that b = 0 is fine)."""
    return Measured(a.value * b.value, abs(a.value) * b.error + abs(b.value) * a.error)


def _kappa_float(n: Measured, k2) -> float:
    """N sqrt(kappa_t^2) as a float, for evidence (negative rounding noise counts as 0)."""
    return float(n.value * mpmath.sqrt(max(mpmath.mpf(k2), 0)))
