"""The dimensional check of a claim, reported like a route named `dimensions`.

Dimensions of the parameters come from the metric: in geometric units every
term of the line element is a length squared, which fixes the dimension of
each parameter and coordinate (F dimensionless makes M a length).  Built-in
families declare the kind of each parameter instead, which also covers SI,
where the metric holds G and c as numbers.  A mismatch between the claim's
two sides is a `disagree` with a diagnosis; an undetermined dimension makes
the check `inconclusive`, never a pass.
"""

from __future__ import annotations

import time

import sympy
from sympy.core.function import AppliedUndef

from crosscheck.claim import Claim
from crosscheck.errors import DimensionError
from crosscheck.observables import FUNCTION_OBSERVABLES
from crosscheck.results import Diagnosis, RouteOutcome
from crosscheck.spacetimes import family
from crosscheck.units import (
    Dimension,
    DimensionUnknown,
    argument_dimension,
    check_claim_dimensions,
    infer_dimensions,
    observable_dimensions,
)

NAME = "dimensions"
TITLE = "Dimensional consistency of the claim's two sides"

LENGTH = Dimension(L=1)
# Dimension of each parameter kind the families declare: (geometric, SI).
KIND_DIMENSIONS = {
    "mass": (LENGTH, Dimension(M=1)),
    "charge": (LENGTH, Dimension(I=1, T=1)),
    "length": (LENGTH, LENGTH),
    "rate": (Dimension(L=-1), Dimension(T=-1)),
    "acceleration": (Dimension(L=-1), Dimension(L=1, T=-2)),
    "curvature": (Dimension(L=-2), Dimension(L=-2)),
    "dimensionless": (Dimension(), Dimension()),
}


def dimension_outcome(claim: Claim) -> RouteOutcome:
    """Check lhs and rhs have the same dimension; never raises."""
    started = time.perf_counter()
    base = RouteOutcome(route=NAME, title=TITLE, grade="exact", status="inconclusive")
    try:
        status, reason, diagnosis = _check(claim)
    except DimensionUnknown as exc:
        status, reason, diagnosis = "inconclusive", f"cannot decide: {exc}", None
    except DimensionError as exc:
        status, reason, diagnosis = "inconclusive", f"the metric's dimensions are inconsistent: {exc}", None
    return RouteOutcome(
        route=base.route, title=base.title, grade=base.grade, status=status,  # type: ignore[arg-type]
        reason=reason, diagnosis=diagnosis, seconds=time.perf_counter() - started,
        provenance=("parameter dimensions " + ("declared by the family" if _family(claim) else "inferred from the metric"),),
    )


def _family(claim: Claim) -> str | None:
    return claim.spacetime.family if claim.spacetime is not None else None


def _check(claim: Claim):
    if claim.spacetime is None:
        return "inconclusive", "no spacetime to infer dimensions from", None
    sides = claim.dimension_sides or (claim.lhs, claim.rhs)
    if claim.units == "si" and claim.dimension_sides is None:
        return "inconclusive", "SI claims that name metric functions are not checked for dimensions", None
    dims = _parameter_dimensions(claim)
    dims[claim.spacetime.metric.radial] = LENGTH
    observables = observable_dimensions(claim.units, claim.spacetime.metric.dim)
    message = check_claim_dimensions(sides[0], sides[1], dims, observables, claim.units)
    if message is None:
        return "agree", "both sides have the same dimension", None
    return "disagree", message, Diagnosis(kind="dimension", text=message)


def _parameter_dimensions(claim: Claim) -> dict:
    family = _family(claim)
    parameter_symbols = {p.name: p.symbol for p in claim.parameters}
    if family is not None:
        return _family_dimensions(claim, family, parameter_symbols)
    if claim.units == "si":
        raise DimensionUnknown("parameter dimensions of user-written SI metrics are not inferred")
    return _inferred_dimensions(claim)


def _kind_dimensions(kind: str, dim: int) -> tuple[Dimension, Dimension]:
    if kind == "length^(dim-3)":
        return Dimension(L=dim - 3), Dimension(L=dim - 3)
    return KIND_DIMENSIONS[kind]


def _family_dimensions(claim: Claim, name: str, symbols: dict) -> dict:
    """Family parameters have declared kinds; claim parameters follow from the bindings."""
    index = 0 if claim.units == "geometric" else 1
    dim = claim.spacetime.metric.dim
    known = {symbol: _kind_dimensions(kind, dim) for symbol, kind in family(name).kinds}
    bound = dict(claim.derived)
    fixed, relations = {}, []
    for name, (geometric, si) in known.items():
        dimension = geometric if index == 0 else si
        if name in symbols:
            fixed[symbols[name]] = dimension
        elif name in bound:
            relations.append((bound[name], dimension))
    relations += _detector_relations(claim, index) + _argument_relations(claim)
    return _solve_relations(claim, fixed, relations)


# Kinds of the detector arguments (DESIGN.md section 3): they fix the dimensions of
# the parameters a trajectory is written in (a Minkowski claim has no metric parameters).
DETECTOR_ARGUMENT_KINDS = {
    "acceleration": "acceleration",
    "radius": "length",
    "angular_velocity": "rate",
    "velocity": "dimensionless",
}


def _argument_relations(claim: Claim) -> list:
    """(argument, dimension) for each function observable in the claim: a_loc(r) takes a
    radius, T_eff(w) a gap, so parameters used only there still get a dimension."""
    relations = []
    for side in (claim.lhs, claim.rhs):
        for node in side.atoms(AppliedUndef):
            if node.func.__name__ in FUNCTION_OBSERVABLES:
                expected = argument_dimension(node.func.__name__, claim.units)
                relations += [(arg, expected) for arg in node.args if arg.free_symbols]
    return relations


def _detector_relations(claim: Claim, index: int) -> list:
    """(expression, dimension) for each detector argument of a known kind."""
    if claim.detector is None:
        return []
    relations = []
    for key, expr in claim.detector.arguments.items():
        kind = DETECTOR_ARGUMENT_KINDS.get(key)
        if kind is not None and isinstance(expr, sympy.Expr) and expr.free_symbols:
            relations.append((expr, KIND_DIMENSIONS[kind][index]))
    return relations


def _solve_relations(claim: Claim, fixed: dict, relations: list) -> dict:
    """Parameters bound through `where:` (Q = q*M) get their dimensions from the relation."""
    unknowns = [p.symbol for p in claim.parameters]
    dimensionless = []
    known = dict(fixed)
    for index, (expr, dimension) in enumerate(relations):
        scale = sympy.Symbol(f"_scale{index}", positive=True)
        known[scale] = dimension
        dimensionless.append(expr / scale)
    if not dimensionless:
        return known
    return infer_dimensions(dimensionless, [], unknowns, known, claim.units)


def _inferred_dimensions(claim: Claim) -> dict:
    metric = claim.spacetime.metric
    ell = sympy.Symbol("_unit_length", positive=True)
    coords = metric.coords
    ds2 = sum(metric.g[i, j] * coords[i] * coords[j] for i in range(len(coords)) for j in range(len(coords)) if metric.g[i, j] != 0)
    lengths = [metric.radial, metric.time]
    if claim.spacetime.horizon.expression is not None:
        lengths.append(claim.spacetime.horizon.expression)
    unknowns = [p.symbol for p in claim.parameters] + list(coords)
    return infer_dimensions([ds2 / ell**2], lengths, unknowns, {ell: LENGTH}, claim.units)
