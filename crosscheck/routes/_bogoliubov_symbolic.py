"""The Bogoliubov route's own symbolic derivation (private helpers).

From the route's construction (`_null_rays`): u = -2 tau(x), p = -2 b(x), with the tortoise
coordinate tau = integral dr/sqrt(F G) and the matching function b (areal radius
R - R(r_h), or integral sqrt(F/G) dr without one).  Steps, all exact:

1. F G = P(r)/Q(r); P is divided by (r - rho)^2 (rho standing for r_h): the remainder must
   vanish at the horizon (tested at parameter points), the quotient P2 gives the log
   coefficient of the tortoise coordinate, the residue
   Res_(r = r_h) (r - r_h)/(F G) = Q(r_h)/P2(r_h) = 1/s^2, i.e. tau ~ ln|r - r_h|/s.
   (If P2 vanishes at r_h too the horizon is degenerate: tau is a power, no thermal map.)
2. The order m of b at r_h, counted as the multiplicity of the root rho in R - R(r_h), or
   in F/G (b' = sqrt(F/G) ~ x^(m-1)), again by division by (r - rho).
3. x ~ exp(-s u/2) at late u, so p(u) = p0 - C exp(-kappa_t u) with kappa_t = m s/2.
4. For that map the rotated-contour integrals are Euler's Gamma integrals,
   alpha, beta ~ Gamma(a) (+- i omega')^(-a), a = i omega/kappa_t; their ratio is formed and
   simplified by sympy here: |alpha/beta|^2 = exp(2 pi omega/kappa_t), and T_t is read off
   ln|alpha/beta|^2 = omega/T_t.

This is independent of the ray-peeling route's derivation (Taylor series of F G in the
distance to the horizon and the order of F): no derivatives, a residue from polynomial
division, and the temperature read off the Bogoliubov ratio itself.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import sympy

from crosscheck.errors import CannotCompute
from crosscheck.probing import is_zero
from crosscheck.routes._null_rays import RadialForm
from crosscheck.routes.base import Step
from crosscheck.spacetimes.base import Spacetime
from crosscheck.spacetimes.horizon import horizon_radius

Point = Mapping[sympy.Symbol, object]
MAX_MULTIPLICITY = 6


@dataclass(frozen=True)
class MapExponent:
    """kappa_t of the late-time map p(u) = p0 - C exp(-kappa_t u), and T_t = kappa_t/(2 pi)."""

    kappa_t: sympy.Expr
    T_t: sympy.Expr
    r_h: sympy.Expr
    steps: tuple
    reason: str


def _tidy(expr: sympy.Expr) -> sympy.Expr:
    """simplify small expressions only (sympy can take minutes on large radical ones)."""
    return sympy.simplify(expr) if sympy.count_ops(expr) <= 150 else expr


class _Horizon:
    """Polynomials in r evaluated and reduced at the horizon r_h (a closed form)."""

    def __init__(self, r: sympy.Symbol, r_h: sympy.Expr, points: Sequence[Point]) -> None:
        self.r, self.r_h, self.points = r, r_h, points
        self.rho = sympy.Dummy("rho")
        self.modulus: sympy.Poly | None = None

    def vanishes(self, expr: sympy.Expr) -> bool:
        """expr(r = rho = r_h) == 0 at every parameter point (exact zero test at two precisions)."""
        # Only sympy objects come here (Poly.as_expr, the metric's R); an int would mean a
        # constant, and no text is ever converted (claim text is parsed by crosscheck.expr).
        value = sympy.Integer(expr) if isinstance(expr, int) else expr
        return is_zero(value.subs({self.r: self.r_h, self.rho: self.r_h}), self.points)

    def multiplicity(self, poly: sympy.Poly) -> tuple[int, sympy.Poly]:
        """(k, quotient) with poly = (r - r_h)^k quotient + (terms vanishing at r_h),
        quotient(r_h) != 0: division by (r - rho), rho standing for r_h (the quotient's
        coefficients are polynomials in rho), each remainder tested for zero at r_h."""
        k, quotient = 0, poly
        while k <= MAX_MULTIPLICITY:
            if not self.vanishes(quotient.as_expr()):
                return k, quotient
            quotient = sympy.Poly(sympy.quo(quotient.as_expr(), self.r - self.rho, self.r), self.r)
            k += 1
        raise CannotCompute(f"the horizon r_h = {self.r_h} is a root of order > {MAX_MULTIPLICITY}")

    def at(self, poly: sympy.Poly) -> sympy.Expr:
        """poly(r = rho = r_h), reduced modulo the irreducible factor that r_h is a root of
        (so that the result is a low power of r_h, not a large radical expression)."""
        in_rho = sympy.Poly(poly.as_expr().subs(self.r, self.rho), self.rho)
        if self.modulus is not None:
            in_rho = in_rho.rem(sympy.Poly(self.modulus.as_expr().subs(self.r, self.rho), self.rho))
        return sum((sympy.factor(c) * self.r_h**k for k, c in enumerate(reversed(in_rho.all_coeffs()))), sympy.Integer(0))

    def find_modulus(self, poly: sympy.Poly) -> None:
        try:
            factors = sympy.factor_list(poly)[1]
        except (sympy.PolynomialError, NotImplementedError):
            return
        for factor, _ in sorted(factors, key=lambda pair: pair[0].degree()):
            if factor.degree() >= 1 and self.vanishes(factor.as_expr()):
                self.modulus = factor
                return


def _parts(expr: sympy.Expr, r: sympy.Symbol, what: str) -> tuple[sympy.Poly, sympy.Poly]:
    top, bottom = sympy.fraction(sympy.cancel(sympy.together(expr)))
    try:
        return sympy.Poly(top, r), sympy.Poly(bottom, r)
    except sympy.PolynomialError as exc:
        raise CannotCompute(f"{what} is not rational in {r}: no residue form") from exc


def _positive_root(square: sympy.Expr, points: Sequence[Point]) -> sympy.Expr:
    """The positive square root s of s^2 = square: sympy's principal root, its factored
    form when that denests, the sign fixed by the value at the parameter points."""
    root = sympy.powdenest(sympy.sqrt(sympy.factor(square)), force=True)
    if is_zero(root**2 - square, points):
        values = [sympy.re(sympy.N(root.subs(p), 30)) for p in points]
        if all(v < 0 for v in values):
            return -root
        if all(v > 0 for v in values):
            return root
    return sympy.sqrt(square)


@functools.lru_cache(maxsize=1)
def _planck_ratio() -> tuple[sympy.Expr, sympy.Expr, sympy.Symbol]:
    """(|alpha/beta|^2, T_t, kappa_t) from the Gamma-function form of alpha/beta for the map
    p = p0 - C exp(-kappa_t u): the same for every problem, so simplified once."""
    omega, omega_p, kappa_t = sympy.symbols("omega omega' kappa_t", positive=True)
    a = sympy.I * omega / kappa_t
    # x = C exp(-kappa_t u): e^(-i omega u) = (x/C)^a, e^(+- i omega' p) ~ e^(-+ i omega' x), so
    # alpha ~ int x^(a-1) e^(-i omega' x) dx = Gamma(a) (i omega')^(-a), beta the same with -i;
    # (+- i omega')^(-a) = exp(-a (ln omega' +- i pi/2)) on the principal branch (rotated contours)
    alpha_over_beta = sympy.exp(-a * (sympy.log(omega_p) + sympy.I * sympy.pi / 2)) / sympy.exp(-a * (sympy.log(omega_p) - sympy.I * sympy.pi / 2))
    ratio = sympy.simplify(sympy.powsimp(alpha_over_beta * sympy.conjugate(alpha_over_beta)))
    T_t = sympy.simplify(omega / sympy.expand_log(sympy.log(ratio), force=True))
    if T_t.has(omega) or T_t.has(omega_p):
        raise CannotCompute(f"the ratio {ratio} is not Planckian in omega")
    return ratio, T_t, kappa_t


def _thermal_ratio(steps: list) -> tuple[sympy.Expr, sympy.Symbol]:
    """T_t in terms of kappa_t, read off the Bogoliubov ratio (steps appended)."""
    ratio, T_t, kappa_t = _planck_ratio()
    steps.append(Step("p(u) = p0 - C exp(-kappa_t u): alpha, beta ~ Gamma(i omega/kappa_t) (+- i omega')^(-i omega/kappa_t) "
                      "(Euler integrals on the rotated contours); Gamma and omega' cancel in the ratio",
                      sympy.Eq(sympy.Symbol("|alpha/beta|**2"), ratio, evaluate=False)))
    steps.append(Step("Planck form ln|alpha/beta|^2 = omega/T_t", sympy.Eq(sympy.Symbol("T_t"), T_t, evaluate=False)))
    return T_t, kappa_t


def _areal_order(R: sympy.Expr, r: sympy.Symbol, r_h: sympy.Expr, horizon: _Horizon) -> int:
    """Order of R - R(r_h) at r_h.  A radius that is not rational in r (a square root, as for
    the charged dilaton) is counted through R^2 - R(r_h)^2 = (R - R(r_h)) (R + R(r_h)), the
    second factor being 2 R(r_h) > 0 there."""
    expr = R - R.subs(r, r_h)
    if not all(part.is_polynomial(r) for part in sympy.fraction(sympy.cancel(sympy.together(R)))):
        if horizon.vanishes(R):
            raise CannotCompute("the areal radius vanishes at r_h")
        expr = sympy.expand(R**2) - sympy.expand(R**2).subs(r, r_h)
    top, bottom = _parts(expr, r, "R")
    return horizon.multiplicity(top)[0] - horizon.multiplicity(bottom)[0]


def map_exponent(spacetime: Spacetime, form: RadialForm, points: Sequence[Point]) -> MapExponent:
    """kappa_t and T_t of the route's late-time map, by the residue derivation above."""
    r = form.r
    r_h = horizon_radius(spacetime, points[0])
    horizon = _Horizon(r, r_h, points)
    P, Q = _parts(form.F * form.G, r, "F G")
    horizon.find_modulus(P)
    order, P2 = horizon.multiplicity(P)
    steps = [Step(f"tortoise integrand 1/sqrt(F G) = sqrt(Q/P), {form.how}; P = (r - r_h)^{order} P2(r) at r_h = {r_h}",
                  sympy.Eq(sympy.Symbol("P2"), P2.as_expr(), evaluate=False))]
    if order != 2:
        kind = "degenerate (extremal) horizon" if order > 2 else "no double zero of F G"
        raise CannotCompute(f"{kind}: F G ~ (r - r_h)^{order}, the tortoise coordinate is not logarithmic, "
                            "so the late-time map is not exponential and there is no thermal ratio to fit")
    residue = _tidy(horizon.at(Q) / horizon.at(P2))
    steps.append(Step("log coefficient: Res_(r = r_h) (r - r_h)/(F G) = Q(r_h)/P2(r_h) = 1/s^2, tau ~ ln|r - r_h|/s",
                      sympy.Eq(sympy.Symbol("1/s**2"), residue, evaluate=False)))
    s = _tidy(_positive_root(_tidy(1 / residue), points))
    if form.R is not None and form.R.has(r):
        m, what = _areal_order(form.R, r, r_h, horizon), "areal radius R - R(r_h) (null-shell collapse)"
    else:
        top, bottom = _parts(form.F / form.G, r, "F/G")
        k = horizon.multiplicity(top)[0] - horizon.multiplicity(bottom)[0]
        if k % 2:
            raise CannotCompute(f"F/G ~ (r - r_h)^{k}: the regular null coordinate is not analytic at r_h")
        m, what = 1 + k // 2, "regular null coordinate integral sqrt(F/G) dr"
    if m < 1:
        raise CannotCompute(f"the matching function {what} does not vanish at r_h")
    kappa_value = _tidy(sympy.Rational(m, 2) * s)
    steps.append(Step(f"matching function b = {what} ~ (r - r_h)^{m}; x ~ exp(-s u/2) at late u = -2 tau, "
                      f"so p(u) = p0 - C exp(-{m} s u/2)", sympy.Eq(sympy.Symbol("kappa_t"), kappa_value, evaluate=False)))
    T_form, kappa_symbol = _thermal_ratio(steps)
    T_t = T_form.subs(kappa_symbol, kappa_value)
    reason = f"residue 1/s^2 of the tortoise integrand at r_h, {what} ~ x^{m}: kappa_t = ({m}/2) s, read off |alpha/beta|^2"
    return MapExponent(kappa_value, T_t, r_h, tuple(steps), reason)
