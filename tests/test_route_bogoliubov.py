"""The Bogoliubov route against published values and independent computations.

References are textbook formulas (recalled from memory, as marked) or computations
written here with mpmath (root finding, numerical derivatives, Gamma functions) that share
no code with the route (its traced ray map, contour integrals or fits).
"""

from __future__ import annotations

import functools

import mpmath
import pytest
import sympy

from crosscheck.claimfile import load_claim_text
from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes._bogoliubov_integrals import LogRatio, thermal_fit
from crosscheck.routes.base import Problem, Route
from crosscheck.routes.bogoliubov import BogoliubovRoute
from crosscheck.runner import RunOptions, run_claim
from crosscheck.spacetimes.base import T_COORD, HorizonSpec, Metric, Normalization, Spacetime, StaticFunctions
from crosscheck.spacetimes.forms import static_metric, stationary_metric

ROUTE = BogoliubovRoute()
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
    with mpmath.workdps(80):
        return {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}


def rindler() -> Metric:
    y, z = sympy.symbols("y z", real=True)
    return Metric(coords=(T_COORD, r, y, z), g=sympy.ImmutableMatrix(sympy.diag(-A_acc**2 * r**2, 1, 1, 1)),
                  form="static", static=StaticFunctions(F=A_acc**2 * r**2, G=sympy.Integer(1), R=None))


def sds_temperature(p: dict, normalise: bool) -> mpmath.mpf:
    """Schwarzschild-de Sitter black-hole T, computed here: r_h = smallest positive root of
    -Lambda r^3/3 + r - 2M (polyroots), r_g from F'(r_g) = 0 (findroot), T = N |F'(r_h)|/(4 pi).
    # Source: PHYSICS.md, "Normalisation of the Killing vector"; Gibbons & Hawking 1977, PRD 15, 2738 (from memory)."""
    m, lam = p[M], p[Lam]
    F = lambda x: 1 - 2 * m / x - lam * x**2 / 3  # noqa: E731
    roots = sorted(mpmath.re(x) for x in mpmath.polyroots([-lam / 3, 0, 1, -2 * m], maxsteps=200, extraprec=200)
                   if abs(mpmath.im(x)) < 1e-30 and mpmath.re(x) > 0)
    N = 1 / mpmath.sqrt(F(mpmath.findroot(lambda x: mpmath.diff(F, x), (3 * m / lam) ** (mpmath.mpf(1) / 3)))) if normalise else 1
    return N * abs(mpmath.diff(F, roots[0])) / (4 * mpmath.pi)


F_UNEQUAL, G_UNEQUAL = (1 - 2 * M / r) * (1 + M**2 / r**2), (1 - 2 * M / r) / (1 + M / r)
_F, _G = (sympy.lambdify((r, M), f, "mpmath") for f in (F_UNEQUAL, G_UNEQUAL))


def _unequal(p):
    # Source: T = sqrt(F'(r_h) G'(r_h))/(4 pi) for simple zeros (PHYSICS.md; Wald 1984, ch. 12, from memory), mpmath.diff here.
    return mpmath.sqrt(mpmath.diff(lambda x: _F(x, p[M]), 2 * p[M]) * mpmath.diff(lambda x: _G(x, p[M]), 2 * p[M])) / (4 * mpmath.pi)


CASES = {
    # name: (problem, point, reference T)
    "schwarzschild": (lambda: problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: ("1", "2")}),
                      # Source: Hawking 1975, T = 1/(8 pi M) (from memory).
                      {M: rat("1.5")}, lambda p: 1 / (8 * mpmath.pi * p[M])),
    "reissner-nordstrom": (lambda: problem(static_metric(1 - 2 * M / r + Q**2 / r**2), M + sympy.sqrt(M**2 - Q**2), (M, Q),
                                           {M: ("1", "2"), Q: ("0.1", "0.5")}),
                           # Source: T = (r_+ - r_-)/(4 pi r_+^2) (Wald 1984, ch. 12, from memory).
                           {M: rat("1.5"), Q: rat("0.3")},
                           lambda p: 2 * mpmath.sqrt(p[M] ** 2 - p[Q] ** 2) / (4 * mpmath.pi * (p[M] + mpmath.sqrt(p[M] ** 2 - p[Q] ** 2)) ** 2)),
    "de sitter": (lambda: problem(static_metric(1 - H**2 * r**2), 1 / H, (H,), {H: ("0.1", "1")}),
                  # Source: Gibbons & Hawking 1977, T = H/(2 pi) (from memory).
                  {H: rat("0.5")}, lambda p: p[H] / (2 * mpmath.pi)),
    "sds geodesic": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root=1), (M, Lam),
                                     {M: ("1", "2"), Lam: ("0.001", "0.01")}, Normalization(kind="geodesic")),
                     {M: rat("1.5"), Lam: rat("0.005")}, lambda p: sds_temperature(p, True)),
    "sds as-written": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root=1), (M, Lam),
                                       {M: ("1", "2"), Lam: ("0.001", "0.01")}),
                       {M: rat("1.2"), Lam: rat("0.008")}, lambda p: sds_temperature(p, False)),
    "tangherlini 5d": (lambda: problem(static_metric(1 - mu / r**2, dim=5), sympy.sqrt(mu), (mu,), {mu: ("1", "4")}),
                       # Source: T = (D - 3)/(4 pi r_h), D = 5 (Tangherlini 1963; Myers & Perry 1986, from memory).
                       {mu: rat("2.25")}, lambda p: 2 / (4 * mpmath.pi * mpmath.sqrt(p[mu]))),
    "btz": (lambda: problem(static_metric(-M + r**2 / l**2, dim=3), l * sympy.sqrt(M), (M, l), {M: ("1", "2"), l: ("1", "3")}),
            # Source: Banados, Teitelboim & Zanelli 1992, T = r_h/(2 pi l^2) (from memory).
            {M: rat("1.5"), l: rat("2")}, lambda p: mpmath.sqrt(p[M]) / (2 * mpmath.pi * p[l])),
    "isotropic schwarzschild": (lambda: problem(static_metric(((1 - M / (2 * r)) / (1 + M / (2 * r))) ** 2, (1 + M / (2 * r)) ** -4,
                                                              r * (1 + M / (2 * r)) ** 2), M / 2, (M,), {M: ("1", "2")}),
                                # Source: the same Schwarzschild T = 1/(8 pi M) in isotropic coordinates (MTW 1973, eq. 31.22, from memory).
                                {M: rat("1.5")}, lambda p: 1 / (8 * mpmath.pi * p[M])),
    "unequal F and G": (lambda: problem(static_metric(F_UNEQUAL, G_UNEQUAL), 2 * M, (M,), {M: ("1", "2")}), {M: rat("1.25")}, _unequal),
    "rindler": (lambda: problem(rindler(), sympy.Integer(0), (A_acc,), {A_acc: ("0.5", "2")}),
                # Source: Unruh 1976: Minkowski vacuum seen with Rindler modes, T = a/(2 pi) (from memory).
                {A_acc: rat("1.5")}, lambda p: p[A_acc] / (2 * mpmath.pi)),
}


@functools.cache
def symbolic(name: str):
    return ROUTE.symbolic(CASES[name][0]())


@functools.cache
def numeric(name: str, digits: int = 15):
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
        return abs(x - y) / abs(y)


# --------------------------------------------------------------------------- contract


def test_route_contract():
    assert isinstance(ROUTE, Route)
    assert (ROUTE.name, ROUTE.grade) == ("bogoliubov", "exact") and ROUTE.version
    assert ROUTE.observables == {"T", "kappa"}


def test_applies_to_static_horizons_only():
    assert ROUTE.applies(CASES["schwarzschild"][0]()) is None
    sigma, delta, s2 = r**2 + a**2 * sympy.cos(theta) ** 2, r**2 - 2 * M * r + a**2, sympy.sin(theta) ** 2
    kerr = stationary_metric(g_tt=-(1 - 2 * M * r / sigma), g_tphi=-a * s2 * 2 * M * r / sigma,
                             g_phiphi=((r**2 + a**2) ** 2 - a**2 * delta * s2) * s2 / sigma, g_rr=sigma / delta, g_thth=sigma)
    assert "static" in ROUTE.applies(problem(kerr, M + sympy.sqrt(M**2 - a**2), (M, a), {M: ("1", "2"), a: ("0.1", "0.5")}))
    assert "horizon" in ROUTE.applies(Problem(Spacetime(static_metric(1 - 2 * M / r), HorizonSpec()), None, (M,), frozenset({"T"})))
    assert "S" in ROUTE.applies(Problem(Spacetime(static_metric(1 - 2 * M / r), HorizonSpec(expression=2 * M)), None, (M,), frozenset({"S"})))


# --------------------------------------------------------------------------- values


@pytest.mark.parametrize("name", sorted(CASES))
def test_numeric_matches_reference_with_honest_error_at_15_digits(name):
    result, expected = numeric(name), reference(name)
    measured = result.values["T"]
    with mpmath.workdps(60):
        actual = abs(measured.value - expected)
        assert actual <= 10 * measured.error, (actual, measured.error)
        assert measured.error < 1e-13 * expected
        assert abs(result.values["kappa"].value - 2 * mpmath.pi * expected) <= 10 * result.values["kappa"].error


@pytest.mark.parametrize("name", sorted(CASES))
def test_symbolic_matches_reference(name):
    values = symbolic(name).values
    assert relative(evaluate(values["T"], CASES[name][1]), reference(name)) < 1e-25
    with mpmath.workdps(60):
        assert relative(evaluate(values["kappa"], CASES[name][1]), 2 * mpmath.pi * reference(name)) < 1e-25


@pytest.mark.parametrize("name", ["schwarzschild", "rindler", "sds geodesic"])
def test_numeric_agrees_with_symbolic_at_30_digits(name):
    # Asked for 30 digits, the route works at its cap of 20 and says so; the issue asks for
    # agreement with the symbolic side to 1e-12 relative at 30 digits (measured: ~1e-18).
    sym, num = symbolic(name), numeric(name, 30)
    value = num.values["T"]
    assert relative(value.value, evaluate(sym.values["T"], CASES[name][1])) < 1e-15
    assert value.error < 1e-15 * value.value
    assert any("computed at 20 digits" in p for p in num.provenance)


def test_rindler_symbolic_is_a_over_2_pi():
    # Source: Unruh 1976 (from memory): T = a/(2 pi) for the Rindler wedge, t the proper time at x = 1/a.
    assert sympy.simplify(symbolic("rindler").values["T"] - A_acc / (2 * sympy.pi)) == 0
    assert sympy.simplify(symbolic("schwarzschild").values["T"] - 1 / (8 * sympy.pi * M)) == 0


def test_thermality_evidence_and_series():
    num = numeric("schwarzschild")
    assert num.evidence["thermality"]["planck"] and len(num.evidence["omegas"]) >= 3
    spectrum, late = num.evidence["series"]
    assert len(spectrum["x"]) == len(spectrum["y"]) >= 3 and spectrum["fit_x"][0] == 0.0
    # Source: Planck ratio ln|alpha/beta|^2 = 2 pi omega/kappa with kappa = 1/(4M) = 1/6 (Hawking 1975, from memory).
    for omega, value in zip(spectrum["x"], spectrum["y"]):
        assert abs(value - 2 * mpmath.pi * omega * 6) < 1e-12 * value
    assert late["x"] == sorted(late["x"], reverse=True)
    assert abs(late["y"][-1] - late["fit_y"][0]) < abs(late["y"][0] - late["fit_y"][0])  # later windows are nearer the limit
    assert numeric("rindler").evidence["matching"].startswith("regular")


def test_thermal_fit_detects_a_non_planck_spectrum():
    # Source: least squares through the origin, written out here: slope = sum(w L)/sum(w^2).
    with mpmath.workdps(30):
        omegas = [mpmath.mpf(k) / 4 for k in (1, 2, 3)]
        planck = [LogRatio(w, Measured(w / mpmath.mpf("0.2"), mpmath.mpf(10) ** -25), []) for w in omegas]
        fit = thermal_fit(planck)
        assert abs(fit.T.value - mpmath.mpf("0.2")) < 1e-24 and fit.max_relative_residual < 1e-24
        curved = [LogRatio(w, Measured(w / mpmath.mpf("0.2") + w**2, mpmath.mpf(10) ** -25), []) for w in omegas]
        bent = thermal_fit(curved)
        assert bent.max_relative_residual > 1e-2 and abs(bent.intercept) > 1e-3 and bent.T.error > 1e-3 * bent.T.value


def test_extremal_horizon_cannot_be_fitted():
    # Source: extremal RN, degenerate horizon: no exponential late-time map (Wald 1984, ch. 12, from memory).
    p = problem(static_metric((1 - M / r) ** 2), M, (M,), {M: ("1", "2")})
    with pytest.raises(CannotCompute, match="degenerate"):
        ROUTE.symbolic(p)
    with pytest.raises(CannotCompute, match="degenerate"):
        ROUTE.numeric(p, {M: mpmath.mpf("1.5")}, 15)


# --------------------------------------------------------------------------- claims through the runner


def _run(text: str, digits: int = 15):
    [claim], _ = load_claim_text(text, "test.yaml")
    outcome = run_claim(claim, {ROUTE.name: ROUTE}, RunOptions(samples=2, digits=digits))
    return next(o for o in outcome.routes if o.route == ROUTE.name)


def test_claims_through_the_runner():
    # Source: Unruh 1976 (from memory): T = a/(2 pi).
    assert _run("id: t/r\nspacetime: {name: rindler}\nparameters: {a: [0.5, 3]}\nclaim: T = a/(2*pi)\n").status == "agree"
    wrong = _run("id: t/w\nspacetime: {name: schwarzschild}\nparameters: {M: [0.5, 20]}\nclaim: T = 1/(4*pi*M)\n")
    assert wrong.status == "disagree" and wrong.diagnosis.factor == "2"
    # Source: Myers & Perry 1986 (from memory): T = 1/(2 pi sqrt(mu)) in D = 5.
    text = "id: t/t\nspacetime: {name: tangherlini, dim: 5}\nparameters: {mu: [0.5, 20]}\nclaim: T = 1/(2*pi*sqrt(mu))\n"
    assert _run(text).status == "agree"


def test_symbolic_side_is_its_own_residue_derivation():
    # Route independence: the Bogoliubov symbolic side derives kappa_t from the residue of the
    # tortoise integrand and reads T off |alpha/beta|^2, without the ray-peeling Taylor series.
    import crosscheck.routes.bogoliubov as module
    assert "_ray_peeling_series" not in open(module.__file__).read()
    steps = symbolic("reissner-nordstrom").steps
    assert any("Res_(r = r_h)" in step.label for step in steps)
    # Source: exp(2 pi omega/kappa) for the exponential map (PHYSICS.md, "bogoliubov"), sympy here.
    omega, kappa_t = sympy.symbols("omega kappa_t", positive=True)
    ratio = next(step.expr.rhs for step in steps if "alpha/beta" in str(step.expr.lhs))
    assert sympy.simplify(ratio - sympy.exp(2 * sympy.pi * omega / kappa_t)) == 0


# --------------------------------------------------------------------------- honest error bounds


def _rn_temperature(p: dict) -> mpmath.mpf:
    # Source: T = (r_+ - r_-)/(4 pi r_+^2) (Wald 1984, ch. 12, from memory).
    root = mpmath.sqrt(p[M] ** 2 - p[Q] ** 2)
    return 2 * root / (4 * mpmath.pi * (p[M] + root) ** 2)


BOUND_CASES = {
    # name: (problem, point, reference T); the hard points: RN at Q/M = 0.99 (r_+ - r_- = 0.28 M)
    # and Schwarzschild-de Sitter at 9 M^2 Lambda = 0.972, near the Nariai limit (r_h near r_c).
    "near-extremal rn": (lambda: problem(static_metric(1 - 2 * M / r + Q**2 / r**2), M + sympy.sqrt(M**2 - Q**2), (M, Q),
                                         {M: ("1", "2"), Q: ("0.1", "0.99")}), {M: rat("1"), Q: rat("0.99")}, _rn_temperature),
    "near-nariai sds geodesic": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root=1), (M, Lam),
                                                 {M: ("1", "2"), Lam: ("0.001", "0.108")}, Normalization(kind="geodesic")),
                                 {M: rat("1"), Lam: rat("0.108")}, lambda p: sds_temperature(p, True)),
    "near-nariai sds as-written": (lambda: problem(static_metric(1 - 2 * M / r - Lam * r**2 / 3), HorizonSpec(root=1), (M, Lam),
                                                   {M: ("1", "2"), Lam: ("0.001", "0.108")}), {M: rat("1"), Lam: rat("0.108")},
                                   lambda p: sds_temperature(p, False)),
}


@pytest.mark.parametrize("digits", [15, 20, 30])
@pytest.mark.parametrize("name", ["schwarzschild", "reissner-nordstrom", "rindler", "unequal F and G", "near-extremal rn",
                                  "near-nariai sds geodesic", "near-nariai sds as-written"])
def test_reported_error_bounds_the_true_error(name, digits):
    # The quadrature's error estimate (nested rules, 10 d2^2/d1) and the late-time
    # extrapolation must bound the true error: |T - T_exact| <= error, with no factor 10
    # of slack, at every precision the library asks for (30 is computed at 20).
    make, point, exact = (CASES | BOUND_CASES)[name]
    measured = ROUTE.numeric(make(), mp(point), digits).values["T"]
    with mpmath.workdps(60):
        expected = exact(mp(point))
        assert abs(measured.value - expected) <= measured.error, (name, digits, measured, expected)
        assert measured.error < mpmath.mpf(10) ** (-min(digits, 20)) * expected  # and the asked-for accuracy is met


def test_chebyshev_antiderivative_used_for_the_map():
    # Source: integral_0^t e^s ds = e^t - 1 and integral_0^t ds = t (calculus); the series is fitted by mpmath here.
    # (The T_1 coefficient was once twice too large: the integral of 1 came out as 2 t.)
    from crosscheck.routes._null_rays import Chebyshev
    with mpmath.workdps(30):
        Y = mpmath.mpf(2)
        for f, F in ((lambda s: mpmath.mpf(1), lambda s: s), (mpmath.exp, lambda s: mpmath.exp(s) - 1)):
            series = Chebyshev(f, Y, mpmath.mpf(10) ** -25)
            for t in (mpmath.mpf("0.7"), mpmath.mpf("1.9")):
                assert abs(series.integral_from_zero(t) - F(t)) < 1e-24


@pytest.mark.parametrize("places", [12, 17, 22])
def test_nested_rules_error_estimate_bounds_a_known_integral(places):
    # Source: integral_0^1 t^(i nu) e^(-D t) dt = gamma(1 + i nu, D)/D^(1 + i nu), the lower
    # incomplete Gamma function (DLMF 8.2.1), evaluated by mpmath here; the integrand has the
    # late-time shape t^(i nu) e^(-D t/h) of the coefficient integrals, on the same stretched nodes.
    from crosscheck.routes._bogoliubov_integrals import _Rules
    with mpmath.workdps(places + 25):
        nu, A, L, D = mpmath.mpf("1.5"), mpmath.mpf("0.005"), mpmath.mpf(2), (places + 25) * mpmath.log(10)

        def terms(u):
            grow = A * mpmath.exp(-u / L)
            t = mpmath.exp(u - (grow - A))
            value = (1 + grow / L) * t * t ** (1j * nu) * mpmath.exp(-D * t)
            return [[value]], abs(value)

        step = mpmath.mpf(5.5) * 2 * mpmath.pi * (0.8 * mpmath.pi / 2) / (places * mpmath.log(10))
        rules = _Rules(terms, step, places, places + 25)
        value, error = rules.result(0, 0)
        exact = mpmath.gammainc(1 + 1j * nu, 0, D) / mpmath.power(D, 1 + 1j * nu)
        assert abs(value - exact) / abs(exact) <= error <= mpmath.mpf(10) ** -places
