"""What the tunneling route reads off the metric: the radial null product F G and Omega_H.

A massless particle with S = -E t + W(r) (+ m phi for rotating metrics) obeys
g^{mu nu} d_mu S d_nu S = 0.  For a radial path in the frame co-rotating with
the horizon this gives W' = +-(E - m Omega_H) / sqrt(F G) with
F = -(g_tt - g_tphi^2/g_phiphi) (the lapse squared; -g_tt when static) and
G = 1/g_rr, so the route needs the product P = F G near r_h and
Omega_H = -g_tphi/g_phiphi at r_h.  Also the point and zero-test helpers of
both sides.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass

import sympy

from crosscheck.errors import CannotCompute
from crosscheck.spacetimes.base import Metric, Spacetime
from crosscheck.spacetimes.forms import lone_time_radial_term

ANGLES = (sympy.pi / 2, sympy.pi / 3, sympy.pi / 4)  # reported angle first, then zeroth-law checks
Point = Mapping[sympy.Symbol, object]


@dataclass(frozen=True)
class Radial:
    """F and G (W' = E/sqrt(F G) for radial null rays); `omega` = -g_tphi/g_phiphi (0 when static)."""

    r: sympy.Symbol
    F: sympy.Expr
    G: sympy.Expr
    omega: sympy.Expr
    transverse: tuple[sympy.Symbol, ...]
    rotating: bool
    inputs: str

    def at_angle(self, angle: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr, sympy.Expr]:
        """(F, G, omega) with the transverse coordinates they depend on set to `angle`."""
        values = {c: angle for c in self.transverse}
        return self.F.subs(values), self.G.subs(values), self.omega.subs(values)

    @property
    def angles(self) -> tuple[sympy.Expr, ...]:
        return ANGLES if self.transverse else ANGLES[:1]


def obstacle(metric: Metric) -> str | None:
    """Why radial Hamilton-Jacobi in this form does not apply, or None."""
    g, names, n = metric.g, [str(c) for c in metric.coords], metric.dim
    if lone_time_radial_term(metric):
        return None
    if any(g[1, j] != 0 for j in range(n) if j != 1):
        return (f"the metric has d{names[1]} cross terms; W' = E/sqrt(F G) is for a metric diagonal in "
                f"({names[0]}, {names[1]})")
    axial = metric.coords.index(metric.axial) if metric.axial is not None else None
    if any(g[0, j] != 0 for j in range(2, n) if j != axial):
        return f"the metric has a d{names[0]} cross term that is not a rotation about an axis"
    return None if g[1, 1] != 0 else f"g_{names[1]}{names[1]} vanishes"


@functools.lru_cache(maxsize=32)
def radial(metric: Metric) -> Radial:
    """F, G and Omega of `metric` (CannotCompute when the form does not apply); cached."""
    reason = obstacle(metric)
    if reason:
        raise CannotCompute(reason)
    g, r = metric.g, metric.radial
    if lone_time_radial_term(metric):
        F, G = -g[0, 0], sympy.cancel(g[0, 0] / (g[0, 0] * g[1, 1] - g[0, 1] ** 2))
        omega = sympy.Integer(0)
        inputs = (f"F = -g_tt, 1/G = g_{r}{r} - g_t{r}^2/g_tt (the dt d{r} term removed by completing the square; "
                  f"the shifted time has the same Killing vector), from the {metric.form} form")
    elif metric.axial is None:
        if metric.static is not None:
            F, G, inputs = metric.static.F, metric.static.G, "F and G of the static form"
        else:
            F, G, inputs = -g[0, 0], 1 / g[1, 1], f"F = -g_tt, G = 1/g_{r}{r} ({metric.form} form)"
        omega = sympy.Integer(0)
    else:
        k, ax = metric.coords.index(metric.axial), metric.axial
        F = -sympy.cancel(sympy.together(g[0, 0] - g[0, k] ** 2 / g[k, k]))
        G, omega = 1 / g[1, 1], -g[0, k] / g[k, k]
        inputs = (f"co-rotating frame: F = -(g_tt - g_t{ax}^2/g_{ax}{ax}), G = 1/g_{r}{r}, Omega = -g_t{ax}/g_{ax}{ax} "
                  f"({metric.form} form)")
    transverse = tuple(c for c in metric.coords[2:] if c in (F.free_symbols | G.free_symbols))
    return Radial(r, F, G, omega, transverse, metric.axial is not None, inputs)


def describe(spacetime: Spacetime) -> str:
    spec, norm = spacetime.horizon, spacetime.normalization
    horizon = f"expression {spec.expression}" if spec.expression is not None else f"root '{spec.root}' of the lapse"
    which = norm.kind + (f" (r0 = {norm.radius})" if norm.kind == "radius" else "")
    return f"horizon {horizon} (crosscheck.spacetimes.horizon); normalisation {which} (crosscheck.spacetimes.normalize)"
