"""JSON output, schema `crosscheck-result/1`: every status, value, bound, diagnosis, time."""

from __future__ import annotations

import json
import math
from collections.abc import Mapping, Sequence
from dataclasses import asdict

from crosscheck.results import ClaimOutcome

SCHEMA = "crosscheck-result/1"


def _finite(value):
    """JSON has no NaN or infinity: write them as strings."""
    if isinstance(value, float) and not math.isfinite(value):
        return str(value)
    if isinstance(value, dict):
        return {k: _finite(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_finite(v) for v in value]
    return value


def route_record(route: dict) -> dict:
    """A route's record with its numeric rows grouped under `numeric`."""
    rows = route.pop("numeric")
    max_rel_diff = route.pop("max_rel_diff")
    numeric = {"max_rel_diff": max_rel_diff, "points": len(rows), "rows": rows}
    return {
        "route": route.pop("route"),
        "status": route.pop("status"),
        "symbolic": route.pop("symbolic"),
        "numeric": numeric,
        "diagnosis": route.pop("diagnosis"),
        "seconds": route.pop("seconds"),
        "provenance": route.pop("provenance"),
        **route,
    }


def claim_record(outcome: ClaimOutcome) -> dict:
    record = asdict(outcome)
    routes = [route_record(r) for r in record.pop("routes")]
    return {
        "id": record.pop("claim_id"),
        "file": record.pop("file"),
        "line": record.pop("line"),
        "status": record.pop("status"),
        "routes": routes,
        **record,
    }


INCOMPLETE_MARK = '"complete": false'


def to_json(outcomes: Sequence[ClaimOutcome], run: Mapping[str, object], complete: bool = True) -> str:
    """The document; `complete` is false for a run stopped early (then `run.unfinished` lists
    the claims that have no result)."""
    document = {"schema": SCHEMA, "complete": complete, "run": dict(run), "claims": [claim_record(o) for o in outcomes]}
    return json.dumps(_finite(document), indent=2, sort_keys=False) + "\n"
