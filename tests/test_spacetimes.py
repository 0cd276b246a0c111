"""Spacetime package: families, claim forms, horizons, normalisation.

References are typed here from textbooks (source beside each) or computed here
with general libraries (numpy, mpmath, scipy.constants).
"""

from __future__ import annotations

import mpmath
import numpy
import pytest
import scipy.constants as const
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.spacetimes import (
    FAMILIES,
    PHI,
    R_COORD,
    THETA,
    HorizonSpec,
    Normalization,
    Spacetime,
    build_spacetime,
    describe_families,
    family,
    horizon_radius,
    horizon_radius_numeric,
    killing_norm,
    line_element_metric,
    normalization_factor,
    normalization_factor_numeric,
    normalization_radius_numeric,
    static_metric,
    stationary_metric,
)
from crosscheck.spacetimes.families import missing_symbols

M, a, Q, H, L, l, mu, Lam = sympy.symbols("M a Q H L l mu Lambda", positive=True)
r, theta, phi = R_COORD, THETA, PHI
t = sympy.Symbol("t", real=True)
BINDINGS = {"M": M, "a": a, "Q": Q, "H": H, "L": L, "l": l, "mu": mu, "Lambda": Lam}
dt, dr, dth, dph = sympy.symbols("dt dr dtheta dphi")
DIFFS = {t: dt, r: dr, theta: dth, phi: dph}
DOMEGA2 = dth**2 + sympy.sin(theta) ** 2 * dph**2


def same(expr_a, expr_b) -> bool:
    """Symbolic equality, else numeric at random rational points (common practice)."""
    diff = sympy.simplify(sympy.sympify(expr_a) - sympy.sympify(expr_b))
    rng = numpy.random.default_rng(1)
    points = [{s: sympy.Rational(int(rng.integers(11, 99)), 100) for s in diff.free_symbols} for _ in range(5)]
    return diff == 0 or all(abs(complex(diff.evalf(30, subs=p))) < 1e-20 for p in points)


def mp(value) -> mpmath.mpf:
    """A parameter value at 60 digits (at the default 15, "0.6" would not be 0.6)."""
    with mpmath.workdps(60):
        if isinstance(value, sympy.Rational):
            return mpmath.mpf(int(value.p)) / int(value.q)
        return mpmath.mpf(value)


def tiny(exponent: int) -> mpmath.mpf:
    return mpmath.mpf(10) ** -exponent


def spacetime(name, horizon=None, normalization=Normalization(), units="geometric"):
    metric, default, _ = build_spacetime(name, BINDINGS, {}, units)
    return Spacetime(metric, horizon or default, normalization, family=name)


@pytest.mark.parametrize("name", sorted(FAMILIES))
def test_every_family_builds_a_symmetric_metric(name):
    metric, horizon, functions = build_spacetime(name, BINDINGS, {}, "geometric")
    # Source: common practice (a symmetric dim x dim matrix, independent of t).
    assert metric.g.shape == (metric.dim, metric.dim) and metric.g == metric.g.T
    assert not any(c.has(metric.time) for c in metric.g) and functions
    assert set(family(name).symbols) == {str(s) for s in metric.g.free_symbols - set(metric.coords)}


def test_static_families_match_textbook_functions():
    # Source: Wald 1984 eq. 6.1.44; Carroll 2004 eq. 5.75 (RN); Gibbons & Hawking 1977 (dS,
    # SdS); Hawking & Page 1983; BTZ 1992 (all from memory).
    expected = {
        "schwarzschild": 1 - 2 * M / r,
        "reissner-nordstrom": 1 - 2 * M / r + Q**2 / r**2,
        "de-sitter": 1 - H**2 * r**2,
        "schwarzschild-de-sitter": 1 - 2 * M / r - Lam * r**2 / 3,
        "schwarzschild-anti-de-sitter": 1 - 2 * M / r + r**2 / L**2,
        "btz": -M + r**2 / l**2,
        "tangherlini": 1 - mu / r**2,
    }
    for name, F in expected.items():
        metric, _, functions = build_spacetime(name, BINDINGS, {}, "geometric")
        assert same(metric.g[0, 0], -F), name
        assert same(metric.g[1, 1], 1 / F), name
        assert same(functions["F"], F), name
        assert same(metric.g[2, 2], r**2), name


def test_schwarzschild_is_the_textbook_line_element():
    # Source: Wald 1984, eq. 6.1.44 (from memory).
    ds2 = -(1 - 2 * M / r) * dt**2 + dr**2 / (1 - 2 * M / r) + r**2 * DOMEGA2
    written = line_element_metric([t, r, theta, phi], ds2, DIFFS)
    built = spacetime("schwarzschild").metric
    assert (written.g - built.g).applyfunc(sympy.simplify) == sympy.zeros(4, 4)
    assert same(written.static.F, 1 - 2 * M / r) and same(written.static.R, r)


def carroll_kerr_ds2():
    """Kerr in Boyer-Lindquist coordinates. Source: Carroll 2004, eq. 6.70 (from memory)."""
    rho2 = r**2 + a**2 * sympy.cos(theta) ** 2
    Delta = r**2 - 2 * M * r + a**2
    s2 = sympy.sin(theta) ** 2
    return (
        -(1 - 2 * M * r / rho2) * dt**2
        - 4 * M * a * r * s2 / rho2 * dt * dph
        + rho2 / Delta * dr**2
        + rho2 * dth**2
        + s2 / rho2 * ((r**2 + a**2) ** 2 - a**2 * Delta * s2) * dph**2
    )


def test_kerr_matches_boyer_lindquist():
    written = line_element_metric([t, r, theta, phi], carroll_kerr_ds2(), DIFFS)
    built = spacetime("kerr").metric
    assert all(same(written.g[i, j], built.g[i, j]) for i in range(4) for j in range(4))
    assert built.axial == phi and written.axial == phi and written.static is None
    st = Spacetime(written, HorizonSpec(root="largest"))
    got = horizon_radius_numeric(st, {M: mp(1), a: mp("0.6")}, 30)
    with mpmath.workdps(60):  # r_+ = 1 + sqrt(1 - 0.36) (Carroll 2004, eq. 6.75, from memory)
        assert abs(got.value - mp("1.8")) <= got.error + mp("1e-40") and got.error < mp("1e-29")


def test_kerr_newman_matches_mtw_form_and_potential():
    # Source: Misner, Thorne & Wheeler 1973, sec. 33.2 (from memory), the form typed below.
    rho2 = r**2 + a**2 * sympy.cos(theta) ** 2
    Delta = r**2 - 2 * M * r + a**2 + Q**2
    s2 = sympy.sin(theta) ** 2
    ds2 = (
        -(Delta / rho2) * (dt - a * s2 * dph) ** 2
        + (s2 / rho2) * ((r**2 + a**2) * dph - a * dt) ** 2
        + rho2 / Delta * dr**2
        + rho2 * dth**2
    )
    mtw = line_element_metric([t, r, theta, phi], ds2, DIFFS)
    built = spacetime("kerr-newman").metric
    assert all(same(mtw.g[i, j], built.g[i, j]) for i in range(4) for j in range(4)) and mtw.axial == phi
    A = built.potential  # A = -(Q r/rho^2)(dt - a sin^2(theta) dphi)
    assert same(A[0], -Q * r / rho2) and same(A[3], Q * r * a * s2 / rho2)


def test_sphere_and_dimension_options():
    # Source: the unit n-sphere in nested polar angles (common practice).
    metric, horizon, _ = build_spacetime("tangherlini", {"mu": mu}, {"dim": 6})
    th1, th2, th3, _ = metric.coords[2:]
    expected = [r**2, r**2 * sympy.sin(th1) ** 2, r**2 * sympy.sin(th1) ** 2 * sympy.sin(th2) ** 2]
    assert [metric.g[k, k] for k in range(2, 5)] == expected
    assert same(metric.g[0, 0], -(1 - mu / r**3))
    assert same(horizon.expression, mu ** sympy.Rational(1, 3))
    assert build_spacetime("minkowski", {}, {"dim": 2})[0].g == sympy.ImmutableMatrix(sympy.diag(-1, 1))
    assert build_spacetime("btz", BINDINGS)[0].coords == (t, r, phi)
    with pytest.raises(ValueError, match="dim"):
        build_spacetime("tangherlini", {"mu": mu}, {"dim": 3})


def test_rindler_is_the_accelerated_wedge():
    # Source: Wald 1984, sec. 6.4 (from memory): at x = 1/a the lapse is 1 (t is proper
    # time) and the proper acceleration d(ln lapse)/dx is a.
    metric, horizon, functions = build_spacetime("rindler", {"a": a})
    x = metric.radial
    lapse = sympy.sqrt(-metric.g[0, 0])
    assert same(lapse.subs(x, 1 / a), 1)
    assert same(sympy.diff(sympy.log(lapse), x).subs(x, 1 / a), a)
    assert horizon.expression == 0 and metric.static.R is None


def test_charged_dilaton_satisfies_first_law():
    # Source: Garfinkle, Horowitz & Strominger 1991 (from memory). Independent check of
    # F, R and A_t together: with T = F'(r_h)/(4 pi), S = pi R(r_h)^2 and
    # Phi = A_t(inf) - A_t(r_h), dM = T dS + Phi dQ must hold (first law; common practice).
    metric, horizon, functions = build_spacetime("charged-dilaton", {"M": M, "Q": Q})
    r_h = horizon.expression
    T = sympy.diff(functions["F"], r).subs(r, r_h) / (4 * sympy.pi)
    S = sympy.pi * functions["R"].subs(r, r_h) ** 2
    Phi = sympy.limit(functions["A_t"], r, sympy.oo) - functions["A_t"].subs(r, r_h)
    assert same(T * sympy.diff(S, M), 1)
    assert same(T * sympy.diff(S, Q) + Phi, 0)


def test_family_lookup_errors_and_descriptions():
    with pytest.raises(ValueError, match="did you mean 'kerr-newman'"):
        family("kerr-newmann")
    assert missing_symbols("kerr-newman", ["M"]) == ["a", "Q"]
    with pytest.raises(ValueError, match="needs symbol"):
        build_spacetime("kerr", {"M": M})
    with pytest.raises(ValueError, match="unknown option"):
        build_spacetime("schwarzschild", {"M": M}, {"dim": 5})
    rows = describe_families()
    assert [row["name"] for row in rows] == sorted(FAMILIES) and all(row["source"] for row in rows)


@pytest.mark.parametrize(
    "name, r_h",
    [
        # Source: Wald 1984 ch. 6 and 12; Carroll 2004 ch. 5-6; BTZ 1992 (from memory).
        ("schwarzschild", 2 * M),
        ("reissner-nordstrom", M + sympy.sqrt(M**2 - Q**2)),
        ("kerr", M + sympy.sqrt(M**2 - a**2)),
        ("kerr-newman", M + sympy.sqrt(M**2 - a**2 - Q**2)),
        ("de-sitter", 1 / H),
        ("btz", l * sympy.sqrt(M)),
        ("charged-dilaton", 2 * M),
    ],
)
def test_killing_norm_vanishes_at_the_textbook_horizon(name, r_h):
    st = spacetime(name)
    norm = killing_norm(st.metric)
    for angle in (sympy.pi / 2, sympy.pi / 3):
        assert same(norm.subs(theta, angle).subs(r, r_h), 0)
    assert same(horizon_radius(st), r_h)


def test_kerr_root_selectors_give_outer_and_inner_horizon():
    # Source: Carroll 2004, eq. 6.75 (from memory): r_pm = M +- sqrt(M^2 - a^2).
    rep = {M: sympy.Integer(1), a: sympy.Rational(3, 5)}
    for selector, sign in (("largest", 1), ("smallest", -1)):
        got = horizon_radius(spacetime("kerr", HorizonSpec(root=selector)), rep)
        assert same(got, M + sign * sympy.sqrt(M**2 - a**2))
    second = horizon_radius(spacetime("kerr-newman", HorizonSpec(root=2)), {**rep, Q: sympy.Rational(1, 2)})
    assert same(second, M + sympy.sqrt(M**2 - a**2 - Q**2))


@pytest.mark.parametrize(
    "name, point, cubic",
    [
        # Independent: F = 0 as a cubic solved by numpy.roots: SdS Lambda r^3 - 3r + 6M = 0
        # (two positive roots), SAdS r^3 + L^2 r - 2 M L^2 = 0 (one).
        ("schwarzschild-de-sitter", {M: 1, Lam: "0.05"}, [0.05, 0.0, -3.0, 6.0]),
        ("schwarzschild-anti-de-sitter", {M: 1, L: 3}, [1.0, 0.0, 9.0, -18.0]),
    ],
)
def test_horizons_numeric_against_numpy_roots(name, point, cubic):
    positive = sorted(x.real for x in numpy.roots(cubic) if abs(x.imag) < 1e-12 and x.real > 0)
    point = {k: mp(v) for k, v in point.items()}
    for selector, expected in (("smallest", positive[0]), ("largest", positive[-1])):
        got = horizon_radius_numeric(spacetime(name, HorizonSpec(root=selector)), point, 20)
        assert float(got.value) == pytest.approx(expected, rel=1e-12)
    assert len(positive) == (2 if name == "schwarzschild-de-sitter" else 1)


def test_sds_known_pair_of_horizons():
    # Source: elementary algebra (common practice): F = 1 - 2M/r - Lambda r^2/3 vanishes at rb, rc
    # for Lambda = 3/s, M = rb rc (rb + rc)/(2 s), s = rb^2 + rb rc + rc^2.
    rb, rc = sympy.Integer(1), sympy.Integer(5)
    s = rb**2 + rb * rc + rc**2
    rep = {Lam: 3 / s, M: rb * rc * (rb + rc) / (2 * s)}
    point = {k: mp(v) for k, v in rep.items()}
    for selector, expected in (("smallest", rb), ("largest", rc), (2, rc)):
        st = spacetime("schwarzschild-de-sitter", HorizonSpec(root=selector))
        got = horizon_radius_numeric(st, point, 30)
        assert abs(got.value - int(expected)) <= max(got.error, tiny(30)) * 10
        assert got.error < tiny(25)
        assert abs(complex(horizon_radius(st, rep).evalf(30, subs=rep)) - int(expected)) < 1e-25
    with pytest.raises(ValueError, match="only 2 positive"):
        horizon_radius_numeric(spacetime("schwarzschild-de-sitter", HorizonSpec(root=3)), point, 20)


def test_isotropic_schwarzschild_double_zero():
    # Source: Schwarzschild in isotropic coordinates, r = rho (1 + M/(2 rho))^2 (standard, from
    # memory): g_tt has a double zero at rho = M/2, the horizon.
    factor = 1 + M / (2 * r)
    F = ((1 - M / (2 * r)) / factor) ** 2
    metric = static_metric(F, 1 / factor**4, r * factor**2)
    st = Spacetime(metric, HorizonSpec(root="smallest"))
    got = horizon_radius_numeric(st, {M: mp(3)}, 25)
    assert abs(got.value - mpmath.mpf("1.5")) <= got.error + tiny(25)
    assert got.error < 1e-20 and same(horizon_radius(st, {M: 3}), M / 2)


def test_non_polynomial_norms_found_by_scan():
    # By hand: tanh(r/M - 2) and log(r/(2M))^2 (double zero, no sign change) vanish at 2M.
    for F in (sympy.tanh(r / M - 2), sympy.log(r / (2 * M)) ** 2):
        st = Spacetime(static_metric(F, sympy.Integer(1)), HorizonSpec(root="smallest"))
        got = horizon_radius_numeric(st, {M: mp("1.25")}, 20)
        assert abs(got.value - mpmath.mpf("2.5")) <= got.error + tiny(20), F
        assert got.error < 1e-8
        with pytest.raises(CannotCompute):
            horizon_radius(st, {M: 1})


def test_no_horizon_is_reported():
    over_extremal = spacetime("reissner-nordstrom", HorizonSpec(root="largest"))
    with pytest.raises(ValueError, match="no horizon"):
        horizon_radius_numeric(over_extremal, {M: mp(1), Q: mp(2)}, 20)
    bracketed = HorizonSpec(root="largest", bracket=(3 * M, 10 * M))
    with pytest.raises(ValueError, match=r"no horizon: g_tt has no positive root in \[3"):
        horizon_radius_numeric(spacetime("schwarzschild", bracketed), {M: mp(1)}, 20)
    with pytest.raises(ValueError, match="no horizon"):
        horizon_radius_numeric(spacetime("minkowski"), {}, 20)
    with pytest.raises(CannotCompute):
        horizon_radius(spacetime("minkowski"))


def test_near_extremal_reissner_nordstrom():
    # Source: r_+ = M + sqrt(M^2 - Q^2) (Carroll 2004, eq. 5.76, from memory).
    st = spacetime("reissner-nordstrom", HorizonSpec(root="largest"))
    with mpmath.workdps(50):
        q = 1 - tiny(12)
        exact = 1 + mpmath.sqrt(1 - q**2)
    got = horizon_radius_numeric(st, {M: mp(1), Q: q}, 30)
    assert abs(got.value - exact) <= got.error + tiny(29)
    extremal = horizon_radius_numeric(st, {M: mp(1), Q: mp(1)}, 30)
    assert abs(extremal.value - 1) <= extremal.error + tiny(14)


def test_geodesic_normalisation_of_sds():
    # Source: F'(r) = 2M/r^2 - 2 Lambda r/3 = 0 gives r_g = (3M/Lambda)^(1/3) (elementary).
    st = spacetime("schwarzschild-de-sitter", normalization=Normalization("geodesic"))
    r_g = (3 * M / Lam) ** sympy.Rational(1, 3)
    F = 1 - 2 * M / r - Lam * r**2 / 3
    rep = {M: sympy.Integer(1), Lam: sympy.Rational(1, 20)}
    assert same(normalization_factor(st, rep), 1 / sympy.sqrt(F.subs(r, r_g)))
    point = {M: mp(1), Lam: mp("0.05")}
    with mpmath.workdps(40):
        rg_exact = mpmath.cbrt(60)
        n_exact = 1 / mpmath.sqrt(1 - 2 / rg_exact - rg_exact**2 / 60)
    assert abs(normalization_radius_numeric(st, point, 25) - rg_exact) < tiny(20)
    got = normalization_factor_numeric(st, point, 25)
    assert abs(got.value - n_exact) <= got.error + tiny(25)
    with pytest.raises(CannotCompute):
        normalization_factor(spacetime("kerr", normalization=Normalization("geodesic")), rep)


def test_geodesic_observer_of_de_sitter_sits_at_the_centre():
    # Source: F = 1 - H^2 r^2 has F'(0) = 0 (elementary): the static observer at r = 0 is
    # geodesic and its clock is t itself, N = 1 (Gibbons & Hawking 1977, from memory).
    st = spacetime("de-sitter", normalization=Normalization("geodesic"))
    assert normalization_factor(st, {H: sympy.Integer(2)}) == 1
    assert normalization_radius_numeric(st, {H: mp(2)}, 20) == 0
    assert normalization_factor_numeric(st, {H: mp(2)}, 20).value == 1


def test_radius_and_as_written_normalisation():
    # Source: PHYSICS.md normalisation, N = 1/sqrt(F(r0)); F(10M) = 4/5 for Schwarzschild.
    st = spacetime("schwarzschild", normalization=Normalization("radius", 10 * M))
    assert same(normalization_factor(st), 1 / sympy.sqrt(sympy.Rational(4, 5)))
    got = normalization_factor_numeric(st, {M: mp("0.7")}, 30)
    with mpmath.workdps(40):
        assert abs(got.value - 1 / mpmath.sqrt(mpmath.mpf(4) / 5)) <= got.error + tiny(30)
    assert normalization_radius_numeric(st, {M: mp(1)}, 20) == 10
    plain = spacetime("schwarzschild")
    assert normalization_factor(plain) == 1 == normalization_factor_numeric(plain, {M: mp(1)}, 20).value
    assert normalization_radius_numeric(plain, {M: mp(1)}, 20) is None
    inside = spacetime("schwarzschild", normalization=Normalization("radius", M))
    with pytest.raises(ValueError, match="static region"):
        normalization_factor_numeric(inside, {M: mp(1)}, 20)


def test_painleve_gullstrand_off_diagonal():
    # Source: Painleve (1921) - Gullstrand (1922) coordinates, e.g. Poisson 2004, A Relativist's
    # Toolkit (from memory): -(1 - 2M/r) dT^2 + 2 sqrt(2M/r) dT dr + dr^2 + r^2 dOmega^2.
    ds2 = -(1 - 2 * M / r) * dt**2 + 2 * sympy.sqrt(2 * M / r) * dt * dr + dr**2 + r**2 * DOMEGA2
    metric = line_element_metric([t, r, theta, phi], ds2, DIFFS)
    assert same(metric.g[0, 1], sympy.sqrt(2 * M / r))
    assert metric.static is None and metric.axial is None
    assert same(killing_norm(metric).subs(r, 2 * M), 0)
    got = horizon_radius_numeric(Spacetime(metric, HorizonSpec(root="smallest")), {M: mp(1)}, 20)
    assert abs(got.value - 2) <= got.error + 1e-20


def test_line_element_with_other_coordinate_names():
    tau, rho, x, y = sympy.symbols("tau rho x y", real=True)
    dtau, drho, dx, dy = sympy.symbols("dtau drho dx dy")
    ds2 = -(rho**2) * dtau**2 + drho**2 + dx**2 + dy**2
    metric = line_element_metric([tau, rho, x, y], ds2, dict(zip([tau, rho, x, y], [dtau, drho, dx, dy])))
    assert metric.g == sympy.ImmutableMatrix(sympy.diag(-(rho**2), 1, 1, 1))
    assert metric.static.F == rho**2 and metric.static.R is None and metric.radial == rho


def test_line_element_rejections():
    with pytest.raises(ValueError, match="not a homogeneous quadratic form"):
        line_element_metric([t, r], -(dt**2) + dr**2 + dr, {t: dt, r: dr})
    with pytest.raises(ValueError, match="quadratic form"):
        line_element_metric([t, r], -(dt**2) + dr**3, {t: dt, r: dr})
    # An expanding universe has no Killing time t.
    with pytest.raises(ValueError, match="g_rr depends on t; the time coordinate"):
        line_element_metric([t, r], -(dt**2) + sympy.exp(2 * t) * dr**2, {t: dt, r: dr})
    with pytest.raises(ValueError, match="no differential"):
        line_element_metric([t, r], -(dt**2), {t: dt})


def test_stationary_form_records_static_functions_when_static():
    F, sphere = 1 - 2 * M / r, r**2 * sympy.sin(theta) ** 2
    static = stationary_metric(-F, 0, sphere, 1 / F, r**2)
    assert static.axial is None and same(static.static.F, F) and same(static.static.R, r)
    assert stationary_metric(-F, -a / r, sphere, 1 / F, r**2).axial == phi


def test_si_schwarzschild_radius_of_the_sun():
    # Source: scipy.constants for G, c; solar mass 1.98847e30 kg and its Schwarzschild
    # radius ~2953 m (from memory).
    m_sun = 1.98847e30
    expected = 2 * const.G * m_sun / const.c**2
    st = spacetime("schwarzschild", units="si")
    got = horizon_radius_numeric(st, {M: mpmath.mpf(m_sun)}, 20)
    assert float(got.value) == pytest.approx(expected, rel=1e-12)
    assert abs(float(got.value) - 2953) < 1


def test_si_charge_and_rate_conversions():
    # Source: scipy.constants; geometrised charge Q sqrt(G/(4 pi eps0))/c^2 (common practice).
    # scipy carries CODATA 2022 eps0, the code CODATA 2018: they differ by ~7e-10.
    F = build_spacetime("reissner-nordstrom", BINDINGS, {}, "si")[2]["F"]
    q_geo = 1e18 * (const.G / (4 * const.pi * const.epsilon_0)) ** 0.5 / const.c**2
    assert float(F.subs({M: 0, r: 1, Q: 10**18}) - 1) == pytest.approx(q_geo**2, rel=1e-8)  # F = 1 + Q^2/r^2
    st = spacetime("de-sitter", units="si")
    got = horizon_radius_numeric(st, {H: mpmath.mpf("2.2e-18")}, 20)
    assert float(got.value) == pytest.approx(const.c / 2.2e-18, rel=1e-12)  # r = c/H
