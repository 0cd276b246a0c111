"""Detector worldlines: stationary ones in Minkowski space and radial infall in a static metric.

A stationary worldline has a squared interval sigma2(s) = |dx|^2 - dt^2 between
x(tau + s) and x(tau) that depends on the proper-time lapse s only; it is even
in s, real for real s and analytic, so it can be evaluated at complex s (the
detector routes shift their contours into the complex plane).  The functions
here are the *inputs* of those routes -- the geometry of the worldline and the
field's two-point function pulled back to it -- never a rate or a temperature.

Also here: `wightman`, the pulled-back Wightman function of a massless scalar
in the Minkowski vacuum (monopole coupling in dim >= 3, derivative coupling in
1+1), and the radial free-fall geodesic from rest at infinity.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Literal

import mpmath
import sympy

from crosscheck.spacetimes.evaluation import evaluate

Kind = Literal["uniform-acceleration", "circular", "inertial", "drift"]


@dataclass(frozen=True)
class Worldline:
    """A stationary worldline in `dim`-dimensional Minkowski space.

    Parameters (mpmath numbers):
    - uniform-acceleration: `acceleration` a (proper);
    - drift: proper acceleration `acceleration` with a transverse drift `velocity` v
      (x = (gamma/b) (sinh b tau, cosh b tau), y = gamma v tau, b = a/gamma);
    - circular: `radius` R and lab angular velocity `angular_velocity` W (R W < 1);
    - inertial: `velocity` v (in proper time sigma2 = -s^2 whatever v is).
    """

    kind: Kind
    dim: int = 4
    acceleration: mpmath.mpf | None = None
    velocity: mpmath.mpf | None = None
    radius: mpmath.mpf | None = None
    angular_velocity: mpmath.mpf | None = None

    def __post_init__(self) -> None:
        if self.dim < 2:
            raise ValueError(f"worldline: dimension {self.dim} < 2")
        if self.kind in ("circular", "drift") and self.dim < 3:
            raise ValueError(f"worldline: '{self.kind}' needs a transverse direction (dim >= 3)")
        if self.kind in ("uniform-acceleration", "drift") and not self.acceleration > 0:
            raise ValueError("worldline: the acceleration must be positive")
        if self.kind == "circular" and not (self.radius > 0 and 0 < self.radius * self.angular_velocity < 1):
            raise ValueError("worldline: circular motion needs R > 0 and 0 < R W < 1")
        if self.kind == "drift" and not 0 <= self.velocity < 1:
            raise ValueError("worldline: the drift velocity must be in [0, 1)")

    # -- geometry --------------------------------------------------------------------------
    @property
    def gamma(self) -> mpmath.mpf:
        """Lorentz factor of the circular or drifting motion (1 otherwise)."""
        if self.kind == "circular":
            return 1 / mpmath.sqrt(1 - (self.radius * self.angular_velocity) ** 2)
        if self.kind == "drift":
            return 1 / mpmath.sqrt(1 - self.velocity**2)
        return mpmath.mpf(1)

    def proper_acceleration(self) -> mpmath.mpf:
        """|d^2 x/d tau^2|: a for (drifting) uniform acceleration, gamma^2 R W^2 on a circle."""
        if self.kind in ("uniform-acceleration", "drift"):
            return mpmath.mpf(self.acceleration)
        if self.kind == "circular":
            return self.gamma**2 * self.radius * self.angular_velocity**2
        return mpmath.mpf(0)

    def natural_scale(self) -> mpmath.mpf:
        """The frequency scale gaps are measured in (the proper acceleration; 1 when inertial)."""
        a = self.proper_acceleration()
        return a if a > 0 else mpmath.mpf(1)

    def sigma2(self, s: object) -> mpmath.mpc:
        """|dx|^2 - dt^2 between x(s) and x(0), s real or complex.  Written with
        sinh^2 and sin^2 so that small s loses no digits."""
        s = mpmath.mpmathify(s)
        if self.kind == "inertial":
            return -(s**2)
        if self.kind == "uniform-acceleration":
            a = self.acceleration
            return -4 / a**2 * mpmath.sinh(a * s / 2) ** 2
        if self.kind == "drift":
            g, b = self.gamma, self.acceleration / self.gamma
            return g**2 * (self.velocity**2 * s**2 - 4 / b**2 * mpmath.sinh(b * s / 2) ** 2)
        g, R, W = self.gamma, self.radius, self.angular_velocity
        return 4 * R**2 * mpmath.sin(g * W * s / 2) ** 2 - g**2 * s**2

    def sigma2_derivatives(self, s: object) -> tuple[object, object, object]:
        """(sigma2, d sigma2/ds, d^2 sigma2/ds^2) at s, for the derivative coupling."""
        s = mpmath.mpmathify(s)
        if self.kind == "inertial":
            return -(s**2), -2 * s, mpmath.mpf(-2)
        if self.kind == "uniform-acceleration":
            a = self.acceleration
            return self.sigma2(s), -2 / a * mpmath.sinh(a * s), -2 * mpmath.cosh(a * s)
        if self.kind == "drift":
            g, v, b = self.gamma, self.velocity, self.acceleration / self.gamma
            return (self.sigma2(s), 2 * g**2 * (v**2 * s - mpmath.sinh(b * s) / b), 2 * g**2 * (v**2 - mpmath.cosh(b * s)))
        g, R, W = self.gamma, self.radius, self.angular_velocity
        k = g * W
        return self.sigma2(s), 2 * R**2 * k * mpmath.sin(k * s) - 2 * g**2 * s, 2 * R**2 * k**2 * mpmath.cos(k * s) - 2 * g**2

    def lapse_ratio(self, s: object) -> mpmath.mpc:
        """h(s) = -sigma2(s)/s^2: 1 at s = 0, analytic and non-zero between the
        singularities; odd dimensions take its square root."""
        s = mpmath.mpmathify(s)
        if self.kind == "inertial":
            return mpmath.mpf(1)
        if self.kind == "uniform-acceleration":
            u = self.acceleration * s / 2
            return (mpmath.sinh(u) / u) ** 2 if u != 0 else mpmath.mpf(1)
        if s == 0:
            return mpmath.mpf(1)
        return -self.sigma2(s) / s**2

    def singular_depth(self) -> mpmath.mpf:
        """Smallest y > 0 with sigma2(-i y) = 0: the first singularity of the pulled-back
        two-point function below the real axis (inf for inertial motion).

        For the drift and the circle, sigma2(-iy) is a real function of y whose first
        positive zero is bracketed and refined; the other complex zeros lie deeper
        (their imaginary parts exceed pi/b, resp. grow like log of their real parts).
        """
        if self.kind == "inertial":
            return mpmath.inf
        if self.kind == "uniform-acceleration":
            return 2 * mpmath.pi / self.acceleration
        if self.kind == "drift":
            b, v = self.acceleration / self.gamma, self.velocity
            if v == 0:
                return 2 * mpmath.pi / b
            theta = mpmath.findroot(lambda t: mpmath.sin(t) - v * t, (mpmath.mpf(10) ** -8, mpmath.pi), solver="anderson")
            return 2 * theta / b
        v, k = self.radius * self.angular_velocity, self.gamma * self.angular_velocity
        upper = mpmath.mpf(1)
        while mpmath.sinh(upper) / upper < 1 / v:
            upper *= 2
        u0 = mpmath.findroot(lambda u: mpmath.sinh(u) - u / v, (mpmath.mpf(10) ** -8, upper), solver="anderson")
        return 2 * u0 / k


def worldline_from_arguments(trajectory: str, dim: int, values: dict[str, mpmath.mpf]) -> Worldline:
    """The Worldline of a claim's `detector:` section (arguments already evaluated).

    uniform-acceleration with a non-zero `velocity` is the drifting worldline."""
    if trajectory == "uniform-acceleration":
        v = values.get("velocity", mpmath.mpf(0))
        if v != 0:
            return Worldline("drift", dim, acceleration=values["acceleration"], velocity=v)
        return Worldline("uniform-acceleration", dim, acceleration=values["acceleration"])
    if trajectory == "circular":
        return Worldline("circular", dim, radius=values["radius"], angular_velocity=values["angular_velocity"])
    if trajectory == "inertial":
        return Worldline("inertial", dim, velocity=values.get("velocity", mpmath.mpf(0)))
    raise ValueError(f"'{trajectory}' is not a stationary worldline of Minkowski space")


# -- a claim's detector section -----------------------------------------------------------
STATIONARY = ("uniform-acceleration", "circular", "inertial")
DEFAULT_BAND = (mpmath.mpf("0.1"), mpmath.mpf(4))  # gap / natural scale
GAPS = 8


def detector_worldline(problem, point: Mapping[sympy.Symbol, object], digits: int) -> tuple[Worldline, str]:
    """The claim's worldline at a parameter point, and the coupling."""
    detector = problem.detector
    dim = problem.spacetime.metric.dim if problem.spacetime is not None else 4
    values = {k: mpmath.mpf(evaluate(v, point, digits + 10)) for k, v in detector.arguments.items()
              if k in ("acceleration", "radius", "angular_velocity", "velocity")}
    return worldline_from_arguments(detector.trajectory, dim, values), detector.field_coupling


def band_gaps(problem, point: Mapping[sympy.Symbol, object], line: Worldline, digits: int) -> list[mpmath.mpf]:
    """GAPS log-spaced gaps over the claim's band (in units of the natural scale)."""
    arguments = problem.detector.arguments
    if "band_low" in arguments:
        lo, hi = (mpmath.mpf(evaluate(arguments[k], point, digits + 10)) for k in ("band_low", "band_high"))
    else:
        lo, hi = DEFAULT_BAND
    if not 0 < lo < hi:
        raise ValueError(f"band: expected 0 < lo < hi, got [{mpmath.nstr(lo, 6)}, {mpmath.nstr(hi, 6)}]")
    scale = line.natural_scale()
    ratio = (hi / lo) ** (mpmath.mpf(1) / (GAPS - 1))
    return [scale * lo * ratio**k for k in range(GAPS)]


def minkowski_applies(problem) -> str | None:
    """Shared applicability test of the Minkowski detector routes."""
    detector = problem.detector
    if detector is None:
        return "needs a detector worldline"
    if detector.trajectory not in STATIONARY:
        return f"trajectory '{detector.trajectory}' is not a stationary worldline of Minkowski space"
    spacetime = problem.spacetime
    if spacetime is not None and spacetime.family != "minkowski":
        return "the vacuum two-point function is that of Minkowski space (spacetime: {name: minkowski})"
    dim = spacetime.metric.dim if spacetime is not None else 4
    if detector.field_coupling == "derivative" and dim != 2:
        return "the derivative coupling is implemented in 1+1 only"
    if detector.field_coupling == "monopole" and dim < 3:
        return "monopole coupling in 1+1 is infrared divergent: use coupling: derivative"
    if detector.trajectory == "circular" and dim < 3:
        return "circular motion needs at least two space dimensions"
    return None



# -- the pulled-back two-point function ---------------------------------------------------------
def wightman_constant(dim: int) -> mpmath.mpf:
    """C_D in W = C_D sigma2^((2-D)/2): Gamma(D/2 - 1)/(4 pi^(D/2)) (1/(4 pi^2) in 3+1)."""
    return mpmath.gamma(mpmath.mpf(dim) / 2 - 1) / (4 * mpmath.pi ** (mpmath.mpf(dim) / 2))


def wightman(line: Worldline, coupling: str = "monopole") -> Callable[[object], mpmath.mpc]:
    """z -> W(z), the vacuum Wightman function along the worldline, continued from
    just below the real axis (the i eps of W(s - i eps)).

    Monopole, dim >= 3: W = C_D (i z)^(2-D) h(z)^((2-D)/2), h = -sigma2/z^2, with
    the principal power of h (callers check that h stays off the branch cut on
    their contours).  Derivative coupling in 1+1: W = (1/4 pi) d^2/ds^2 log sigma2.
    """
    if coupling == "derivative":
        if line.dim != 2:
            raise ValueError("the derivative coupling is implemented in 1+1 dimensions only")

        def derivative(z: object) -> mpmath.mpc:
            s2, d1, d2 = line.sigma2_derivatives(z)
            return (d2 / s2 - (d1 / s2) ** 2) / (4 * mpmath.pi)

        return derivative
    if line.dim < 3:
        raise ValueError("monopole coupling in 1+1 is infrared divergent: use the derivative coupling")
    dim, constant = line.dim, wightman_constant(line.dim)
    if dim % 2 == 0:  # an integer power: no branch to choose
        return lambda z: constant * line.sigma2(z) ** (1 - dim // 2)

    def monopole(z: object) -> mpmath.mpc:
        z = mpmath.mpmathify(z)
        return monopole_from_root(constant, dim, z, mpmath.sqrt(line.lapse_ratio(z)))

    return monopole


def monopole_from_root(constant: mpmath.mpf, dim: int, z: object, root: object) -> mpmath.mpc:
    """C_D (i z root)^(2-D), W at z given a square root of h(z) = -sigma2/z^2: the principal
    root gives `wightman` (the principal power h^((2-D)/2) is the principal root to the
    power 2 - D); callers that follow the root along a path pass their own."""
    return constant * (1j * z * root) ** (2 - dim)


def parity(line: Worldline, coupling: str = "monopole") -> int:
    """p with W(-z) = p W(z) and W(conj z) = p conj W(z): (-1)^D for the monopole,
    +1 for the derivative coupling."""
    return 1 if coupling == "derivative" else (-1) ** line.dim


# -- radial infall in a static metric ----------------------------------------------------------
@dataclass(frozen=True)
class InfallRates:
    """Derivatives along the radial geodesic from rest at infinity, per unit r.

    dtau_dr < 0 and du_dr < 0 (r decreases along the fall; u = t - r* grows).
    """

    dtau_dr: mpmath.mpf
    du_dr: mpmath.mpf


def infall_rates(F: mpmath.mpf, G: mpmath.mpf) -> InfallRates:
    """Free fall from rest at infinity in ds^2 = -F dt^2 + dr^2/G + ...

    Energy per unit mass E = F dt/dtau = 1 (F -> 1 at infinity) and the norm give
    (dr/dtau)^2 = G (1 - F)/F, so dtau/dr = -sqrt(F/(G (1 - F))); with the tortoise
    coordinate dr*/dr = 1/sqrt(F G), du/dr = -(1 + sqrt(1 - F))/sqrt(F G (1 - F)).
    For F = G these are the familiar dr/dtau = -sqrt(1 - F), dt/dtau = 1/F; F != G is
    handled by the same formulas (the metric must tend to F -> 1 at infinity).
    """
    if not (0 < F < 1 and G > 0):
        raise ValueError("infall: needs 0 < F < 1 and G > 0 between infinity and the horizon")
    root = mpmath.sqrt(1 - F)
    return InfallRates(-mpmath.sqrt(F / G) / root, -(1 + root) / (mpmath.sqrt(F * G) * root))


def infall_rates_arrays(F, G):
    """`infall_rates` for numpy arrays of F and G (double precision): (dtau/dr, du/dr)."""
    import numpy

    F, G = numpy.asarray(F, dtype=float), numpy.asarray(G, dtype=float)
    if numpy.any(~numpy.isfinite(F)) or numpy.any(F <= 0) or numpy.any(F >= 1) or numpy.any(G <= 0):
        raise ValueError("infall: needs 0 < F < 1 and G > 0 between infinity and the horizon")
    root = numpy.sqrt(1 - F)
    return -numpy.sqrt(F / G) / root, -(1 + root) / (numpy.sqrt(F * G) * root)
