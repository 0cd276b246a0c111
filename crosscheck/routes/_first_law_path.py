"""The path of the first-law route: a family of holes that shrinks to zero size.

Entropy from thermodynamics is S = integral dS with dS = (dM - Phi dQ)/T
along any path of solutions of the same theory (couplings fixed), and the
integration constant is fixed where the hole has no size (S -> 0).  The path
used here multiplies every *hole parameter* by lambda, 0 < lambda <= 1:

- a hole parameter is one that changes the metric only by terms that die
  away at large r relative to the metric functions themselves (M in
  1 - 2M/r, Q in Q^2/r^2, q in q^2 M^2/r^2, the BTZ M against r^2/l^2);
- a *coupling* (L of AdS, Lambda, l of BTZ, H of de Sitter) changes the
  leading large-r behaviour and stays fixed, so that every point of the path
  is a solution of the same theory.

Which parameters are which is decided from the metric itself at a
representative point (large-r ratios |d_p f / f|, f = F, G, R), not from
parameter names, so user-written `static:` claims work too.  Whether the
hole really shrinks (R(r_h) -> 0 as lambda -> 0) is checked numerically by
the route; a cosmological horizon does not, and the route says so.

Physical charges come from the asymptotics, with the D-dimensional
normalisations of G = 1 gravity and Gaussian electromagnetism (action
(1/16 pi) integral (R - F^2)), which the 4-dimensional families use:
- mass variation: dM = -((D-2) Omega_(D-2) / (16 pi)) lim_(r->oo) R^(D-3) R' sqrt(G/F) dF
  (the 1/R^(D-3) fall-off of F; R' sqrt(G/F) = sqrt(g^(mu nu) d_mu R d_nu R / F)
  makes it coordinate independent and the energy conjugate to t as written:
  rescaling t rescales the energy once, F twice);
- charge (Gauss): Q = (Omega_(D-2)/(4 pi)) lim_(r->oo) R^(D-2) sqrt(G/F) dA_t/dr;
- the potential at infinity: lim_(r->oo) A_t.
The limits are taken once per problem by sympy (cached, time-limited).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.spacetimes.base import StaticFunctions
from crosscheck.spacetimes.evaluation import real_function
from crosscheck.timebox import OutOfTime, run_limited

LAMBDA = sympy.Symbol("lambda_path", positive=True)
#: Seconds allowed for each asymptotic limit taken by sympy.
LIMIT_BUDGET = 5.0
#: Radii (in units of the horizon radius) of the large-r coupling test.
_NEAR, _FAR = mpmath.mpf(10) ** 4, mpmath.mpf(10) ** 8


def sphere_volume(n: int) -> sympy.Expr:
    """Omega_n = 2 pi^((n+1)/2) / Gamma((n+1)/2), the area of the unit n-sphere."""
    half = sympy.Rational(n + 1, 2)
    return 2 * sympy.pi**half / sympy.gamma(half)


@dataclass(frozen=True)
class Path:
    """lambda -> (hole parameters times lambda, couplings fixed) and the charges along it.

    `mass_rate` and `charge_rate` are dM/dlambda and dQ/dlambda, `potential_inf`
    A_t at infinity, all closed forms in LAMBDA and the parameters (the
    parameters standing for their unscaled values).  `charge` is Q itself.
    """

    scaled: tuple[sympy.Symbol, ...]
    fixed: tuple[sympy.Symbol, ...]
    mass_rate: sympy.Expr
    charge_rate: sympy.Expr
    potential_inf: sympy.Expr
    charge: sympy.Expr
    mass_gradient: tuple[sympy.Expr, ...]  # dM/dp for each scaled parameter (unscaled point)

    def scaling(self) -> dict[sympy.Symbol, sympy.Expr]:
        return {p: LAMBDA * p for p in self.scaled}

    def point_at(self, point, lam):
        """The numeric parameter point at lambda."""
        return {s: (v * lam if s in self.scaled else v) for s, v in point.items()}


def _mentions(static: StaticFunctions, symbol: sympy.Symbol) -> bool:
    exprs = [static.F, static.G, static.R, static.A_t]
    return any(e is not None and e.has(symbol) for e in exprs)


def _large_r_ratio(f: sympy.Expr, p: sympy.Symbol, r: sympy.Symbol, point, radius, dps: int) -> mpmath.mpf:
    ratio = real_function(sympy.diff(f, p) / f, r, point, dps)(radius)
    return abs(ratio) if mpmath.isfinite(ratio) else mpmath.inf


def is_coupling(static: StaticFunctions, p: sympy.Symbol, point, scale: mpmath.mpf, dps: int = 30) -> bool:
    """True when p changes the leading large-r behaviour of F, G or R.

    |d_p f / f| at 10^4 and 10^8 horizon radii: for a hole parameter it falls
    by at least a factor 10^2 (a 1/r fall-off or faster), for a coupling it
    stays of order one.
    """
    with mpmath.workdps(dps):
        for f in (static.F, static.G, static.R):
            if f is None or not f.has(p):
                continue
            near = _large_r_ratio(f, p, static.r, point, scale * _NEAR, dps)
            far = _large_r_ratio(f, p, static.r, point, scale * _FAR, dps)
            if far > mpmath.mpf(10) ** -2 * near or far > mpmath.mpf(10) ** -3:
                return True
    return False


def split_parameters(static: StaticFunctions, parameters, point, scale) -> tuple[tuple, tuple]:
    """(hole parameters, couplings) among the parameters the metric mentions."""
    hole, fixed = [], []
    for p in parameters:
        if not _mentions(static, p):
            continue
        (fixed if is_coupling(static, p, point, scale) else hole).append(p)
    return tuple(hole), tuple(fixed)


def _limit_at_infinity(expr: sympy.Expr, r: sympy.Symbol, what: str) -> sympy.Expr:
    """lim_(r -> oo) expr by sympy within LIMIT_BUDGET; CannotCompute if not finite."""
    if not expr.has(r):
        return expr
    try:
        value = run_limited(lambda: sympy.limit(expr, r, sympy.oo), LIMIT_BUDGET)
    except OutOfTime as exc:
        raise CannotCompute(f"{what}: sympy did not finish lim_(r -> oo) within {LIMIT_BUDGET:g} s") from exc
    if value.has(sympy.oo, -sympy.oo, sympy.zoo, sympy.nan, sympy.Limit, sympy.AccumBounds):
        raise CannotCompute(f"{what}: lim_(r -> oo) of {expr} is not finite ({value})")
    return value


def _simplify(expr: sympy.Expr) -> sympy.Expr:
    try:
        return run_limited(lambda: sympy.simplify(expr), LIMIT_BUDGET / 2)
    except OutOfTime:
        return expr


@functools.lru_cache(maxsize=32)
def build_path(static: StaticFunctions, hole: tuple, fixed: tuple) -> Path:
    """Closed forms of the charges along the scaling path (cached per metric and split)."""
    r, D = static.r, static.dim
    F, G, R = static.F, static.G, static.R
    redshift = sympy.sqrt(sympy.cancel(G / F))
    mass_factor = -sympy.Integer(D - 2) * sphere_volume(D - 2) / (16 * sympy.pi)
    gradient = tuple(
        _simplify(mass_factor * _limit_at_infinity(R ** (D - 3) * sympy.diff(R, r) * redshift * sympy.diff(F, p), r, "mass variation"))
        for p in hole
    )
    scaling = {p: LAMBDA * p for p in hole}
    # d/dlambda of f(lambda p) is sum_i p_i (d_i f)(lambda p).
    mass_rate = sum((p * g.subs(scaling, simultaneous=True) for p, g in zip(hole, gradient)), sympy.Integer(0))
    if static.A_t is None:
        zero = sympy.Integer(0)
        return Path(hole, fixed, mass_rate, zero, zero, zero, gradient)
    gauss = sphere_volume(D - 2) / (4 * sympy.pi) * R ** (D - 2) * redshift * sympy.diff(static.A_t, r)
    charge = _simplify(_limit_at_infinity(gauss, r, "charge"))
    potential_inf = _limit_at_infinity(static.A_t, r, "potential at infinity")
    charge_rate = sympy.diff(charge.subs(scaling, simultaneous=True), LAMBDA)
    return Path(hole, fixed, mass_rate, charge_rate, potential_inf.subs(scaling, simultaneous=True), charge, gradient)
