"""Reading the `spacetime:` and `detector:` sections of a claim file.

Turns the four spacetime forms (`name:` family, `static:`, `stationary:`,
`metric:`) into a `Spacetime`, and returns the names that the claim line may
use to refer to the metric (F, G, R, g_tt, ... and the radial coordinate).
"""

from __future__ import annotations

from collections.abc import Mapping

import sympy

from crosscheck import fields
from crosscheck.claim import Detector
from crosscheck.expr import is_valid_name
from crosscheck.spacetimes import (
    build_spacetime,
    family,
    line_element_metric,
    missing_symbols,
    static_metric,
    stationary_metric,
)
from crosscheck.spacetimes.base import (
    PHI,
    R_COORD,
    T_COORD,
    THETA,
    HorizonSpec,
    Metric,
    Normalization,
    Spacetime,
)
from crosscheck.yamlnodes import YMap, YNode, YScalar

FORMS = ("name", "static", "stationary", "metric")
SPACETIME_KEYS = frozenset(FORMS) | {"horizon", "normalize", "dim"}
STATIC_KEYS = frozenset({"F", "G", "R", "dim", "A_t"})
STATIONARY_KEYS = frozenset({"g_tt", "g_tphi", "g_phiphi", "g_rr", "g_thth", "A_t", "A_phi"})
METRIC_KEYS = frozenset({"coordinates", "line_element"})
DETECTOR_KEYS = frozenset(
    {"trajectory", "acceleration", "radius", "angular_velocity", "velocity", "from", "field", "coupling"}
)
TRAJECTORY_ARGUMENTS = {
    "uniform-acceleration": ("acceleration",),
    "circular": ("radius", "angular_velocity"),
    "inertial": ("velocity",),
    "static": ("radius",),
    "infall": ("from",),
}
# Optional trajectory parameters: uniform acceleration with a transverse drift velocity.
TRAJECTORY_OPTIONAL = {"uniform-acceleration": ("velocity",)}


def read_spacetime(
    node: YNode, names: Mapping[str, sympy.Basic], units: str
) -> tuple[Spacetime, dict[str, sympy.Basic]]:
    """The Spacetime and the extra names (metric functions, coordinates) claims may use."""
    section = fields.expect_map(node, "spacetime")
    fields.check_keys(section, "spacetime", SPACETIME_KEYS)
    given = [form for form in FORMS if form in section.items]
    if len(given) != 1:
        raise section.loc.error(
            "spacetime", f"give exactly one of {', '.join(FORMS)} (found {', '.join(given) or 'none'})"
        )
    form = given[0]
    if "dim" in section.items and form != "name":
        raise section.key_loc("dim").error("spacetime.dim", f"'dim' belongs inside spacetime.{form}")
    reader = {"name": _family, "static": _static, "stationary": _stationary, "metric": _line_element}[form]
    metric, default_horizon, functions, family_name = reader(section, names, units)
    horizon = _horizon(section, names, default_horizon)
    normalization = _normalization(section, names, metric)
    spacetime = Spacetime(metric, horizon, normalization, family_name, dict(functions))
    claim_names: dict[str, sympy.Basic] = {str(metric.radial): metric.radial}
    claim_names.update({k: v for k, v in functions.items() if k not in names})
    return spacetime, claim_names


def _family(section: YMap, names, units):
    name_node = section.items["name"]
    text = fields.text_of(name_node, "spacetime.name")
    try:
        fam = family(text)
    except ValueError as exc:
        raise name_node.loc.error("spacetime.name", str(exc)) from None
    options: dict[str, object] = {}
    if "dim" in section.items:
        if "dim" not in fam.options:
            raise section.key_loc("dim").error("spacetime.dim", f"family '{fam.name}' has no option 'dim'")
        options["dim"] = fields.integer(section.items["dim"], "spacetime.dim", 2, 11)
    missing = missing_symbols(fam.name, names)
    if missing:
        raise name_node.loc.error(
            "spacetime.name",
            f"family '{fam.name}' needs {', '.join(missing)}; declare them under parameters or where",
        )
    bindings = {symbol: names[symbol] for symbol in fam.symbols}
    try:
        metric, horizon, functions = build_spacetime(fam.name, bindings, options, units)
    except ValueError as exc:
        raise name_node.loc.error("spacetime.name", str(exc)) from None
    return metric, horizon, functions, fam.name


def _static(section: YMap, names, units):
    body = fields.expect_map(section.items["static"], "spacetime.static")
    fields.check_keys(body, "spacetime.static", STATIC_KEYS, required=("F",))
    local = dict(names)
    local.setdefault("r", R_COORD)

    def read(key: str) -> sympy.Expr:
        return fields.expression(body.items[key], f"spacetime.static.{key}", local)

    F = read("F")
    local.setdefault("F", F)
    G = read("G") if "G" in body.items else F
    local.setdefault("G", G)
    R = read("R") if "R" in body.items else R_COORD
    dim = fields.integer(body.items["dim"], "spacetime.static.dim", 2, 11) if "dim" in body.items else 4
    A_t = read("A_t") if "A_t" in body.items else None
    _check_coordinates(body, "spacetime.static", {"F": F, "G": G, "R": R}, {R_COORD})
    metric = static_metric(F, G, R, dim=dim, A_t=A_t)
    return metric, HorizonSpec(root="largest"), {"F": F, "G": G, "R": R}, None


def _stationary(section: YMap, names, units):
    body = fields.expect_map(section.items["stationary"], "spacetime.stationary")
    required = ("g_tt", "g_phiphi", "g_rr", "g_thth")
    fields.check_keys(body, "spacetime.stationary", STATIONARY_KEYS, required=required)
    local = dict(names)
    local.update({"r": R_COORD, "theta": THETA})
    comps = {
        key: fields.expression(body.items[key], f"spacetime.stationary.{key}", local)
        for key in STATIONARY_KEYS
        if key in body.items
    }
    comps.setdefault("g_tphi", sympy.Integer(0))
    _check_coordinates(body, "spacetime.stationary", comps, {R_COORD, THETA})
    metric = stationary_metric(
        comps["g_tt"], comps["g_tphi"], comps["g_phiphi"], comps["g_rr"], comps["g_thth"],
        A_t=comps.get("A_t"), A_phi=comps.get("A_phi"),
    )
    functions = {k: v for k, v in comps.items() if k.startswith("g_")}
    return metric, HorizonSpec(root="largest"), functions, None


def _line_element(section: YMap, names, units):
    body = fields.expect_map(section.items["metric"], "spacetime.metric")
    fields.check_keys(body, "spacetime.metric", METRIC_KEYS, required=tuple(METRIC_KEYS))
    coord_node = body.items["coordinates"]
    coord_names = fields.string_list(coord_node, "spacetime.metric.coordinates")
    if not 2 <= len(coord_names) <= 11 or len(set(coord_names)) != len(coord_names):
        raise coord_node.loc.error("spacetime.metric.coordinates", "expected 2 to 11 distinct coordinate names")
    coords = []
    for position, text in enumerate(coord_names):
        if not is_valid_name(text) or text in names:
            raise coord_node.loc.error("spacetime.metric.coordinates", f"'{text}' cannot be a coordinate name")
        coords.append(_coordinate_symbol(text, position))
    differentials = {c: sympy.Symbol(f"d{c}", real=True) for c in coords}
    local = dict(names)
    local.update({str(c): c for c in coords})
    local.update({str(d): d for d in differentials.values()})
    ds2 = fields.expression(body.items["line_element"], "spacetime.metric.line_element", local)
    try:
        metric = line_element_metric(coords, ds2, differentials)
    except ValueError as exc:
        raise body.items["line_element"].loc.error("spacetime.metric.line_element", str(exc)) from None
    return metric, HorizonSpec(root="largest"), _metric_functions(metric), None


def _coordinate_symbol(text: str, position: int) -> sympy.Symbol:
    """Standard symbols for the usual names so that families and forms agree."""
    standard = {"t": T_COORD, "r": R_COORD, "theta": THETA, "phi": PHI}
    if position == 1:
        return R_COORD if text == "r" else sympy.Symbol(text, positive=True)
    if text in standard:
        return standard[text]
    return sympy.Symbol(text, real=True)


def _metric_functions(metric: Metric) -> dict[str, sympy.Expr]:
    functions: dict[str, sympy.Expr] = {}
    if metric.static is not None:
        functions["F"] = metric.static.F
        functions["G"] = metric.static.G
        if metric.static.R is not None:
            functions["R"] = metric.static.R
    return functions


def _check_coordinates(body: YMap, field: str, comps: Mapping[str, sympy.Expr], allowed: set) -> None:
    """The metric functions of the static and stationary forms depend on r (and theta) only."""
    for key, value in comps.items():
        if value is None:
            continue
        extra = {s for s in value.free_symbols if s.name in ("t", "phi") and s not in allowed}
        if extra:
            node = body.items.get(key, body)
            raise node.loc.error(f"{field}.{key}", f"must not depend on {', '.join(sorted(map(str, extra)))}")


def _horizon(section: YMap, names, default: HorizonSpec) -> HorizonSpec:
    if "horizon" not in section.items:
        return default
    node = section.items["horizon"]
    if isinstance(node, YScalar):
        return HorizonSpec(expression=fields.expression(node, "spacetime.horizon", names))
    body = fields.expect_map(node, "spacetime.horizon")
    fields.check_keys(body, "spacetime.horizon", {"root", "bracket"}, required=("root",))
    root_node = body.items["root"]
    root_text = fields.text_of(root_node, "spacetime.horizon.root")
    root: str | int
    if root_text in ("largest", "smallest"):
        root = root_text
    else:
        root = fields.integer(root_node, "spacetime.horizon.root", 1, 20)
    bracket = None
    if "bracket" in body.items:
        bracket = fields.pair(
            body.items["bracket"], "spacetime.horizon.bracket",
            lambda n, f: fields.expression(n, f, names),
        )
    return HorizonSpec(root=root, bracket=bracket)


def _normalization(section: YMap, names, metric: Metric) -> Normalization:
    if "normalize" not in section.items:
        return Normalization()
    node = section.items["normalize"]
    if isinstance(node, YScalar):
        kind = fields.choice(node, "spacetime.normalize", ("as-written", "geodesic"))
        if kind == "geodesic" and metric.static is None:
            raise node.loc.error("spacetime.normalize", "geodesic normalisation needs a static metric")
        return Normalization(kind)  # type: ignore[arg-type]
    body = fields.expect_map(node, "spacetime.normalize")
    fields.check_keys(body, "spacetime.normalize", {"radius"}, required=("radius",))
    radius = fields.expression(body.items["radius"], "spacetime.normalize.radius", names)
    return Normalization("radius", radius)


def read_detector(node: YNode, names: Mapping[str, sympy.Basic], band: YNode | None = None) -> Detector:
    """The detector worldline.  The claim's `band:` (gap over the natural scale), when
    given, travels with it as arguments band_low/band_high so that routes see it."""
    body = fields.expect_map(node, "detector")
    fields.check_keys(body, "detector", DETECTOR_KEYS, required=("trajectory",))
    trajectory = fields.choice(body.items["trajectory"], "detector.trajectory", TRAJECTORY_ARGUMENTS)
    required = TRAJECTORY_ARGUMENTS[trajectory]
    expected = required + TRAJECTORY_OPTIONAL.get(trajectory, ())
    arguments: dict[str, sympy.Expr] = {}
    for key in DETECTOR_KEYS - {"trajectory", "field", "coupling"}:
        if key not in body.items:
            continue
        if key not in expected:
            raise body.key_loc(key).error(
                f"detector.{key}", f"not a parameter of '{trajectory}' (expected {', '.join(expected)})"
            )
        if key == "from":
            arguments[key] = sympy.Symbol(fields.choice(body.items[key], "detector.from", ("rest-at-infinity",)))
            continue
        arguments[key] = fields.expression(body.items[key], f"detector.{key}", names)
    for key in required:
        if key not in arguments and key != "from":
            raise body.loc.error("detector", f"trajectory '{trajectory}' needs '{key}'")
    if band is not None:
        low, high = fields.pair(band, "band", fields.number)
        if not 0 < low < high:
            raise band.loc.error("band", f"expected [lo, hi] with 0 < lo < hi, got [{low}, {high}]")
        arguments["band_low"], arguments["band_high"] = low, high
    field_name = (
        fields.choice(body.items["field"], "detector.field", ("massless-scalar",)) if "field" in body.items else "massless-scalar"
    )
    coupling = (
        fields.choice(body.items["coupling"], "detector.coupling", ("monopole", "derivative"))
        if "coupling" in body.items
        else "monopole"
    )
    return Detector(trajectory, arguments, coupling, field_name)  # type: ignore[arg-type]
