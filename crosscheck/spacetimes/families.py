"""Built-in spacetime families, with the parameter names that claims use.

The family names and their symbol names are part of the claim-format contract
(DESIGN.md section 3).  Each family builds its metric from *bindings* (symbol
name -> sympy expression: a claim parameter or a derived expression), so a
claim may bind `Q` to `q*M`.  In SI the parameters carry physical units and
are converted to geometric lengths first (M -> G M / c^2 and so on), because
routes always work in geometric form with x0 = c t (see `base.py`).

Sources are given per family; where they are recalled from memory, they say so.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass

import sympy

from crosscheck.spacetimes.base import R_COORD, T_COORD, THETA, HorizonSpec, Metric, StaticFunctions
from crosscheck.spacetimes.evaluation import as_sympy
from crosscheck.spacetimes.forms import static_metric, stationary_metric

# Exact SI constants, CODATA 2018 (NIST SP 961, 2019): c is exact in the SI;
# G and epsilon_0 are the recommended values.  crosscheck.units holds the same
# numbers for the unit layer; this private copy keeps the families independent.
_SI = {
    "c": sympy.Integer(299792458),
    "G": sympy.Rational("6.67430e-11"),
    "epsilon_0": sympy.Rational("8.8541878128e-12"),
}

# How each kind of parameter becomes a geometric length (or inverse length).
_TO_GEOMETRIC: dict[str, Callable[[sympy.Expr], sympy.Expr]] = {
    "mass": lambda m: _SI["G"] * m / _SI["c"] ** 2,  # kg -> m
    "charge": lambda q: q * sympy.sqrt(_SI["G"] / (4 * sympy.pi * _SI["epsilon_0"])) / _SI["c"] ** 2,  # C -> m
    "rate": lambda h: h / _SI["c"],  # 1/s -> 1/m
    "acceleration": lambda a: a / _SI["c"] ** 2,  # m/s^2 -> 1/m
    "length": lambda x: x,
    "curvature": lambda x: x,  # 1/length^2
    "dimensionless": lambda x: x,
    "length^(dim-3)": lambda x: x,  # the Tangherlini mass parameter
}

Built = tuple[Metric, HorizonSpec, dict[str, sympy.Expr]]
Build = Callable[[Mapping[str, sympy.Expr], Mapping[str, object], str], Built]
Optional = sympy.Expr | None


@dataclass(frozen=True)
class Family:
    """One built-in family: its contract (names, options) and how to build it."""

    name: str
    title: str
    symbols: tuple[str, ...]
    line_element: str
    default_horizon: str
    source: str
    build: Build
    options: tuple[str, ...] = ()
    kinds: tuple[tuple[str, str], ...] = ()  # (symbol, kind): what each parameter measures


def _static_functions(metric: Metric) -> dict[str, sympy.Expr]:
    s = metric.static
    functions = {"F": s.F, "G": s.G}
    if s.R is not None:
        functions["R"] = s.R
    if s.A_t is not None:
        functions["A_t"] = s.A_t
    return functions


def _dimension(options: Mapping[str, object], default: int, least: int, family: str) -> int:
    dim = options.get("dim", default)
    if not isinstance(dim, int) or isinstance(dim, bool) or dim < least:
        raise ValueError(f"{family}: option dim must be an integer >= {least}, got {dim!r}")
    return dim


def _static_family(
    name: str,
    title: str,
    symbols: dict[str, str],
    make: Callable[[dict[str, sympy.Expr], int], tuple[sympy.Expr, Optional, Optional, Optional]],
    horizon: Callable[[dict[str, sympy.Expr], int], HorizonSpec],
    *,
    line_element: str,
    default_horizon: str,
    source: str,
    dim: tuple[int, int] | None = None,
    fixed_dim: int = 4,
) -> Family:
    """A family of the form -F dt^2 + dr^2/G + R^2 dOmega^2.

    `symbols` maps each parameter name to its kind (for SI conversion);
    `make(p, dim)` returns (F, G or None, R or None, A_t or None) from the
    geometric parameters; `dim` = (default, least) when the dimension is an option.
    """

    def build(bindings, options, units):
        p = _geometric(symbols, bindings, units, name)
        d = _dimension(options, dim[0], dim[1], name) if dim else fixed_dim
        F, G, R, A_t = make(p, d)
        metric = static_metric(F, G, R, dim=d, A_t=A_t)
        return metric, horizon(p, d), _static_functions(metric)

    return Family(
        name=name,
        title=title,
        symbols=tuple(symbols),
        line_element=line_element,
        default_horizon=default_horizon,
        source=source,
        build=build,
        options=("dim",) if dim else (),
        kinds=tuple(symbols.items()),
    )


def _geometric(
    kinds: Mapping[str, str], bindings: Mapping[str, sympy.Expr], units: str, family: str
) -> dict[str, sympy.Expr]:
    """Bound parameters in geometric form (converted from SI when units == 'si')."""
    if units not in ("geometric", "si"):
        raise ValueError(f"units must be 'geometric' or 'si', got {units!r}")
    missing = [s for s in kinds if s not in bindings]
    if missing:
        raise ValueError(
            f"spacetime family '{family}' needs symbol(s) {', '.join(missing)} (bind them in parameters or where)"
        )
    values = {s: as_sympy(bindings[s]) for s in kinds}
    if units == "si":
        values = {s: _TO_GEOMETRIC[kinds[s]](v) for s, v in values.items()}
    return values


# ---------------------------------------------------------------------------
# families that are not of the round static form
# ---------------------------------------------------------------------------

_X = sympy.Symbol("x", positive=True)
_Y = sympy.Symbol("y", real=True)
_Z = sympy.Symbol("z", real=True)


def _build_rindler(bindings, options, units):
    """ds^2 = -(a x)^2 dt^2 + dx^2 + dy^2 + dz^2, horizon at x = 0.

    t is the proper time of the observer at x = 1/a, whose proper acceleration is a.
    """
    a = _geometric({"a": "acceleration"}, bindings, units, "rindler")["a"]
    F = a**2 * _X**2
    metric = Metric(
        coords=(T_COORD, _X, _Y, _Z),
        g=sympy.ImmutableMatrix(sympy.diag(-F, 1, 1, 1)),
        form="static",
        static=StaticFunctions(F=F, G=sympy.Integer(1), R=None, dim=4, r=_X),
    )
    return metric, HorizonSpec(expression=sympy.Integer(0)), {"F": F, "G": sympy.Integer(1)}


def _kerr_newman_metric(M, a, Q):
    """Boyer-Lindquist components; Q = 0 gives Kerr."""
    r = R_COORD
    sin2 = sympy.sin(THETA) ** 2
    Sigma = r**2 + a**2 * sympy.cos(THETA) ** 2
    Delta = r**2 - 2 * M * r + a**2 + Q**2
    comps = {
        "g_tt": -(Delta - a**2 * sin2) / Sigma,
        "g_tphi": -a * sin2 * (r**2 + a**2 - Delta) / Sigma,
        "g_phiphi": ((r**2 + a**2) ** 2 - Delta * a**2 * sin2) * sin2 / Sigma,
        "g_rr": Sigma / Delta,
        "g_thth": Sigma,
    }
    return comps, Delta, Sigma


def _build_kerr_like(names: dict[str, str], family: str):
    def build(bindings, options, units):
        p = _geometric(names, bindings, units, family)
        M, a, Q = p["M"], p["a"], p.get("Q", sympy.Integer(0))
        comps, Delta, Sigma = _kerr_newman_metric(M, a, Q)
        potential = {}
        if Q != 0:
            r = R_COORD
            potential = {"A_t": -Q * r / Sigma, "A_phi": Q * r * a * sympy.sin(THETA) ** 2 / Sigma}
        metric = stationary_metric(**comps, **potential)
        horizon = HorizonSpec(expression=M + sympy.sqrt(M**2 - a**2 - Q**2))
        return metric, horizon, {**comps, "Delta": Delta, "Sigma": Sigma, **potential}

    return build


def _build_minkowski(bindings, options, units):
    dim = _dimension(options, 4, 2, "minkowski")
    metric = static_metric(sympy.Integer(1), dim=dim)
    return metric, HorizonSpec(), _static_functions(metric)


# ---------------------------------------------------------------------------
# the table
# ---------------------------------------------------------------------------

_r = R_COORD


def _expr(e):
    return lambda p, d: HorizonSpec(expression=e(p, d))


_FAMILY_LIST: list[Family] = [
    Family(
        name="minkowski",
        title="Minkowski space (no horizon)",
        symbols=(),
        line_element="-dt^2 + dr^2 + r^2 dOmega_(dim-2)^2",
        default_horizon="none",
        source="any textbook, e.g. Carroll 2004, ch. 1",
        build=_build_minkowski,
        options=("dim",),
    ),
    Family(
        name="rindler",
        title="Rindler wedge of Minkowski space",
        symbols=("a",),
        line_element="-(a x)^2 dt^2 + dx^2 + dy^2 + dz^2, x > 0",
        default_horizon="x = 0 (acceleration horizon); t is the proper time at x = 1/a",
        source="Rindler 1966; Wald 1984, sec. 6.4 (from memory)",
        build=_build_rindler,
        kinds=(("a", "acceleration"),),
    ),
    _static_family(
        "schwarzschild",
        "Schwarzschild black hole",
        {"M": "mass"},
        lambda p, d: (1 - 2 * p["M"] / _r, None, None, None),
        _expr(lambda p, d: 2 * p["M"]),
        line_element="-(1 - 2M/r) dt^2 + dr^2/(1 - 2M/r) + r^2 dOmega_2^2",
        default_horizon="r = 2M (event horizon)",
        source="Wald 1984, eq. 6.1.44 (from memory)",
    ),
    _static_family(
        "reissner-nordstrom",
        "Reissner-Nordstrom charged black hole",
        {"M": "mass", "Q": "charge"},
        lambda p, d: (1 - 2 * p["M"] / _r + p["Q"] ** 2 / _r**2, None, None, -p["Q"] / _r),
        _expr(lambda p, d: p["M"] + sympy.sqrt(p["M"] ** 2 - p["Q"] ** 2)),
        line_element="-(1 - 2M/r + Q^2/r^2) dt^2 + dr^2/(1 - 2M/r + Q^2/r^2) + r^2 dOmega_2^2, A = -Q/r dt",
        default_horizon="r_+ = M + sqrt(M^2 - Q^2) (outer horizon)",
        source="Wald 1984, eq. 12.3.1; Carroll 2004, eq. 5.75 (from memory)",
    ),
    Family(
        name="kerr",
        title="Kerr rotating black hole (Boyer-Lindquist)",
        symbols=("M", "a"),
        line_element=(
            "-(1 - 2Mr/Sigma) dt^2 - (4 M a r sin^2(theta)/Sigma) dt dphi + (Sigma/Delta) dr^2 + Sigma dtheta^2"
            " + (r^2 + a^2 + 2 M a^2 r sin^2(theta)/Sigma) sin^2(theta) dphi^2;"
            " Sigma = r^2 + a^2 cos^2(theta), Delta = r^2 - 2Mr + a^2"
        ),
        default_horizon="r_+ = M + sqrt(M^2 - a^2)",
        source="Carroll 2004, eq. 6.70; Wald 1984, eq. 12.3.1 (from memory)",
        build=_build_kerr_like({"M": "mass", "a": "length"}, "kerr"),
        kinds=(("M", "mass"), ("a", "length")),
    ),
    Family(
        name="kerr-newman",
        title="Kerr-Newman charged rotating black hole (Boyer-Lindquist)",
        symbols=("M", "a", "Q"),
        line_element=(
            "-((Delta - a^2 sin^2 theta)/Sigma) dt^2 - (2 a sin^2(theta) (r^2 + a^2 - Delta)/Sigma) dt dphi"
            " + (((r^2 + a^2)^2 - Delta a^2 sin^2 theta)/Sigma) sin^2(theta) dphi^2"
            " + (Sigma/Delta) dr^2 + Sigma dtheta^2;"
            " Delta = r^2 - 2Mr + a^2 + Q^2, A = -(Q r/Sigma)(dt - a sin^2(theta) dphi)"
        ),
        default_horizon="r_+ = M + sqrt(M^2 - a^2 - Q^2)",
        source="Misner, Thorne & Wheeler 1973, sec. 33.2, eq. 33.2 (from memory)",
        build=_build_kerr_like({"M": "mass", "a": "length", "Q": "charge"}, "kerr-newman"),
        kinds=(("M", "mass"), ("a", "length"), ("Q", "charge")),
    ),
    _static_family(
        "de-sitter",
        "de Sitter space, static patch",
        {"H": "rate"},
        lambda p, d: (1 - p["H"] ** 2 * _r**2, None, None, None),
        _expr(lambda p, d: 1 / p["H"]),
        line_element="-(1 - H^2 r^2) dt^2 + dr^2/(1 - H^2 r^2) + r^2 dOmega_2^2",
        default_horizon="r = 1/H (cosmological horizon)",
        source="Gibbons & Hawking, Phys. Rev. D 15, 2738 (1977) (from memory)",
    ),
    _static_family(
        "schwarzschild-de-sitter",
        "Schwarzschild-de Sitter (Kottler) black hole",
        {"M": "mass", "Lambda": "curvature"},
        lambda p, d: (1 - 2 * p["M"] / _r - p["Lambda"] * _r**2 / 3, None, None, None),
        lambda p, d: HorizonSpec(root="smallest"),
        line_element="-(1 - 2M/r - Lambda r^2/3) dt^2 + dr^2/(1 - 2M/r - Lambda r^2/3) + r^2 dOmega_2^2",
        default_horizon="smallest positive root of F (black-hole horizon); the largest is the cosmological one",
        source="Gibbons & Hawking, Phys. Rev. D 15, 2738 (1977) (from memory)",
    ),
    _static_family(
        "schwarzschild-anti-de-sitter",
        "Schwarzschild-anti-de Sitter black hole",
        {"M": "mass", "L": "length"},
        lambda p, d: (1 - 2 * p["M"] / _r + _r**2 / p["L"] ** 2, None, None, None),
        lambda p, d: HorizonSpec(root="largest"),
        line_element="-(1 - 2M/r + r^2/L^2) dt^2 + dr^2/(1 - 2M/r + r^2/L^2) + r^2 dOmega_2^2",
        default_horizon="largest (only) positive root of F",
        source="Hawking & Page, Commun. Math. Phys. 87, 577 (1983) (from memory)",
    ),
    _static_family(
        "btz",
        "BTZ black hole, non-rotating (2+1 dimensions)",
        {"M": "dimensionless", "l": "length"},
        lambda p, d: (-p["M"] + _r**2 / p["l"] ** 2, None, None, None),
        _expr(lambda p, d: p["l"] * sympy.sqrt(p["M"])),
        line_element="-(-M + r^2/l^2) dt^2 + dr^2/(-M + r^2/l^2) + r^2 dphi^2",
        default_horizon="r = l sqrt(M)",
        source="Banados, Teitelboim & Zanelli, Phys. Rev. Lett. 69, 1849 (1992) (from memory)",
        fixed_dim=3,
    ),
    _static_family(
        "tangherlini",
        "Schwarzschild-Tangherlini black hole in dim dimensions",
        {"mu": "length^(dim-3)"},
        lambda p, d: (1 - p["mu"] / _r ** (d - 3), None, None, None),
        _expr(lambda p, d: p["mu"] ** sympy.Rational(1, d - 3)),
        line_element="-(1 - mu/r^(dim-3)) dt^2 + dr^2/(1 - mu/r^(dim-3)) + r^2 dOmega_(dim-2)^2",
        default_horizon="r = mu^(1/(dim-3))",
        source="Tangherlini, Nuovo Cimento 27, 636 (1963) (from memory)",
        dim=(5, 4),
    ),
    _static_family(
        "charged-dilaton",
        "Charged dilaton black hole, Einstein frame, unit coupling",
        {"M": "mass", "Q": "charge"},
        lambda p, d: (1 - 2 * p["M"] / _r, None, sympy.sqrt(_r * (_r - p["Q"] ** 2 / p["M"])), -p["Q"] / _r),
        _expr(lambda p, d: 2 * p["M"]),
        line_element=(
            "-(1 - 2M/r) dt^2 + dr^2/(1 - 2M/r) + r (r - Q^2/M) dOmega_2^2, A = -Q/r dt, exp(2 phi) = 1 - Q^2/(M r)"
        ),
        default_horizon="r = 2M (areal radius sqrt(2M (2M - Q^2/M)))",
        source=(
            "Garfinkle, Horowitz & Strominger, Phys. Rev. D 43, 3140 (1991) (magnetic form; electric dual, from memory)"
        ),
    ),
]

FAMILIES: dict[str, Family] = {f.name: f for f in _FAMILY_LIST}


def family(name: str) -> Family:
    """The family called `name`; ValueError with the known names (and a guess) otherwise."""
    key = str(name).strip().lower().replace("_", "-")
    if key in FAMILIES:
        return FAMILIES[key]
    guess = difflib.get_close_matches(key, list(FAMILIES), n=1)
    hint = f" (did you mean '{guess[0]}'?)" if guess else ""
    raise ValueError(f"unknown spacetime family '{name}'{hint}; known: {', '.join(sorted(FAMILIES))}")


def missing_symbols(name: str, available: Iterable[str]) -> list[str]:
    """Symbols the family needs that are not among `available` (in the family's order)."""
    have = set(available)
    return [s for s in family(name).symbols if s not in have]


def build_spacetime(
    name: str, bindings: Mapping[str, sympy.Expr], options: Mapping[str, object] | None = None, units: str = "geometric"
) -> tuple[Metric, HorizonSpec, dict[str, sympy.Expr]]:
    """(metric, default horizon, functions for claims) of a built-in family.

    Unknown options are an error; extra bindings are ignored (a claim has
    parameters that the metric does not use).
    """
    fam = family(name)
    options = dict(options or {})
    unknown = sorted(set(options) - set(fam.options))
    if unknown:
        allowed = ", ".join(fam.options) or "none"
        raise ValueError(f"spacetime family '{fam.name}': unknown option(s) {', '.join(unknown)}; allowed: {allowed}")
    missing = missing_symbols(fam.name, bindings)
    if missing:
        raise ValueError(
            f"spacetime family '{fam.name}' needs symbol(s) {', '.join(missing)} (bind them in parameters or where)"
        )
    return fam.build(bindings, options, units)
