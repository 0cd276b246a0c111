"""Bogoliubov coefficients of a traced late-time ray map, by contour rotation (private helpers).

alpha, beta_(omega omega') = (1/2 pi) sqrt(omega'/omega) integral du exp(-i omega u +- i omega' p(u)).
In the ray map's parameter x (`_null_rays.RayMap`: u = -2 tau(x), p = -2 b(x)) and after
one integration by parts (d/dx exp(2 i omega tau) = 2 i omega tau' exp(2 i omega tau); the
boundary terms vanish with the usual adiabatic switching x^(i nu) -> x^(i nu + 0)):

    alpha, beta ~ +-(2 omega'/omega) J_(+-),   J_(+-) = integral_0^inf b'(x) e^(2 i omega tau(x)) e^(-+ 2 i omega' b(x)) dx.

With b ~ b_m x^m the rotation x = e^(i theta) t, theta = -+ pi/(2m), turns the oscillation
into decay exp(-2 omega' b_m t^m); the map is continued to complex x (`ContinuedRay`),
where the logarithm of tau picks up i theta/s: the thermal factor.  For a map that is
exactly exponential the ratio |alpha/beta|^2 is exp(2 pi omega/kappa) at every omega';
for a traced map it is so as omega' -> infinity (late times).  omega' is tied to the
window scale h by 2 omega' b_m h^m = D (D = dps ln 10: the integrand has decayed
below the working precision at t = h), and L(omega) = ln|alpha/beta|^2 is extrapolated
to h = 0 (Richardson: the corrections are powers of h, the map's Taylor series).

Quadrature (why it is cheap): the integrand in z = ln t peaks at t ~ h D^(-1/m), falls
double-exponentially above and only like t^m = e^(m z) below, over (digits ln 10)/m units
of z.  A trapezoidal rule uniform in z spends most of its nodes on that tail, so the
nodes are uniform in u with z = ln(window) + u - A (e^(-u/L) - 1): z ~ u near the peaks,
double-exponential decay in the tail.  All windows h = window 2^-l and all frequencies
share one node set (the map is evaluated once per node), beta's contour is the mirror
image of alpha's (a real map: its values there are the conjugates, so J_- comes from the
same nodes), and the step is halved until three nested rules show the error below the
target (`_Rules`).  Measured: a rule uniform in ln t on both rays took 2 x 442 map
evaluations per point at 20 digits; this one takes 168 (120 at 15 digits), same accuracy.
"""

from __future__ import annotations

from dataclasses import dataclass

import mpmath

from crosscheck.measure import Measured
from crosscheck.numerics import richardson_limit
from crosscheck.routes._null_rays import Chebyshev, ContinuedRay, RayMap


@dataclass(frozen=True)
class LogRatio:
    """L(omega) = ln|alpha/beta|^2 extrapolated to late times, with the samples L(h)."""

    omega: mpmath.mpf
    value: Measured
    samples: list[tuple[float, float]]


MAX_REFINEMENTS = 7  # step halvings beyond the first three nested rules


class LateTimeCoefficients:
    """J_(+-)(omega, h) along the two rotated rays of one traced map (built once per point).

    The map is real-analytic (real F, G, R and parameters), so on the mirror ray x -> conj x
    every function is the conjugate: b'(conj x) = conj b'(x), tau(conj x) = conj tau(x),
    b(conj x) = conj b(x).  Hence the J_- integrand at t is conj(b' e^(-2 i omega tau)
    e^(-2 i omega' b) e^(i theta)) of the J_+ ray's values: J_-(omega) = conj(J'(-omega)),
    with J' the J_+ sum at frequency -omega.  The map is evaluated on one ray only; the
    mirror ray's fitted log coefficient is checked to be the conjugate (`mirror_gap`)."""

    def __init__(self, ray_map: RayMap, window: mpmath.mpf, omega_unit: mpmath.mpf, digits: int, dps: int,
                 multiples: tuple[int, ...] = (1, 2, 3), levels: int = 3) -> None:
        """`window`: the largest late-time window h (the others are window 2^-l, l < levels);
        frequencies are `multiples` of `omega_unit` (all summed in one pass over the nodes)."""
        self.map, self.window, self.dps, self.omega_unit = ray_map, window, dps, omega_unit
        self.multiples, self.levels = tuple(sorted(multiples)), levels
        m = ray_map.order
        x0 = window / 1000
        self.b_m = abs(ray_map.db(x0)) / (m * x0 ** (m - 1))  # leading coefficient of b: sets omega' only
        self.decay = dps * mpmath.log(10)
        tol = mpmath.mpf(10) ** (-digits - 6)
        self.rays = {sign: ContinuedRay(ray_map, -sign * mpmath.pi / (2 * m), window, tol) for sign in (1, -1)}
        self.functions = _RayFunctions(self.rays[1], window, tol)
        self.converged = all(ray.converged for ray in self.rays.values()) and self.functions.converged
        self.mirror_gap = abs(self.rays[-1].k0 - mpmath.conj(self.rays[1].k0)) / abs(self.rays[1].k0)
        # the Chebyshev series of k (hence k0), of g and of b' are accepted with tails ~ tol of
        # their largest terms; k0 multiplies ln t (|ln(t/window)| <~ places ln 10 on the nodes)
        self.series_error = 10 * tol * (3 + (digits + 6) * mpmath.log(10))
        self.places = digits + 2  # relative accuracy wanted of each J (L, hence T, to about digits + 1)
        self.quad_error = mpmath.mpf(0)
        self.evaluations = 0
        self.rules: _Rules | None = None
        self.log_window = mpmath.log(window)
        # the map z(u): uniform (z ~ u) down to 2/m e-folds below the lowest window's peak
        # at u ~ -(ln D/m + (levels - 1) ln 2), then stretched: dz/du = 1 + (A/L) e^(-u/L)
        self.stretch = mpmath.mpf(2) / m
        corner = -(mpmath.log(self.decay) / m + (levels - 1) * mpmath.log(2) + mpmath.mpf(2) / m)
        self.A = self.stretch / 4 * mpmath.exp(corner / self.stretch)  # dz/du = 1.25 at the corner
        # coarsest step: 5.5 times the uniform step whose geometric error bound exp(-2 pi d/step)
        # (strip |Im z| < d = 0.8 pi/(2m)) is 10^-places.  Measured (the near-horizon integrand
        # is nearly universal): the estimate then meets the target at the fourth rule, step/8,
        # for every claim at 10 to 20 digits; with 6 times, digits <= 14 need a fifth rule.
        width = 0.8 * mpmath.pi / (2 * m)
        self.base_step = mpmath.mpf(5.5) * 2 * mpmath.pi * width / (self.places * mpmath.log(10))
        self.omega_prime_window = self.omega_prime(window)

    def omega_prime(self, h: mpmath.mpf) -> mpmath.mpf:
        return self.decay / (2 * self.b_m * h**self.map.order)

    def node(self, u: mpmath.mpf) -> tuple:
        """(weight per unit u, b, exp(2 i omega_unit tau), level-0 decay factor) at u <= 0 on
        the J_+ ray: t = window e^(z(u)); weight = dz/du t e^(i theta) b'(x) (dx = e^(i theta) t dz)."""
        ray = self.functions
        grow = self.A * mpmath.exp(-u / self.stretch)
        z = u - (grow - self.A)
        t = self.window * mpmath.exp(z)
        tau, b = ray.tau(t, self.log_window + z), ray.b(t)
        weight = (1 + grow / self.stretch) * t * ray.phase * ray.db(t)
        self.evaluations += 1
        return weight, b, mpmath.expj(2 * self.omega_unit * tau), mpmath.exp(-2j * self.omega_prime_window * b)

    def terms(self, u: mpmath.mpf) -> list:
        """The integrand at u for every level and frequency +-k omega_unit (columns k - 1 and
        top + k - 1): the decay factor for h = window 2^-l is the previous level's raised to
        2^m (omega' grows by exactly 2^m per level: m squarings instead of a complex
        exponential; rounding grows 2^m-fold per level, far inside the guard digits);
        exp(+-2 i k omega_unit tau) as powers of the phase and of its inverse.  Also a bound
        on the size of every term (|Re| + |Im|, no square roots)."""
        weight, _, phase, decay = self.node(u)
        inverse = 1 / phase
        top, out, largest = self.multiples[-1], [], mpmath.mpf(0)
        for level in range(self.levels):
            if level:
                for _ in range(self.map.order):
                    decay = decay * decay
            base, row = weight * decay, []
            largest = max(largest, _size(base))
            for factor in (phase, inverse):
                term = base
                for _ in range(top):
                    term = term * factor
                    row.append(term)
            out.append(row)
        return out, largest * max(1, _size(phase), _size(inverse)) ** top

    def _rules(self) -> _Rules:
        if self.rules is None:
            self.rules = _Rules(self.terms, self.base_step, self.places, self.dps)
        return self.rules

    def J(self, sign: int, multiple: int, h: mpmath.mpf) -> mpmath.mpc:
        """J_+ (sign +1, alpha) or J_- (sign -1, beta) at omega = multiple * omega_unit for the
        window h = window 2^-level, with its estimated relative quadrature error kept in
        quad_error (`_Rules`)."""
        level = int(mpmath.nint(mpmath.log(self.window / h, 2)))
        if abs(h * 2**level / self.window - 1) > mpmath.mpf(10) ** (5 - self.dps) or not 0 <= level < self.levels:
            raise ValueError(f"late-time window {mpmath.nstr(h, 5)} is not window 2^-k, k < {self.levels}")
        value, error = self._rules().result(level, multiple - 1 + (0 if sign > 0 else self.multiples[-1]))
        self.quad_error = max(self.quad_error, error + self.series_error)
        return value if sign > 0 else mpmath.conj(value)

    def log_ratio_at(self, multiple: int, h: mpmath.mpf) -> mpmath.mpf:
        return 2 * (mpmath.log(abs(self.J(1, multiple, h))) - mpmath.log(abs(self.J(-1, multiple, h))))

    def log_ratio(self, multiple: int, levels: int) -> LogRatio:
        """L(omega) at omega = multiple * omega_unit, extrapolated over windows h = window 2^-k, k < levels."""
        measured, samples = richardson_limit(lambda h: self.log_ratio_at(multiple, h), self.window, steps=levels, ratio=mpmath.mpf(1) / 2)
        amplification = mpmath.fprod((2**p + 1) / mpmath.mpf(2**p - 1) for p in range(1, levels))
        error = measured.error + 4 * amplification * self.quad_error + mpmath.mpf(10) ** (10 - self.dps)
        return LogRatio(multiple * self.omega_unit, Measured(measured.value, error), samples)


class _Rules:
    """Nested trapezoidal rules in u on (-inf, 0] for a table of integrands sharing their nodes.

    The integrands are analytic in a strip and decay double-exponentially at both ends, so
    the error falls faster than geometrically as the step is halved.  With d1 (4 sigma vs
    2 sigma) and d2 (2 sigma vs sigma) the finest rule's error is taken as 10 d2 (d2/d1):
    the last halving's gain again, with a factor 10 to spare (measured: each halving gains
    more than the one before, so this bounds the error; the sharper model K exp(-c/sigma),
    error d2^3/d1^2, was measured to miss a slower term with a small prefactor by 16x).
    It is used only when d2 <= d1/4 (converging), else d2 itself, and the step is halved
    until the estimate meets the target.  Rounding (10^(2 - dps) of the sum of the term
    sizes) and the truncated ends (10 times the first and the last term) are added.  The
    tail ends where every term of the coarsest rule is below 10^-(places+4) of the largest."""

    def __init__(self, terms, step: mpmath.mpf, places: int, dps: int) -> None:
        self.terms, self.step, self.places, self.dps = terms, step, places, dps
        self.target = mpmath.mpf(10) ** (-places)
        first, size = terms(mpmath.mpf(0))
        self.shape = (len(first), len(first[0]))
        self.sums = [self._zero()]  # sums[r]: sum over the nodes first used by rule r (step / 2^r)
        self.absolute, self.head = size, size  # the rule stops at u = 0: the integrand there bounds what is left out above
        self._add(self.sums[0], first)
        self._coarsest(size)
        for _ in range(2):
            self._refine()
        while self._worst() > self.target and len(self.sums) < 3 + MAX_REFINEMENTS:
            self._refine()

    def _zero(self) -> list:
        return [[mpmath.mpc(0)] * self.shape[1] for _ in range(self.shape[0])]

    @staticmethod
    def _add(total: list, rows: list) -> None:
        for i, row in enumerate(rows):
            for k, value in enumerate(row):
                total[i][k] += value

    def _coarsest(self, largest: mpmath.mpf) -> None:
        """Nodes u = -j step until all terms are negligible (the tail beyond is double-exponentially small)."""
        j = 1
        while True:
            rows, size = self.terms(-j * self.step)
            largest = max(largest, size)
            self.absolute += size
            self._add(self.sums[0], rows)
            if j > 3 and size <= mpmath.mpf(10) ** (-self.places - 4) * largest:
                self.tail, self.count = size, j
                return
            j += 1

    def _refine(self) -> None:
        """Halve the step: the new nodes are the odd multiples of the new step."""
        r = len(self.sums)
        step = self.step / 2**r
        added = self._zero()
        for j in range(1, 2**r * self.count, 2):
            rows, size = self.terms(-j * step)
            self.absolute += size
            self._add(added, rows)
        self.sums.append(added)

    def _rule(self, r: int, i: int, k: int) -> mpmath.mpc:
        return self.step / 2**r * mpmath.fsum(self.sums[p][i][k] for p in range(r + 1))

    def result(self, i: int, k: int) -> tuple[mpmath.mpc, mpmath.mpf]:
        """(integral, estimated relative error) of integrand (i, k) from the finest rule."""
        r = len(self.sums) - 1
        fine, middle, coarse = (self._rule(p, i, k) for p in (r, r - 1, r - 2))
        size = abs(fine)
        d1, d2 = abs(middle - coarse), abs(fine - middle)
        error = 10 * d2 * d2 / d1 if 0 < d2 <= d1 / 4 else d2  # d2 = 0: the rules agree to the last bit
        step = self.step / 2**r
        rounding = mpmath.mpf(10) ** (2 - self.dps) * step * self.absolute
        return fine, (error + rounding + 10 * step * (self.head + self.tail)) / size

    def _worst(self) -> mpmath.mpf:
        return max(self.result(i, k)[1] for i in range(self.shape[0]) for k in range(self.shape[1]))


def _size(z: mpmath.mpc) -> mpmath.mpf:
    """|Re z| + |Im z|: a bound on |z| within sqrt 2, without a square root."""
    return abs(z.real) + abs(z.imag)


class _RayFunctions:
    """tau, b and b' along one rotated ray as Chebyshev series in t on [0, window].

    `ContinuedRay` fits k = t tau' and the regular null coordinate's integrand; the areal
    radius is fitted here as b'(x) = R'(r) along the ray.  The series converge at once
    (their singularities are at the near-horizon scale, 10^q windows away), so each node
    costs a few Clenshaw steps instead of R, R' (square roots for some metrics), and b comes
    without the cancellation of R(r) - R(r_h).  The integrals are the series' own
    (`Chebyshev.integral_from_zero`)."""

    def __init__(self, ray: ContinuedRay, window: mpmath.mpf, tol: mpmath.mpf) -> None:
        self.k0, self.theta, self.phase = ray.k0, mpmath.mpf(ray.theta), ray.phase
        self.g = ray.g.integral_from_zero
        m = ray.map.order
        if ray.map.radial.areal is not None:
            self.db_series = Chebyshev(lambda t: ray.db(t), window, tol)
            self.b_scale, self.converged = ray.phase, self.db_series.converged
            self.b_integral = self.db_series.integral_from_zero
            self.db = self.db_series.value
        else:
            self.b_scale, self.converged = ray.phase**m, True
            self.b_integral = ray.b_integrand.integral_from_zero
            self.db = ray.db

    def tau(self, t: object, log_t: object) -> object:
        return self.k0 * mpmath.mpc(log_t, self.theta) + self.g(t)

    def b(self, t: object) -> object:
        return self.b_scale * self.b_integral(t)


@dataclass(frozen=True)
class ThermalFit:
    """L = omega/T fitted through the origin, and how linear the data are."""

    T: Measured
    slope: mpmath.mpf
    intercept: mpmath.mpf  # of a free straight-line fit: 0 for a Planck spectrum
    max_relative_residual: mpmath.mpf


def thermal_fit(points: list[LogRatio]) -> ThermalFit:
    """Least squares L_j = omega_j / T; the error of 1/T combines the data errors and the
    residuals (a non-thermal spectrum shows up as residuals and an intercept)."""
    omegas = [p.omega for p in points]
    values = [p.value.value for p in points]
    errors = [p.value.error for p in points]
    norm = mpmath.fsum(w * w for w in omegas)
    slope = mpmath.fsum(w * v for w, v in zip(omegas, values)) / norm
    residuals = [v - slope * w for w, v in zip(omegas, values)]
    slope_error = mpmath.fsum(w * e for w, e in zip(omegas, errors)) / norm + max(abs(r) / w for r, w in zip(residuals, omegas))
    n = len(points)
    mean_w, mean_v = mpmath.fsum(omegas) / n, mpmath.fsum(values) / n
    free_slope = mpmath.fsum((w - mean_w) * (v - mean_v) for w, v in zip(omegas, values)) / mpmath.fsum((w - mean_w) ** 2 for w in omegas)
    intercept = mean_v - free_slope * mean_w
    T = 1 / slope
    relative = max(abs(r) / abs(v) for r, v in zip(residuals, values))
    return ThermalFit(Measured(T, T * T * slope_error), slope, intercept, relative)
