"""Build a `Metric` from each way a claim can write a spacetime.

Three forms (DESIGN.md section 3): `static:` (functions F, G, R), `stationary:`
(Boyer-Lindquist-like components in t, r, theta, phi) and `metric:` (a line
element in the claim's own coordinates).  All three end as a full covariant
matrix so that routes built on the metric tensor need no special cases, and
the static forms also keep F, G, R for routes designed around them.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import sympy

from crosscheck.spacetimes.base import PHI, R_COORD, T_COORD, THETA, Metric, StaticFunctions, angle_symbols
from crosscheck.spacetimes.evaluation import as_sympy


def unit_sphere(angles: Sequence[sympy.Symbol]) -> list[sympy.Expr]:
    """Diagonal of the unit n-sphere metric in nested polar angles.

    dOmega_n^2 = dth1^2 + sin^2 th1 (dth2^2 + sin^2 th2 (... + dphi^2)).
    """
    diagonal = []
    factor = sympy.Integer(1)
    for angle in angles:
        diagonal.append(factor)
        factor = factor * sympy.sin(angle) ** 2
    return diagonal


def static_metric(
    F: sympy.Expr,
    G: sympy.Expr | None = None,
    R: sympy.Expr | None = None,
    dim: int = 4,
    A_t: sympy.Expr | None = None,
    r: sympy.Symbol = R_COORD,
) -> Metric:
    """ds^2 = -F dt^2 + dr^2/G + R^2 dOmega_(dim-2)^2 as a full dim x dim metric.

    G defaults to F and R to r.  In dim 2 there is no sphere; in dim 3 the
    sphere is a circle in phi.  The potential is (A_t, 0, ...) when A_t is given.
    """
    if not isinstance(dim, int) or isinstance(dim, bool) or dim < 2:
        raise ValueError(f"static metric: dim must be an integer >= 2, got {dim!r}")
    F = as_sympy(F)
    G = F if G is None else as_sympy(G)
    R = r if R is None else as_sympy(R)
    angles = angle_symbols(dim - 2) if dim > 2 else ()
    diagonal = [-F, 1 / G] + [R**2 * h for h in unit_sphere(angles)]
    coords = (T_COORD, r, *angles)
    potential = None
    if A_t is not None:
        potential = (as_sympy(A_t),) + (sympy.Integer(0),) * (dim - 1)
    return Metric(
        coords=coords,
        g=sympy.ImmutableMatrix(sympy.diag(*diagonal)),
        form="static",
        potential=potential,
        static=StaticFunctions(F=F, G=G, R=R, dim=dim, A_t=None if A_t is None else as_sympy(A_t), r=r),
    )


def _depends_only_on(expr: sympy.Expr, allowed: set[sympy.Symbol], coords: Sequence[sympy.Symbol]) -> bool:
    return not (as_sympy(expr).free_symbols & (set(coords) - allowed))


def stationary_metric(
    g_tt: sympy.Expr,
    g_tphi: sympy.Expr,
    g_phiphi: sympy.Expr,
    g_rr: sympy.Expr,
    g_thth: sympy.Expr,
    A_t: sympy.Expr | None = None,
    A_phi: sympy.Expr | None = None,
) -> Metric:
    """Stationary axisymmetric metric in (t, r, theta, phi), Boyer-Lindquist-like.

    ds^2 = g_tt dt^2 + 2 g_tphi dt dphi + g_phiphi dphi^2 + g_rr dr^2 + g_thth dtheta^2.
    phi is the axial coordinate when g_tphi != 0.  When the metric is in fact
    static and round (g_tphi = 0, g_tt and g_rr functions of r, g_thth = R^2,
    g_phiphi = R^2 sin^2 theta) the static functions are recorded as well.
    """
    comps = [as_sympy(x) for x in (g_tt, g_tphi, g_phiphi, g_rr, g_thth)]
    g_tt, g_tphi, g_phiphi, g_rr, g_thth = comps
    coords = (T_COORD, R_COORD, THETA, PHI)
    for name, comp in zip(("g_tt", "g_tphi", "g_phiphi", "g_rr", "g_thth"), comps):
        if comp.has(T_COORD) or comp.has(PHI):
            raise ValueError(f"stationary: {name} depends on t or phi; both must be Killing coordinates")
    matrix = sympy.Matrix(
        [
            [g_tt, 0, 0, g_tphi],
            [0, g_rr, 0, 0],
            [0, 0, g_thth, 0],
            [g_tphi, 0, 0, g_phiphi],
        ]
    )
    potential = None
    if A_t is not None or A_phi is not None:
        potential = (
            as_sympy(A_t if A_t is not None else 0),
            sympy.Integer(0),
            sympy.Integer(0),
            as_sympy(A_phi if A_phi is not None else 0),
        )
    static = None
    if g_tphi == 0 and _depends_only_on(g_tt, {R_COORD}, coords) and _depends_only_on(g_rr, {R_COORD}, coords):
        round_sphere = sympy.simplify(g_phiphi - g_thth * sympy.sin(THETA) ** 2) == 0
        if _depends_only_on(g_thth, {R_COORD}, coords) and round_sphere:
            static = StaticFunctions(
                F=-g_tt,
                G=1 / g_rr,
                R=sympy.sqrt(g_thth),
                dim=4,
                A_t=None if A_t is None or A_phi not in (None, 0) else as_sympy(A_t),
            )
    return Metric(
        coords=coords,
        g=sympy.ImmutableMatrix(matrix),
        form="stationary",
        axial=PHI if g_tphi != 0 else None,
        potential=potential,
        static=static,
    )


def _quadratic_form(
    coords: Sequence[sympy.Symbol], ds2: sympy.Expr, differentials: Mapping[sympy.Symbol, sympy.Symbol]
) -> sympy.Matrix:
    """g_ij from ds2 = sum g_ij dx_i dx_j, read off as a polynomial in the differentials.

    Treating ds2 as a polynomial in dx_i (coefficients are any expressions in
    the coordinates and parameters) both validates the form -- every monomial
    must have total degree 2 -- and gives g_ii = coefficient of dx_i^2,
    g_ij = half the coefficient of dx_i dx_j.
    """
    missing = [str(c) for c in coords if c not in differentials]
    if missing:
        raise ValueError(f"line_element: no differential symbol for coordinate(s) {', '.join(missing)}")
    dx = [differentials[c] for c in coords]
    try:
        poly = sympy.Poly(as_sympy(ds2), *dx)
    except sympy.PolynomialError as exc:
        raise ValueError("line_element: ds^2 is not a polynomial in the differentials") from exc
    names = ", ".join(str(d) for d in dx)
    for monomial in poly.monoms():
        if sum(monomial) != 2:
            raise ValueError(f"line_element: ds^2 is not a homogeneous quadratic form in the differentials {names}")
    n = len(coords)
    g = sympy.zeros(n, n)
    for i in range(n):
        for j in range(i, n):
            powers = [0] * n
            powers[i] += 1
            powers[j] += 1
            coeff = poly.coeff_monomial(tuple(powers))
            g[i, j] = g[j, i] = sympy.factor_terms(sympy.cancel(coeff if i == j else coeff / 2))
    return g


def _axial_coordinate(coords: Sequence[sympy.Symbol], g: sympy.Matrix) -> sympy.Symbol | None:
    """The rotation angle: g_t,x != 0 and the metric does not depend on x (at most one)."""
    found = [
        x
        for k, x in enumerate(coords[2:], start=2)
        if g[0, k] != 0 and not any(comp.has(x) for comp in g)
    ]
    if len(found) > 1:
        raise ValueError(
            f"line_element: several candidate axial coordinates ({', '.join(map(str, found))}); "
            "at most one is supported"
        )
    return found[0] if found else None


def _static_functions(coords: Sequence[sympy.Symbol], g: sympy.Matrix) -> StaticFunctions | None:
    """F, G, R when the metric is diagonal and g_tt, g_rr depend on the radius only."""
    n = len(coords)
    if any(g[i, j] != 0 for i in range(n) for j in range(n) if i != j):
        return None
    radial = coords[1]
    others = set(coords) - {radial}
    if (g[0, 0].free_symbols | g[1, 1].free_symbols) & others:
        return None
    R = None
    if n > 2 and g[2, 2].has(radial):
        R = sympy.sqrt(g[2, 2])
    return StaticFunctions(F=-g[0, 0], G=1 / g[1, 1], R=R, dim=n, r=radial)


def line_element_metric(
    coords: Sequence[sympy.Symbol], ds2: sympy.Expr, differentials: Mapping[sympy.Symbol, sympy.Symbol]
) -> Metric:
    """Metric from a line element ds2 written with the differential symbols.

    coords[0] must be a Killing time (no component depends on it) and
    coords[1] the radial coordinate where the horizon is looked for.
    """
    coords = tuple(coords)
    if len(coords) < 2 or len(set(coords)) != len(coords):
        raise ValueError("line_element: need at least two distinct coordinates (time first, then the radial one)")
    g = _quadratic_form(coords, ds2, differentials)
    time = coords[0]
    names = [str(c) for c in coords]
    for i in range(len(coords)):
        for j in range(i, len(coords)):
            if g[i, j].has(time):
                raise ValueError(
                    f"line_element: g_{names[i]}{names[j]} depends on {time}; "
                    "the time coordinate (first in coordinates) must be a Killing time"
                )
    for i, name in enumerate(names):
        if all(g[i, j] == 0 for j in range(len(coords))):
            raise ValueError(f"line_element: d{name} does not appear in ds^2; the metric would be degenerate")
    return Metric(
        coords=coords,
        g=sympy.ImmutableMatrix(g),
        form="metric",
        axial=_axial_coordinate(coords, g),
        static=_static_functions(coords, g),
    )


def lone_time_radial_term(metric: Metric) -> bool:
    """True for a static metric whose only off-diagonal term is dt dr (Painleve-Gullstrand,
    Eddington-Finkelstein-like charts).  Completing the square,
    g_tt dt^2 + 2 g_tr dt dr + g_rr dr^2 = g_tt (dt + g_tr/g_tt dr)^2 + (g_rr - g_tr^2/g_tt) dr^2,
    gives the diagonal form -F dt'^2 + dr^2/G with F = -g_tt and the same Killing vector d/dt.
    """
    g, n = metric.g, metric.dim
    if metric.axial is not None or g[0, 1] == 0:
        return False
    others = [(i, j) for i in range(n) for j in range(i + 1, n) if (i, j) != (0, 1) and g[i, j] != 0]
    return not others
