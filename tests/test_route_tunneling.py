"""The tunneling route against published values and independent computations.

Claims are written as claim text (families through `spacetime: {name: ...}`),
turned into the route's `Problem` by the runner, and both sides are checked
against reference values computed here with mpmath/sympy, never with the
route's own helpers.  Each reference names its source.
"""

from __future__ import annotations

import dataclasses

import mpmath
import pytest
import sympy

from crosscheck.claimfile import load_claim_text
from crosscheck.errors import CannotCompute
from crosscheck.routes.base import Route
from crosscheck.routes.tunneling import TunnelingRoute
from crosscheck.runner import RunOptions, problem_for, run_claim

ROUTE = TunnelingRoute()


def problem(text: str):
    """(claim, problem) with both observables wanted."""
    claims, errors = load_claim_text(text, "test.yaml")
    assert not errors, errors
    return claims[0], dataclasses.replace(problem_for(claims[0]), wanted=frozenset({"T", "kappa"}))


def exact_point(problem_, values: dict[str, str]) -> dict:
    by_name = {str(p): p for p in problem_.parameters}
    return {by_name[k]: sympy.Rational(v) for k, v in values.items()}


def mp_point(point: dict, dps: int = 80) -> dict:
    with mpmath.workdps(dps):
        return {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}


def both_sides(text: str, values: dict[str, str], digits: int = 30):
    """(symbolic T at the point, numeric T as Measured, the numeric result) at 50 digits."""
    _, prob = problem(text)
    point = exact_point(prob, values)
    symbolic = ROUTE.symbolic(prob)
    numeric = ROUTE.numeric(prob, mp_point(point), digits)
    with mpmath.workdps(50):
        t_sym = mpmath.mpf(str(sympy.re(sympy.N(symbolic.values["T"].subs(point), 50))))
    return t_sym, numeric.values["T"], numeric


def assert_matches(text: str, values: dict[str, str], reference) -> None:
    """Symbolic and numeric sides equal the reference; numeric within its error, to 1e-12 of symbolic."""
    t_sym, t_num, result = both_sides(text, values)
    with mpmath.workdps(50):
        ref = mpmath.mpf(reference)
        assert abs(t_sym - ref) <= mpmath.mpf(10) ** -35 * abs(ref)
        assert abs(t_num.value - t_sym) <= mpmath.mpf(10) ** -12 * abs(t_sym)
        assert abs(t_num.value - ref) <= 10 * t_num.error + mpmath.mpf(10) ** -40  # the error is honest
        assert t_num.error <= mpmath.mpf(10) ** -25 * abs(ref)
        kappa = result.values["kappa"].value
        assert abs(kappa - 2 * mpmath.pi * t_num.value) <= mpmath.mpf(10) ** -30 * abs(kappa)
        # Source: PHYSICS.md "tunneling": the naive exp(-2 Im W) doubles the temperature (the factor-two problem).
        naive = result.evidence["naive"]
        assert naive["label"] == "naive tunneling rate exp(-2 Im W)"
        assert abs(naive["factor"] - 2) < 1e-12 and abs(naive["T"] - 2 * float(ref)) < 1e-12 * float(ref)


def claim(spacetime: str, parameters: str, where: str = "", claim_text: str = "T = 1") -> str:
    where_block = f"where: {where}\n" if where else ""
    return f"id: test/tunneling\nspacetime: {spacetime}\nparameters: {parameters}\n{where_block}claim: {claim_text}\n"


def test_is_a_route():
    assert isinstance(ROUTE, Route)
    assert ROUTE.grade == "exact" and ROUTE.observables == frozenset({"T", "kappa"})


def test_schwarzschild():
    # Source: Hawking, Commun. Math. Phys. 43, 199 (1975): T = 1/(8 pi M).
    with mpmath.workdps(50):
        assert_matches(claim("{name: schwarzschild}", "{M: [0.5, 20]}"), {"M": "3/2"}, 1 / (8 * mpmath.pi * mpmath.mpf("1.5")))


def test_reissner_nordstrom():
    # Source: Wald 1984, ch. 12 (from memory): T = (r+ - r-)/(4 pi r+^2), r+- = M +- sqrt(M^2 - Q^2).
    with mpmath.workdps(50):
        m, q = mpmath.mpf("1.5"), mpmath.mpf("1.2")
        rp, rm = m + mpmath.sqrt(m**2 - q**2), m - mpmath.sqrt(m**2 - q**2)
        assert_matches(claim("{name: reissner-nordstrom}", "{M: [1, 2], Q: [0.1, 1]}"), {"M": "3/2", "Q": "6/5"},
                       (rp - rm) / (4 * mpmath.pi * rp**2))


def _kerr_newman_T(m, a, q):
    # Source: PHYSICS.md, killing-horizon reference (Kerr-Newman, from memory):
    # kappa = (r+ - r-)/(2 (r+^2 + a^2)), T = kappa/(2 pi).
    rp, rm = m + mpmath.sqrt(m**2 - a**2 - q**2), m - mpmath.sqrt(m**2 - a**2 - q**2)
    return (rp - rm) / (4 * mpmath.pi * (rp**2 + a**2))


def test_kerr():
    with mpmath.workdps(50):
        assert_matches(claim("{name: kerr}", "{M: [1, 2], a: [0.1, 0.9]}"), {"M": "3/2", "a": "4/5"},
                       _kerr_newman_T(mpmath.mpf("1.5"), mpmath.mpf("0.8"), 0))


def test_kerr_newman_checks_the_angles():
    with mpmath.workdps(50):
        text = claim("{name: kerr-newman}", "{M: [1, 2], a: [0.1, 0.6], Q: [0.1, 0.6]}")
        assert_matches(text, {"M": "3/2", "a": "1/2", "Q": "3/5"},
                       _kerr_newman_T(mpmath.mpf("1.5"), mpmath.mpf("0.5"), mpmath.mpf("0.6")))
    _, _, result = both_sides(text, {"M": "3/2", "a": "1/2", "Q": "3/5"}, digits=15)
    residues = result.evidence["zeroth_law_residue"]
    assert len(residues) == 3 and max(residues) - min(residues) <= 1e-12 * residues[0]
    # Source: PHYSICS.md killing-horizon reference: Omega_H = a/(r+^2 + a^2) (from memory).
    rp = 1.5 + (1.5**2 - 0.25 - 0.36) ** 0.5
    assert abs(result.evidence["Omega_H"] - 0.5 / (rp**2 + 0.25)) < 1e-12


def test_de_sitter():
    # Source: Gibbons & Hawking, Phys. Rev. D 15, 2738 (1977) (from memory): T = H/(2 pi).
    with mpmath.workdps(50):
        assert_matches(claim("{name: de-sitter}", "{H: [0.1, 2]}"), {"H": "7/10"}, mpmath.mpf("0.7") / (2 * mpmath.pi))


def _sds_reference(m, lam, which: str, geodesic: bool):
    """Independent computation with sympy: horizons from the roots of the cubic r - 2M - Lambda r^3/3,
    T = |F'(r_h)|/(4 pi) times 1/sqrt(F(r_g)), F'(r_g) = 0.
    # Source: PHYSICS.md "Normalisation of the Killing vector"; static kappa = |F'|/2 (Wald 1984, ch. 12, from memory)."""
    r = sympy.Symbol("r", positive=True)
    F = 1 - 2 * m / r - lam * r**2 / 3
    roots = sorted(sympy.re(z) for z in sympy.Poly(sympy.expand(-3 * r * F), r).nroots(n=60) if abs(sympy.im(z)) < 1e-40 and sympy.re(z) > 0)
    r_h = roots[0] if which == "black hole" else roots[-1]
    T = abs(sympy.diff(F, r).subs(r, r_h)) / (4 * sympy.pi)
    if geodesic:
        r_g = sympy.cbrt(3 * m / lam)  # F'(r) = 2M/r^2 - 2 Lambda r/3 = 0
        T = T / sympy.sqrt(F.subs(r, r_g))
    return mpmath.mpf(str(sympy.re(sympy.N(T, 50))))


@pytest.mark.parametrize("which, horizon", [("black hole", "{root: smallest}"), ("cosmological", "{root: largest}")])
@pytest.mark.parametrize("geodesic", [False, True])
def test_schwarzschild_de_sitter(which, horizon, geodesic):
    normalize = ", normalize: geodesic" if geodesic else ""
    text = claim(f"{{name: schwarzschild-de-sitter, horizon: {horizon}{normalize}}}", "{M: [0.05, 0.15], Lambda: [0.1, 0.3]}")
    with mpmath.workdps(50):
        reference = _sds_reference(sympy.Rational(1, 10), sympy.Rational(1, 5), which, geodesic)
        assert_matches(text, {"M": "1/10", "Lambda": "1/5"}, reference)


def test_ads_schwarzschild_and_its_minimum_temperature():
    # Source: Hawking & Page, Commun. Math. Phys. 87, 577 (1983) (from memory): T = (1 + 3 r_h^2/L^2)/(4 pi r_h),
    # minimal T_min = sqrt(3)/(2 pi L) at r_h = L/sqrt(3).
    text = claim("{name: schwarzschild-anti-de-sitter}", "{r0: [0.2, 3], L: [1, 2]}", where="{M: r0*(1 + r0**2/L**2)/2}")
    with mpmath.workdps(50):
        r0, L = mpmath.mpf("1.5"), mpmath.mpf("1.25")
        assert_matches(text, {"r0": "3/2", "L": "5/4"}, (1 + 3 * r0**2 / L**2) / (4 * mpmath.pi * r0))
    _, prob = problem(text)
    T = ROUTE.symbolic(prob).values["T"]
    r0_, L_ = sorted(prob.parameters, key=str)[::-1]  # (r0, L)
    at_min = sympy.nsimplify(T.subs(r0_, L_ / sympy.sqrt(3)))
    assert sympy.simplify(at_min - sympy.sqrt(3) / (2 * sympy.pi * L_)) == 0
    assert sympy.simplify(sympy.diff(T, r0_).subs(r0_, L_ / sympy.sqrt(3))) == 0


def test_btz():
    # Source: Banados, Teitelboim & Zanelli, Phys. Rev. Lett. 69, 1849 (1992) (from memory): T = r_+/(2 pi l^2).
    with mpmath.workdps(50):
        m, l = mpmath.mpf(2), mpmath.mpf("1.5")
        assert_matches(claim("{name: btz}", "{M: [0.1, 10], l: [0.5, 10]}"), {"M": "2", "l": "3/2"},
                       l * mpmath.sqrt(m) / (2 * mpmath.pi * l**2))


@pytest.mark.parametrize("dim", [5, 6])
def test_tangherlini(dim):
    # Source: Myers & Perry, Ann. Phys. 172, 304 (1986): T = (D - 3)/(4 pi r_h), r_h = mu^(1/(D-3)).
    with mpmath.workdps(50):
        mu = mpmath.mpf(3)
        r_h = mu ** (mpmath.mpf(1) / (dim - 3))
        assert_matches(claim(f"{{name: tangherlini, dim: {dim}}}", "{mu: [0.5, 20]}"), {"mu": "3"},
                       (dim - 3) / (4 * mpmath.pi * r_h))


def test_charged_dilaton_has_the_schwarzschild_temperature():
    # Source: Garfinkle, Horowitz & Strominger, Phys. Rev. D 43, 3140 (1991): T = 1/(8 pi M) at any charge.
    text = claim("{name: charged-dilaton}", "{M: [0.5, 20], q: [0, 0.95]}", where="{Q: q*sqrt(2)*M}")
    with mpmath.workdps(50):
        assert_matches(text, {"M": "2", "q": "9/10"}, 1 / (16 * mpmath.pi))


def test_static_metric_with_F_not_G_and_R_not_r():
    """Independent computation: T = sqrt(F'(r_h) G'(r_h))/(4 pi) by sympy in the test.
    # Source: PHYSICS.md "euclidean-period": beta_t = 4 pi/sqrt(F1 G1) (textbook, from memory)."""
    text = claim("{static: {F: (1 - 2*M/r)*(1 + b/r)**2, G: (1 - 2*M/r)/(1 + b/r), R: r + b}, horizon: 2*M}",
                 "{M: [1, 2], b: [0.1, 0.5]}")
    r, M, b = sympy.symbols("r M b", positive=True)
    F, G = (1 - 2 * M / r) * (1 + b / r) ** 2, (1 - 2 * M / r) / (1 + b / r)
    value = sympy.sqrt(sympy.diff(F, r) * sympy.diff(G, r)).subs(r, 2 * M) / (4 * sympy.pi)
    reference = sympy.N(value.subs({M: sympy.Rational(3, 2), b: sympy.Rational(1, 4)}), 50)
    with mpmath.workdps(50):
        assert_matches(text, {"M": "3/2", "b": "1/4"}, mpmath.mpf(str(reference)))


def test_isotropic_coordinates_are_refused_with_the_reason():
    """In isotropic coordinates F ~ x^2 and G ~ x^0: r does not cross the horizon, and the residue of
    1/sqrt(F G) would give half the temperature (1/(16 pi M) instead of Hawking's 1/(8 pi M))."""
    text = claim("{static: {F: ((1 - M/(2*r))/(1 + M/(2*r)))**2, G: (1 + M/(2*r))**(-4), R: r*(1 + M/(2*r))**2}, horizon: M/2}",
                 "{M: [0.5, 20]}")
    _, prob = problem(text)
    with pytest.raises(CannotCompute, match="does not cross the horizon"):
        ROUTE.symbolic(prob)
    with pytest.raises(CannotCompute, match="does not cross the horizon"):
        ROUTE.numeric(prob, mp_point(exact_point(prob, {"M": "3"})), 15)


def test_line_element_diagonal_metric():
    # Source: Hawking 1975: T = 1/(8 pi M) (Schwarzschild written as a line element).
    text = claim("{metric: {coordinates: [t, r, theta, phi], line_element: '-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r)"
                 " + r**2*(dtheta**2 + sin(theta)**2*dphi**2)'}, horizon: 2*M}", "{M: [0.5, 20]}")
    with mpmath.workdps(50):
        assert_matches(text, {"M": "5/2"}, 1 / (20 * mpmath.pi))


def test_radius_normalisation():
    # Source: PHYSICS.md "Normalisation": N = 1/sqrt(F(r0)); Schwarzschild T = 1/(8 pi M) (Hawking 1975).
    text = claim("{name: schwarzschild, normalize: {radius: 10*M}}", "{M: [0.5, 20]}")
    with mpmath.workdps(50):
        assert_matches(text, {"M": "1"}, 1 / (8 * mpmath.pi * mpmath.sqrt(mpmath.mpf("0.8"))))


def test_painleve_gullstrand_square_is_completed():
    # Source: Painleve 1921 / Gullstrand 1922 coordinates are Schwarzschild with t' = t + f(r);
    # the same Killing vector d/dt, so T = 1/(8 pi M) (Hawking 1975).
    text = claim("{metric: {coordinates: [t, r, theta, phi], line_element: '-(1 - 2*M/r)*dt**2 + 2*sqrt(2*M/r)*dt*dr"
                 " + dr**2 + r**2*(dtheta**2 + sin(theta)**2*dphi**2)'}, horizon: 2*M}", "{M: [0.5, 20]}")
    _, prob = problem(text)
    assert ROUTE.applies(prob) is None
    M = sympy.Symbol("M", positive=True)
    T = ROUTE.symbolic(prob).values["T"]
    assert sympy.simplify(T.subs(M, sympy.Rational(3)) - 1 / (24 * sympy.pi)) == 0


def test_extremal_reissner_nordstrom_has_zero_temperature():
    # Source: Wald 1984, ch. 12 (from memory): the degenerate horizon Q = M has kappa = 0.
    text = claim("{name: reissner-nordstrom}", "{M: [0.5, 2]}", where="{Q: M}")
    _, prob = problem(text)
    symbolic = ROUTE.symbolic(prob)
    assert symbolic.values["T"] == 0
    assert any("double pole" in step.label for step in symbolic.steps)
    numeric = ROUTE.numeric(prob, mp_point(exact_point(prob, {"M": "1"})), 15)
    assert numeric.values["T"].value == 0 and numeric.evidence["orders"] == {"F": 2, "G": 2}
    assert any("double pole" in p for p in numeric.provenance)
    # 1/sqrt(F G) = r^2/(r - M)^2 = 1 + 2M/x + M^2/x^2 (x = r - M): coefficients M^2 and 2M (algebra by hand).
    assert abs(numeric.evidence["double_pole_coefficient"] - 1) < 1e-12
    assert abs(numeric.evidence["subleading_residue"] - 2) < 1e-12


def test_end_to_end_naive_factor_two():
    # Source: Hawking 1975, T = 1/(8 pi M); T = 1/(4 pi M) = kappa/pi is the naive tunneling value.
    wrong, _ = problem(claim("{name: schwarzschild}", "{M: [0.5, 20]}", claim_text="T = 1/(4*pi*M)"))
    right, _ = problem(claim("{name: schwarzschild}", "{M: [0.5, 20]}", claim_text="T = 1/(8*pi*M)"))
    routes = {ROUTE.name: ROUTE}
    [bad] = [r for r in run_claim(wrong, routes, RunOptions(samples=3)).routes if r.route == ROUTE.name]
    [good] = [r for r in run_claim(right, routes, RunOptions(samples=3)).routes if r.route == ROUTE.name]
    assert bad.status == "disagree" and good.status == "agree"
    assert abs(bad.evidence["naive"]["factor"] - 2) < 1e-12
    assert any("naive" in label for label, _ in bad.steps)


@pytest.mark.parametrize("route_digits", [15, 30])
def test_near_extremal_reissner_nordstrom_within_its_error(route_digits):
    # Source: Wald 1984, ch. 12 (from memory): T = (r+ - r-)/(4 pi r+^2); here r+ - r- ~ 3e-5 M.
    text = claim("{name: reissner-nordstrom}", "{M: [0.5, 2], e: [0, 0.1]}", where="{Q: M*(1 - e)}")
    _, prob = problem(text)
    point = exact_point(prob, {"M": "1", "e": "1/10000000000"})
    T = ROUTE.numeric(prob, mp_point(point), route_digits).values["T"]
    with mpmath.workdps(60):
        q = 1 - mpmath.mpf(10) ** -10
        rp, rm = 1 + mpmath.sqrt(1 - q**2), 1 - mpmath.sqrt(1 - q**2)
        reference = (rp - rm) / (4 * mpmath.pi * rp**2)
        assert abs(T.value - reference) <= T.error <= mpmath.mpf(10) ** (4 - route_digits) * reference


def test_extremal_error_is_the_resolution_bound():
    # Source: Wald 1984, ch. 12 (from memory): T = 0 at Q = M; the error is what the root resolution allows.
    _, prob = problem(claim("{name: reissner-nordstrom}", "{M: [0.5, 2]}", where="{Q: M}"))
    for digits in (15, 30):
        T = ROUTE.numeric(prob, mp_point(exact_point(prob, {"M": "1"})), digits).values["T"]
        assert T.value == 0 and 0 < T.error < mpmath.mpf(10) ** (2 - digits // 2)


def test_rindler_chart_is_refused():
    # F = a^2 x^2, G = 1: x does not cross the horizon (x < 0 is the other wedge), as in isotropic coordinates.
    _, prob = problem(claim("{name: rindler}", "{a: [0.1, 10]}"))
    with pytest.raises(CannotCompute, match="does not cross the horizon"):
        ROUTE.symbolic(prob)


def test_a_wrong_horizon_is_an_error_not_a_value():
    _, prob = problem(claim("{name: schwarzschild, horizon: 3*M}", "{M: [0.5, 20]}"))
    with pytest.raises(ValueError, match="not a horizon"):
        ROUTE.symbolic(prob)
    with pytest.raises(ValueError, match="not a horizon|zeros"):
        ROUTE.numeric(prob, mp_point(exact_point(prob, {"M": "1"})), 15)


def test_kerr_newman_closed_form_is_proved():
    # Source: Smarr, Phys. Rev. Lett. 30, 71 (1973): kappa = (r+ - r-)/(2 (r+^2 + a^2)).
    from crosscheck.compare import symbolic_verdict

    text = claim("{name: kerr-newman}", "{M: [0.5, 20], chi: [0, 0.7], q: [0, 0.7]}",
                 "{a: chi*M, Q: q*M, rp: M + sqrt(M**2 - a**2 - Q**2), rm: M - sqrt(M**2 - a**2 - Q**2)}",
                 "kappa = (rp - rm)/(2*(rp**2 + a**2))")
    the_claim, prob = problem(text)
    result = ROUTE.symbolic(prob)
    assert symbolic_verdict(result.values["kappa"], the_claim.rhs, the_claim.parameters,
                            time_budget=3.0).verdict == "proved"
