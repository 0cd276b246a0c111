"""Claim files: YAML in, validated `Claim` objects out (DESIGN.md section 3).

The loader knows nothing of routes beyond an optional list of valid route
names.  A file that cannot be read becomes a `ClaimError` with its position;
`load_paths` collects those per file so one bad file never hides the others.
"""

from __future__ import annotations

import os
import re
from collections.abc import Collection, Iterable
from dataclasses import dataclass

import sympy

from crosscheck import fields
from crosscheck.claim import Claim, Parameter
from crosscheck.claimspacetime import read_detector, read_spacetime
from crosscheck.errors import ClaimError, ExprError
from crosscheck.expr import CONSTANT_NAMES, FUNCTION_NAMES, is_valid_name, parse_equation
from crosscheck.observables import (
    ALL_OBSERVABLES,
    FUNCTION_OBSERVABLES,
    SCALAR_OBSERVABLES,
    mentioned_observables,
    observable_function,
    scalar_placeholder,
)
from crosscheck.units import constant_values
from crosscheck.yamlnodes import YMap, YNode, load_file, load_text

CLAIM_KEYS = frozenset(
    {
        "id", "title", "units", "spacetime", "detector", "parameters", "where", "claim", "routes",
        "agreement", "tolerance", "sources", "notes", "spectrum", "band",
    }
)
ID_PATTERN = re.compile(r"^[a-z0-9][a-z0-9\-/]{0,119}$")
RESERVED_NAMES = (
    ALL_OBSERVABLES | FUNCTION_NAMES | CONSTANT_NAMES
    | {"t", "r", "theta", "phi", "F", "G", "R", "oo", "I", "Sigma", "Delta"}
)
MAX_CLAIMS_PER_FILE = 200
MAX_PARAMETERS = 12


@dataclass(frozen=True)
class LoadResult:
    """Claims read from some paths, and the errors met (one per bad claim or file)."""

    claims: tuple[Claim, ...]
    errors: tuple[ClaimError, ...]


def load_paths(paths: Iterable[str], known_routes: Collection[str] | None = None) -> LoadResult:
    """Load every `*.yaml`/`*.yml` file below the given files and directories, sorted."""
    claims: list[Claim] = []
    errors: list[ClaimError] = []
    for path in _claim_files(paths, errors):
        file_claims, file_errors = load_claim_file(path, known_routes)
        claims.extend(file_claims)
        errors.extend(file_errors)
    _check_unique_ids(claims, errors)
    return LoadResult(tuple(claims), tuple(errors))


def _claim_files(paths: Iterable[str], errors: list[ClaimError]) -> list[str]:
    found: list[str] = []
    for path in paths:
        if os.path.isdir(path):
            for root, dirs, files in os.walk(path):
                dirs[:] = sorted(d for d in dirs if not d.startswith("."))
                found.extend(os.path.join(root, f) for f in sorted(files) if f.endswith((".yaml", ".yml")))
        elif os.path.isfile(path):
            found.append(path)
        else:
            errors.append(ClaimError(path, 1, 1, "", "no such file or directory"))
    return found


def _check_unique_ids(claims: list[Claim], errors: list[ClaimError]) -> None:
    seen: dict[str, Claim] = {}
    for claim in list(claims):
        if claim.id in seen:
            first = seen[claim.id]
            errors.append(
                ClaimError(claim.path, claim.line, 1, "id", f"duplicate id '{claim.id}' (also {first.path}:{first.line})")
            )
            claims.remove(claim)
        else:
            seen[claim.id] = claim


def load_claim_file(path: str, known_routes: Collection[str] | None = None) -> tuple[list[Claim], list[ClaimError]]:
    """All claims of one file; each bad claim gives one error, the good ones still load."""
    try:
        root = load_file(path)
    except ClaimError as exc:
        return [], [exc]
    return claims_from_node(root, path, known_routes)


def load_claim_text(text: str, path: str = "<text>", known_routes: Collection[str] | None = None) -> tuple[list[Claim], list[ClaimError]]:
    """Same as `load_claim_file` for YAML text (used by tests and `crosscheck check`)."""
    try:
        root = load_text(text, path)
    except ClaimError as exc:
        return [], [exc]
    return claims_from_node(root, path, known_routes)


def claims_from_node(root: YNode | None, path: str, known_routes: Collection[str] | None) -> tuple[list[Claim], list[ClaimError]]:
    if root is None:
        return [], [ClaimError(path, 1, 1, "", "file is empty")]
    try:
        top = fields.expect_map(root, "")
        if "claims" in top.items:
            fields.check_keys(top, "", {"claims"})
            entries = fields.expect_seq(top.items["claims"], "claims").items
            if len(entries) > MAX_CLAIMS_PER_FILE:
                raise top.loc.error("claims", f"more than {MAX_CLAIMS_PER_FILE} claims in one file")
        else:
            entries = (top,)
    except ClaimError as exc:
        return [], [exc]
    claims: list[Claim] = []
    errors: list[ClaimError] = []
    for entry in entries:
        try:
            claims.append(read_claim(entry, known_routes))
        except ClaimError as exc:
            errors.append(exc)
    return claims, errors


def read_claim(node: YNode, known_routes: Collection[str] | None = None) -> Claim:
    """Validate one claim mapping and build the Claim."""
    body = fields.expect_map(node, "claim")
    fields.check_keys(body, "", CLAIM_KEYS, required=("id",))
    claim_id = _read_id(body)
    units = fields.choice(body.items["units"], "units", ("geometric", "si")) if "units" in body.items else "geometric"
    if "claim" not in body.items and "spectrum" not in body.items:
        raise body.loc.error("claim", "missing required key 'claim' (or 'spectrum' for a detector claim)")
    if "spacetime" not in body.items and "detector" not in body.items:
        raise body.loc.error("spacetime", "missing required key 'spacetime' (or 'detector')")
    parameters = _read_parameters(body)
    names: dict[str, sympy.Basic] = dict(constant_values(units))
    names.update({p.name: p.symbol for p in parameters})
    # In SI a second namespace keeps the constants as symbols, for the dimension check.
    symbolic_names: dict[str, sympy.Basic] = {n: sympy.Symbol(n, positive=True) for n in constant_values(units)}
    symbolic_names.update({p.name: p.symbol for p in parameters})
    derived = _read_where(body, names)
    if units == "si":
        _read_where(body, symbolic_names)
    spacetime, metric_names = None, {}
    if "spacetime" in body.items:
        spacetime, metric_names = read_spacetime(body.items["spacetime"], names, units)
    if units == "si" and "detector" in body.items:
        # The routes read trajectory parameters in geometric units (a in 1/length); an
        # acceleration in m/s^2 taken as such would be off by c^2 without any error.
        raise body.key_loc("detector").error(
            "detector", "detector claims are read in geometric units only: write the trajectory with "
            "units: geometric (a in 1/length), or state an SI temperature as a horizon claim (e.g. the rindler family)"
        )
    detector = read_detector(body.items["detector"], names, body.items.get("band")) if "detector" in body.items else None
    lhs, rhs, text, observables, line, column = _read_equation(body, names, metric_names, parameters)
    dimension_sides = None
    if units == "si" and "claim" in body.items:
        # Metric functions hold SI constants as numbers, so a claim naming them is left unchecked.
        coordinates = {k: v for k, v in metric_names.items() if isinstance(v, sympy.Symbol)}
        try:
            dimension_sides = _read_equation(body, symbolic_names, coordinates, parameters)[:2]
        except ClaimError:
            dimension_sides = None
    if detector is not None and detector.trajectory == "static":
        lhs, rhs, observables, dimension_sides = _static_detector(body, detector, spacetime, parameters,
                                                                  (lhs, rhs), observables, dimension_sides)
        detector = None
    return Claim(
        id=claim_id,
        title=fields.text_of(body.items["title"], "title") if "title" in body.items else claim_id,
        path=body.loc.path,
        line=body.loc.line,
        units=units,  # type: ignore[arg-type]
        parameters=parameters,
        lhs=lhs,
        rhs=rhs,
        text=text,
        observables=observables,
        spacetime=spacetime,
        detector=detector,
        derived=derived,
        routes=_read_routes(body, known_routes),
        agreement=fields.choice(body.items["agreement"], "agreement", ("exact", "scaling"))  # type: ignore[arg-type]
        if "agreement" in body.items
        else "exact",
        tolerance=fields.positive_float(body.items["tolerance"], "tolerance", upper=0.5) if "tolerance" in body.items else 1e-9,
        sources=fields.string_list(body.items["sources"], "sources") if "sources" in body.items else (),
        notes=fields.text_of(body.items["notes"], "notes") if "notes" in body.items else "",
        spectrum=fields.choice(body.items["spectrum"], "spectrum", ("bose", "fermi", "non-thermal"))  # type: ignore[arg-type]
        if "spectrum" in body.items
        else None,
        band=fields.pair(body.items["band"], "band", fields.number) if "band" in body.items else None,
        claim_line=line,
        claim_column=column,
        dimension_sides=dimension_sides,
    )


def _static_detector(body: YMap, detector, spacetime, parameters, sides, observables, dimension_sides):
    """A static detector at `radius` in the Hartle-Hawking state is at rest in the local
    thermal bath: its temperature is the local (Tolman) temperature T_loc(radius).  The claim
    becomes a horizon claim on T_loc, which the horizon routes compute independently."""
    if spacetime is None:
        raise body.loc.error("detector", "a static detector needs a spacetime with a horizon")
    if "spectrum" in body.items:
        raise body.items["spectrum"].loc.error("spectrum", "the spectrum of a static detector is not judged; claim its T")
    radius = detector.arguments["radius"]
    T = observable_function("T")(*(p.symbol for p in parameters))
    local = {T: observable_function("T_loc")(radius)}
    lhs, rhs = (side.xreplace(local) for side in sides)
    if dimension_sides is not None:
        dimension_sides = tuple(side.xreplace(local) for side in dimension_sides)
    observables = frozenset("T_loc" if name == "T" else name for name in observables)
    return lhs, rhs, observables, dimension_sides


def _read_id(body: YMap) -> str:
    node = body.items["id"]
    value = fields.text_of(node, "id")
    if not ID_PATTERN.match(value) or "//" in value or value.endswith("/"):
        raise node.loc.error("id", f"'{value}' is not a valid id: use lowercase letters, digits, '-' and '/'")
    return value


def _read_parameters(body: YMap) -> tuple[Parameter, ...]:
    if "parameters" not in body.items:
        return ()
    section = fields.expect_map(body.items["parameters"], "parameters")
    if len(section.items) > MAX_PARAMETERS:
        raise section.loc.error("parameters", f"at most {MAX_PARAMETERS} parameters")
    result = []
    for name, node in section.items.items():
        field = f"parameters.{name}"
        _check_new_name(section, name, field, set())
        lo, hi = _read_range(node, field)
        symbol = sympy.Symbol(name, **_assumptions(lo))
        result.append(Parameter(name, symbol, lo, hi))
    return tuple(result)


def _read_range(node: YNode, field: str) -> tuple[sympy.Rational, sympy.Rational]:
    if not isinstance(node, fields.YSeq) or len(node.items) != 2:
        raise node.loc.error(field, f"expected [lo, hi] with lo < hi, got {_show(node)}")
    lo, hi = (fields.number(item, field) for item in node.items)
    if not lo < hi:
        raise node.loc.error(field, f"expected [lo, hi] with lo < hi, got {_show(node)}")
    return _rational(lo), _rational(hi)


def _show(node: YNode) -> str:
    if isinstance(node, fields.YSeq):
        return "[" + ", ".join(item.text if isinstance(item, fields.YScalar) else "..." for item in node.items) + "]"
    return node.text if isinstance(node, fields.YScalar) else node.describe()


def _rational(value: sympy.Expr) -> sympy.Rational:
    if isinstance(value, sympy.Rational):
        return value
    return sympy.Rational(str(sympy.N(value, 30))).limit_denominator(10**24)


def _assumptions(lo: sympy.Rational) -> dict[str, bool]:
    if lo > 0:
        return {"positive": True}
    if lo >= 0:
        return {"nonnegative": True}
    return {"real": True}


def _check_new_name(section: YMap, name: str, field: str, taken: set[str]) -> None:
    loc = section.key_loc(name)
    if not is_valid_name(name):
        raise loc.error(field, f"'{name}' is not a valid name (letters, digits, single underscores)")
    if name in RESERVED_NAMES:
        raise loc.error(field, f"'{name}' is reserved (observable, function, constant or coordinate)")
    if name in taken:
        raise loc.error(field, f"'{name}' is already defined")


def _read_where(body: YMap, names: dict[str, sympy.Basic]) -> tuple[tuple[str, sympy.Expr], ...]:
    if "where" not in body.items:
        return ()
    section = fields.expect_map(body.items["where"], "where")
    derived = []
    for name, node in section.items.items():
        field = f"where.{name}"
        _check_new_name(section, name, field, set(names))
        value = fields.expression(node, field, names)
        names[name] = value
        derived.append((name, value))
    return tuple(derived)


def _read_equation(body: YMap, names, metric_names, parameters):
    if "claim" not in body.items:
        return sympy.Integer(0), sympy.Integer(0), "", frozenset(), body.loc.line, body.loc.column
    node = body.items["claim"]
    scalar = fields.expect_scalar(node, "claim")
    text = fields.text_of(scalar, "claim")
    symbols = [p.symbol for p in parameters]
    local = dict(metric_names)
    local.update(names)
    local.update({name: scalar_placeholder(name, symbols) for name in SCALAR_OBSERVABLES})
    functions = {name: _one_argument(name) for name in FUNCTION_OBSERVABLES}
    try:
        lhs, rhs, _ = parse_equation(text, local, functions=functions)
    except ExprError as exc:
        raise fields.expr_loc(scalar, exc.column).error("claim", exc.message) from None
    observables = mentioned_observables(lhs) | mentioned_observables(rhs)
    if not observables:
        raise scalar.loc.error("claim", "the claim mentions no observable (T, kappa, A, S, Omega, Phi, r_h, a_loc, T_loc)")
    return lhs, rhs, text, observables, scalar.loc.line, scalar.loc.column


def _one_argument(name: str):
    function = observable_function(name)

    def apply(*args: sympy.Basic) -> sympy.Basic:
        if len(args) != 1:
            raise ExprError(f"{name} takes one argument (the radius), got {len(args)}")
        return function(args[0])

    return apply


def _read_routes(body: YMap, known_routes: Collection[str] | None) -> tuple[str, ...] | None:
    if "routes" not in body.items:
        return None
    node = body.items["routes"]
    if isinstance(node, fields.YScalar) and node.text == "all":
        return None
    names = fields.string_list(node, "routes")
    if known_routes is not None:
        for name in names:
            if name not in known_routes:
                raise node.loc.error("routes", f"unknown route '{name}'; valid routes: {', '.join(sorted(known_routes))}")
    return names
