"""RouteOutcome to plain data (dicts, lists, strings, numbers) and back.

Workers send their results to the parent as plain data, and the cache stores
them as JSON, so neither depends on pickling our classes across versions.
`FORMAT` names this layout; the cache key includes it, so changing the layout
retires old cache entries instead of misreading them.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping

from crosscheck.results import Diagnosis, NumericRow, RouteOutcome, SymbolicCheck

FORMAT = "route-outcome/1"


def outcome_to_data(outcome: RouteOutcome) -> dict:
    """A RouteOutcome as JSON-friendly data (tuples become lists)."""
    return _plain(dataclasses.asdict(outcome))


def outcome_from_data(data: Mapping) -> RouteOutcome:
    """Rebuild a RouteOutcome; raise ValueError when the data is not one.

    Unknown keys are ignored and missing optional keys take their defaults, so
    a field added to RouteOutcome later does not break reading older data.
    """
    if not isinstance(data, Mapping):
        raise ValueError("route outcome data must be a mapping")
    try:
        fields = {f.name for f in dataclasses.fields(RouteOutcome)}
        known = {k: v for k, v in data.items() if k in fields}
        known["symbolic"] = _symbolic(known.get("symbolic"))
        known["diagnosis"] = _diagnosis(known.get("diagnosis"))
        known["numeric"] = tuple(_row(r) for r in known.get("numeric", ()))
        known["provenance"] = tuple(str(p) for p in known.get("provenance", ()))
        known["steps"] = tuple((str(label), str(expr)) for label, expr in known.get("steps", ()))
        known["values"] = {str(k): str(v) for k, v in dict(known.get("values", {})).items()}
        known["evidence"] = dict(known.get("evidence", {}))
        for name in ("max_rel_diff", "seconds"):
            if known.get(name) is not None:
                known[name] = float(known[name])
        outcome = RouteOutcome(**known)
    except (TypeError, KeyError, AttributeError) as exc:
        raise ValueError(f"not a route outcome: {exc}") from exc
    if not isinstance(outcome.route, str) or not isinstance(outcome.status, str):
        raise ValueError("route outcome lacks a route name or status")
    return outcome


def _symbolic(data) -> SymbolicCheck | None:
    if data is None:
        return None
    return SymbolicCheck(**data)


def _diagnosis(data) -> Diagnosis | None:
    if data is None:
        return None
    return Diagnosis(**{**data, "exponents": dict(data.get("exponents", {}))})


def _row(data) -> NumericRow:
    row = NumericRow(**data)
    return dataclasses.replace(
        row, route_value=float(row.route_value), claim_value=float(row.claim_value),
        rel_diff=float(row.rel_diff), error=float(row.error), bound=float(row.bound), agree=bool(row.agree),
    )


def _plain(value):
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value
