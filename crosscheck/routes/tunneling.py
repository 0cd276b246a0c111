"""Route `tunneling`: Hawking radiation as tunneling through the horizon (Hamilton-Jacobi).

A massless particle with action S = -E t + W(r) crosses the horizon with
W' = E/sqrt(F G) (PHYSICS.md, "tunneling"), which has a pole at r_h; the
outgoing path passes it on a half circle, so Im W_out = pi E Res(1/sqrt(F G)).
The ratio of emission to absorption probabilities exp(-4 Im W_out) =
exp(-E/T_t) resolves the temperature T = N E/(4 Im W_out) (N the Killing
normalisation); the naive exp(-2 Im W_out) gives twice that -- the
well-known factor-of-two problem -- and is kept in the evidence so that a
claim T = kappa/pi can be diagnosed.  Symbolic side: the residue from the
Taylor coefficients of F G (`_tunneling_residue`); numeric side: a contour
integral in complex r (`_tunneling_contour`).  Rotating metrics: the frame
co-rotating with the horizon, energy E - m Omega_H (`_tunneling_plane`).
When r_h is a root of a quadratic (Kerr-Newman family) sqrt(h(0)) is found as
a rational function of r_h (`crosscheck.fieldroots`, generic field
algebra), so the closed form has no nested roots and is proved equal to a
claim quickly.  The zeroth law is checked at the other angles at 15 digits on
the numeric side (a consistency check, not the value).
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck import fieldroots as er
from crosscheck import probing
from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes import _tunneling_contour as tc
from crosscheck.routes import _tunneling_plane as tp
from crosscheck.routes import _tunneling_residue as tr
from crosscheck.routes.base import NumericResult, Problem, Step, SymbolicResult, horizon_input_obstacle
from crosscheck.spacetimes.base import Spacetime
from crosscheck.spacetimes.evaluation import to_mp
from crosscheck.spacetimes.horizon import horizon_radius, horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor, normalization_factor_numeric

OBSERVABLES = frozenset({"T", "kappa"})
_GUARD = 15
CHECK_DIGITS = 15  # digits of the zeroth-law check at the angles after the first
NAIVE_LABEL = "naive tunneling rate exp(-2 Im W)"
_RESOLVED = ("temperature from the emission/absorption ratio exp(-4 Im W_out) = exp(-E/T_t) (resolves the "
             "factor of two of the naive exp(-2 Im W_out)); T = N T_t, kappa = 2 pi T")
_DOUBLE = ("degenerate horizon: F G ~ (r - r_h)^4, 1/sqrt(F G) has a double pole at r_h, no residue-type "
           "thermal factor: T = 0 and kappa = 0")
E = sympy.Symbol("E", positive=True)


class TunnelingRoute:
    """T and kappa from the imaginary part of the Hamilton-Jacobi action across the horizon."""

    name: ClassVar[str] = "tunneling"
    title: ClassVar[str] = "Hamilton-Jacobi tunneling: imaginary action of a massless particle across the horizon"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "1"
    observables: ClassVar[frozenset[str]] = OBSERVABLES

    def applies(self, problem: Problem) -> str | None:
        reason = horizon_input_obstacle(problem, OBSERVABLES)
        if reason:
            return reason
        return tp.obstacle(problem.spacetime.metric)

    def symbolic(self, problem: Problem) -> SymbolicResult:
        return _symbolic(problem)

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        return _numeric(problem, point, digits)


def _spacetime(problem: Problem) -> Spacetime:
    if problem.spacetime is None:
        raise CannotCompute("tunneling needs a spacetime")
    return problem.spacetime


def _eq(name: str, expr: sympy.Expr) -> sympy.Basic:
    return sympy.Eq(sympy.Symbol(name), expr, evaluate=False)


def _wanted(values: dict, problem: Problem) -> dict:
    return {k: v for k, v in values.items() if k in (problem.wanted or OBSERVABLES)}


# --------------------------------------------------------------------------- symbolic side


def _symbolic(problem: Problem) -> SymbolicResult:
    spacetime = _spacetime(problem)
    rad = tp.radial(spacetime.metric)
    points = probing.probe_points(problem)
    rep, r = points[0], rad.r
    r_h = horizon_radius(spacetime, rep)
    F, G, omega = rad.at_angle(tp.ANGLES[0])
    modulus = er.defining_factor(F, r, r_h, points, tr.RH)
    quadratic = modulus is not None and modulus.degree() == 2
    clean = _raw if quadratic else None  # the root is taken in the field of r_h: no simplify needed
    f, g = tr.taylor(F, r, r_h, points, clean), tr.taylor(G, r, r_h, points, clean)
    tr.orders_allowed(f[0], g[0])
    n, h0, h1 = tr.product_series(f, g, clean)
    pole = tr.pole(n, h0, h1)
    N = normalization_factor(spacetime, rep)
    x = tr.X
    steps = [Step(f"radial null rays: {rad.inputs}", sympy.Tuple(_eq("F", F), _eq("G", G))),
             Step("horizon r_h (written r_h below)", _eq("r_h", r_h))]
    if rad.rotating:
        steps.append(Step("co-rotating frame: energy E - m Omega_H, Omega_H = -g_tphi/g_phiphi at r_h",
                          _eq("Omega_H", tr.tidy(omega.subs(r, tr.RH)))))
    steps += [Step(f"series at r_h, x = r - r_h: F = c x^{f[0]} + ..., G = d x^{g[0]} + ...",
                   sympy.Tuple(_eq("F", f[1] * x ** f[0]), _eq("G", g[1] * x ** g[0]))),
              Step(f"F G = x^{n} h(x): h(0) and h'(0) (product of the series)", sympy.Tuple(_eq("h0", h0), _eq("h1", h1))),
              Step("W' = E/sqrt(F G) = E/(x^(n/2) sqrt(h)); residue at x = 0 (sympy.residue)",
                   _eq("Res", pole.generic))]
    provenance = [f"inputs: {rad.inputs}; {tp.describe(spacetime)}",
                  "Hamilton-Jacobi W' = E/sqrt(F G); Taylor coefficients of F and G at r_h by sympy derivatives (zero "
                  "tests at 50/80 digits at the probe points), multiplied; residue by sympy.residue on the leading terms"]
    if pole.order == 1:
        if pole.generic != 1 / sympy.sqrt(tr.H0):
            raise ValueError(f"unexpected residue {pole.generic} of 1/(x sqrt(h0 + h1 x))")
        # r_h a root of a quadratic (Kerr-like): sqrt(h0) as a rational function of r_h, which proves
        # equal to a claim quickly (nested roots do not)
        root = er.positive_sqrt(h0, modulus, (f[1], g[1]), r_h, points) if quadratic else None
        residue = 1 / (tr.tidy(root) if root is not None else tr.positive_sqrt(h0, r_h, points))
        im_w = sympy.pi * E * residue
        T_t = tr.tidy(E / (4 * im_w))
        naive = N * tr.tidy(E / (2 * im_w))
        T = T_t * N if N != 1 else T_t
        steps += [Step("Im W_out = pi E Res (half circle around the simple pole)", _eq("Im(W_out)", im_w)),
                  Step("naive: exp(-2 Im W_out) = exp(-E/T) gives (NOT the temperature)", _eq("T_naive", naive)),
                  Step("resolved: exp(-4 Im W_out) = exp(-E/T_t) (emission/absorption ratio)", _eq("T_t", T_t))]
        provenance.append(_RESOLVED)
    elif pole.order == 2:
        T = sympy.Integer(0)
        steps.append(Step("double pole: the O(1/x) residue is not a thermal factor; " + _DOUBLE, _eq("Res_1", pole.residue)))
        provenance.append(_DOUBLE)
    else:
        raise ValueError(f"1/sqrt(F G) has a pole of order {pole.order} at r_h: not a horizon this route treats")
    if rad.transverse:
        steps.append(Step("h(0) at the angles " + ", ".join(map(str, tp.ANGLES)) + " (representative point)",
                          _zeroth_law(rad, r_h, n, rep)))
        provenance.append("zeroth law: h(0) agrees at the angles " + ", ".join(map(str, tp.ANGLES)))
    kappa = 2 * sympy.pi * T
    steps += [Step("normalisation of the Killing time, xi = N d/dt", _eq("N", N)),
              Step("T = N T_t", _eq("T", T)), Step("kappa = 2 pi T", _eq("kappa", kappa))]
    T, kappa = T.subs(tr.RH, r_h), kappa.subs(tr.RH, r_h)  # the closed form of r_h goes in last
    return SymbolicResult(values=_wanted({"T": T, "kappa": kappa}, problem), steps=tuple(steps),
                          provenance=tuple(provenance))


def _raw(expr: sympy.Expr) -> sympy.Expr:
    return expr


def _zeroth_law(rad: tp.Radial, r_h: sympy.Expr, n: int, rep: tp.Point) -> sympy.Tuple:
    """h(0) = F^(n/2)(r_h) G^(n/2)(r_h)/((n/2)!)^2 at each angle (representative point);
    ValueError when they differ."""
    found, k = [], n // 2
    where = {tr.RH: r_h.subs(rep)}
    r = sympy.Dummy("r")  # no assumptions: sympy's sign queries on numeric coefficients are slow
    for angle in tp.ANGLES:  # the representative point goes in first: derivatives of functions of r alone
        F, G = (e.subs(rep).xreplace({rad.r: r}) for e in rad.at_angle(angle)[:2])
        c = (sympy.diff(F, r, k) * sympy.diff(G, r, k)).subs(r, tr.RH) / sympy.factorial(k) ** 2
        found.append(probing.value(c, where, 30).real)
    with mpmath.workdps(30):
        if max(abs(v - found[0]) for v in found) > mpmath.mpf(10) ** -20 * abs(found[0]):
            raise ValueError(f"h(0) depends on the angle ({[mpmath.nstr(v, 12) for v in found]}): not a Killing horizon")
        return sympy.Tuple(*(sympy.Float(mpmath.nstr(v, 20), 20) for v in found))


# --------------------------------------------------------------------------- numeric side


@functools.lru_cache(maxsize=64)
def _prepared(F: sympy.Expr, G: sympy.Expr, omega: sympy.Expr, r: sympy.Symbol) -> tuple:
    """F, G and Omega compiled (lambdify, mpmath: works at complex r) and their polynomial parts."""
    exprs = (F, G, omega)
    symbols = tuple(sorted(set().union(*(e.free_symbols for e in exprs)) - {r}, key=str))
    compiled = tuple(sympy.lambdify((r, *symbols), e, modules="mpmath", cse=True) for e in exprs)
    return compiled, symbols, probing.polynomial_parts(F, r) + probing.polynomial_parts(G, r), \
        tuple(_coefficients(e, r, symbols) for e in (F, G))


def _coefficients(expr: sympy.Expr, r: sympy.Symbol, symbols: tuple) -> Callable | None:
    """For expr = N(r)/D(r) with polynomials N, D: parameters -> (coefficients of N, of D),
    compiled; None otherwise.  Horner's rule on these is faster on the contour than the
    expression tree (the coefficients are computed once per point); used at the zeroth-law
    angles only, since the expanded form can round worse next to a close inner horizon."""
    parts = sympy.fraction(sympy.cancel(sympy.together(expr)))
    try:
        if not all(part.is_polynomial(r) for part in parts):
            return None
        coefficients = [sympy.Poly(part, r).all_coeffs() for part in parts]
    except sympy.PolynomialError:
        return None
    return sympy.lambdify(symbols, coefficients, modules="mpmath")


def _function(compiled: Callable, coefficients: Callable | None, constants: tuple) -> Callable:
    """z -> the metric function at complex z: Horner on N/D when it is rational in r."""
    if coefficients is None:
        return lambda z: compiled(z, *constants)
    numerator, denominator = coefficients(*constants)
    return lambda z: mpmath.polyval(numerator, z) / mpmath.polyval(denominator, z)


def _numeric(problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
    spacetime = _spacetime(problem)
    rad = tp.radial(spacetime.metric)
    dps = digits + _GUARD
    with mpmath.workdps(dps):
        point = {s: to_mp(v, dps) for s, v in point.items()}
        r_h = horizon_radius_numeric(spacetime, point, digits)
        N = normalization_factor_numeric(spacetime, point, digits)
        found = [_residue_at(rad, rad.angles[0], point, r_h.value, digits, None)]
        scale, check = found[0][0].main.radius * 4, min(digits, CHECK_DIGITS)
        with mpmath.workdps(check + _GUARD):  # the other angles only test the zeroth law
            for angle in rad.angles[1:]:
                found.append(_residue_at(rad, angle, point, r_h.value, check, scale, check=True))
        result, omega_h = found[0]
        orders = result.main.orders
        evidence: dict[str, object] = {"orders": {"F": orders[0], "G": orders[1]}, "radius": float(result.main.radius),
                                       "nodes": result.main.nodes}
        if rad.rotating:
            evidence["Omega_H"] = float(omega_h)
        if orders not in ((1, 1), (2, 2)):
            tr.orders_allowed(*orders)  # raises with the reason
        if len(found) > 1:
            evidence["zeroth_law_angle"] = [float(a) for a in rad.angles]
            evidence["zeroth_law_residue"] = [float(c.residue) for c, _ in found]
            _check_angles([c for c, _ in found], check)
        provenance = [f"inputs: {rad.inputs}; {tp.describe(spacetime)}", _method(result, dps)]
        if len(found) > 1:
            provenance.append("zeroth law: the residue agrees at the angles " + ", ".join(map(str, rad.angles))
                              + f" (the others than the first computed to {check} digits: a consistency check)")
        if orders == (2, 2):
            # error: the T_t = sqrt(h0) d/(4 pi) of a simple zero split off by the root resolution d
            # (h0 = F2 G2 = 1/c_-2^2, c_-2 the double-pole coefficient of 1/sqrt(F G))
            separation = probing.resolution(r_h.value, dps) if _polys_found(rad) else result.main.radius
            bound = separation / (4 * mpmath.pi * abs(result.main.second))
            T = Measured(mpmath.mpf(0), N.value * bound)
            evidence["T_t_bound"] = float(bound)
            evidence["double_pole_coefficient"] = float(mpmath.re(result.main.second))
            evidence["subleading_residue"] = float(result.residue)
            provenance.append(_DOUBLE + " (winding numbers of F and G around r_h: 2 and 2)")
        else:
            T, naive = _temperatures(result, N)
            evidence["Im_W_out_per_E"] = float(mpmath.pi * abs(result.residue))
            evidence["naive"] = {"T": float(naive.value), "factor": float(naive.value / T.value), "label": NAIVE_LABEL}
            provenance.append(_RESOLVED + "; the naive value is in the evidence")
        evidence["series"] = [{"name": "residue of 1/sqrt(F G) by the trapezoidal rule", "x_label": "nodes",
                               "y_label": "residue", "x": [float(k) for k, _ in result.main.history],
                               "y": [v for _, v in result.main.history], "log_x": True}]
        if rad.rotating:
            provenance.append(f"co-rotating frame: energy E - m Omega_H with Omega_H = -g_tphi/g_phiphi at r_h = "
                              f"{mpmath.nstr(omega_h, 12)}")
        two_pi = 2 * mpmath.pi
        values = {"T": T, "kappa": Measured(two_pi * T.value, two_pi * T.error)}
    return NumericResult(values=_wanted(values, problem), evidence=evidence, provenance=tuple(provenance))


def _polys_found(rad: tp.Radial) -> bool:
    """Whether F or G has polynomial parts (so the root resolution of polyroots applies)."""
    return bool(_prepared(*rad.at_angle(tp.ANGLES[0]), rad.r)[2])


def _residue_at(rad: tp.Radial, angle, point: dict, r_h: mpmath.mpf, digits: int, scale,
                check: bool = False) -> tuple[tc.Contour, mpmath.mpf]:
    """The contour result and Omega_H at one angle (`scale` found at the first angle is reused).
    `check`: a zeroth-law angle, where F and G may be evaluated by Horner's rule (faster; its
    rounding near a close inner horizon is not in the error, which only the check sees)."""
    (F_tree, G_tree, omega), symbols, polys, rational = _prepared(*rad.at_angle(angle), rad.r)
    missing = [s for s in symbols if s not in point]
    if missing:
        raise ValueError(f"no value for {', '.join(map(str, missing))}")
    constants = tuple(point[s] for s in symbols)
    forms = rational if check else (None, None)  # the reported angle keeps the expression tree (its rounding)
    F, G = (_function(tree, horner, constants) for tree, horner in zip((F_tree, G_tree), forms))
    if scale is None:
        scale = probing.nearest_root_distance(polys, point, r_h, abs(r_h) or mpmath.mpf(1))
    probe = scale / 10**6
    outside = mpmath.re(F(r_h + probe))
    side = 1 if outside > 0 else -1
    result = tc.contour(lambda z: (F(z), G(z)), r_h, scale, side, digits)
    if result.main.orders == (2, 2):  # degenerate, or an inner horizon closer than 20 digits resolve?
        closer = probing.nearest_root_distance(polys, point, r_h, scale, digits=mpmath.mp.dps)
        if closer < scale / 10:
            result = tc.contour(lambda z: (F(z), G(z)), r_h, closer, side, digits)
    omega_h = mpmath.re(omega(r_h, *constants)) if rad.rotating else mpmath.mpf(0)
    return result, omega_h


def _temperatures(result: tc.Contour, N: Measured) -> tuple[Measured, Measured]:
    """Resolved T = N E/(4 Im W_out) and naive N E/(2 Im W_out), Im W_out = pi E |Res| (E = 1)."""
    im_w = mpmath.pi * abs(result.residue)
    relative = result.error / abs(result.residue)
    values = []
    for factor in (4, 2):
        t = N.value / (factor * im_w)
        values.append(Measured(t, abs(t) * relative + N.error / (factor * im_w)))
    return values[0], values[1]


def _method(result: tc.Contour, dps: int) -> str:
    return (f"closed contour integral of 1/sqrt(F G) on |r - r_h| = {mpmath.nstr(result.main.radius, 5)} (a quarter of "
            f"the distance to the nearest other zero/pole of F G), trapezoidal rule with {result.main.nodes} nodes "
            f"at {dps} digits, F G at complex r, sqrt followed continuously; order of the zero of F G from the "
            f"winding numbers of F and G ({result.main.orders[0]}, {result.main.orders[1]}); Im W_out = (E/2) Im(closed integral), E = 1 (drops out); "
            "error: change from half the nodes + change at half the radius + rounding")


def _check_angles(contours: list[tc.Contour], digits: int) -> None:
    first = contours[0]
    for c in contours[1:]:
        if c.main.orders != first.main.orders:
            raise ValueError("the order of the zero of F G depends on the angle: not a Killing horizon")
        allowed = 10 * (first.error + c.error) + mpmath.mpf(10) ** (2 - digits) * abs(first.residue)
        if abs(c.residue - first.residue) > allowed:
            raise ValueError(f"the residue depends on the angle ({mpmath.nstr(first.residue, 12)} vs "
                             f"{mpmath.nstr(c.residue, 12)}): not a Killing horizon")
