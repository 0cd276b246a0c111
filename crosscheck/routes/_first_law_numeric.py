"""Numeric side of the first-law route: local Euclidean regularity and dS = (dM - Phi dQ)/T.

T_t (for d/dt as written) comes from regularity of the Euclidean section at
the horizon, evaluated locally: with F ~ F_k x^k, G ~ G_m x^m (x = r - r_h,
k + m = 2) the (tau, r) plane is a smooth disc only if tau has period
beta_t = 2 pi / ((1 - m/2) sqrt(F_k G_m)), i.e. 4 pi / sqrt(F1 G1) for simple
zeros.  The Taylor coefficients come from the exact r-derivatives of the
metric functions at the numeric root; the orders k, m are read off them.

Entropy is the integral of dS/dlambda along the scaling path of
`_first_law_path`.  The integrand behaves as lambda^alpha at lambda -> 0;
alpha is measured and must exceed -1 (integrable).  When alpha is a simple
rational the substitution lambda = s^m makes the integrand smooth and
Gauss-Legendre converges fast; otherwise tanh-sinh, which tolerates the
endpoint power.  The horizon along the path is followed by Newton's method
from a continued grid (`RootTrack`), checked against the claim's horizon
choice.  Expressions are compiled once into mpmath closures of (r, lambda).
"""

from __future__ import annotations

import bisect
from collections.abc import Mapping

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.mpfunctions import MPMATH_FUNCTIONS
from crosscheck.routes._first_law_path import LAMBDA, Path
from crosscheck.spacetimes.base import Spacetime
from crosscheck.spacetimes.evaluation import real_function
from crosscheck.spacetimes.horizon import horizon_radius_numeric

#: lambda values of the endpoint-exponent test and of the evidence curve.
_ENDPOINT = (mpmath.mpf(10) ** -6, mpmath.mpf(10) ** -9)
_CURVE = tuple(k / 16 for k in range(1, 17))


class Thermodynamics:
    """T_t, Phi_t and dS/dlambda at points of the path through one parameter point."""

    def __init__(self, spacetime: Spacetime, path: Path, point: Mapping[sympy.Symbol, object], digits: int) -> None:
        static = spacetime.metric.static
        self.spacetime, self.path, self.static = spacetime, path, static
        self.point, self.digits, self.dps = dict(point), digits, digits + 15
        # Taylor data: the function and its first two r-derivatives (exact, from sympy).
        self.taylor = {name: [sympy.diff(f, static.r, j) for j in range(3)] for name, f in (("F", static.F), ("G", static.G))}
        self.slopes = (self.taylor["F"][1], self.taylor["G"][1])
        self._orders: tuple[int, int] | None = None
        self.method = ""
        self.mass_rate = real_function(path.mass_rate, LAMBDA, self.point, self.dps)
        self.charge_rate = real_function(path.charge_rate, LAMBDA, self.point, self.dps)
        self.potential_inf = real_function(path.potential_inf, LAMBDA, self.point, self.dps)
        self.track: RootTrack | None = None
        self._compiled: dict = {}

    def horizon(self, lam) -> Measured:
        """r_h at lambda: the chosen root followed along the path (see RootTrack)."""
        if self.track is None:
            self.track = RootTrack(self, self.dps)
        return self.track(mpmath.mpf(lam))

    def spec_horizon(self, lam) -> Measured:
        """r_h at lambda as the claim's horizon specification picks it (slower)."""
        try:
            return horizon_radius_numeric(self.spacetime, self.path.point_at(self.point, lam), self.digits + 5)
        except ValueError as exc:
            raise CannotCompute(f"first law: along the path at lambda = {mpmath.nstr(lam, 6)}: {exc}") from exc

    def functions_at(self, lam, *exprs):
        """x -> expr(r = x) at the path point lambda, for each expression."""
        compiled = []
        for expr in exprs:
            if expr not in self._compiled:
                self._compiled[expr] = path_function(expr.subs(self.path.scaling(), simultaneous=True),
                                                     self.static.r, self.point, self.dps)
            function = self._compiled[expr]
            compiled.append(lambda x, f=function: _real(f(mpmath.mpmathify(x), lam)))
        return compiled

    def orders(self) -> tuple[int, int]:
        """(k, m): F ~ F_k x^k, G ~ G_m x^m at the horizon (lambda = 1), k + m = 2 when regular.

        A zero of F and G each of order one is the usual case; a double zero of
        F with G finite (isotropic coordinates) is just as regular.  A
        coefficient counts as zero below 10^(-digits/2) of its natural size.
        """
        if self._orders is None:
            with mpmath.workdps(self.dps):
                r_h = self.spec_horizon(mpmath.mpf(1))
                x = r_h.value
                found = []
                for name in ("F", "G"):
                    values = [f(x) * x**j for j, f in enumerate(self.functions_at(1, *self.taylor[name]))]
                    scale = max(abs(v) for v in values) or mpmath.mpf(1)
                    small = mpmath.mpf(10) ** (-(self.digits // 2)) * scale
                    found.append(next((j for j, v in enumerate(values) if abs(v) > small), 3))
                self._orders = (found[0], found[1])
        return self._orders

    def temperature_t(self, lam=1) -> tuple[Measured, Measured]:
        """(T_t, r_h) at lambda from Euclidean regularity; the error carries r_h's.

        With F ~ F_k x^k, G ~ G_m x^m (k + m = 2) the proper distance is
        rho = x^(1 - m/2) / ((1 - m/2) sqrt(G_m)) and circles have length
        beta_t sqrt(F_k) x^(k/2): no conical point needs
        beta_t = 2 pi / ((1 - m/2) sqrt(F_k G_m)) (4 pi/sqrt(F1 G1) for k = m = 1).
        k + m > 2 is a degenerate horizon: T_t = 0.
        """
        k, m = self.orders()
        with mpmath.workdps(self.dps):
            r_h = self.spec_horizon(mpmath.mpf(lam)) if lam == 1 else self.horizon(mpmath.mpf(lam))
            if k + m != 2:
                return Measured(mpmath.mpf(0), mpmath.mpf(0)), r_h
            fk = self.functions_at(lam, self.taylor["F"][k])[0]
            gm = self.functions_at(lam, self.taylor["G"][m])[0]
            weight = (1 - mpmath.mpf(m) / 2) / (2 * mpmath.pi * mpmath.sqrt(mpmath.factorial(k) * mpmath.factorial(m)))

            def temperature(x):
                product = fk(x) * gm(x)
                return weight * mpmath.sqrt(product) if product > 0 else mpmath.mpf(0)

            value = temperature(r_h.value)
            shift = abs(temperature(r_h.value + r_h.error) - value) if r_h.error else mpmath.mpf(0)
            return Measured(value, shift + mpmath.mpf(10) ** (-self.digits - 5) * value), r_h

    def potential_t(self, lam, r_h) -> mpmath.mpf:
        """Phi_t = A_t(oo) - A_t(r_h) for d/dt as written (0 without a potential)."""
        if self.static.A_t is None:
            return mpmath.mpf(0)
        return self.potential_inf(lam) - self.functions_at(lam, self.static.A_t)[0](r_h)

    def rate(self, lam) -> mpmath.mpf:
        """dS/dlambda = (dM/dlambda - Phi_t dQ/dlambda) / T_t."""
        with mpmath.workdps(self.dps):
            lam = mpmath.mpf(lam)
            T, r_h = self.temperature_t(lam)
            if T.value == 0:
                raise CannotCompute(f"first law: degenerate (T = 0) horizon on the path at lambda = {mpmath.nstr(lam, 6)}")
            work = self.mass_rate(lam)
            if self.static.A_t is not None:
                work -= self.potential_t(lam, r_h.value) * self.charge_rate(lam)
            return work / T.value

    def endpoint_exponent(self) -> mpmath.mpf:
        """alpha in dS/dlambda ~ lambda^alpha at lambda -> 0 (integrable when alpha > -1)."""
        with mpmath.workdps(self.dps):
            a, b = (self.rate(x) for x in _ENDPOINT)
            if a == 0 or b == 0 or a * b < 0:
                raise CannotCompute("first law: dS/dlambda changes sign or vanishes near lambda = 0")
            return mpmath.log(b / a) / mpmath.log(_ENDPOINT[1] / _ENDPOINT[0])

    def entropy(self) -> tuple[Measured, mpmath.mpf]:
        """S = integral_0^1 dS/dlambda dlambda (tanh-sinh) with the quadrature's error estimate."""
        alpha = self.endpoint_exponent()
        if alpha <= -1 + mpmath.mpf(10) ** -3:
            raise CannotCompute(f"first law: dS/dlambda ~ lambda^{mpmath.nstr(alpha, 4)} is not integrable at lambda = 0")
        # The quadrature runs a few digits above the target (the integrand at full guard
        # precision): tanh-sinh and Gauss-Legendre need about twice the nodes per doubling of digits.
        with mpmath.workdps(self.digits + 6):
            power = _smoothing_power(alpha)
            if power is None:  # an unrecognised endpoint power: tanh-sinh copes with it
                self.method = "tanh-sinh quadrature in lambda"
                value, error = mpmath.quad(self.rate, [0, 1], error=True)
            else:
                self.method = f"Gauss-Legendre quadrature in s, lambda = s^{power}"  # lambda = s^m makes lambda^alpha dlambda a polynomial in s: Gauss-Legendre
                value, error = mpmath.quad(lambda s: power * s ** (power - 1) * self.rate(s**power), [0, 1],
                                           method="gauss-legendre", error=True)
            value = mpmath.re(value)
            floor = mpmath.mpf(10) ** (-self.digits - 3) * abs(value)
            return Measured(+value, mpmath.mpf(error) + floor), alpha

    def curve(self) -> dict[str, object]:
        """dS/dlambda along the path, for the report."""
        xs = [float(x) for x in _CURVE]
        ys = [float(self.rate(mpmath.mpf(x))) for x in _CURVE]
        return {"name": "dS/dlambda along the scaling path", "x_label": "lambda", "y_label": "dS/dlambda", "x": xs, "y": ys}


def _real(value):
    """Real part of a closure's value (square roots of tiny negative rounding give mpc)."""
    return mpmath.re(value) if isinstance(value, mpmath.mpc) else value


def path_function(expr: sympy.Expr, r: sympy.Symbol, point, dps: int):
    """(x, lambda) -> expr at r = x, lambda_path = lambda, other symbols from the point.

    A tree walk into mpmath closures, like `spacetimes.evaluation.real_function`
    but in two variables, so that the path's functions are compiled once and
    not at every quadrature node.  Never turns text into code.
    """
    with mpmath.workdps(dps):
        constants = {sym: mpmath.mpmathify(v) for sym, v in point.items()}
        return _walk(expr, r, constants, dps)


def _walk(expr, r, constants, dps):
    if expr == r:
        return lambda x, l: x
    if expr == LAMBDA:
        return lambda x, l: l
    if expr.is_Symbol:
        value = constants[expr]
        return lambda x, l: value
    if expr.is_Rational:
        p, q = int(expr.p), int(expr.q)
        return lambda x, l: mpmath.mpf(p) / q
    if expr is sympy.pi:
        return lambda x, l: +mpmath.pi
    if expr.is_Number or isinstance(expr, sympy.NumberSymbol):  # floats, E, ...: fixed at compile time
        value = mpmath.mpmathify(expr.evalf(dps + 5))
        return lambda x, l: value
    parts = [_walk(a, r, constants, dps) for a in expr.args]
    if expr.is_Add:
        return lambda x, l: mpmath.fsum(part(x, l) for part in parts)
    if expr.is_Mul:
        return lambda x, l: mpmath.fprod(part(x, l) for part in parts)
    if expr.is_Pow:
        base, power = parts
        if expr.exp == sympy.Rational(1, 2):
            return lambda x, l: mpmath.sqrt(base(x, l))
        if expr.exp.is_Integer:
            n = int(expr.exp)
            return lambda x, l: base(x, l) ** n
        return lambda x, l: mpmath.power(base(x, l), power(x, l))
    function = MPMATH_FUNCTIONS.get(type(expr))
    if function is not None and len(parts) == 1:
        inner = parts[0]
        return lambda x, l: function(inner(x, l))
    raise CannotCompute(f"first law: cannot evaluate {type(expr).__name__} numerically along the path")


def _smoothing_power(alpha: mpmath.mpf) -> int | None:
    """The least m <= 6 with m (alpha + 1) a positive integer, else None.

    With lambda = s^m the endpoint behaviour lambda^alpha dlambda becomes
    m s^(m (alpha + 1) - 1) ds, a non-negative integer power: smooth at s = 0.
    """
    for m in range(1, 7):
        k = m * (alpha + 1)
        if abs(k - mpmath.nint(k)) < mpmath.mpf(10) ** -6 and mpmath.nint(k) >= 1:
            return m
    return None


class RootTrack:
    """The chosen horizon followed along the path by Newton's method.

    Calling the general root finder at every quadrature node costs ~20 ms a
    node; instead the root at lambda = 1 (chosen by the claim's horizon
    specification) is continued down a grid lambda = 2^-k by Newton steps
    (shorter steps where the root bends away from a power law),
    and each node starts Newton from the grid's log-log interpolation.  The
    track is compared with the specification's choice at two lambda: if the
    roots swap (a branch change), the route declines instead of integrating
    the wrong horizon.
    """

    LOWEST = mpmath.mpf(2) ** -47  # ~7e-15; below it the local power law extrapolates
    STEPS = (mpmath.mpf(1) / 2, 2 ** mpmath.mpf(-0.5), 2 ** mpmath.mpf(-0.25), 2 ** mpmath.mpf(-0.125), 2 ** mpmath.mpf(-1 / 16))

    def __init__(self, thermo: Thermodynamics, dps: int) -> None:
        self.thermo, self.dps = thermo, dps
        with mpmath.workdps(dps):
            start = thermo.spec_horizon(mpmath.mpf(1))
            self.floor = start.error / abs(start.value)
            # Quarter octaves down to 1/2 from the specification's own root choice: a path on
            # which a dimensionless parameter scales too (Q = q M, q -> lambda q) curves there.
            self.grid = [mpmath.mpf(2) ** (-mpmath.mpf(k) / 4) for k in range(5)]
            self.roots = [start.value] + [thermo.spec_horizon(g).value for g in self.grid[1:]]
            while self.grid[-1] > self.LOWEST:
                self._extend()
            self.keys = [-mpmath.log(g) for g in self.grid]  # ascending, for bisection
            for lam in (mpmath.mpf(3) / 4, mpmath.mpf(2) ** -10):
                chosen = thermo.spec_horizon(lam).value
                tracked = self(lam).value
                if abs(chosen - tracked) > mpmath.mpf(10) ** (-thermo.digits // 2) * abs(chosen):
                    raise CannotCompute("first law: the chosen horizon is not the same root all along the path")

    def _extend(self) -> None:
        """One more grid point: the largest step (halving first) whose Newton root stays
        within 10% of the continued local power law."""
        (l0, l1), (r0, r1) = self.grid[-2:], self.roots[-2:]
        power = mpmath.log(r1 / r0) / mpmath.log(l1 / l0)
        for step in self.STEPS:
            guess = r1 * step**power
            try:
                root = self._newton(l1 * step, guess)[0]
            except CannotCompute:
                continue
            if abs(root - guess) <= abs(guess) / 10:
                self.grid.append(l1 * step)
                self.roots.append(root)
                return
        raise CannotCompute(f"first law: lost the horizon along the path below lambda = {mpmath.nstr(l1, 6)}")

    def _newton(self, lam, guess) -> tuple[mpmath.mpf, mpmath.mpf]:
        # A double zero of F (isotropic coordinates) is a simple zero of F': Newton on F' there.
        taylor = self.thermo.taylor["F"]
        double = self.thermo.orders()[0] == 2
        f, f1 = self.thermo.functions_at(lam, *(taylor[1:3] if double else taylor[0:2]))
        x, step = mpmath.mpf(guess), mpmath.mpf(0)
        tolerance = mpmath.mpf(10) ** (-self.dps + 3)
        for _ in range(80):
            slope = f1(x)
            if slope == 0 or not mpmath.isfinite(slope):
                break
            step = f(x) / slope
            if not x - step > 0:  # F ~ 1 - 2m/r overshoots to r <= 0 from far out: damp
                step = x / 2
            x -= step
            if abs(step) <= tolerance * abs(x):
                return x, abs(step)
        raise CannotCompute(f"first law: Newton did not converge to the horizon at lambda = {mpmath.nstr(lam, 6)}")

    def guess(self, lam) -> mpmath.mpf:
        """Log-log interpolation in the grid (extrapolation below its last point)."""
        k = bisect.bisect_right(self.keys, -mpmath.log(lam)) - 1
        k = min(max(k, 0), len(self.grid) - 2)
        (a, b), (ra, rb) = self.grid[k : k + 2], self.roots[k : k + 2]
        power = mpmath.log(rb / ra) / mpmath.log(b / a)
        return ra * (lam / a) ** power

    def __call__(self, lam) -> Measured:
        with mpmath.workdps(self.dps):
            guess = self.guess(lam)
            x, step = self._newton(lam, guess)
            if abs(x - guess) > abs(guess) / 10:
                raise CannotCompute(f"first law: lost the horizon along the path at lambda = {mpmath.nstr(lam, 6)}")
            return Measured(x, step + self.floor * abs(x))


def first_law_check(spacetime: Spacetime, path: Path, point, digits: int) -> dict[str, object]:
    """Consistency figure: dS/dp by central differences of the integral against
    (dM/dp - Phi dQ/dp)/T at the point, p the first hole parameter (reduced precision)."""
    p = path.scaled[0]
    low = max(digits // 2, 8)
    with mpmath.workdps(low + 15):
        h = abs(mpmath.mpf(point[p])) * mpmath.mpf(10) ** -4
        sides = []
        for sign in (1, -1):
            shifted = {**point, p: point[p] + sign * h}
            sides.append(Thermodynamics(spacetime, path, shifted, low).entropy()[0].value)
        derivative = (sides[0] - sides[1]) / (2 * h)
        here = Thermodynamics(spacetime, path, point, low)
        T, r_h = here.temperature_t(1)
        mass = real_function(path.mass_gradient[0], LAMBDA, point, low + 15)(1)
        expected = mass
        if spacetime.metric.static.A_t is not None:
            dq = real_function(sympy.diff(path.charge, p), LAMBDA, point, low + 15)(1)
            expected -= here.potential_t(1, r_h.value) * dq
        expected /= T.value
        relative = abs(derivative - expected) / abs(expected) if expected else mpmath.inf
        return {"parameter": str(p), "dS/dp": float(derivative), "(dM/dp - Phi dQ/dp)/T": float(expected),
                "relative_difference": float(relative)}
