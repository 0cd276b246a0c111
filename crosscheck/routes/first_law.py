"""The first-law route: entropy from thermodynamics, dS = (dM - Phi dQ)/T.

Where the other routes read S off the horizon area, this one integrates the
first law.  T comes from its own local computation -- regularity of the
Euclidean section at the horizon, beta_t = 4 pi / sqrt(F'(r_h) G'(r_h)),
T = N / beta_t -- and S is

    S = integral_0^1 (dM/dlambda - Phi_t dQ/dlambda) / T_t  dlambda

along the path on which every hole parameter is multiplied by lambda while
the couplings (L of AdS, Lambda, l of BTZ) stay fixed (`_first_law_path`).
At lambda -> 0 the hole shrinks to zero size and its entropy vanishes: that
is the integration constant, fixed physically rather than by the area law
(Schwarzschild: S = integral_0^M 8 pi m dm = 4 pi M^2).  The route checks
that the hole does shrink along the path; a cosmological horizon does not,
and the route then declines.  Because S is a state function any such path
gives the same S if the first law holds; the route also reports, as a
consistency figure, dS/dp from the integral against (dM/dp - Phi dQ/dp)/T.

The energy and the potential are those of d/dt as written (entropy does not
depend on the clock); T and Phi are reported with the claim's Killing
normalisation N.  M and Q are read from the metric's asymptotics, never from
parameter names.  Rotating metrics are not handled: J would have to be read
from g_tphi ~ -2 J sin^2(theta)/r and the Omega dJ term added.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes._first_law_numeric import Thermodynamics, first_law_check
from crosscheck.routes._first_law_path import Path, build_path, split_parameters
from crosscheck.routes._first_law_symbolic import symbolic_result
from crosscheck.routes.base import NumericResult, Problem, SymbolicResult
from crosscheck.spacetimes.evaluation import real_function
from crosscheck.spacetimes.horizon import horizon_radius_numeric
from crosscheck.spacetimes.normalize import normalization_factor_numeric, normalization_radius_numeric

OBSERVABLES = frozenset({"S", "T", "Phi"})
#: How far the path must shrink the hole: R(r_h) at lambda = 1e-6 relative to lambda = 1.
_SHRUNK = mpmath.mpf(10) ** -2


def _fraction_of(bounds, f) -> sympy.Expr:
    if bounds is None:
        return sympy.Integer(1)
    lo, hi = (sympy.Rational(b) for b in bounds)
    return lo + f * (hi - lo)


def representative(problem: Problem) -> dict[sympy.Symbol, sympy.Expr]:
    """Midpoints of the parameter ranges (1 for a parameter without a range)."""
    return {p: _fraction_of(problem.ranges.get(p), sympy.Rational(1, 2)) for p in problem.parameters}


def numeric_point(point: Mapping[sympy.Symbol, object], dps: int) -> dict[sympy.Symbol, mpmath.mpf]:
    with mpmath.workdps(dps):
        return {s: (mpmath.mpf(v.p) / v.q if isinstance(v, sympy.Rational) else mpmath.mpf(v)) for s, v in point.items()}


def path_for(problem: Problem, point: Mapping[sympy.Symbol, object] | None = None) -> Path:
    """The scaling path, with hole parameters and couplings told apart at the
    representative point (so that every sample point uses the same path)."""
    static = problem.spacetime.metric.static
    rep = numeric_point(representative(problem), 40)
    try:
        scale = horizon_radius_numeric(problem.spacetime, rep, 20).value
    except ValueError as exc:
        raise CannotCompute(f"first law: no horizon at the representative point: {exc}") from exc
    hole, fixed = split_parameters(static, problem.parameters, rep, abs(scale) or mpmath.mpf(1))
    if not hole:
        raise CannotCompute("first law: no parameter changes only the hole (every parameter is a coupling "
                            "that changes the large-r metric), so there is no path to a hole of zero size")
    return build_path(static, hole, fixed)


def shrink_reason(problem: Problem, hole: tuple) -> str | None:
    """None when R(r_h) -> 0 along the path at the representative point, else why not."""
    static = problem.spacetime.metric.static
    rep = numeric_point(representative(problem), 40)
    sizes = []
    with mpmath.workdps(30):
        for lam in (mpmath.mpf(1), mpmath.mpf(10) ** -6):
            point = {s: (v * lam if s in hole else v) for s, v in rep.items()}
            try:
                r_h = horizon_radius_numeric(problem.spacetime, point, 20).value
            except ValueError as exc:
                return f"first law: the path (hole parameters {', '.join(map(str, hole))} times lambda) loses the horizon: {exc}"
            sizes.append(abs(real_function(static.R, static.r, point, 30)(r_h)))
    if not sizes[1] <= _SHRUNK * sizes[0]:
        return (f"first law: the horizon does not shrink to zero size when {', '.join(map(str, hole))} -> 0 "
                f"with the couplings fixed (R(r_h) goes from {mpmath.nstr(sizes[0], 6)} to {mpmath.nstr(sizes[1], 6)}; "
                "a cosmological horizon?), so S = integral dM/T has no physical starting point")
    return None


class FirstLawRoute:
    """Entropy by integrating dM = T dS + Phi dQ from a hole of zero size; T by local regularity."""

    name: ClassVar[str] = "first-law"
    title: ClassVar[str] = "First law: S = integral (dM - Phi dQ)/T from a hole of zero size"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "1"
    observables: ClassVar[frozenset[str]] = OBSERVABLES

    def __init__(self) -> None:
        # Problems whose first-law consistency figure was already computed: the runner keeps
        # the evidence of the first numeric call, so later calls skip the two extra integrals.
        self._checked: dict[Problem, bool] = {}

    def applies(self, problem: Problem) -> str | None:
        spacetime = problem.spacetime
        if spacetime is None or (spacetime.horizon.expression is None and spacetime.horizon.root is None):
            return "needs a spacetime with a horizon"
        static = spacetime.metric.static
        if static is None:
            return ("needs a static metric -F dt^2 + dr^2/G + R^2 dOmega^2: for rotating metrics the angular "
                    "momentum J (from g_tphi ~ -2 J sin^2(theta)/r) and the Omega dJ term are not implemented")
        if static.R is None or static.dim < 3:
            return "needs round spheres (an areal radius R) and dimension >= 3 to define mass and entropy"
        missing = problem.wanted - OBSERVABLES
        if missing:
            return f"does not compute {', '.join(sorted(missing))}"
        if "S" not in problem.wanted:
            return None
        try:
            path = path_for(problem)
        except CannotCompute as exc:
            return str(exc)
        return shrink_reason(problem, path.scaled)

    def symbolic(self, problem: Problem) -> SymbolicResult:
        path = path_for(problem) if "S" in problem.wanted else None
        return symbolic_result(problem, path, representative(problem))

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        spacetime = problem.spacetime
        wanted = problem.wanted & OBSERVABLES or frozenset({"T"})
        path = path_for(problem) if "S" in wanted else build_path(spacetime.metric.static, (), ())
        thermo = Thermodynamics(spacetime, path, point, digits)
        values: dict[str, Measured] = {}
        evidence: dict[str, object] = {}
        provenance = ["T: Euclidean regularity at r_h, beta_t = 4 pi/sqrt(F'(r_h) G'(r_h)) (or the F'' G form for a double "
                      "zero of F), exact r-derivatives at the numeric root"]
        with mpmath.workdps(thermo.dps):
            T_t, r_h = thermo.temperature_t(1)
            try:
                N = normalization_factor_numeric(spacetime, point, digits + 5)
            except ValueError as exc:
                raise CannotCompute(str(exc)) from exc
            values["T"] = Measured(N.value * T_t.value, N.value * T_t.error + N.error * T_t.value)
            evidence.update(r_h=float(r_h.value), N=float(N.value), beta_t=float(1 / T_t.value) if T_t.value else None)
            if "Phi" in wanted:
                values["Phi"] = self._phi(thermo, spacetime, point, digits, N, r_h)
            if "S" in wanted:
                S, alpha = thermo.entropy()
                values["S"] = S
                evidence.update(endpoint_exponent=float(alpha), path_scaled=[str(p) for p in path.scaled],
                                path_fixed=[str(p) for p in path.fixed])
                if problem not in self._checked:  # once per problem: it costs two more integrals
                    if len(self._checked) > 256:
                        self._checked.clear()
                    self._checked[problem] = True
                    evidence["series"] = [thermo.curve()]
                    evidence["first_law_check"] = first_law_check(spacetime, path, point, digits)
                provenance.append(f"S: {thermo.method} of (dM - Phi dQ)/T over lambda in (0, 1] (dS/dlambda ~ lambda^{float(alpha):.4g} at 0), "
                                  f"{', '.join(map(str, path.scaled))} scaled by lambda, {', '.join(map(str, path.fixed)) or 'nothing'} fixed; S(0) = 0")
                provenance.append("M, Q from the large-r fall-off of F and A_t (G = 1, Gaussian units)")
        return NumericResult(values={k: v for k, v in values.items() if k in wanted}, evidence=evidence, provenance=tuple(provenance))

    @staticmethod
    def _phi(thermo: Thermodynamics, spacetime, point, digits: int, N: Measured, r_h: Measured) -> Measured:
        static = spacetime.metric.static
        if static.A_t is None:
            return Measured(mpmath.mpf(0), mpmath.mpf(0))
        if spacetime.normalization.kind == "as-written":
            reference = thermo.potential_inf(1)
        else:
            radius = normalization_radius_numeric(spacetime, point, digits + 5)
            reference = real_function(static.A_t, static.r, point, thermo.dps)(radius)
        a_t = real_function(static.A_t, static.r, point, thermo.dps)
        phi_t = reference - a_t(r_h.value)
        shift = abs(a_t(r_h.value + r_h.error) - a_t(r_h.value))
        floor = mpmath.mpf(10) ** (-digits - 5) * abs(phi_t)
        return Measured(N.value * phi_t, N.value * (shift + floor) + N.error * abs(phi_t))


__all__ = ["FirstLawRoute"]
