"""Fields, limits and areas for the near-horizon route (private helpers).

Fields: Christoffel symbols from their definition (never the killing-horizon
route's Killing-norm gradient).  Symbolic limits: leading Taylor terms at r_h,
polynomials reduced modulo r_h's factor of V^2 (small expressions), each
coefficient tested for zero at two precisions.  Numeric limits: samples at
r_h + side * delta_k, Richardson extrapolation.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit
from crosscheck.spacetimes.base import Metric, angle_symbols
from crosscheck.spacetimes.evaluation import as_sympy

Point = Mapping[sympy.Symbol, object]
ZERO = sympy.Integer(0)
MAX_ORDER = 6  # highest Taylor order examined for a leading term
SIMPLIFY_OPS = 120  # larger expressions are not given to simplify or factor

# --------------------------------------------------------------------------- tensors


def inverse_metric(g: sympy.Matrix) -> sympy.Matrix:
    """g^{mu nu}, inverted block by block ((t, phi), (r, theta) for Kerr): small expressions."""
    n = g.shape[0]
    inverse, unseen = sympy.zeros(n, n), set(range(n))
    while unseen:
        stack, block = [min(unseen)], set()
        while stack:
            i = stack.pop()
            if i not in block:
                block.add(i)
                stack.extend(j for j in range(n) if g[i, j] != 0 or g[j, i] != 0)
        unseen -= block
        index = sorted(block)
        sub = sympy.Matrix([[g[i, j] for j in index] for i in index])
        # adjugate/det: Matrix.inv first runs a slow zero test
        sub_inv = sub.adjugate(method="berkowitz") / sub.det(method="berkowitz") if len(index) > 1 else sympy.Matrix([[1 / sub[0, 0]]])
        for a, i in enumerate(index):
            for b, j in enumerate(index):
                inverse[i, j] = sub_inv[a, b]
    return inverse


def christoffel(g: sympy.Matrix, g_inv: sympy.Matrix, coords: Sequence[sympy.Symbol], mu: int, a: int, b: int) -> sympy.Expr:
    """Gamma^mu_ab = (1/2) g^{mu nu} (d_a g_nu b + d_b g_nu a - d_nu g_ab), from the definition."""
    total = ZERO
    for nu, x in enumerate(coords):
        if g_inv[mu, nu] != 0:
            total += g_inv[mu, nu] * (sympy.diff(g[nu, b], coords[a]) + sympy.diff(g[nu, a], coords[b]) - sympy.diff(g[a, b], x))
    return total / 2


@dataclass(frozen=True)
class Observers:
    """Static: redshift2 = -g_tt, accel2 = g_mu nu a^mu a^nu, a^mu = Gamma^mu_tt (u^t)^2
    (= u^nu nabla_nu u^mu for u along d_t).  ZAMO: redshift2 = -(g_tt - g_tphi^2/g_phiphi),
    omega = -g_tphi/g_phiphi.  kappa2 = redshift2 |a|^2 -> kappa_t^2."""

    redshift2: sympy.Expr
    kappa2: sympy.Expr
    accel2: sympy.Expr | None = None
    omega: sympy.Expr | None = None


@functools.lru_cache(maxsize=16)
def observers(metric: Metric) -> Observers:
    """The fields of `metric` (cached: both sides and every numeric point use them)."""
    g, coords = sympy.Matrix(metric.g), metric.coords
    g_inv, n = inverse_metric(g), len(coords)
    if metric.axial is None:
        accel = [christoffel(g, g_inv, coords, mu, 0, 0) / (-g[0, 0]) for mu in range(n)]
        accel2 = sympy.cancel(sum(g[i, j] * accel[i] * accel[j] for i in range(n) for j in range(n) if g[i, j] != 0))
        return Observers(redshift2=-g[0, 0], kappa2=sympy.cancel(-g[0, 0] * accel2), accel2=accel2)
    k = coords.index(metric.axial)
    lapse2 = sympy.together(-(g[0, 0] - g[0, k] ** 2 / g[k, k]))
    grad = [sympy.diff(lapse2, x) for x in coords]
    norm = sum(g_inv[i, j] * grad[i] * grad[j] for i in range(n) for j in range(n) if g_inv[i, j] != 0 and grad[i] != 0 != grad[j])
    return Observers(redshift2=lapse2, kappa2=norm / (4 * lapse2), omega=-g[0, k] / g[k, k])


def polar_angles(metric: Metric) -> tuple[sympy.Symbol, ...]:
    """Coordinates after (t, r) except the azimuth (the last one)."""
    return tuple(metric.coords[2:-1])


def at_angles(expr: sympy.Expr, metric: Metric, value: sympy.Expr = sympy.pi / 2) -> sympy.Expr:
    """expr with every polar angle set to `value` (pi/2: the equator)."""
    return as_sympy(expr).subs({angle: value for angle in polar_angles(metric)})


# --------------------------------------------------------------------------- zero tests


def compile_expr(expr: sympy.Expr, variables: Sequence[sympy.Symbol]) -> Callable:
    """mpmath function of `variables` (rationals become mpf at call time); compiled once per
    expression (every numeric point reuses it), common subexpressions shared when large."""
    return _compiled(as_sympy(expr), tuple(variables))


@functools.lru_cache(maxsize=256)
def _compiled(expr: sympy.Expr, variables: tuple[sympy.Symbol, ...]) -> Callable:
    return sympy.lambdify(variables, expr, modules="mpmath", cse=sympy.count_ops(expr) > 200)


def _call(function: Callable, arguments: Sequence[object], dps: int) -> mpmath.mpc:
    with mpmath.workdps(dps):
        values = [sympy.N(a, dps + 5)._to_mpmath(mpmath.mp.prec) if isinstance(a, sympy.Basic) else a for a in arguments]
        try:
            return mpmath.mpc(function(*values))
        except (ZeroDivisionError, ValueError, TypeError):
            return mpmath.mpc(mpmath.nan)


def value_at(expr: sympy.Expr, point: Point, dps: int) -> mpmath.mpc:
    """expr at a point (exact or mpmath values), at dps digits; nan if singular."""
    symbols = sorted(as_sympy(expr).free_symbols, key=str)
    return _call(compile_expr(expr, symbols), [point[s] for s in symbols], dps)


def is_zero(expr: sympy.Expr, points: Sequence[Point]) -> bool:
    """Whether expr vanishes identically, judged at `points` at 50 and 80 digits: a non-zero
    value agrees at both to 20 digits, rounding noise does not (scale free)."""
    expr = as_sympy(expr)
    if expr == 0:
        return True
    symbols = sorted(expr.free_symbols, key=str)
    function = compile_expr(expr, symbols)
    for point in points or [{}]:
        low, high = (_call(function, [point[s] for s in symbols], dps) for dps in (50, 80))
        if not (mpmath.isfinite(low) and mpmath.isfinite(high)):
            raise CannotCompute(f"{expr} is singular at a test point")
        with mpmath.workdps(80):
            if high != 0 and abs(high - low) <= mpmath.mpf(10) ** -20 * abs(high):
                return False
    return True


def sign_at(expr: sympy.Expr, point: Point) -> int:
    """Sign of a real value at a point (0 if zero, complex or singular)."""
    value = value_at(expr, point, 30)
    if mpmath.isnan(value) or abs(value.imag) > mpmath.mpf(10) ** -20 * abs(value):
        return 0
    return int(mpmath.sign(value.real))


# --------------------------------------------------------------------------- limits


@dataclass(frozen=True)
class Place:
    """r -> r0 from `side` (+1: r > r0); `modulus`: r0's irreducible factor of V^2, if known."""

    r: sympy.Symbol
    r0: sympy.Expr
    side: int
    points: Sequence[Point]
    modulus: sympy.Poly | None = None

    def _poly(self, expr: sympy.Expr) -> sympy.Poly | None:
        try:
            return sympy.Poly(expr, self.r) if expr.is_polynomial(self.r) else None
        except sympy.PolynomialError:
            return None

    def at_r0(self, f: sympy.Poly | sympy.Expr) -> sympy.Expr:
        """f(r0); polynomials are reduced modulo `modulus` first (low powers of r0 only)."""
        if not isinstance(f, sympy.Poly):
            return f.subs(self.r, self.r0)
        if self.modulus is None:
            return f.as_expr().subs(self.r, self.r0)
        coefficients = reversed(f.rem(self.modulus).all_coeffs())
        small = lambda c: sympy.factor(c) if sympy.count_ops(c) < SIMPLIFY_OPS else c  # noqa: E731
        return sum((small(c) * self.r0**k for k, c in enumerate(coefficients)), ZERO)

    def leading(self, expr: sympy.Expr) -> tuple[int, sympy.Expr, sympy.Poly | sympy.Expr]:
        """(k, c, d): expr(r0 + side x) = c x^k + ..., c != 0, d = d^k expr/dr^k (Poly if possible)."""
        poly = self._poly(expr)
        derivative = expr if poly is None else poly
        for order in range(MAX_ORDER + 1):
            if order:
                derivative = sympy.diff(derivative, self.r) if poly is None else derivative.diff(self.r)
            c = self.at_r0(derivative) * sympy.Integer(self.side) ** order / sympy.factorial(order)
            if not is_zero(c, self.points):  # raises if c is singular (expr not analytic)
                return order, c, derivative
        raise CannotCompute(f"{expr} has no non-zero Taylor coefficient up to order {MAX_ORDER} at {self.r0}")

    def limit(self, expr: sympy.Expr) -> sympy.Expr:
        """lim expr (a ratio of functions analytic at r0) from the leading orders of both."""
        numerator, denominator = sympy.fraction(sympy.together(expr))
        k_den, _, d_den = self.leading(denominator)
        top = self._poly(numerator)
        if k_den == 0 and is_zero(self.at_r0(numerator if top is None else top), self.points):
            return ZERO
        k_num, _, d_num = self.leading(numerator)
        if k_num < k_den:
            raise CannotCompute(f"{expr} diverges as {self.r} -> {self.r0} (like x^{k_num - k_den})")
        return ZERO if k_num > k_den else self.at_r0(d_num) / self.at_r0(d_den)  # side^k/k! cancels


def horizon_modulus(redshift2: sympy.Expr, r: sympy.Symbol, r_h: sympy.Expr, points: Sequence[Point]) -> sympy.Poly | None:
    """The irreducible factor of V^2's numerator (polynomial in r) vanishing at r_h, if any."""
    numerator = sympy.fraction(sympy.cancel(sympy.together(redshift2)))[0]
    try:
        factors = sympy.factor_list(sympy.Poly(numerator, r))[1] if numerator.is_polynomial(r) else []
    except (sympy.PolynomialError, NotImplementedError):
        factors = []
    for factor, _ in sorted(factors, key=lambda pair: pair[0].degree()):
        if factor.degree() >= 1 and is_zero(factor.as_expr().subs(r, r_h), points):
            return factor
    return None


def limit_at_infinity(expr: sympy.Expr, r: sympy.Symbol, points: Sequence[Point]) -> sympy.Expr:
    """lim expr as r -> infinity, via r = 1/y and leading terms at y = 0+."""
    y = sympy.Dummy("y", positive=True)
    return Place(y, ZERO, 1, points).limit(sympy.cancel(sympy.together(expr.subs(r, 1 / y))))


# --------------------------------------------------------------------------- points and sides


_ANGLES = (sympy.Rational(7, 10), sympy.Rational(11, 10))  # polar angles of the sample points
_GENERIC = (sympy.Rational(13, 10), sympy.Rational(17, 10))  # parameters without a range


def sample_points(problem) -> list[dict[sympy.Symbol, sympy.Expr]]:
    """Two exact points inside the parameter ranges (with angles) for zero and sign tests:
    fractions 2/11..8/11 of each range, away from the ends where extremal cases sit, and
    different for each parameter so that equal ranges do not give equal values."""
    metric = problem.spacetime.metric
    symbols = set(problem.parameters) | metric.g.free_symbols
    for component in metric.potential or ():
        symbols |= as_sympy(component).free_symbols
    points = []
    for k in range(2):
        point = {angle: _ANGLES[k] for angle in metric.coords[2:]}
        for i, symbol in enumerate(sorted(symbols - set(metric.coords), key=str)):
            lo, hi = (sympy.Rational(v) for v in problem.ranges.get(symbol, (_GENERIC[k], _GENERIC[k])))
            point[symbol] = lo + sympy.Rational(2 + (3 * i + 5 * k) % 7, 11) * (hi - lo)
        points.append(point)
    return points


def static_side(redshift2: Callable[[mpmath.mpf], object], r_h: mpmath.mpf) -> int:
    """+1 if the static region (V^2 > 0) is at r > r_h (the outside also when both are),
    -1 if at r < r_h (a cosmological horizon)."""
    scale = abs(r_h) or mpmath.mpf(1)
    for side in (1, -1):
        value = mpmath.mpc(redshift2(r_h + side * scale / 1000))
        if mpmath.isfinite(value) and value.real > 0 and abs(value.imag) <= 1e-20 * abs(value):
            return side
    raise ValueError(f"horizon: no static region (V^2 > 0) next to r_h = {mpmath.nstr(r_h, 10)}")



# --------------------------------------------------------------------------- numeric limits


@dataclass(frozen=True)
class Limit:
    """A numeric limit; `deviation` = |f(h_last) - value| turns r_h's uncertainty into an error."""

    value: Measured
    samples: list[tuple[float, float]]
    h0: mpmath.mpf
    h_last: mpmath.mpf
    deviation: mpmath.mpf

    def shift_error(self, shift: mpmath.mpf) -> mpmath.mpf:
        return self.deviation * min(shift / self.h_last, mpmath.mpf(1))


def horizon_limit(f: Callable[[mpmath.mpf], mpmath.mpf], scale: mpmath.mpf, digits: int, steps: int) -> Limit:
    """lim_{h -> 0+} f(h), Richardson over h = scale 10^-j 2^-k; j grows until converged
    (another zero, e.g. an inner horizon, may be much nearer than `scale`)."""
    best: Limit | None = None
    for exponent in (2, 3, 4, 5, 6):
        h0 = scale * mpmath.mpf(10) ** (-exponent)
        measured, samples = richardson_limit(f, h0, steps=steps, ratio=mpmath.mpf(1) / 2)
        h_last = h0 / mpmath.mpf(2) ** (steps - 1)
        last = f(h_last)
        if best is None or measured.error < best.value.error:
            best = Limit(measured, samples, h0, h_last, abs(last - measured.value))
        if measured.error <= mpmath.mpf(10) ** (-digits - 2) * max(abs(last), abs(measured.value)):
            break
    return best


def richardson_amplification(steps: int) -> mpmath.mpf:
    """sum |w_k| for the extrapolated value sum w_k f(h_k) (ratio 1/2): eliminating h^p scales
    it by (2^p + 1)/(2^p - 1), so sample errors grow by this factor (about 8.3)."""
    return mpmath.fprod((2**p + 1) / mpmath.mpf(2**p - 1) for p in range(1, steps))


def rindler_ratios(g_rr: Callable, redshift2: Callable, r_h: mpmath.mpf, side: int, scale: mpmath.mpf) -> tuple[list, list]:
    """Rindler form evidence: sqrt(-g_tt)/rho -> kappa_t, rho the proper distance to r_h
    (r = r_h + side u^2 removes the end singularity)."""

    def element(u: mpmath.mpf) -> mpmath.mpf:
        try:
            return 2 * u * mpmath.sqrt(abs(mpmath.re(g_rr(r_h + side * u * u))))
        except ZeroDivisionError:  # a node rounded onto r_h: negligible weight
            return mpmath.mpf(0)

    deltas = [scale / 100 / 4**k for k in range(4)]
    with mpmath.workdps(20):
        rhos = [mpmath.quad(element, [0, mpmath.sqrt(d)]) for d in deltas]
    return [float(d) for d in deltas], [float(mpmath.sqrt(abs(mpmath.re(redshift2(r_h + side * d)))) / p) for d, p in zip(deltas, rhos)]


def local_functions(accel2: Callable, redshift2: Callable, kappa_t: Measured, dps: int) -> dict[str, Callable]:
    """a_loc(r) = sqrt(accel2) and T_loc(r) = kappa_t/(2 pi V(r)) as r -> Measured; the
    error of an evaluation is its change between dps and dps + 10 digits."""

    def two_precisions(f: Callable[[mpmath.mpf], mpmath.mpf], x: object) -> Measured:
        with mpmath.workdps(dps):
            low = f(mpmath.mpmathify(x))
        with mpmath.workdps(dps + 10):
            high = f(mpmath.mpmathify(x))
            return Measured(high, abs(high - low) + mpmath.mpf(10) ** (5 - dps) * abs(high))

    def t_loc(x: object) -> Measured:
        inverse = two_precisions(lambda y: 1 / (2 * mpmath.pi * mpmath.sqrt(redshift2(y))), x)
        with mpmath.workdps(dps):
            return Measured(kappa_t.value * inverse.value, kappa_t.error * abs(inverse.value) + abs(kappa_t.value) * inverse.error)

    return {"a_loc": lambda x: two_precisions(lambda y: mpmath.sqrt(accel2(y)), x), "T_loc": t_loc}


# --------------------------------------------------------------------------- areas


def check_area(metric: Metric) -> None:
    """CannotCompute unless r = const, t = const is a sphere in the standard angles (the
    azimuth a symmetry; for static forms a given areal radius R)."""
    transverse = tuple(metric.coords[2:])
    if not transverse or transverse != angle_symbols(len(transverse)) or any(c.has(transverse[-1]) for c in metric.g):
        raise CannotCompute(f"area: transverse coordinates {transverse} are not the angles of a sphere")
    if metric.static is not None and metric.static.R is None:
        raise CannotCompute("area: the transverse space is not a round sphere (no R given)")


def round_sphere_power(metric: Metric) -> int | None:
    """n when the angular block is exactly R(r)^2 times the unit n-sphere metric, else None."""
    if metric.static is None or metric.static.R is None:
        return None
    angles, factor = metric.coords[2:], metric.static.R**2
    for k, angle in enumerate(angles):
        row = [metric.g[2 + k, 2 + j] for j in range(len(angles))]
        if any(entry != 0 for j, entry in enumerate(row) if j != k) or sympy.cancel(row[k] - factor) != 0:
            return None
        factor *= sympy.sin(angle) ** 2
    return len(angles)


def sphere_factor(n: int) -> sympy.Expr:
    """Integral of the unit n-sphere element: 2 pi times integrals of sin^j over (0, pi), by sympy."""
    theta = sympy.Symbol("theta", positive=True)
    return 2 * sympy.pi * sympy.prod(sympy.integrate(sympy.sin(theta) ** j, (theta, 0, sympy.pi)) for j in range(1, n))


def sphere_factor_numeric(n: int) -> Measured:
    """The same integrals by mpmath.quad with its error estimates (at the working precision)."""
    value, error = 2 * mpmath.pi, mpmath.mpf(0)
    for power in range(1, n):
        integral, err = mpmath.quad(lambda th, p=power: mpmath.sin(th) ** p, [0, mpmath.pi], error=True)
        value, error = value * integral, error * abs(integral) + abs(value) * err
    return Measured(value, error + 10 * mpmath.eps * abs(value))


@functools.lru_cache(maxsize=16)
def angular_determinant(metric: Metric) -> sympy.Expr:
    """det of the induced metric on r, t = const (the angular block; cached per metric)."""
    return sympy.cancel(sympy.Matrix(metric.g)[2:, 2:].det(method="berkowitz"))


def angular_density(det_h: sympy.Expr, metric: Metric) -> sympy.Expr:
    """sqrt(det h) with sin(theta) > 0 for the polar angles (they run over (0, pi))."""
    positive = {a: sympy.Dummy(f"s_{a}", positive=True) for a in polar_angles(metric)}
    root = sympy.sqrt(sympy.factor(det_h.subs({sympy.sin(a): s for a, s in positive.items()})))
    return root.subs({s: sympy.sin(a) for a, s in positive.items()})
