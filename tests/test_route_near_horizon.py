"""The near-horizon route against published values and independent computations.

References are textbook formulas (recalled from memory, as marked) or
computations written here with mpmath/sympy that do not use the route's code
(its Christoffel symbols, Taylor limits or Richardson extrapolation).
"""

from __future__ import annotations

import functools

import mpmath
import pytest
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.routes.base import Problem, Route
from crosscheck.routes.near_horizon import NearHorizonRoute
from crosscheck.spacetimes.base import T_COORD, HorizonSpec, Metric, Normalization, Spacetime, StaticFunctions
from crosscheck.spacetimes.forms import static_metric, stationary_metric

ROUTE = NearHorizonRoute()
r = sympy.Symbol("r", positive=True)
theta = sympy.Symbol("theta", real=True)
M, Q, a, H, l, r_h, A_acc, Lam = sympy.symbols("M Q a H l r_h A Lambda", positive=True)
WANTED = frozenset({"kappa", "T", "A", "S", "r_h"})


def rat(x: str) -> sympy.Rational:
    return sympy.Rational(x)


def problem(metric, horizon, params, ranges, wanted=WANTED, normalization=Normalization()) -> Problem:
    spec = horizon if isinstance(horizon, HorizonSpec) else HorizonSpec(expression=horizon)
    ranges = {s: (rat(lo), rat(hi)) for s, (lo, hi) in ranges.items()}
    return Problem(spacetime=Spacetime(metric, spec, normalization), detector=None, parameters=params,
                   wanted=frozenset(wanted), ranges=ranges)


def mp(point: dict) -> dict:
    """Exact rationals as 80-digit mpmath numbers (mpmath.mpf(Rational) would go through a float)."""
    with mpmath.workdps(80):
        return {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}


def kerr_newman(charged: bool = True) -> Metric:
    q = Q if charged else 0
    sigma, delta = r**2 + a**2 * sympy.cos(theta) ** 2, r**2 - 2 * M * r + a**2 + q**2
    s2 = sympy.sin(theta) ** 2
    return stationary_metric(
        g_tt=-(1 - (2 * M * r - q**2) / sigma),
        g_tphi=-a * s2 * (2 * M * r - q**2) / sigma,
        g_phiphi=((r**2 + a**2) ** 2 - a**2 * delta * s2) * s2 / sigma,
        g_rr=sigma / delta,
        g_thth=sigma,
        A_t=-q * r / sigma if charged else None,
        A_phi=q * r * a * s2 / sigma if charged else None,
    )


def rindler() -> Metric:
    y, z = sympy.symbols("y z", real=True)
    return Metric(coords=(T_COORD, r, y, z), g=sympy.ImmutableMatrix(sympy.diag(-A_acc**2 * r**2, 1, 1, 1)),
                  form="static", static=StaticFunctions(F=A_acc**2 * r**2, G=sympy.Integer(1), R=None))


def kn_reference(p: dict) -> dict:
    """Kerr-Newman horizon quantities at a point (mpmath).
    # Source: Wald 1984, ch. 12 (from memory); PHYSICS.md, killing-horizon."""
    m, spin, q = p[M], p.get(a, 0), p.get(Q, 0)
    rp, rm = m + mpmath.sqrt(m**2 - spin**2 - q**2), m - mpmath.sqrt(m**2 - spin**2 - q**2)
    kappa = (rp - rm) / (2 * (rp**2 + spin**2))
    return {"kappa": kappa, "T": kappa / (2 * mpmath.pi), "A": 4 * mpmath.pi * (rp**2 + spin**2),
            "S": mpmath.pi * (rp**2 + spin**2), "r_h": rp, "Omega": spin / (rp**2 + spin**2), "Phi": q * rp / (rp**2 + spin**2)}


def sphere_area(n: int, radius) -> mpmath.mpf:
    # Source: volume of the unit n-sphere 2 pi^((n+1)/2) / Gamma((n+1)/2) (common practice).
    return 2 * mpmath.pi ** (mpmath.mpf(n + 1) / 2) / mpmath.gamma(mpmath.mpf(n + 1) / 2) * radius**n


def sds_reference(p: dict, which: str) -> dict:
    """Schwarzschild-de Sitter with the geodesic normalisation, computed here with mpmath:
    horizons from polyroots of -Lambda r^3/3 + r - 2M, r_g from F'(r_g) = 0 by findroot,
    kappa = N |F'(r_h)|/2 with N = 1/sqrt(F(r_g)).
    # Source: PHYSICS.md, "Normalisation of the Killing vector" (geodesic); static kappa = |F'|/2 (Wald 1984, ch. 12, from memory)."""
    m, lam = p[M], p[Lam]
    F = lambda x: 1 - 2 * m / x - lam * x**2 / 3  # noqa: E731
    roots = sorted(mpmath.re(x) for x in mpmath.polyroots([-lam / 3, 0, 1, -2 * m], maxsteps=200, extraprec=200)
                   if abs(mpmath.im(x)) < 1e-30 and mpmath.re(x) > 0)
    horizon = roots[0] if which == "black hole" else roots[-1]
    r_g = mpmath.findroot(lambda x: mpmath.diff(F, x), (3 * m / lam) ** (mpmath.mpf(1) / 3))
    kappa = abs(mpmath.diff(F, horizon)) / (2 * mpmath.sqrt(F(r_g)))
    return {"kappa": kappa, "T": kappa / (2 * mpmath.pi), "r_h": horizon, "A": 4 * mpmath.pi * horizon**2, "S": mpmath.pi * horizon**2}


def _schwarzschild_ref(p):
    # Source: Wald 1984, ch. 12: kappa = 1/(4M), A = 16 pi M^2 (from memory).
    m = p[M]
    return {"kappa": 1 / (4 * m), "T": 1 / (8 * mpmath.pi * m), "A": 16 * mpmath.pi * m**2, "S": 4 * mpmath.pi * m**2, "r_h": 2 * m}


def _rn_ref(p):
    # Source: Wald 1984, ch. 12 (from memory): r_+- = M +- sqrt(M^2 - Q^2), kappa = (r_+ - r_-)/(2 r_+^2), Phi = Q/r_+.
    return {k: v for k, v in kn_reference(p).items() if k != "Omega"}


CASES = {
    # name: (problem, point, reference function)
    "schwarzschild": (lambda: problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: ("1", "2")}),
                      {M: rat("1.5")}, _schwarzschild_ref),
    "reissner-nordstrom": (lambda: problem(static_metric(1 - 2 * M / r + Q**2 / r**2, A_t=-Q / r), M + sympy.sqrt(M**2 - Q**2),
                                           (M, Q), {M: ("1", "2"), Q: ("0.1", "0.5")}, WANTED | {"Phi"}),
                           {M: rat("1.5"), Q: rat("0.3")}, _rn_ref),
    "reissner-nordstrom root": (lambda: problem(static_metric(1 - 2 * M / r + Q**2 / r**2, A_t=-Q / r), HorizonSpec(root="largest"),
                                                (M, Q), {M: ("1", "2"), Q: ("0.1", "0.5")}, WANTED | {"Phi"}),
                                {M: rat("1.2"), Q: rat("0.45")}, _rn_ref),
    "kerr": (lambda: problem(kerr_newman(charged=False), M + sympy.sqrt(M**2 - a**2), (M, a), {M: ("1", "2"), a: ("0.1", "0.5")},
                             WANTED | {"Omega"}),
             {M: rat("1.5"), a: rat("0.4")}, kn_reference),
    "kerr-newman": (lambda: problem(kerr_newman(), M + sympy.sqrt(M**2 - a**2 - Q**2), (M, a, Q),
                                    {M: ("1", "2"), a: ("0.1", "0.5"), Q: ("0.1", "0.4")}, WANTED | {"Omega", "Phi"}),
                    {M: rat("1.5"), a: rat("0.4"), Q: rat("0.3")}, kn_reference),
    "de sitter": (lambda: problem(static_metric(1 - H**2 * r**2), 1 / H, (H,), {H: ("0.1", "1")}),
                  # Source: Gibbons & Hawking 1977, Phys. Rev. D 15, 2738: kappa = H (from memory); A = 4 pi / H^2.
                  {H: rat("0.5")}, lambda p: {"kappa": p[H], "T": p[H] / (2 * mpmath.pi), "A": 4 * mpmath.pi / p[H] ** 2,
                                              "S": mpmath.pi / p[H] ** 2, "r_h": 1 / p[H]}),
    "isotropic schwarzschild": (lambda: problem(static_metric(((1 - M / (2 * r)) / (1 + M / (2 * r))) ** 2, (1 + M / (2 * r)) ** -4,
                                                              r * (1 + M / (2 * r)) ** 2), M / 2, (M,), {M: ("1", "2")}),
                                # Source: Schwarzschild in isotropic coordinates, horizon rho = M/2 (MTW 1973, ch. 31, from memory).
                                {M: rat("1.5")}, lambda p: {**_schwarzschild_ref(p), "r_h": p[M] / 2}),
    "rindler": (lambda: problem(rindler(), sympy.Integer(0), (A_acc,), {A_acc: ("0.5", "2")}, {"kappa", "T", "r_h"}),
                # Source: Rindler space, kappa = a for the boost Killing field (Wald 1984, ch. 12, from memory).
                {A_acc: rat("1.5")}, lambda p: {"kappa": p[A_acc], "T": p[A_acc] / (2 * mpmath.pi), "r_h": mpmath.mpf(0)}),
    "tangherlini 5d": (lambda: problem(static_metric(1 - r_h**2 / r**2, dim=5), r_h, (r_h,), {r_h: ("1", "2")}),
                       # Source: Tangherlini 1963, Nuovo Cimento 27, 636: F = 1 - (r_h/r)^2 in D = 5, kappa = 1/r_h (from memory).
                       {r_h: rat("1.5")}, lambda p: {"kappa": 1 / p[r_h], "T": 1 / (2 * mpmath.pi * p[r_h]), "A": sphere_area(3, p[r_h]),
                                                     "S": sphere_area(3, p[r_h]) / 4, "r_h": p[r_h]}),
    "btz": (lambda: problem(static_metric(-M + r**2 / l**2, dim=3), l * sympy.sqrt(M), (M, l), {M: ("1", "2"), l: ("1", "3")}),
            # Source: Banados, Teitelboim & Zanelli 1992, PRL 69, 1849: r_h = l sqrt(M), kappa = r_h/l^2 (from memory).
            {M: rat("1.5"), l: rat("2")}, lambda p: {"kappa": mpmath.sqrt(p[M]) / p[l], "T": mpmath.sqrt(p[M]) / (2 * mpmath.pi * p[l]),
                                                     "A": 2 * mpmath.pi * p[l] * mpmath.sqrt(p[M]), "S": mpmath.pi * p[l] * mpmath.sqrt(p[M]) / 2,
                                                     "r_h": p[l] * mpmath.sqrt(p[M])}),
    "sds black hole": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root=1), (M, Lam),
                                       {M: ("1", "2"), Lam: ("0.001", "0.01")}, normalization=Normalization(kind="geodesic")),
                       {M: rat("1.5"), Lam: rat("0.005")}, lambda p: sds_reference(p, "black hole")),
    "sds cosmological": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root="largest"), (M, Lam),
                                         {M: ("1", "2"), Lam: ("0.001", "0.01")}, normalization=Normalization(kind="geodesic")),
                         {M: rat("1.5"), Lam: rat("0.005")}, lambda p: sds_reference(p, "cosmological")),
}


@functools.cache
def symbolic(name: str):
    return ROUTE.symbolic(CASES[name][0]())


@functools.cache
def numeric(name: str, digits: int = 30):
    make, point, _ = CASES[name]
    return ROUTE.numeric(make(), mp(point), digits)


def evaluate(expr: sympy.Expr, point: dict, digits: int = 40) -> mpmath.mpf:
    value = sympy.N(expr.subs(point), digits)
    with mpmath.workdps(digits):
        return mpmath.mpf(str(sympy.re(value)))


def reference(name: str, digits: int = 70) -> dict:
    with mpmath.workdps(digits):
        return CASES[name][2](mp(CASES[name][1]))


def relative(x, y) -> mpmath.mpf:
    with mpmath.workdps(60):
        return abs(x - y) / max(abs(y), mpmath.mpf(10) ** -60)


def deviation(measured, expected) -> tuple[mpmath.mpf, mpmath.mpf]:
    """(|value - expected|, reported error), computed at 60 digits."""
    with mpmath.workdps(60):
        return abs(measured.value - expected), measured.error


# --------------------------------------------------------------------------- contract


def test_route_contract():
    assert isinstance(ROUTE, Route)
    assert (ROUTE.name, ROUTE.grade, ROUTE.version) == ("near-horizon", "exact", "1")
    assert ROUTE.title == "Redshifted proper acceleration of static observers, limit at the horizon"
    assert ROUTE.observables == {"kappa", "T", "a_loc", "T_loc", "A", "S", "Omega", "Phi", "r_h"}


def test_applies_needs_a_horizon_and_known_observables():
    good = CASES["schwarzschild"][0]()
    assert ROUTE.applies(good) is None
    no_horizon = Problem(Spacetime(static_metric(1 - 2 * M / r), HorizonSpec()), None, (M,), frozenset({"T"}))
    assert "horizon" in ROUTE.applies(no_horizon)
    assert ROUTE.applies(Problem(None, None, (), frozenset({"T"}))) is not None
    spectrum = Problem(good.spacetime, None, (M,), frozenset({"T", "spectrum"}))
    assert "spectrum" in ROUTE.applies(spectrum)


# --------------------------------------------------------------------------- values against references


@pytest.mark.parametrize("name", sorted(CASES))
def test_symbolic_values_match_references(name):
    result, point, ref = symbolic(name), CASES[name][1], reference(name)
    for observable, expected in ref.items():
        if observable in result.values:
            assert relative(evaluate(result.values[observable], point), expected) < 1e-25, observable
    assert set(result.values) == CASES[name][0]().wanted


@pytest.mark.parametrize("name", sorted(CASES))
def test_numeric_values_match_references_within_their_errors(name):
    result, ref = numeric(name), reference(name)
    for observable, expected in ref.items():
        if observable in result.values:
            actual, error = deviation(result.values[observable], expected)
            assert actual < 1e-25 * max(abs(expected), 1), observable
            # honest error: the actual error does not exceed 10 times the reported estimate
            assert actual <= 10 * error, (observable, actual, error)


@pytest.mark.parametrize("name", sorted(CASES))
def test_numeric_agrees_with_symbolic_at_30_digits(name):
    sym, num, point = symbolic(name), numeric(name), CASES[name][1]
    for observable, expr in sym.values.items():
        value = num.values[observable].value
        assert relative(value, evaluate(expr, point)) < 1e-12 or abs(value) < 1e-25, observable


@pytest.mark.parametrize("name", ["schwarzschild", "reissner-nordstrom", "kerr", "de sitter", "btz"])
def test_errors_honest_at_15_digits(name):
    result, ref = numeric(name, 15), reference(name)
    for observable, expected in ref.items():
        if observable in result.values:
            actual, error = deviation(result.values[observable], expected)
            assert actual <= 10 * error and error < 1e-13 * max(abs(expected), 1), observable


def test_schwarzschild_symbolic_is_exact():
    # Source: Wald 1984, ch. 12 (from memory): kappa = 1/(4M), T = 1/(8 pi M), A = 16 pi M^2.
    values = symbolic("schwarzschild").values
    assert sympy.simplify(values["kappa"] - 1 / (4 * M)) == 0
    assert sympy.simplify(values["T"] - 1 / (8 * sympy.pi * M)) == 0
    assert sympy.simplify(values["S"] - 4 * sympy.pi * M**2) == 0


def test_extremal_reissner_nordstrom_has_zero_surface_gravity():
    # Source: extremal RN (Q = M) has a degenerate horizon, kappa = 0 (Wald 1984, ch. 12, from memory).
    p = problem(static_metric((1 - M / r) ** 2), M, (M,), {M: ("1", "2")}, {"kappa", "T", "A"})
    assert ROUTE.symbolic(p).values["kappa"] == 0
    values = ROUTE.numeric(p, {M: mpmath.mpf("1.5")}, 30).values
    actual, error = deviation(values["kappa"], 0)
    assert actual <= 10 * error and error < 1e-25
    with mpmath.workdps(40):
        assert relative(values["A"].value, 4 * mpmath.pi * mpmath.mpf("1.5") ** 2) < 1e-25


@pytest.mark.parametrize("epsilon", ["1e-4", "1e-10"])
def test_near_extremal_reissner_nordstrom_numeric(epsilon):
    # Source: as for RN above; the cancellation in sqrt(M^2 - Q^2) is done here at 60 digits.
    p = CASES["reissner-nordstrom"][0]()
    with mpmath.workdps(60):
        point = {M: mpmath.mpf(1), Q: 1 - mpmath.mpf(epsilon)}
        expected = kn_reference(point)["kappa"]
    actual, error = deviation(ROUTE.numeric(p, point, 30).values["kappa"], expected)
    assert actual <= 10 * error and error < 1e-20 * expected


# --------------------------------------------------------------------------- a_loc, T_loc


def test_schwarzschild_static_observer_acceleration():
    # Source: Carroll 2004, ch. 5 (from memory): a_loc = M / (r^2 sqrt(1 - 2M/r)).
    p = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: ("1", "2")}, {"a_loc", "T_loc", "kappa"})
    sym, num = ROUTE.symbolic(p), ROUTE.numeric(p, {M: mpmath.mpf("1.5")}, 30)
    expected = M / (r**2 * sympy.sqrt(1 - 2 * M / r))
    for x in ("3.1", "4", "10", "1000"):
        at = {M: rat("1.5"), r: rat(x)}
        exact = evaluate(expected, at, 70)
        assert relative(evaluate(sym.functions["a_loc"](r), at), exact) < 1e-30
        actual, error = deviation(num.functions["a_loc"](mp({r: rat(x)})[r]), exact)
        assert actual <= 10 * error and error < 1e-30 * exact


def test_tolman_law_and_local_unruh_limit():
    # Source: Tolman 1930, Phys. Rev. 35, 904 (from memory): T_loc sqrt(F) is constant, = T_infinity.
    # Source: near the horizon T_loc -> a_loc/(2 pi), the local Unruh value (PHYSICS.md, near-horizon; Unruh 1976, from memory).
    F = 1 - 2 * M / r
    p = problem(static_metric(F), 2 * M, (M,), {M: ("1", "2")}, {"a_loc", "T_loc"})
    sym = ROUTE.symbolic(p)
    t_loc, a_loc = sym.functions["T_loc"](r), sym.functions["a_loc"](r)
    assert sympy.simplify(t_loc * sympy.sqrt(F) - 1 / (8 * sympy.pi * M)) == 0
    assert sympy.limit(t_loc / (a_loc / (2 * sympy.pi)), r, 2 * M, "+") == 1
    num = ROUTE.numeric(p, {M: mpmath.mpf("1.5")}, 30)
    with mpmath.workdps(40):
        constants = [num.functions["T_loc"](x).value * mpmath.sqrt(1 - 3 / mpmath.mpf(x)) for x in ("3.01", "5", "50")]
        assert max(constants) - min(constants) < 1e-28 and relative(constants[0], 1 / (12 * mpmath.pi)) < 1e-28
        x = 3 + mpmath.mpf(10) ** -12
        ratio = num.functions["T_loc"](x).value / (num.functions["a_loc"](x).value / (2 * mpmath.pi))
        assert abs(ratio - 1) < 1e-11


def test_rindler_observers():
    # Source: Rindler observer at x has proper acceleration 1/x and Unruh temperature 1/(2 pi x) (Unruh 1976, from memory).
    p = problem(rindler(), sympy.Integer(0), (A_acc,), {A_acc: ("0.5", "2")}, {"a_loc", "T_loc", "kappa"})
    sym = ROUTE.symbolic(p)
    assert sympy.simplify(sym.functions["a_loc"](r) - 1 / r) == 0
    assert sympy.simplify(sym.functions["T_loc"](r) - 1 / (2 * sympy.pi * r)) == 0
    num = ROUTE.numeric(p, {A_acc: mpmath.mpf(2)}, 30)
    with mpmath.workdps(40):
        assert relative(num.functions["T_loc"](mpmath.mpf("0.25")).value, 2 / mpmath.pi) < 1e-28


def test_tolman_temperature_does_not_depend_on_the_normalisation():
    # Source: PHYSICS.md, near-horizon: T_loc is independent of N; kappa = N kappa_t with N = 1/sqrt(F(r0)).
    F = 1 - 2 * M / r
    base = problem(static_metric(F), 2 * M, (M,), {M: ("1", "2")}, {"kappa", "T_loc"})
    scaled = problem(static_metric(F), 2 * M, (M,), {M: ("1", "2")}, {"kappa", "T_loc"}, Normalization(kind="radius", radius=5 * M))
    one, two = ROUTE.symbolic(base), ROUTE.symbolic(scaled)
    assert sympy.simplify(two.values["kappa"] - 1 / (4 * M * sympy.sqrt(1 - sympy.Rational(2, 5)))) == 0
    assert sympy.simplify(one.functions["T_loc"](r) - two.functions["T_loc"](r)) == 0
    num = ROUTE.numeric(scaled, {M: mpmath.mpf(1)}, 30)
    with mpmath.workdps(40):
        assert relative(num.values["kappa"].value, 1 / (4 * mpmath.sqrt(mpmath.mpf(3) / 5))) < 1e-25


# --------------------------------------------------------------------------- evidence and failures


def test_evidence_for_plots():
    num = numeric("schwarzschild")
    offsets, values = num.evidence["offsets"], num.evidence["redshifted_acceleration"]
    assert len(offsets) == len(values) >= 10 and offsets == sorted(offsets, reverse=True)
    assert abs(values[-1] - 1 / 6) < abs(values[0] - 1 / 6) < 1e-2
    ratios = num.evidence["rindler_ratio"]
    assert abs(ratios[-1] - 1 / 6) < abs(ratios[0] - 1 / 6) < 1e-2  # Rindler form: sqrt(-g_tt)/rho -> kappa
    assert numeric("de sitter").evidence["side"] == "r < r_h"


def test_kerr_zeroth_law_evidence_and_steps():
    num, sym = numeric("kerr-newman"), symbolic("kerr-newman")
    law = num.evidence["zeroth_law"]
    assert law["holds"] and max(law["kappa_t"]) - min(law["kappa_t"]) < 1e-25
    assert any("ZAMO" in step.label for step in sym.steps)
    assert any("Rindler" in step.label and "= kappa_t" in step.label for step in symbolic("schwarzschild").steps)


def test_wrong_horizon_is_an_error_on_both_sides():
    p = problem(static_metric(1 - 2 * M / r), 3 * M, (M,), {M: ("1", "2")})
    with pytest.raises(ValueError, match="horizon"):
        ROUTE.symbolic(p)
    with pytest.raises(ValueError, match="horizon"):
        ROUTE.numeric(p, {M: mpmath.mpf(1)}, 20)


def test_cannot_compute_what_is_not_defined():
    kerr = problem(kerr_newman(charged=False), M + sympy.sqrt(M**2 - a**2), (M, a), {M: ("1", "2"), a: ("0.1", "0.5")}, {"a_loc"})
    with pytest.raises(CannotCompute):
        ROUTE.symbolic(kerr)
    no_area = problem(rindler(), sympy.Integer(0), (A_acc,), {A_acc: ("0.5", "2")}, {"A"})
    with pytest.raises(CannotCompute):
        ROUTE.numeric(no_area, {A_acc: mpmath.mpf(1)}, 20)
    no_charge = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: ("1", "2")}, {"Phi"})
    with pytest.raises(CannotCompute):
        ROUTE.symbolic(no_charge)


def test_coordinates_with_dv_dr_cross_terms():
    # Source: Schwarzschild in ingoing Eddington-Finkelstein coordinates, the same kappa = 1/(4M)
    # and A = 16 pi M^2 (Wald 1984, ch. 6 and 12, from memory); the route sees g_vr != 0.
    from crosscheck.spacetimes.base import PHI, THETA
    from crosscheck.spacetimes.forms import line_element_metric

    v, dv, dr, dth, dph = sympy.symbols("v dv dr dth dph", real=True)
    ds2 = -(1 - 2 * M / r) * dv**2 + 2 * dv * dr + r**2 * (dth**2 + sympy.sin(THETA) ** 2 * dph**2)
    metric = line_element_metric((v, r, THETA, PHI), ds2, {v: dv, r: dr, THETA: dth, PHI: dph})
    p = problem(metric, 2 * M, (M,), {M: ("1", "2")}, {"kappa", "A"})
    values = ROUTE.symbolic(p).values
    assert sympy.simplify(values["kappa"] - 1 / (4 * M)) == 0 and sympy.simplify(values["A"] - 16 * sympy.pi * M**2) == 0
    num = ROUTE.numeric(p, {M: mpmath.mpf(1)}, 30).values
    for name in ("kappa", "A"):
        with mpmath.workdps(60):
            expected = {"kappa": mpmath.mpf(1) / 4, "A": 16 * mpmath.pi}[name]
        actual, error = deviation(num[name], expected)
        assert actual <= 10 * error < 1e-28 * expected


def test_potential_difference_with_radius_normalisation():
    # Source: PHYSICS.md, killing-horizon: Phi = xi^mu A_mu at the normalisation point minus on the
    # horizon, xi = N d/dt with N = 1/sqrt(F(r0)); computed here for RN with A_t = -Q/r.
    F = 1 - 2 * M / r + Q**2 / r**2
    p = problem(static_metric(F, A_t=-Q / r), M + sympy.sqrt(M**2 - Q**2), (M, Q), {M: ("1", "2"), Q: ("0.1", "0.5")},
                {"Phi", "kappa"}, Normalization(kind="radius", radius=10 * M))
    point = mp({M: rat("1.5"), Q: rat("0.3")})
    with mpmath.workdps(60):
        m, q = point[M], point[Q]
        rp, r0 = m + mpmath.sqrt(m**2 - q**2), 10 * m
        expected = (-q / r0 + q / rp) / mpmath.sqrt(1 - 2 * m / r0 + q**2 / r0**2)
    assert relative(evaluate(ROUTE.symbolic(p).values["Phi"], CASES["reissner-nordstrom"][1], 60), expected) < 1e-30
    actual, error = deviation(ROUTE.numeric(p, point, 30).values["Phi"], expected)
    assert actual <= 10 * error < 1e-28


def test_extremal_kerr():
    # Source: extremal Kerr (a = M): kappa = 0, Omega = 1/(2M), A = 8 pi M^2 (Wald 1984, ch. 12, from memory).
    metric = kerr_newman(charged=False)
    extremal = stationary_metric(*(metric.g[i, j].subs(a, M) for i, j in ((0, 0), (0, 3), (3, 3), (1, 1), (2, 2))))
    p = problem(extremal, M, (M,), {M: ("1", "2")}, {"kappa", "Omega", "A"})
    values = ROUTE.symbolic(p).values
    assert values["kappa"] == 0
    assert sympy.simplify(values["Omega"] - 1 / (2 * M)) == 0 and sympy.simplify(values["A"] - 8 * sympy.pi * M**2) == 0
    num = ROUTE.numeric(p, {M: mpmath.mpf(1)}, 25).values
    actual, error = deviation(num["kappa"], 0)
    assert actual <= 10 * error < 1e-20
