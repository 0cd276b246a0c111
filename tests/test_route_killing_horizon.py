"""Tests of the killing-horizon route against textbook values and independent computations.

Reference formulas are written out in the tests (never taken from the route);
numeric references are computed here with mpmath (root finding, numerical
derivatives, the Gamma function) independently of the route's own method.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy
from sympy import Rational, sqrt

from crosscheck.errors import CannotCompute
from crosscheck.routes.base import Problem
from crosscheck.routes.killing_horizon import KillingHorizonRoute
from crosscheck.spacetimes.base import PHI, R_COORD, T_COORD, THETA, HorizonSpec, Metric, Normalization, Spacetime
from crosscheck.spacetimes.forms import line_element_metric, static_metric, stationary_metric

r = R_COORD
M, Q, a, H, mu, l, Lam = sympy.symbols("M Q a H mu l Lambda", positive=True)
ROUTE = KillingHorizonRoute()
SCALARS = frozenset({"kappa", "T", "A", "S", "Omega", "r_h"})


def problem(metric, horizon, params, ranges, wanted=SCALARS, norm=Normalization()):
    return Problem(
        spacetime=Spacetime(metric, HorizonSpec(expression=horizon) if not isinstance(horizon, HorizonSpec) else horizon, norm),
        detector=None,
        parameters=params,
        wanted=frozenset(wanted),
        ranges=ranges,
    )


def at(expr, point, dps=50):
    """Exact expression at a rational point, as an mpmath number (real part)."""
    return mpmath.re(mpmath.mpmathify(sympy.N(sympy.sympify(expr).subs(point), dps)))


def mp_point(point, dps=60):
    with mpmath.workdps(dps):
        return {s: mpmath.mpf(v.p) / v.q if isinstance(v, sympy.Rational) else mpmath.mpf(v) for s, v in point.items()}


def assert_close(value, reference, rel=mpmath.mpf(10) ** -40):
    with mpmath.workdps(60):
        assert abs(value - reference) <= rel * max(abs(reference), 1), (value, reference)


def assert_honest(measured, reference, digits=30):
    """The numeric value is right and its error estimate is honest (actual <= 10 x reported)."""
    with mpmath.workdps(60):
        actual = abs(measured.value - reference)
        assert actual <= 10 * measured.error + mpmath.mpf(10) ** -(digits + 3) * abs(reference), (
            measured, reference, actual)
        assert measured.error <= mpmath.mpf(10) ** -(digits - 8) * max(abs(reference), 1), measured


def kerr_newman(with_charge=True):
    """Boyer-Lindquist Kerr-Newman written out here (MTW 1973, eq. 33.2, from memory)."""
    charge = Q if with_charge else 0
    sigma = r**2 + a**2 * sympy.cos(THETA) ** 2
    delta = r**2 - 2 * M * r + a**2 + charge**2
    s2 = sympy.sin(THETA) ** 2
    potential = {"A_t": -charge * r / sigma, "A_phi": charge * a * r * s2 / sigma} if with_charge else {}
    return stationary_metric(
        g_tt=-(delta - a**2 * s2) / sigma,
        g_tphi=-a * s2 * (r**2 + a**2 - delta) / sigma,
        g_phiphi=((r**2 + a**2) ** 2 - delta * a**2 * s2) * s2 / sigma,
        g_rr=sigma / delta,
        g_thth=sigma,
        **potential,
    )


KN_RANGES = {M: (Rational(1, 2), 20), a: (0, Rational(1, 2)), Q: (0, Rational(1, 2))}
KN_POINTS = [{M: 2, a: Rational(7, 10), Q: Rational(1, 2)}, {M: Rational(3, 2), a: Rational(1, 5), Q: Rational(9, 10)},
             {M: 5, a: Rational(21, 5), Q: Rational(1, 3)}]


def kn_reference(point):
    """r_+-, kappa, Omega, A, Phi of Kerr-Newman. Source: Wald 1984, sec. 12.3 and MTW 33.2 (from memory)."""
    with mpmath.workdps(60):
        m, aa, q = (mpmath.mpf(point[s].p) / point[s].q if isinstance(point[s], sympy.Rational) else mpmath.mpf(point[s])
                    for s in (M, a, Q))
        root = mpmath.sqrt(m**2 - aa**2 - q**2)
        rp, rm = m + root, m - root
        return {"r_h": rp, "kappa": (rp - rm) / (2 * (rp**2 + aa**2)), "Omega": aa / (rp**2 + aa**2),
                "A": 4 * mpmath.pi * (rp**2 + aa**2), "Phi": q * rp / (rp**2 + aa**2), "M": m, "a": aa, "Q": q}


# ---------------------------------------------------------------------------
# applicability
# ---------------------------------------------------------------------------


def test_applies_needs_a_horizon_and_a_spacetime():
    flat = Problem(Spacetime(static_metric(sympy.Integer(1)), HorizonSpec(), family="minkowski"), None, (), frozenset({"T"}))
    assert "no horizon (minkowski)" == ROUTE.applies(flat)
    assert "spacetime" in ROUTE.applies(Problem(None, None, (), frozenset({"T"})))
    schw = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: (1, 2)})
    assert ROUTE.applies(schw) is None


def test_applies_refuses_static_observer_functions_on_rotating_metrics():
    kerr = problem(kerr_newman(False), M + sqrt(M**2 - a**2), (M, a), KN_RANGES, wanted={"T_loc"})
    assert "rotat" in ROUTE.applies(kerr)


def test_route_metadata():
    assert ROUTE.name == "killing-horizon" and ROUTE.grade == "exact" and ROUTE.version == "1"
    assert ROUTE.observables == frozenset({"kappa", "T", "A", "S", "Omega", "Phi", "r_h", "a_loc", "T_loc"})


# ---------------------------------------------------------------------------
# static black holes
# ---------------------------------------------------------------------------


def test_schwarzschild_symbolic_and_numeric():
    pb = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: (Rational(1, 2), 20)})
    res = ROUTE.symbolic(pb)
    # Source: Wald 1984, eq. 12.5.x: kappa = 1/(4M), A = 16 pi M^2 (from memory)
    assert sympy.cancel(res.values["kappa"] - 1 / (4 * M)) == 0
    assert sympy.cancel(res.values["T"] - 1 / (8 * sympy.pi * M)) == 0
    assert sympy.cancel(res.values["A"] - 16 * sympy.pi * M**2) == 0
    assert sympy.cancel(res.values["S"] - 4 * sympy.pi * M**2) == 0
    assert any("Christoffel" in p for p in res.provenance)
    assert any("A/4" in p for p in res.provenance)
    num = ROUTE.numeric(pb, mp_point({M: 3}), 30)
    with mpmath.workdps(60):
        assert_honest(num.values["kappa"], mpmath.mpf(1) / 12)
        assert_honest(num.values["T"], 1 / (24 * mpmath.pi))
        assert_honest(num.values["A"], 144 * mpmath.pi)
    assert len(num.evidence["offsets"]) == len(num.evidence["kappa_samples"]) >= 8


def test_reissner_nordstrom_kappa_and_phi():
    metric = static_metric(1 - 2 * M / r + Q**2 / r**2, A_t=-Q / r)
    rp, rm = M + sqrt(M**2 - Q**2), M - sqrt(M**2 - Q**2)
    pb = problem(metric, rp, (M, Q), {M: (2, 20), Q: (0, 1)}, wanted=SCALARS | {"Phi"})
    res = ROUTE.symbolic(pb)
    # Source: Carroll 2004, sec. 6.x: kappa = (r+ - r-)/(2 r+^2), Phi = Q/r+ (from memory)
    for pt in ({M: 3, Q: Rational(1, 2)}, {M: 2, Q: Rational(99, 100)}, {M: 17, Q: Rational(1, 100)}):
        assert_close(at(res.values["kappa"], pt), at((rp - rm) / (2 * rp**2), pt))
        assert_close(at(res.values["Phi"], pt), at(Q / rp, pt))
        assert_close(at(res.values["A"], pt), at(4 * sympy.pi * rp**2, pt))
    pt = {M: 3, Q: Rational(1, 2)}
    num = ROUTE.numeric(pb, mp_point(pt), 30)
    assert_honest(num.values["kappa"], at((rp - rm) / (2 * rp**2), pt, 60))
    assert_honest(num.values["Phi"], at(Q / rp, pt, 60))


def test_extremal_reissner_nordstrom_has_zero_surface_gravity():
    # Source: Carroll 2004, sec. 6.5: the extremal (Q = M) horizon is degenerate, kappa = 0 (from memory)
    pb = problem(static_metric(1 - 2 * M / r + M**2 / r**2), M, (M,), {M: (1, 5)}, wanted={"kappa", "T"})
    res = ROUTE.symbolic(pb)
    assert res.values["kappa"] == 0 and res.values["T"] == 0
    num = ROUTE.numeric(pb, mp_point({M: 3}), 30)
    assert abs(num.values["kappa"].value) <= 10 * num.values["kappa"].error
    assert num.values["kappa"].error < mpmath.mpf(10) ** -10


def test_de_sitter_cosmological_horizon():
    # Source: Gibbons & Hawking 1977: kappa = H for the static patch (from memory)
    pb = problem(static_metric(1 - H**2 * r**2), 1 / H, (H,), {H: (Rational(1, 10), 2)})
    res = ROUTE.symbolic(pb)
    assert sympy.simplify(res.values["kappa"] - H) == 0
    num = ROUTE.numeric(pb, mp_point({H: Rational(1, 3)}), 30)
    assert_honest(num.values["kappa"], at(Rational(1, 3), {}, 60))


def test_tangherlini_five_dimensions_kappa_and_area():
    pb = problem(static_metric(1 - mu / r**2, dim=5), sqrt(mu), (mu,), {mu: (1, 10)})
    res = ROUTE.symbolic(pb)
    # Source: Tangherlini 1963; Emparan & Reall 2008, sec. 2 (from memory): kappa = (D - 3)/(2 r_h)
    r_h = sqrt(mu)
    assert sympy.simplify(res.values["kappa"] - 2 / (2 * r_h)) == 0
    # Area of the unit 3-sphere from the Gamma function: Omega_n = 2 pi^((n+1)/2)/Gamma((n+1)/2)
    pt = {mu: 2}
    with mpmath.workdps(60):
        omega3 = 2 * mpmath.pi**2 / mpmath.gamma(2)
        area = omega3 * mpmath.sqrt(2) ** 3
    assert_close(at(res.values["A"], pt, 60), area)
    num = ROUTE.numeric(pb, mp_point(pt), 30)
    assert_honest(num.values["A"], area)
    assert_honest(num.values["kappa"], at(1 / sqrt(2), {}, 60))


def test_btz_surface_gravity():
    # Source: Banados, Teitelboim & Zanelli 1992: kappa = r_h/l^2, r_h = l sqrt(M) (from memory)
    pb = problem(static_metric(-M + r**2 / l**2, dim=3), l * sqrt(M), (M, l), {M: (1, 10), l: (1, 5)})
    res = ROUTE.symbolic(pb)
    assert sympy.simplify(res.values["kappa"] - l * sqrt(M) / l**2) == 0
    # circumference of the horizon circle
    assert sympy.simplify(res.values["A"] - 2 * sympy.pi * l * sqrt(M)) == 0
    num = ROUTE.numeric(pb, mp_point({M: 2, l: 3}), 30)
    with mpmath.workdps(60):
        assert_honest(num.values["kappa"], 3 * mpmath.sqrt(2) / 9)


def test_isotropic_schwarzschild_different_zero_orders():
    # F has a double zero at rho = M/2, G none: still kappa = 1/(4M) (coordinate invariance; Wald 1984, ch. 12)
    F = ((1 - M / (2 * r)) / (1 + M / (2 * r))) ** 2
    G = (1 + M / (2 * r)) ** -4
    R = r * (1 + M / (2 * r)) ** 2
    pb = problem(static_metric(F, G, R), M / 2, (M,), {M: (Rational(1, 2), 20)})
    res = ROUTE.symbolic(pb)
    assert sympy.cancel(res.values["kappa"] - 1 / (4 * M)) == 0
    assert sympy.cancel(res.values["A"] - 16 * sympy.pi * M**2) == 0
    num = ROUTE.numeric(pb, mp_point({M: 3}), 30)
    assert_honest(num.values["kappa"], at(Rational(1, 12), {}, 60))


def painleve_gullstrand():
    dt, dr, dth, dph = sympy.symbols("dt dr dtheta dphi")
    ds2 = (-(1 - 2 * M / r) * dt**2 + 2 * sqrt(2 * M / r) * dt * dr + dr**2
           + r**2 * (dth**2 + sympy.sin(THETA) ** 2 * dph**2))
    return line_element_metric((T_COORD, r, THETA, PHI), ds2, {T_COORD: dt, r: dr, THETA: dth, PHI: dph})


def test_painleve_gullstrand_off_diagonal_t_r():
    # Source: Painleve 1921 / Gullstrand 1922 form of Schwarzschild; kappa = 1/(4M) (from memory)
    pb = problem(painleve_gullstrand(), 2 * M, (M,), {M: (Rational(1, 2), 20)}, wanted={"kappa", "A", "a_loc"})
    res = ROUTE.symbolic(pb)
    assert sympy.cancel(res.values["kappa"] - 1 / (4 * M)) == 0
    # the static observer's acceleration is the Schwarzschild one, M/(r^2 sqrt(1 - 2M/r)) (Carroll 2004, sec. 5.x)
    pt = {M: 2, r: 7}
    assert_close(at(res.functions["a_loc"].expr, pt), at(M / (r**2 * sqrt(1 - 2 * M / r)), pt))
    num = ROUTE.numeric(pb, mp_point({M: 3}), 30)
    assert_honest(num.values["kappa"], at(Rational(1, 12), {}, 60))


def test_schwarzschild_de_sitter_geodesic_normalisation():
    """Bousso-Hawking normalisation (Phys. Rev. D 54, 6312 (1996), from memory): N = 1/sqrt(F(r_g)), F'(r_g) = 0;
    reference kappa = N |F'(r_b)|/2 with r_b and r_g from mpmath root finding and F' from mpmath.diff."""
    metric = static_metric(1 - 2 * M / r - Lam * r**2 / 3)
    ranges = {M: (1, 2), Lam: (Rational(1, 100), Rational(1, 20))}
    pt = {M: 1, Lam: Rational(1, 30)}
    with mpmath.workdps(60):
        lam = mpmath.mpf(1) / 30
        F = lambda x: 1 - 2 / x - lam * x**2 / 3  # noqa: E731
        roots = sorted(mpmath.re(z) for z in mpmath.polyroots([-lam / 3, 0, 1, -2], maxsteps=200, extraprec=200)
                       if abs(mpmath.im(z)) < mpmath.mpf(10) ** -40 and mpmath.re(z) > 0)
        r_g = mpmath.findroot(lambda x: mpmath.diff(F, x), (roots[0] + roots[1]) / 2)
        n = 1 / mpmath.sqrt(F(r_g))
        refs = {"smallest": n * abs(mpmath.diff(F, roots[0])) / 2, "largest": n * abs(mpmath.diff(F, roots[1])) / 2}
    for which, reference in refs.items():
        pb = problem(metric, HorizonSpec(root=which), (M, Lam), ranges, wanted={"kappa", "T"}, norm=Normalization("geodesic"))
        num = ROUTE.numeric(pb, mp_point(pt), 30)
        assert_honest(num.values["kappa"], reference)
        assert num.values["kappa"].value > 0
        if which == "smallest":
            res = ROUTE.symbolic(pb)
            assert_close(at(res.values["kappa"], pt, 60), reference, mpmath.mpf(10) ** -30)


# ---------------------------------------------------------------------------
# rotating black holes
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def kn_symbolic():
    pb = problem(kerr_newman(), M + sqrt(M**2 - a**2 - Q**2), (M, a, Q), KN_RANGES, wanted=SCALARS | {"Phi"})
    return pb, ROUTE.symbolic(pb)


def test_kerr_newman_symbolic_values(kn_symbolic):
    _, res = kn_symbolic
    for pt in KN_POINTS:
        ref = kn_reference(pt)
        for name in ("r_h", "kappa", "Omega", "A", "Phi"):
            assert_close(at(res.values[name], pt, 60), ref[name])
        with mpmath.workdps(60):
            assert_close(at(res.values["T"], pt, 60), ref["kappa"] / (2 * mpmath.pi))
            assert_close(at(res.values["S"], pt, 60), ref["A"] / 4)


def test_kerr_newman_smarr_relation(kn_symbolic):
    # Source: Smarr, Phys. Rev. Lett. 30, 71 (1973): M = 2 T S + 2 Omega J + Phi Q with J = a M (from memory)
    pb, res = kn_symbolic
    v = res.values
    smarr = 2 * v["T"] * v["S"] + 2 * v["Omega"] * a * M + v["Phi"] * Q
    for pt in KN_POINTS:
        assert_close(at(smarr, pt, 60), at(M, pt, 60))
    num = ROUTE.numeric(pb, mp_point(KN_POINTS[0]), 30)
    n = {k: m.value for k, m in num.values.items()}
    ref = kn_reference(KN_POINTS[0])
    with mpmath.workdps(60):
        total = 2 * n["T"] * n["S"] + 2 * n["Omega"] * ref["a"] * ref["M"] + n["Phi"] * ref["Q"]
        assert abs(total - ref["M"]) < mpmath.mpf(10) ** -25


def test_kerr_newman_steps_show_the_derivation(kn_symbolic):
    _, res = kn_symbolic
    labels = " | ".join(s.label for s in res.steps)
    for word in ("Killing vector", "chi_mu", "field kappa_t^2", "horizon r_h", "Omega_H", "lim r -> r_h", "zeroth law"):
        assert word in labels
    zeroth = next(s for s in res.steps if s.label.startswith("zeroth law")).expr
    values = [float(x) for x in zeroth]
    assert max(values) - min(values) <= 1e-15 * max(values)


def test_kerr_newman_numeric_matches_reference_and_symbolic(kn_symbolic):
    pb, res = kn_symbolic
    for pt in KN_POINTS:
        ref = kn_reference(pt)
        num = ROUTE.numeric(pb, mp_point(pt), 30)
        for name in ("r_h", "kappa", "Omega", "A", "Phi"):
            assert_honest(num.values[name], ref[name])
            # numeric and symbolic sides agree to 1e-12 relative at 30 digits
            sym = at(res.values[name], pt, 40)
            assert abs(num.values[name].value - sym) <= mpmath.mpf(10) ** -12 * abs(sym)
        zl = num.evidence["zeroth_law_kappa"]
        assert len(zl) == len(num.evidence["zeroth_law_theta"]) == 4
        assert max(zl) - min(zl) <= 1e-14 * max(zl)


def test_kerr_symbolic_values():
    pb = problem(kerr_newman(False), M + sqrt(M**2 - a**2), (M, a), {M: (1, 20), a: (0, 1)})
    res = ROUTE.symbolic(pb)
    rp, rm = M + sqrt(M**2 - a**2), M - sqrt(M**2 - a**2)
    # Source: Wald 1984, eq. 12.5.x; Carroll 2004, sec. 6.7 (from memory)
    for pt in ({M: 2, a: Rational(1, 2)}, {M: Rational(11, 10), a: 1}):
        assert_close(at(res.values["kappa"], pt), at((rp - rm) / (2 * (rp**2 + a**2)), pt))
        assert_close(at(res.values["Omega"], pt), at(a / (rp**2 + a**2), pt))
        assert_close(at(res.values["A"], pt), at(4 * sympy.pi * (rp**2 + a**2), pt))


def test_zeroth_law_violation_is_reported():
    """A made-up stationary metric whose frame velocity on the horizon depends on theta: the Killing norm
    (lapse) vanishes at r_h, but no single Omega_H makes chi null there, so kappa cannot be constant."""
    lapse2 = (r**2 - 2 * M * r + a**2) / r**2
    g_pp = r**2 * sympy.sin(THETA) ** 2
    omega = a * (1 + sympy.cos(THETA) ** 2) / r**3
    metric = stationary_metric(g_tt=-lapse2 + omega**2 * g_pp, g_tphi=-omega * g_pp, g_phiphi=g_pp,
                               g_rr=1 / lapse2, g_thth=r**2)
    pb = problem(metric, M + sqrt(M**2 - a**2), (M, a), {M: (1, 3), a: (Rational(1, 10), Rational(1, 2))},
                 wanted={"kappa"})
    with pytest.raises(ValueError, match="zeroth law fails"):
        ROUTE.numeric(pb, mp_point({M: 2, a: Rational(1, 2)}), 20)
    with pytest.raises(ValueError, match="zeroth law fails"):
        ROUTE.symbolic(pb)


# ---------------------------------------------------------------------------
# wrong inputs and what cannot be computed
# ---------------------------------------------------------------------------


def test_not_a_horizon_is_an_error():
    pb = problem(static_metric(1 - 2 * M / r), 3 * M, (M,), {M: (1, 2)}, wanted={"kappa"})
    with pytest.raises(ValueError, match="not null"):
        ROUTE.symbolic(pb)
    with pytest.raises(ValueError, match="not null"):
        ROUTE.numeric(pb, mp_point({M: 1}), 20)


def test_phi_needs_a_potential_and_planes_have_no_area():
    pb = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: (1, 2)}, wanted={"kappa", "Phi"})
    with pytest.raises(CannotCompute, match="potential"):
        ROUTE.symbolic(pb)
    x, y, z = sympy.Symbol("x", positive=True), sympy.Symbol("y", real=True), sympy.Symbol("z", real=True)
    rindler = Metric(coords=(T_COORD, x, y, z), g=sympy.ImmutableMatrix(sympy.diag(-(a * x) ** 2, 1, 1, 1)), form="static")
    pb = problem(rindler, sympy.Integer(0), (a,), {a: (1, 3)}, wanted={"kappa", "A"})
    with pytest.raises(CannotCompute, match="area"):
        ROUTE.symbolic(pb)
    with pytest.raises(CannotCompute, match="area"):
        ROUTE.numeric(pb, mp_point({a: 2}), 20)


def test_rindler_surface_gravity_is_the_acceleration():
    # Source: Wald 1984, sec. 6.4 / Unruh 1976: the Rindler horizon of the observer at x = 1/a has kappa = a (from memory)
    x, y, z = sympy.Symbol("x", positive=True), sympy.Symbol("y", real=True), sympy.Symbol("z", real=True)
    rindler = Metric(coords=(T_COORD, x, y, z), g=sympy.ImmutableMatrix(sympy.diag(-(a * x) ** 2, 1, 1, 1)), form="static")
    pb = problem(rindler, sympy.Integer(0), (a,), {a: (1, 3)}, wanted={"kappa", "a_loc"})
    res = ROUTE.symbolic(pb)
    assert res.values["kappa"] == a
    assert sympy.simplify(res.functions["a_loc"].expr - 1 / x) == 0  # proper acceleration 1/x at distance x
    num = ROUTE.numeric(pb, mp_point({a: 2}), 30)
    assert_honest(num.values["kappa"], mpmath.mpf(2))


# ---------------------------------------------------------------------------
# static observers: acceleration and Tolman temperature
# ---------------------------------------------------------------------------


def test_schwarzschild_local_acceleration_and_tolman_temperature():
    pb = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: (Rational(1, 2), 20)}, wanted={"T", "a_loc", "T_loc"})
    res = ROUTE.symbolic(pb)
    # Source: Carroll 2004, sec. 5.x: a = M/(r^2 sqrt(1 - 2M/r)); Tolman 1930: T_loc sqrt(F) = T (from memory)
    for pt in ({M: 1, r: 3}, {M: 2, r: Rational(41, 10)}):
        assert_close(at(res.functions["a_loc"](r), pt), at(M / (r**2 * sqrt(1 - 2 * M / r)), pt))
        assert_close(at(res.functions["T_loc"](r) * sqrt(1 - 2 * M / r), pt), at(1 / (8 * sympy.pi * M), pt))
    num = ROUTE.numeric(pb, mp_point({M: 1}), 30)
    with mpmath.workdps(60):
        for radius in (mpmath.mpf(3), mpmath.mpf("2.0001")):
            assert_honest(num.functions["a_loc"](radius), 1 / (radius**2 * mpmath.sqrt(1 - 2 / radius)))
            assert_honest(num.functions["T_loc"](radius), 1 / (8 * mpmath.pi * mpmath.sqrt(1 - 2 / radius)))
        # near the horizon T_loc -> a_loc/(2 pi), the local Unruh value (PHYSICS.md, near-horizon)
        close = mpmath.mpf(2) + mpmath.mpf(10) ** -8
        ratio = num.functions["T_loc"](close).value / (num.functions["a_loc"](close).value / (2 * mpmath.pi))
        assert abs(ratio - 1) < 1e-7


# ---------------------------------------------------------------------------
# robustness: coordinates, root selectors, degenerate and near-degenerate horizons
# ---------------------------------------------------------------------------


def test_closed_forms_stay_finite_at_the_ends_of_the_ranges(kn_symbolic):
    """No spurious 0/0 from rationalising: at a = Q = 0 Kerr-Newman is Schwarzschild (kappa = 1/(4M), Phi = 0)."""
    _, res = kn_symbolic
    pt = {M: 3, a: 0, Q: 0}
    assert_close(at(res.values["kappa"], pt), at(Rational(1, 12), {}))
    assert_close(at(res.values["Omega"], pt), mpmath.mpf(0))
    assert_close(at(res.values["Phi"], pt), mpmath.mpf(0))
    assert_close(at(res.values["A"], pt), at(144 * sympy.pi, {}))


def test_root_selected_reissner_nordstrom_horizons():
    """Inner and outer roots picked by the horizon selector; kappa = |r+ - r-|/(2 r^2) at either
    (Wald 1984, sec. 12.5, from memory)."""
    metric = static_metric(1 - 2 * M / r + Q**2 / r**2)
    rp, rm = M + sqrt(M**2 - Q**2), M - sqrt(M**2 - Q**2)
    pt = {M: 3, Q: Rational(1, 2)}
    for which, root in (("largest", rp), ("smallest", rm)):
        pb = problem(metric, HorizonSpec(root=which), (M, Q), {M: (2, 20), Q: (0, 1)}, wanted={"kappa"})
        res = ROUTE.symbolic(pb)
        assert_close(at(res.values["kappa"], pt), at((rp - rm) / (2 * root**2), pt))
        num = ROUTE.numeric(pb, mp_point(pt), 30)
        assert_honest(num.values["kappa"], at((rp - rm) / (2 * root**2), pt, 60))


def test_extremal_kerr_is_degenerate():
    # Source: Wald 1984, sec. 12.3 (from memory): a = M gives r_+ = M, kappa = 0, Omega = 1/(2M), A = 8 pi M^2
    metric = kerr_newman(False).g.subs(a, M)
    ext = stationary_metric(metric[0, 0], metric[0, 3], metric[3, 3], metric[1, 1], metric[2, 2])
    pb = problem(ext, M, (M,), {M: (1, 3)}, wanted={"kappa", "Omega", "A"})
    res = ROUTE.symbolic(pb)
    assert res.values["kappa"] == 0
    assert sympy.cancel(res.values["Omega"] - 1 / (2 * M)) == 0
    assert sympy.cancel(res.values["A"] - 8 * sympy.pi * M**2) == 0
    num = ROUTE.numeric(pb, mp_point({M: 2}), 30)
    assert abs(num.values["kappa"].value) <= 10 * num.values["kappa"].error < 1e-10
    assert_honest(num.values["Omega"], at(Rational(1, 4), {}, 60))


def test_near_extremal_kerr_newman_numeric_is_honest():
    """r_+ - r_- = 2e-2 r_+: the sampling must stay closer to r_+ than to r_- (kn_reference as above)."""
    pb = problem(kerr_newman(), M + sqrt(M**2 - a**2 - Q**2), (M, a, Q), {M: (1, 2), a: (0, 1), Q: (0, 1)},
                 wanted={"kappa", "Omega", "A"})
    pt = {M: 1, a: Rational(6, 10), Q: Rational(7999, 10000)}
    ref = kn_reference(pt)
    num = ROUTE.numeric(pb, mp_point(pt), 30)
    for name in ("kappa", "Omega", "A"):
        assert_honest(num.values[name], ref[name])


def test_kerr_in_ingoing_coordinates():
    """dv dr and dr dphi terms couple v, r, phi in one 3x3 block; kappa and Omega are coordinate
    invariant (Ingoing Kerr coordinates: Misner, Thorne & Wheeler 1973, box 33.2, from memory)."""
    dv, dr, dth, dph = sympy.symbols("dv dr dtheta dphi")
    sigma, s2 = r**2 + a**2 * sympy.cos(THETA) ** 2, sympy.sin(THETA) ** 2
    ds2 = (-(1 - 2 * M * r / sigma) * dv**2 + 2 * dv * dr - 2 * a * s2 * dr * dph - 4 * M * a * r * s2 / sigma * dv * dph
           + sigma * dth**2 + ((r**2 + a**2) ** 2 - (r**2 - 2 * M * r + a**2) * a**2 * s2) * s2 / sigma * dph**2)
    metric = line_element_metric((T_COORD, r, THETA, PHI), ds2, {T_COORD: dv, r: dr, THETA: dth, PHI: dph})
    pb = problem(metric, M + sqrt(M**2 - a**2), (M, a), {M: (1, 3), a: (0, 1)}, wanted={"kappa", "Omega", "A"})
    res = ROUTE.symbolic(pb)
    pt = {M: 2, a: 1, Q: 0}
    ref = kn_reference(pt)
    for name in ("kappa", "Omega", "A"):
        assert_close(at(res.values[name], pt, 60), ref[name])
    num = ROUTE.numeric(pb, mp_point({M: 2, a: 1}), 30)
    assert_honest(num.values["kappa"], ref["kappa"])


def test_areal_radius_different_from_r_and_radius_normalisation():
    # Charged dilaton hole (Garfinkle, Horowitz & Strominger 1991, from memory): R^2 = r (r - Q^2/M), horizon r = 2M,
    # A = 4 pi 2M (2M - Q^2/M), kappa = 1/(4M) as for Schwarzschild.
    metric = static_metric(1 - 2 * M / r, R=sqrt(r * (r - Q**2 / M)), A_t=-Q / r)
    pb = problem(metric, 2 * M, (M, Q), {M: (1, 3), Q: (0, 1)}, wanted={"kappa", "A", "Phi"})
    res = ROUTE.symbolic(pb)
    assert sympy.cancel(res.values["A"] - 8 * sympy.pi * M * (2 * M - Q**2 / M)) == 0
    assert sympy.cancel(res.values["Phi"] - Q / (2 * M)) == 0  # chi.A at infinity (0) minus at r = 2M
    # Normalised at r0 = 10 M: N = 1/sqrt(F(r0)) = sqrt(5)/2 (PHYSICS.md, "Normalisation")
    pb = problem(static_metric(1 - 2 * M / r), 2 * M, (M,), {M: (1, 3)}, wanted={"kappa"},
                 norm=Normalization("radius", 10 * M))
    res = ROUTE.symbolic(pb)
    assert sympy.simplify(res.values["kappa"] - sqrt(5) / (8 * M)) == 0
    num = ROUTE.numeric(pb, mp_point({M: 3}), 30)
    assert_honest(num.values["kappa"], at(sqrt(5) / 24, {}, 60))


def test_non_round_static_cross_section_is_integrated():
    """A static metric whose horizon is a squashed sphere: dtheta^2 + (1 + e)^2 sin^2 theta dphi^2 at r = r_h scaled
    by r^2; the area is (1 + e) 4 pi r_h^2 (integral of r^2 (1 + e) sin theta, done by hand)."""
    e = Rational(1, 3)
    F = 1 - 2 * M / r
    metric = Metric(coords=(T_COORD, r, THETA, PHI), form="metric",
                    g=sympy.ImmutableMatrix(sympy.diag(-F, 1 / F, r**2, (1 + e) ** 2 * r**2 * sympy.sin(THETA) ** 2)))
    pb = problem(metric, 2 * M, (M,), {M: (1, 3)}, wanted={"A"})
    res = ROUTE.symbolic(pb)
    assert sympy.cancel(res.values["A"] - (1 + e) * 16 * sympy.pi * M**2) == 0
    num = ROUTE.numeric(pb, mp_point({M: 2}), 30)
    assert_honest(num.values["A"], at((1 + e) * 64 * sympy.pi, {}, 60))
