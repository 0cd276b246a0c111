"""Value objects that describe a spacetime to the routes.

Every spacetime, whichever way the claim wrote it (a built-in family, the
`static:` or `stationary:` form, or a `metric:` line element), is turned into a
`Metric`: coordinates plus the covariant metric matrix.  Static forms also keep
their functions F, G, R so that routes designed for them can use them directly.

Conventions (part of the contract with the routes):
- `coords[0]` is the time coordinate and the metric does not depend on it;
  `coords[1]` is the radial coordinate in which the horizon is located.
- `axial` is the rotation angle for stationary axisymmetric metrics with a
  g_t,axial component (None for static metrics).
- Routes always work in *geometric form*: the time coordinate is x0 = c t, so
  that F is dimensionless and the radial coordinate is a length.  In SI the
  constants G and c are already substituted by exact CODATA numbers.  The unit
  layer (`crosscheck.units`) converts a route's geometric-form results to the
  claim's units; routes never see SI.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import sympy

# Standard coordinate symbols shared by all forms so that claims, families and
# routes talk about the same sympy objects.
T_COORD = sympy.Symbol("t", real=True)
R_COORD = sympy.Symbol("r", positive=True)
THETA = sympy.Symbol("theta", real=True)
PHI = sympy.Symbol("phi", real=True)


def angle_symbols(count: int) -> tuple[sympy.Symbol, ...]:
    """Angles of a unit (count)-sphere: (phi,) for a circle, (theta, phi) for count 2,
    else theta1...thetaN.

    The last angle is the azimuth; the others are polar angles in (0, pi).
    """
    if count == 1:
        return (PHI,)
    if count == 2:
        return (THETA, PHI)
    return tuple(sympy.Symbol(f"theta{i}", real=True) for i in range(1, count + 1))


@dataclass(frozen=True)
class StaticFunctions:
    """ds^2 = -F dt^2 + dr^2/G + R^2 dOmega_(dim-2)^2, with electrostatic A_t.

    `dim` is the spacetime dimension (>= 2; dim 2 has no sphere; dim 3 has a
    circle).  R is None when the transverse space is not a round sphere of
    radius R (for instance the flat planes of Rindler space).
    """

    F: sympy.Expr
    G: sympy.Expr
    R: sympy.Expr | None
    dim: int = 4
    A_t: sympy.Expr | None = None
    r: sympy.Symbol = R_COORD


@dataclass(frozen=True)
class Metric:
    """Coordinates and covariant components g_mu_nu (an immutable matrix).

    `potential` holds the covariant components A_mu of an electromagnetic
    potential in the same coordinate order, or None.  `form` records how the
    claim wrote the metric ('static', 'stationary', 'metric') for provenance.
    """

    coords: tuple[sympy.Symbol, ...]
    g: sympy.ImmutableMatrix
    form: Literal["static", "stationary", "metric"]
    axial: sympy.Symbol | None = None
    potential: tuple[sympy.Expr, ...] | None = None
    static: StaticFunctions | None = None

    @property
    def time(self) -> sympy.Symbol:
        return self.coords[0]

    @property
    def radial(self) -> sympy.Symbol:
        return self.coords[1]

    @property
    def dim(self) -> int:
        return len(self.coords)


@dataclass(frozen=True)
class HorizonSpec:
    """Which horizon the claim is about.

    Exactly one of: `expression` (a closed form in the parameters), or a root
    selector `root` ('largest', 'smallest' or a 1-based index counting roots
    from the smallest positive one) with an optional numeric `bracket` (lo, hi)
    given as expressions in the parameters.  The horizon is a zero of the
    Killing norm (g_tt for static metrics; the determinant of the t-axial block
    for rotating ones).
    """

    expression: sympy.Expr | None = None
    root: str | int | None = None
    bracket: tuple[sympy.Expr, sympy.Expr] | None = None


@dataclass(frozen=True)
class Normalization:
    """Normalisation of the Killing time: xi = N d/dt (PHYSICS.md).

    kind 'as-written': N = 1; 'radius': N = 1/sqrt(F(radius)); 'geodesic':
    N = 1/sqrt(F(r_g)) with F'(r_g) = 0 (static metrics only).
    """

    kind: Literal["as-written", "radius", "geodesic"] = "as-written"
    radius: sympy.Expr | None = None


@dataclass(frozen=True)
class Spacetime:
    """A metric with the chosen horizon and Killing normalisation.

    `family` is the built-in family name or None for user-written forms;
    `functions` maps names that claims may use (F, G, R, g_tt, ...) to their
    expressions in the coordinates and parameters.
    """

    metric: Metric
    horizon: HorizonSpec
    normalization: Normalization = Normalization()
    family: str | None = None
    functions: dict[str, sympy.Expr] = field(default_factory=dict, compare=False, hash=False)
