"""The (tau, r) plane of the Euclidean section, read off the claim's metric.

After t = -i tau the metric near the horizon is F dtau^2 + dr^2/G in the
plane orthogonal to the horizon; the period of tau that removes the conical
singularity at r_h sets the temperature (PHYSICS.md, "euclidean-period").
For a rotating metric the plane is taken in the co-rotating frame
(phi' = phi - Omega t): the lapse there is F = -(g_tt - g_tphi^2/g_phiphi)
and G = 1/g_rr.  Both may depend on the polar angle away from the horizon;
the period must not (zeroth law), which the route checks at a few angles.

This module also holds the small point and zero-test helpers both sides use
(representative parameter points, values at high precision).
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass

import mpmath
import sympy

from crosscheck import probing
from crosscheck.errors import CannotCompute
from crosscheck.spacetimes.base import Metric, Spacetime
from crosscheck.spacetimes.forms import lone_time_radial_term

# Angles (all transverse coordinates set to one value) where F and G are sampled;
# the first is the one reported, the others test that the period does not change.
ANGLES = (sympy.pi / 2, sympy.pi / 3, sympy.pi / 4)

Point = Mapping[sympy.Symbol, object]


@dataclass(frozen=True)
class Plane:
    """F and G of the (tau, r) plane; `transverse`: coordinates they depend on besides r."""

    r: sympy.Symbol
    F: sympy.Expr
    G: sympy.Expr
    transverse: tuple[sympy.Symbol, ...]
    rotating: bool
    inputs: str

    def at_angle(self, angle: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
        """(F, G) with every transverse coordinate they depend on set to `angle`."""
        values = {c: angle for c in self.transverse}
        return self.F.subs(values), self.G.subs(values)

    @property
    def angles(self) -> tuple[sympy.Expr, ...]:
        """The sampled angles: one if F and G depend on r only, else all of ANGLES."""
        return ANGLES if self.transverse else ANGLES[:1]


def obstacle(metric: Metric) -> str | None:
    """Why the metric has no (tau, r) plane orthogonal to the rest, or None."""
    g, names = metric.g, [str(c) for c in metric.coords]
    n = metric.dim
    if lone_time_radial_term(metric):
        return None
    for j in range(n):
        if j != 1 and g[1, j] != 0:
            return (f"the metric has a d{names[1]} d{names[j]} term; the Euclidean section is read off a metric "
                    f"diagonal in ({names[0]}, {names[1]}) (change to a Schwarzschild-like time first)")
    if g[1, 1] == 0:
        return f"g_{names[1]}{names[1]} vanishes: {names[1]} is not a spacelike radial coordinate"
    axial = metric.coords.index(metric.axial) if metric.axial is not None else None
    for j in range(2, n):
        if j != axial and g[0, j] != 0:
            return f"the metric has a d{names[0]} d{names[j]} term that is not a rotation about an axis"
    return None


@functools.lru_cache(maxsize=32)
def plane(metric: Metric) -> Plane:
    """The (tau, r) plane of `metric` (CannotCompute when there is none); cached per metric
    (value objects), since the numeric side asks at every point."""
    reason = obstacle(metric)
    if reason:
        raise CannotCompute(reason)
    g, r = metric.g, metric.radial
    if lone_time_radial_term(metric):
        F, G = -g[0, 0], sympy.cancel(g[0, 0] / (g[0, 0] * g[1, 1] - g[0, 1] ** 2))
        inputs = (f"F = -g_tt, 1/G = g_{r}{r} - g_t{r}^2/g_tt (the dt d{r} term removed by completing the square; "
                  f"the shifted time has the same Killing vector), from the {metric.form} form")
    elif metric.axial is None and metric.static is not None:
        F, G = metric.static.F, metric.static.G
        inputs = "F and G of the static form (-F dt^2 + dr^2/G)"
    elif metric.axial is None:
        F, G = -g[0, 0], 1 / g[1, 1]
        inputs = f"F = -g_tt, G = 1/g_{r}{r} of the {metric.form} form"
    else:
        k, ax = metric.coords.index(metric.axial), metric.axial
        F = -sympy.cancel(sympy.together(g[0, 0] - g[0, k] ** 2 / g[k, k]))
        G = 1 / g[1, 1]
        inputs = (f"co-rotating frame: F = -(g_tt - g_t{ax}^2/g_{ax}{ax}) (lapse squared), G = 1/g_{r}{r}, "
                  f"from the {metric.form} form")
    transverse = tuple(c for c in metric.coords[2:] if c in (F.free_symbols | G.free_symbols))
    return Plane(r, F, G, transverse, metric.axial is not None, inputs)


# --------------------------------------------------------------------------- points


def static_side(F: sympy.Expr, r: sympy.Symbol, r_h: sympy.Expr, point: Point) -> int:
    """+1 when F > 0 just outside r_h (also when on both sides), -1 when only inside."""
    at = probing.value(r_h, point, 30).real
    scale = abs(at) or mpmath.mpf(1)
    for side in (1, -1):
        try:
            f = probing.value(F, {**point, r: sympy.Float(at + side * scale / 10**6, 30)}, 30)
        except ValueError:
            continue
        if f.real > 0 and abs(f.imag) <= mpmath.mpf(10) ** -20 * abs(f):
            return side
    raise ValueError(f"no static region (F > 0) next to the horizon r_h = {r_h}")


def describe(spacetime: Spacetime) -> str:
    """The horizon and normalisation inputs, for provenance."""
    spec, norm = spacetime.horizon, spacetime.normalization
    horizon = f"expression {spec.expression}" if spec.expression is not None else f"root '{spec.root}' of the lapse"
    which = norm.kind + (f" (r0 = {norm.radius})" if norm.kind == "radius" else "")
    return f"horizon {horizon} (crosscheck.spacetimes.horizon); normalisation {which} (crosscheck.spacetimes.normalize)"
