"""The ray-peeling route against published values and independent computations.

References are textbook formulas (recalled from memory, as marked) or computations
written here with mpmath (root finding, numerical derivatives) that share no code with
the route (its ray tracer, Taylor series or Richardson extrapolation).
"""

from __future__ import annotations

import functools

import mpmath
import pytest
import sympy

from crosscheck.claimfile import load_claim_text
from crosscheck.errors import CannotCompute
from crosscheck.routes.base import Problem, Route
from crosscheck.routes.ray_peeling import RayPeelingRoute
from crosscheck.runner import RunOptions, run_claim
from crosscheck.spacetimes.base import T_COORD, HorizonSpec, Metric, Normalization, Spacetime, StaticFunctions
from crosscheck.spacetimes.forms import line_element_metric, static_metric, stationary_metric

ROUTE = RayPeelingRoute()
r = sympy.Symbol("r", positive=True)
theta = sympy.Symbol("theta", real=True)
M, Q, a, H, l, mu, A_acc, Lam = sympy.symbols("M Q a H l mu A Lambda", positive=True)
WANTED = frozenset({"kappa", "T"})


def rat(x: str) -> sympy.Rational:
    return sympy.Rational(x)


def problem(metric, horizon, params, ranges, normalization=Normalization(), wanted=WANTED) -> Problem:
    spec = horizon if isinstance(horizon, HorizonSpec) else HorizonSpec(expression=horizon)
    ranges = {s: (rat(lo), rat(hi)) for s, (lo, hi) in ranges.items()}
    return Problem(spacetime=Spacetime(metric, spec, normalization), detector=None, parameters=params,
                   wanted=frozenset(wanted), ranges=ranges)


def mp(point: dict) -> dict:
    """Exact rationals as 80-digit mpmath numbers."""
    with mpmath.workdps(80):
        return {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}


def kerr() -> Metric:
    sigma, delta, s2 = r**2 + a**2 * sympy.cos(theta) ** 2, r**2 - 2 * M * r + a**2, sympy.sin(theta) ** 2
    return stationary_metric(g_tt=-(1 - 2 * M * r / sigma), g_tphi=-a * s2 * 2 * M * r / sigma,
                             g_phiphi=((r**2 + a**2) ** 2 - a**2 * delta * s2) * s2 / sigma, g_rr=sigma / delta, g_thth=sigma)


def rindler() -> Metric:
    y, z = sympy.symbols("y z", real=True)
    return Metric(coords=(T_COORD, r, y, z), g=sympy.ImmutableMatrix(sympy.diag(-A_acc**2 * r**2, 1, 1, 1)),
                  form="static", static=StaticFunctions(F=A_acc**2 * r**2, G=sympy.Integer(1), R=None))


def kappa_static(F, G, r_h) -> mpmath.mpf:
    """kappa = sqrt(F'(r_h) G'(r_h))/2 for simple zeros, by mpmath.diff (numerical derivatives).
    # Source: PHYSICS.md, static metrics (kappa = N sqrt(F1 G1)/2); Wald 1984, ch. 12 (from memory)."""
    return mpmath.sqrt(abs(mpmath.diff(F, r_h) * mpmath.diff(G, r_h))) / 2


def sds(p: dict, which: str, normalise: bool) -> mpmath.mpf:
    """Schwarzschild-de Sitter kappa, computed here: horizons by polyroots of -Lambda r^3/3 + r - 2M,
    r_g by findroot of F'(r) = 0, kappa = N |F'(r_h)|/2 with N = 1/sqrt(F(r_g)) (geodesic) or 1.
    # Source: PHYSICS.md, "Normalisation of the Killing vector"; Gibbons & Hawking 1977, PRD 15, 2738 (from memory)."""
    m, lam = p[M], p[Lam]
    F = lambda x: 1 - 2 * m / x - lam * x**2 / 3  # noqa: E731
    roots = sorted(mpmath.re(x) for x in mpmath.polyroots([-lam / 3, 0, 1, -2 * m], maxsteps=200, extraprec=200)
                   if abs(mpmath.im(x)) < 1e-30 and mpmath.re(x) > 0)
    horizon = roots[0] if which == "black hole" else roots[-1]
    N = 1 / mpmath.sqrt(F(mpmath.findroot(lambda x: mpmath.diff(F, x), (3 * m / lam) ** (mpmath.mpf(1) / 3)))) if normalise else 1
    return N * abs(mpmath.diff(F, horizon)) / 2


def _rn(p):
    # Source: Wald 1984, ch. 12 (from memory): kappa = (r_+ - r_-)/(2 r_+^2), T = (r_+ - r_-)/(4 pi r_+^2).
    root = mpmath.sqrt(p[M] ** 2 - p[Q] ** 2)
    return (2 * root) / (2 * (p[M] + root) ** 2)


def _kerr(p):
    # Source: Kerr T = (r_+ - r_-)/(4 pi (r_+^2 + a^2)) (from memory; Bardeen, Carter & Hawking 1973).
    root = mpmath.sqrt(p[M] ** 2 - p[a] ** 2)
    return 2 * root / (2 * ((p[M] + root) ** 2 + p[a] ** 2))


F_UNEQUAL, G_UNEQUAL = (1 - 2 * M / r) * (1 + M**2 / r**2), (1 - 2 * M / r) / (1 + M / r)
_F, _G = (sympy.lambdify((r, M), f, "mpmath") for f in (F_UNEQUAL, G_UNEQUAL))

CASES = {
    # name: (problem, point, reference kappa)
    "schwarzschild": (lambda: problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: ("1", "2")}),
                      # Source: Wald 1984, ch. 12: kappa = 1/(4M), T = 1/(8 pi M) (from memory).
                      {M: rat("1.5")}, lambda p: 1 / (4 * p[M])),
    "reissner-nordstrom": (lambda: problem(static_metric(1 - 2 * M / r + Q**2 / r**2), M + sympy.sqrt(M**2 - Q**2), (M, Q),
                                           {M: ("1", "2"), Q: ("0.1", "0.5")}), {M: rat("1.5"), Q: rat("0.3")}, _rn),
    "kerr": (lambda: problem(kerr(), M + sympy.sqrt(M**2 - a**2), (M, a), {M: ("1", "2"), a: ("0.1", "0.5")}),
             {M: rat("1.5"), a: rat("0.4")}, _kerr),
    "de sitter": (lambda: problem(static_metric(1 - H**2 * r**2), 1 / H, (H,), {H: ("0.1", "1")}),
                  # Source: Gibbons & Hawking 1977, PRD 15, 2738: kappa = H, T = H/(2 pi) (from memory).
                  {H: rat("0.5")}, lambda p: p[H]),
    "sds geodesic": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root=1), (M, Lam),
                                     {M: ("1", "2"), Lam: ("0.001", "0.01")}, Normalization(kind="geodesic")),
                     {M: rat("1.5"), Lam: rat("0.005")}, lambda p: sds(p, "black hole", True)),
    "sds as-written": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root=1), (M, Lam),
                                       {M: ("1", "2"), Lam: ("0.001", "0.01")}),
                       {M: rat("1.2"), Lam: rat("0.008")}, lambda p: sds(p, "black hole", False)),
    "tangherlini 5d": (lambda: problem(static_metric(1 - mu / r**2, dim=5), sympy.sqrt(mu), (mu,), {mu: ("1", "4")}),
                       # Source: Tangherlini 1963; T = (D - 3)/(4 pi r_h), D = 5, r_h = sqrt(mu) (from memory).
                       {mu: rat("2.25")}, lambda p: 2 / (2 * mpmath.sqrt(p[mu]))),
    "btz": (lambda: problem(static_metric(-M + r**2 / l**2, dim=3), l * sympy.sqrt(M), (M, l), {M: ("1", "2"), l: ("1", "3")}),
            # Source: Banados, Teitelboim & Zanelli 1992, PRL 69, 1849: kappa = r_h/l^2 (from memory).
            {M: rat("1.5"), l: rat("2")}, lambda p: mpmath.sqrt(p[M]) / p[l]),
    "isotropic schwarzschild": (lambda: problem(static_metric(((1 - M / (2 * r)) / (1 + M / (2 * r))) ** 2, (1 + M / (2 * r)) ** -4,
                                                              r * (1 + M / (2 * r)) ** 2), M / 2, (M,), {M: ("1", "2")}),
                                # Source: isotropic Schwarzschild, horizon at M/2, kappa = 1/(4M) (MTW 1973, eq. 31.22, from memory).
                                {M: rat("1.5")}, lambda p: 1 / (4 * p[M])),
    "unequal F and G": (lambda: problem(static_metric(F_UNEQUAL, G_UNEQUAL), 2 * M, (M,), {M: ("1", "2")}),
                        {M: rat("1.25")}, lambda p: kappa_static(lambda x: _F(x, p[M]), lambda x: _G(x, p[M]), 2 * p[M])),
    "rindler": (lambda: problem(rindler(), sympy.Integer(0), (A_acc,), {A_acc: ("0.5", "2")}),
                # Source: Rindler wedge, kappa = a for the boost normalised at x = 1/a (Wald 1984, ch. 12, from memory).
                {A_acc: rat("1.5")}, lambda p: p[A_acc]),
}


@functools.cache
def symbolic(name: str):
    return ROUTE.symbolic(CASES[name][0]())


@functools.cache
def numeric(name: str, digits: int = 30):
    make, point, _ = CASES[name]
    return ROUTE.numeric(make(), mp(point), digits)


def reference(name: str) -> mpmath.mpf:
    with mpmath.workdps(60):
        return CASES[name][2](mp(CASES[name][1]))


def evaluate(expr: sympy.Expr, point: dict) -> mpmath.mpf:
    with mpmath.workdps(40):
        return mpmath.mpf(str(sympy.re(sympy.N(expr.subs(point), 40))))


def relative(x, y) -> mpmath.mpf:
    with mpmath.workdps(60):
        return abs(x - y) / max(abs(y), mpmath.mpf(10) ** -60)


# --------------------------------------------------------------------------- contract


def test_route_contract():
    assert isinstance(ROUTE, Route)
    assert (ROUTE.name, ROUTE.grade, ROUTE.version) == ("ray-peeling", "exact", "2")
    assert ROUTE.observables == {"kappa", "T"}


def test_applies():
    good = CASES["schwarzschild"][0]()
    assert ROUTE.applies(good) is None and ROUTE.applies(CASES["kerr"][0]()) is None
    assert "horizon" in ROUTE.applies(Problem(Spacetime(static_metric(1 - 2 * M / r), HorizonSpec()), None, (M,), frozenset({"T"})))
    assert "A" in ROUTE.applies(Problem(good.spacetime, None, (M,), frozenset({"T", "A"})))
    # Painleve-Gullstrand form: the dt dr term is removed by completing the square (same d/dt)
    from crosscheck.spacetimes.base import PHI, THETA

    t, dt, dr, dth, dph = sympy.symbols("t dt dr dth dph", real=True)
    ds2 = -(1 - 2 * M / r) * dt**2 + 2 * sympy.sqrt(2 * M / r) * dt * dr + dr**2 + r**2 * (dth**2 + sympy.sin(THETA) ** 2 * dph**2)
    pg = line_element_metric((t, r, THETA, PHI), ds2, {t: dt, r: dr, THETA: dth, PHI: dph})
    assert ROUTE.applies(problem(pg, 2 * M, (M,), {M: ("1", "2")})) is None


# --------------------------------------------------------------------------- values


@pytest.mark.parametrize("name", sorted(CASES))
def test_numeric_matches_reference_with_honest_error(name):
    result, expected = numeric(name), reference(name)
    for observable in ("kappa", "T"):
        measured = result.values[observable]
        with mpmath.workdps(60):
            target = expected if observable == "kappa" else expected / (2 * mpmath.pi)
            actual = abs(measured.value - target)
        assert actual < 1e-25 * target, (observable, actual)
        assert actual <= 10 * measured.error, (observable, actual, measured.error)


@pytest.mark.parametrize("name", sorted(CASES))
def test_symbolic_matches_reference(name):
    values = symbolic(name).values
    assert relative(evaluate(values["kappa"], CASES[name][1]), reference(name)) < 1e-25
    with mpmath.workdps(60):
        assert relative(evaluate(values["T"], CASES[name][1]), reference(name) / (2 * mpmath.pi)) < 1e-25


@pytest.mark.parametrize("name", sorted(CASES))
def test_numeric_agrees_with_symbolic_to_1e_12_at_30_digits(name):
    sym, num = symbolic(name), numeric(name)
    for observable in ("kappa", "T"):
        assert relative(num.values[observable].value, evaluate(sym.values[observable], CASES[name][1])) < 1e-12


@pytest.mark.parametrize("name", ["schwarzschild", "reissner-nordstrom", "de sitter", "isotropic schwarzschild", "sds geodesic"])
def test_errors_honest_at_15_digits(name):
    measured, expected = numeric(name, 15).values["kappa"], reference(name)
    with mpmath.workdps(60):
        actual = abs(measured.value - expected)
    assert actual <= 10 * measured.error and measured.error < 1e-13 * expected


def test_schwarzschild_symbolic_is_exact():
    # Source: Wald 1984, ch. 12 (from memory): kappa = 1/(4M), T = 1/(8 pi M).
    values = symbolic("schwarzschild").values
    assert sympy.simplify(values["kappa"] - 1 / (4 * M)) == 0
    assert sympy.simplify(values["T"] - 1 / (8 * sympy.pi * M)) == 0


def test_extremal_reissner_nordstrom_peels_as_a_power_law():
    # Source: extremal RN (Q = M) has a degenerate horizon, T = 0 (Wald 1984, ch. 12, from memory).
    p = problem(static_metric((1 - M / r) ** 2), M, (M,), {M: ("1", "2")})
    sym = ROUTE.symbolic(p)
    assert sym.values["T"] == 0 and any("power-law" in s.label for s in sym.steps)
    num = ROUTE.numeric(p, {M: mpmath.mpf("1.5")}, 20)
    kappa = num.values["kappa"]
    assert abs(kappa.value) <= 10 * kappa.error and kappa.error < 1e-15
    assert "power-law" in num.evidence["degenerate"]


def test_near_extremal_reissner_nordstrom():
    # Source: as for RN above; sqrt(M^2 - Q^2) evaluated here at 60 digits.
    p = CASES["reissner-nordstrom"][0]()
    with mpmath.workdps(60):
        point = {M: mpmath.mpf(1), Q: 1 - mpmath.mpf("1e-8")}
        expected = _rn(point)
    kappa = ROUTE.numeric(p, point, 20).values["kappa"]
    with mpmath.workdps(60):
        actual = abs(kappa.value - expected)
    assert actual <= 10 * kappa.error and kappa.error < 1e-11 * expected


def test_radius_normalisation():
    # Source: PHYSICS.md, normalisation {radius: r0}: N = 1/sqrt(F(r0)); here r0 = 5M, F = 3/5.
    p = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: ("1", "2")}, Normalization(kind="radius", radius=5 * M))
    assert sympy.simplify(ROUTE.symbolic(p).values["kappa"] - 1 / (4 * M * sympy.sqrt(sympy.Rational(3, 5)))) == 0
    kappa = ROUTE.numeric(p, {M: mpmath.mpf(1)}, 20).values["kappa"]
    with mpmath.workdps(40):
        assert abs(kappa.value - 1 / (4 * mpmath.sqrt(mpmath.mpf(3) / 5))) <= 10 * kappa.error < 1e-17


# --------------------------------------------------------------------------- evidence and failures


def test_evidence_series_and_collapse_map():
    num = numeric("schwarzschild")
    pairs, collapse = num.evidence["series"]
    assert len(pairs["x"]) == len(pairs["y"]) >= 10 and pairs["x"] == sorted(pairs["x"], reverse=True)
    assert abs(pairs["y"][-1] - 1 / 6) < abs(pairs["y"][0] - 1 / 6) < 1e-2  # rate(delta) -> kappa_t = 1/(4M)
    assert collapse["x"] == sorted(collapse["x"]) and abs(collapse["y"][-1] - 1 / 6) < abs(collapse["y"][0] - 1 / 6)
    assert num.evidence["collapse"]["agrees_with_pairs"] and num.evidence["collapse"]["matching"].startswith("areal")
    # Source: on t = const slices dr/dt = sqrt(F G) grows at d sqrt(FG)/dr = 1/(2M) = 2 kappa (direct differentiation).
    assert abs(num.evidence["collapse"]["t_slice_rate"] - 1 / 3) < 1e-12
    assert numeric("de sitter").evidence["side"] == "r < r_h"


def test_kerr_rate_is_theta_independent():
    law = numeric("kerr").evidence["zeroth_law"]
    # Source: Bardeen, Carter and Hawking 1973 (zeroth law): kappa is constant on the horizon.
    # The other angles are traced at 15 digits (a check, not the reported value).
    assert law["holds"] and len(law["kappa_t"]) == 3 and law["max_difference"] < 1e-12


def test_wrong_horizon_is_an_error():
    p = problem(static_metric(1 - 2 * M / r), 3 * M, (M,), {M: ("1", "2")})
    with pytest.raises(ValueError, match="horizon"):
        ROUTE.symbolic(p)
    with pytest.raises(ValueError, match="horizon"):
        ROUTE.numeric(p, {M: mpmath.mpf(1)}, 15)


def test_cannot_compute_without_a_spacetime():
    with pytest.raises(CannotCompute):
        ROUTE.symbolic(Problem(None, None, (), frozenset({"T"})))


# --------------------------------------------------------------------------- claims through the runner


def _run(text: str, digits: int = 15):
    [claim], _ = load_claim_text(text, "test.yaml")
    outcome = run_claim(claim, {ROUTE.name: ROUTE}, RunOptions(samples=2, digits=digits))
    return next(o for o in outcome.routes if o.route == ROUTE.name)


def test_claims_through_the_runner():
    # Source: Hawking 1975, T = 1/(8 pi M) (from memory).
    assert _run("id: t/s\nspacetime: {name: schwarzschild}\nparameters: {M: [0.5, 20]}\nclaim: T = 1/(8*pi*M)\n").status == "agree"
    wrong = _run("id: t/w\nspacetime: {name: schwarzschild}\nparameters: {M: [0.5, 20]}\nclaim: T = 1/(4*pi*M)\n")
    assert wrong.status == "disagree" and wrong.diagnosis.factor == "2"
    # Source: Gibbons & Hawking 1977 (from memory): T = H/(2 pi).
    assert _run("id: t/d\nspacetime: {name: de-sitter}\nparameters: {H: [0.1, 2]}\nclaim: T = H/(2*pi)\n").status == "agree"


def test_tangherlini_and_kerr_claims():
    # Source: T = (D - 3)/(4 pi r_h) with r_h = mu^(1/(D-3)) (Myers & Perry 1986, from memory).
    text = "id: t/t\nspacetime: {name: tangherlini, dim: 5}\nparameters: {mu: [0.5, 20]}\nclaim: T = 1/(2*pi*sqrt(mu))\n"
    assert _run(text).status == "agree"
    # Source: Kerr T = (r_+ - r_-)/(4 pi (r_+^2 + a^2)) (from memory).
    kerr_text = ("id: t/k\nspacetime: {name: kerr}\nparameters: {M: [0.5, 20], chi: [0.1, 0.9]}\nwhere: {a: chi*M}\n"
                 "claim: T = 2*sqrt(M**2 - a**2)/(4*pi*((M + sqrt(M**2 - a**2))**2 + a**2))\n")
    assert _run(kerr_text).status == "agree"
