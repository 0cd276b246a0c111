"""crosscheck.units, against scipy.constants (CODATA), handbook values and
dimensions derived here from the unit strings scipy gives for each constant."""

from __future__ import annotations

import math
import re
from fractions import Fraction

import mpmath
import pytest
import scipy.constants as sc
import sympy
from hypothesis import given
from hypothesis import strategies as st

from crosscheck.errors import CrosscheckError, DimensionError
from crosscheck.measure import Measured
from crosscheck.observables import observable_function, scalar_placeholder
from crosscheck.units import (
    DIMENSIONLESS,
    LENGTH,
    MASS,
    SI_CONSTANTS,
    TEMPERATURE,
    TIME,
    Dimension,
    DimensionUnknown,
    check_claim_dimensions,
    constant_dimensions,
    constant_names,
    constant_values,
    conversion_factor,
    dimension_of,
    infer_dimensions,
    observable_dimensions,
    to_claim_units,
)

M, Q, r, H, L, l, mu, a, b, q, x = sympy.symbols("M Q r H L l mu a b q x", positive=True)
hbar, c, G, k_B, eps0 = sympy.symbols("hbar c G k_B epsilon_0", positive=True)
SOLAR_MASS = 1.98847e30  # kg; IAU 2015 B3 nominal (GM)_sun / G (from memory)


def rel(x: float, y: float) -> float:
    return abs(x - y) / abs(y)


# Source: CODATA 2018 via scipy.constants (scipy >= 1.15 carries CODATA 2022, whose
# epsilon_0 = 8.8541878188e-12 is within 1e-9 of the 2018 value; G is unchanged).
@pytest.mark.parametrize(
    "name, reference",
    [("hbar", sc.hbar), ("h", sc.h), ("c", sc.c), ("G", sc.G), ("k_B", sc.k), ("e", sc.e),
     ("epsilon_0", sc.epsilon_0)],
)
def test_si_constants_match_scipy(name: str, reference: float) -> None:
    assert rel(float(SI_CONSTANTS[name]), reference) < 1e-9


def test_measured_constants_have_the_codata_2018_digits() -> None:
    # Source: CODATA 2018 recommended values (Tiesinga et al., RMP 93, 025010 (2021)), from memory.
    assert SI_CONSTANTS["G"] == sympy.Rational(667430, 10**16)
    assert SI_CONSTANTS["epsilon_0"] == sympy.Rational(88541878128, 10**22)
    # Source: 2019 SI definition of the second, metre, kilogram, ampere, kelvin (exact values).
    assert SI_CONSTANTS["c"] == 299792458
    assert SI_CONSTANTS["h"] == sympy.Rational(662607015, 10**42)
    assert SI_CONSTANTS["k_B"] == sympy.Rational(1380649, 10**29)
    assert SI_CONSTANTS["e"] == sympy.Rational(1602176634, 10**28)


def test_epsilon_0_agrees_with_the_2018_fine_structure_constant() -> None:
    # Source: epsilon_0 = e^2/(2 alpha h c), alpha = 7.2973525693e-3 (CODATA 2018, from memory).
    alpha, k = sympy.Rational(72973525693, 10**13), SI_CONSTANTS
    assert abs(k["e"] ** 2 / (2 * alpha * k["h"] * k["c"]) / k["epsilon_0"] - 1) < 1e-10


def test_constant_names_and_values() -> None:
    # Source: DESIGN.md section 3 (constants a claim may use).
    assert constant_names("geometric") == frozenset()
    assert constant_names("si") == {"hbar", "c", "G", "k_B", "e", "epsilon_0"}
    assert constant_values("geometric") == {}
    assert set(constant_values("si")) == constant_names("si")
    assert constant_dimensions("geometric") == {}
    with pytest.raises(CrosscheckError):
        constant_names("cgs")  # type: ignore[arg-type]


# SI base-unit content of the derived units scipy uses for the constants.
# Source: SI Brochure, 9th edition (2019), table 4 (from memory).
_UNIT_TABLE = {"m": LENGTH, "kg": MASS, "s": TIME, "K": TEMPERATURE, "J": MASS * LENGTH**2 / TIME**2,
               "C": Dimension(I=1, T=1), "F": Dimension(I=2, T=4, M=-1, L=-2)}


def _parse_unit(text: str) -> Dimension:
    """Dimension of a unit string such as 'm^3 kg^-1 s^-2'."""
    result = DIMENSIONLESS
    for token in text.split():
        match = re.fullmatch(r"([A-Za-z]+)(?:\^(-?\d+))?", token)
        assert match, token
        result = result * _UNIT_TABLE[match.group(1)] ** int(match.group(2) or 1)
    return result


@pytest.mark.parametrize(
    "name, codata_name",
    [("hbar", "reduced Planck constant"), ("c", "speed of light in vacuum"),
     ("G", "Newtonian constant of gravitation"), ("k_B", "Boltzmann constant"),
     ("e", "elementary charge"), ("epsilon_0", "vacuum electric permittivity")],
)
def test_constant_dimensions_match_scipy_units(name: str, codata_name: str) -> None:
    # Source: unit strings of scipy.constants.physical_constants (CODATA).
    unit = sc.physical_constants[codata_name][1]
    assert constant_dimensions("si")[name] == _parse_unit(unit)
    if name == "G":  # no derived unit in it: describe() must print the same string
        assert constant_dimensions("si")[name].describe("si") == unit


def test_hawking_temperature_of_a_solar_mass_hole() -> None:
    # Route form: T = kappa_geo/(2 pi) = 1/(8 pi r_g), r_g = G M/c^2 (Hawking 1975).
    t_geo = mpmath.mpf(sc.c) ** 2 / (8 * mpmath.pi * sc.G * SOLAR_MASS)
    kelvin = float(to_claim_units("T", t_geo, "si"))
    # Source: hbar c^3/(8 pi G M k_B) with CODATA via scipy.constants.
    expected = sc.hbar * sc.c**3 / (8 * math.pi * sc.G * SOLAR_MASS * sc.k)
    assert rel(kelvin, expected) < 1e-9
    # Source: textbook value ~6.17e-8 K for one solar mass (Hawking 1975), from memory.
    assert rel(kelvin, 6.17e-8) < 0.01
    # The same through the exact sympy path.
    mass, cc, gg = (sympy.Rational(v) for v in (SOLAR_MASS, sc.c, sc.G))
    value = to_claim_units("T", cc**2 / (8 * sympy.pi * gg * mass), "si")
    assert value.free_symbols == set() and rel(float(value), expected) < 1e-9


def test_unruh_temperature_per_unit_acceleration() -> None:
    a_geo = mpmath.mpf(1) / mpmath.mpf(sc.c) ** 2  # 1 m/s^2 as an inverse length
    kelvin = float(to_claim_units("T", a_geo / (2 * mpmath.pi), "si"))
    # Source: Unruh 1976, T = hbar a/(2 pi c k_B); constants via scipy.constants.
    assert rel(kelvin, sc.hbar / (2 * math.pi * sc.c * sc.k)) < 1e-9
    # Source: ~4.05e-21 K per m/s^2 (common textbook value, from memory).
    assert rel(kelvin, 4.05e-21) < 0.01


def test_entropy_of_a_solar_mass_hole() -> None:
    r_s = 2 * sc.G * SOLAR_MASS / sc.c**2
    area = 4 * math.pi * r_s**2
    joule_per_kelvin = float(to_claim_units("S", mpmath.mpf(area) / 4, "si"))
    # Source: S = k_B c^3 A/(4 G hbar) (Bekenstein-Hawking) via scipy.constants.
    assert rel(joule_per_kelvin, sc.k * sc.c**3 * area / (4 * sc.G * sc.hbar)) < 1e-9
    # Source: ~1.45e54 J/K for one solar mass (from memory).
    assert rel(joule_per_kelvin, 1.45e54) < 0.01


def test_surface_gravity_of_a_solar_mass_hole() -> None:
    kappa_geo = mpmath.mpf(sc.c) ** 2 / (4 * sc.G * SOLAR_MASS)  # 1/(4 r_g)
    value = float(to_claim_units("kappa", kappa_geo, "si"))
    # Source: kappa = c^4/(4 G M), computed with scipy.constants (~1.52e13 m/s^2).
    assert rel(value, sc.c**4 / (4 * sc.G * SOLAR_MASS)) < 1e-9
    assert rel(value, 1.52e13) < 0.01


def test_angular_velocity_conversion() -> None:
    # Source: common practice: with x0 = c t, dphi/dt = c dphi/dx0 (circle at speed c/2).
    assert to_claim_units("Omega", sympy.Rational(1, 2) / 7, "si") == sympy.Rational(299792458, 14)


def test_local_acceleration_has_the_newtonian_limit() -> None:
    m_geo = sc.G * SOLAR_MASS / sc.c**2
    m = sympy.Float(m_geo, 30)
    a_geo = sympy.Lambda(r, m / (r**2 * sympy.sqrt(1 - 2 * m / r)))
    a_si = to_claim_units("a_loc", a_geo, "si")
    radius = 1.496e11  # one astronomical unit, m (from memory)
    # Source: Newton's law a = G M/r^2 (scipy.constants G); GR correction ~1e-8 here.
    assert rel(float(a_si(radius)), sc.G * SOLAR_MASS / radius**2) < 1e-7


def test_measured_values_keep_their_error() -> None:
    with mpmath.workdps(30):
        converted = to_claim_units("kappa", Measured(mpmath.mpf(2), mpmath.mpf("1e-10")), "si")
        c2 = mpmath.mpf(sc.c) ** 2  # c is exact in SI (2019 definition)
        assert converted.value == 2 * c2 and abs(converted.error / c2 - mpmath.mpf("1e-10")) < 1e-20


def test_conversion_uses_the_working_precision() -> None:
    # Source: 2019 SI exact values of h, c, k_B written out here; mpmath at 60 digits.
    with mpmath.workdps(60):
        h, kb = mpmath.mpf("6.62607015e-34"), mpmath.mpf("1.380649e-23")
        expected = h / (2 * mpmath.pi) * 299792458 / kb
    with mpmath.workdps(40):
        assert abs(to_claim_units("T", mpmath.mpf(1), "si") / expected - 1) < mpmath.mpf(10) ** -38


def test_geometric_units_are_the_identity() -> None:
    # Source: DESIGN.md section 3 (routes compute in geometric form).
    assert to_claim_units("T", value := 1 / (8 * sympy.pi * M), "geometric") is value
    assert conversion_factor("S", "geometric", 5) == 1


def test_phi_has_no_si_conversion() -> None:
    with pytest.raises(CrosscheckError, match="Phi"):
        to_claim_units("Phi", sympy.Integer(1), "si")
    assert to_claim_units("Phi", sympy.Integer(1), "geometric") == 1
    with pytest.raises(CrosscheckError, match="unknown observable"):
        conversion_factor("Temperature", "si")


@pytest.mark.parametrize("name", ["T", "kappa", "Omega", "a_loc", "T_loc", "A", "S", "r_h"])
@pytest.mark.parametrize("dim", [4, 5])
def test_converted_values_carry_the_si_dimension(name: str, dim: int) -> None:
    # Geometric form (spacetimes/base.py, x0 = c t): 1/m for rates, m^(dim-2) for A and
    # S = A/4, m for r_h; the factors as textbook formulas in symbols (PHYSICS.md "SI units").
    geometric_form = {"A": LENGTH ** (dim - 2), "S": LENGTH ** (dim - 2), "r_h": LENGTH}
    symbolic = {"T": hbar * c / k_B, "T_loc": hbar * c / k_B, "kappa": c**2, "a_loc": c**2,
                "Omega": c, "S": k_B * c**3 / (G * hbar)}.get(name, sympy.Integer(1))
    factor_dim = dimension_of(symbolic, constant_dimensions("si"))
    exact = symbolic.subs({s: SI_CONSTANTS[s.name] for s in (hbar, c, k_B, G)})
    assert sympy.simplify(conversion_factor(name, "si", dim) - exact) == 0
    assert geometric_form.get(name, LENGTH**-1) * factor_dim == observable_dimensions("si", dim)[name]


def test_dimension_algebra() -> None:
    # Source: rules of dimensional analysis (exponents add under products), common practice.
    energy = MASS * LENGTH**2 / TIME**2
    assert energy == Dimension(L=2, M=1, T=-2)
    assert energy / energy == DIMENSIONLESS and (energy / energy).is_dimensionless()
    assert LENGTH ** Fraction(1, 2) * LENGTH ** Fraction(1, 2) == LENGTH
    assert (LENGTH**2) ** sympy.Rational(1, 2) == LENGTH
    assert Dimension(L=Fraction(2, 4)).L == Fraction(1, 2)
    assert hash(Dimension(L=1)) == hash(LENGTH)
    assert not LENGTH.is_dimensionless()


def test_describe_geometric_and_si() -> None:
    # Source: SI unit symbols (SI Brochure 2019); message wording as DESIGN.md section 5.
    assert (LENGTH**-1).describe("geometric") == "length^-1"
    assert LENGTH.describe("geometric") == "length"
    assert (LENGTH**2).describe("geometric") == "length^2"
    assert (LENGTH ** Fraction(1, 2)).describe("geometric") == "length^(1/2)"
    assert DIMENSIONLESS.describe("si") == "dimensionless"
    assert TEMPERATURE.describe("si") == "K (temperature)"
    assert (LENGTH / TIME**2).describe("si") == "m/s^2 (acceleration)"
    assert (MASS * LENGTH**2 / TIME**2 / TEMPERATURE).describe("si") == "J/K (entropy)"
    assert (LENGTH**2 * MASS / TIME**2 / TEMPERATURE**2).describe("si") == "m^2 kg s^-2 K^-2"


exponents = st.fractions(min_value=-6, max_value=6, max_denominator=4)


@given(st.tuples(*[exponents] * 5), st.tuples(*[exponents] * 5), st.integers(-3, 3))
def test_dimension_group_laws(u: tuple, v: tuple, n: int) -> None:
    # Source: exponent vectors form a group under addition (common practice).
    a_, b_ = Dimension(*u), Dimension(*v)
    assert (a_ * b_) / b_ == a_
    assert (a_**n) * (a_ ** (-n)) == DIMENSIONLESS
    assert (a_ * b_) ** n == a_**n * b_**n


@given(st.integers(-4, 4), st.integers(-4, 4), st.integers(-4, 4))
def test_dimension_of_monomials(i: int, j: int, k: int) -> None:
    # Independent computation: add the exponent vectors by hand.
    dims = {M: MASS, r: LENGTH, c: LENGTH / TIME}
    expected = Dimension(L=j + k, M=i, T=-k)
    assert dimension_of(3 * sympy.pi * M**i * r**j * c**k, dims) == expected


GEO = {M: LENGTH, Q: LENGTH, r: LENGTH, x: LENGTH}


def test_dimension_of_sums_functions_and_powers() -> None:
    # Source: rules of dimensional analysis (common practice).
    assert dimension_of(1 - 2 * M / r + Q**2 / r**2, GEO) == DIMENSIONLESS
    assert dimension_of(sympy.sqrt(M**2 - Q**2), GEO) == LENGTH
    assert dimension_of(sympy.exp(-r / M) * sympy.E * sympy.pi, GEO) == DIMENSIONLESS
    assert dimension_of(sympy.Abs(M - Q), GEO) == LENGTH
    assert dimension_of(sympy.Max(M, Q, 0), GEO) == LENGTH
    assert dimension_of((r / M) ** q, {**GEO, q: DIMENSIONLESS}) == DIMENSIONLESS
    assert dimension_of(M**0.5, GEO) == LENGTH ** Fraction(1, 2)
    with pytest.raises(DimensionError, match="length.*length\\^2"):
        dimension_of(M + M**2, GEO)
    with pytest.raises(DimensionError, match="argument of log"):
        dimension_of(sympy.log(M), GEO)
    with pytest.raises(DimensionError, match="symbolic exponent"):
        dimension_of(M**q, {**GEO, q: DIMENSIONLESS})
    with pytest.raises(DimensionError, match="exponent"):
        dimension_of(2**M, GEO)
    with pytest.raises(DimensionError):
        dimension_of(sympy.Min(M, M**2), GEO)


def test_unknown_dimensions_are_reported_as_unknown() -> None:
    with pytest.raises(DimensionUnknown, match="unknown dimension of q"):
        dimension_of(M * q, GEO)
    assert issubclass(DimensionUnknown, DimensionError)
    with pytest.raises(DimensionUnknown, match="T"):
        dimension_of(scalar_placeholder("T", [M]), GEO, {})


def test_dimension_of_calculus() -> None:
    # Source: d/dx divides by dim(x), integral dx multiplies (common practice).
    obs = observable_dimensions("geometric", 4)
    S = scalar_placeholder("S", [M])
    assert dimension_of(sympy.Derivative(S, M), GEO, obs) == LENGTH
    assert dimension_of(sympy.Derivative(S, (M, 2)), GEO, obs) == DIMENSIONLESS
    assert dimension_of(sympy.Integral(1 / x**2, (x, M, sympy.oo)), GEO) == LENGTH**-1
    assert dimension_of(sympy.Integral(x, x), GEO) == LENGTH**2
    assert dimension_of(sympy.Limit(M / x, x, 0), GEO) == DIMENSIONLESS
    with pytest.raises(DimensionError, match="limit|variable"):
        dimension_of(sympy.Limit(M / x, x, 1), GEO)
    a_loc = observable_function("a_loc")
    assert dimension_of(a_loc(2 * M), GEO, obs) == LENGTH**-1
    with pytest.raises(DimensionError, match="must have length"):
        dimension_of(a_loc(M**2), GEO, obs)


def geo_infer(F: sympy.Expr, unknowns: list, lengths: tuple = (r,)) -> dict:
    return infer_dimensions([F], list(lengths), unknowns, {}, "geometric")


def test_infer_schwarzschild_si_gives_kilograms() -> None:
    # Source: F = 1 - 2 G M/(c^2 r) (DESIGN.md section 3; textbook form).
    known = {s: constant_dimensions("si")[s.name] for s in (G, c)}  # r left to inference
    result = infer_dimensions([1 - 2 * G * M / (c**2 * r)], [r], [M, r], known, "si")
    assert result == {M: MASS, r: LENGTH}


def test_infer_reissner_nordstrom() -> None:
    # Source: RN F = 1 - 2M/r + Q^2/r^2, r_+ = M + sqrt(M^2 - Q^2) (Carroll 2004, ch. 5, from memory).
    result = geo_infer(1 - 2 * M / r + Q**2 / r**2, [M, Q], lengths=[r, M + sympy.sqrt(M**2 - Q**2)])
    assert result == {M: LENGTH, Q: LENGTH}


def test_infer_reissner_nordstrom_si_gives_coulombs() -> None:
    # Source: SI RN, F = 1 - 2GM/(c^2 r) + G Q^2/(4 pi epsilon_0 c^4 r^2) (textbook form, from memory).
    known = {s: constant_dimensions("si")[s.name] for s in (G, c, eps0)}
    F = 1 - 2 * G * M / (c**2 * r) + G * Q**2 / (4 * sympy.pi * eps0 * c**4 * r**2)
    # Source: the coulomb is A s (SI Brochure 2019, from memory).
    assert infer_dimensions([F], [r], [M, Q], known, "si") == {M: MASS, Q: Dimension(I=1, T=1)}


THETA = sympy.Symbol("theta", real=True)


@pytest.mark.parametrize("F, expected", [
    # Source: Schwarzschild F = 1 - 2M/r (Wald 1984, ch. 6, from memory).
    (1 - 2 * M / r, {M: LENGTH}),
    # Source: de Sitter 1 - H^2 r^2, Schwarzschild-AdS 1 - 2M/r + r^2/L^2 (Carroll 2004, from memory).
    (1 - H**2 * r**2, {H: LENGTH**-1}),
    (1 - 2 * M / r + r**2 / L**2, {M: LENGTH, L: LENGTH}),
    # Source: Tangherlini F = 1 - mu/r^(D-3) with D = 5 (Tangherlini 1963, from memory).
    (1 - mu / r ** (5 - 3), {mu: LENGTH**2}),
    # Source: non-rotating BTZ F = -M + r^2/l^2 (Banados-Teitelboim-Zanelli 1992, from memory).
    (-M + r**2 / l**2, {M: DIMENSIONLESS, l: LENGTH}),
    # Source: rules of dimensional analysis (common practice): exp(-r/L) needs L ~ r.
    (1 - 2 * M * sympy.exp(-r / L) / r, {M: LENGTH, L: LENGTH}),
    # Source: Kerr g_tt = -(1 - 2 M r/Sigma), Boyer-Lindquist (Wald 1984, ch. 12, from memory).
    (-(1 - 2 * M * r / (r**2 + a**2 * sympy.cos(THETA) ** 2)), {M: LENGTH, a: LENGTH}),
])
def test_infer_geometric_families(F: sympy.Expr, expected: dict) -> None:
    assert geo_infer(F, list(expected)) == expected


def test_undetermined_symbols_are_left_out() -> None:
    # F fixes only the product a*b, and q does not occur at all.
    assert geo_infer(1 - 2 * M / r + a * b / r**2, [M, a, b, q]) == {M: LENGTH}


def test_contradiction_raises() -> None:
    with pytest.raises(DimensionError, match="inconsistent"):
        geo_infer(1 - 2 * M / r + M**2 / r, [M])
    with pytest.raises(DimensionError, match="inconsistent"):
        infer_dimensions([1 + r], [r], [], {r: LENGTH}, "geometric")


GEO_OBS = observable_dimensions("geometric", 4)


def test_claim_with_a_wrong_power_of_m() -> None:
    # Source: Hawking temperature T = 1/(8 pi M) (Hawking 1975); 1/(4 pi M^2) is a wrong power.
    T = scalar_placeholder("T", [M])
    message = check_claim_dimensions(T, 1 / (4 * sympy.pi * M**2), GEO, GEO_OBS, "geometric")
    assert message == "dimension: claim has length^-2, T needs length^-1"
    assert check_claim_dimensions(T, 1 / (8 * sympy.pi * M), GEO, GEO_OBS, "geometric") is None


def test_first_law_claims() -> None:
    # Source: first law dM = T dS (Bardeen-Carter-Hawking 1973).
    S, T = scalar_placeholder("S", [M]), scalar_placeholder("T", [M])
    assert check_claim_dimensions(sympy.Derivative(S, M), 1 / T, GEO, GEO_OBS, "geometric") is None
    message = check_claim_dimensions(sympy.Derivative(S, M), T, GEO, GEO_OBS, "geometric")
    assert message == "dimension: left side has length, right side has length^-1"


def test_near_horizon_claim_and_swapped_sides() -> None:
    # Source: kappa = lim sqrt(F) a_loc at the horizon (Wald 1984, sec. 12.5, from memory).
    a_loc = observable_function("a_loc")
    kappa, r_h = scalar_placeholder("kappa", [M]), scalar_placeholder("r_h", [M])
    lhs = sympy.Limit(a_loc(r) * sympy.sqrt(1 - 2 * M / r), r, r_h)
    assert check_claim_dimensions(lhs, kappa, GEO, GEO_OBS, "geometric") is None
    message = check_claim_dimensions(M, kappa, GEO, GEO_OBS, "geometric")
    assert message == "dimension: claim has length, kappa needs length^-1"


def test_si_claims() -> None:
    # Source: T = hbar c^3/(8 pi G M k_B) (Hawking 1975, SI form); M's unit inferred from F.
    known = {s: constant_dimensions("si")[s.name] for s in (G, c)}
    dims = infer_dimensions([1 - 2 * G * M / (c**2 * r)], [r], [M], known, "si")
    T, obs = scalar_placeholder("T", [M]), observable_dimensions("si", 4)
    good = hbar * c**3 / (8 * sympy.pi * G * M * k_B)
    assert check_claim_dimensions(T, good, dims, obs, "si") is None
    message = check_claim_dimensions(T, good * k_B, dims, obs, "si")  # k_B missing
    assert message == "dimension: claim has J (energy), T needs K (temperature)"


def test_inner_inconsistency_and_unknown_symbols() -> None:
    T = scalar_placeholder("T", [M])
    message = check_claim_dimensions(T, 1 / M + 1 / M**2, GEO, GEO_OBS, "geometric")
    assert message is not None and message.startswith("dimension: the terms of")
    with pytest.raises(DimensionUnknown):
        check_claim_dimensions(T, q / M, GEO, GEO_OBS, "geometric")
