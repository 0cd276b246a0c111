"""The mutation audit as JSON (schema `crosscheck-mutation/1`) and as terminal text.

The JSON holds, per claim, the unmutated claim's full outcome (the same
route records as `crosscheck-result/1`, so it can be read back) and every
mutant's label, text, verdict, route statuses and diagnoses; `totals` has the
caught fraction the exit code is decided from.
"""

from __future__ import annotations

import dataclasses
import json
from collections.abc import Mapping

from crosscheck.audit import Audit, ClaimAudit, MutantResult
from crosscheck.results import ClaimOutcome
from crosscheck.results_io import outcome_from_data, outcome_to_data

SCHEMA = "crosscheck-mutation/1"


def audit_to_data(audit: Audit, run: Mapping[str, object] | None = None) -> dict:
    """The audit as JSON-friendly data."""
    return {
        "schema": SCHEMA,
        "complete": audit.complete,
        "run": dict(run or {}),
        "totals": audit.totals(),
        "claims": [_claim_data(c) for c in audit.claims],
    }


def _claim_data(claim: ClaimAudit) -> dict:
    original = claim.original
    return {
        "id": original.claim_id,
        "file": original.file,
        "line": original.line,
        "status": original.status,
        "mutants": len(claim.counted),
        "caught": claim.caught,
        "equivalent": claim.equivalent,
        "diagnosed": claim.diagnosed,
        "survivors": [m.label for m in claim.survivors],
        "original": {
            "title": original.title, "claim_text": original.claim_text, "sources": list(original.sources),
            "seconds": original.seconds, "error": original.error,
            "routes": [outcome_to_data(r) for r in original.routes],
        },
        "variants": [dataclasses.asdict(m) for m in claim.mutants],
    }


def audit_from_data(data: Mapping) -> Audit:
    """Read an audit back; ValueError when the data is not one."""
    if not isinstance(data, Mapping) or data.get("schema") != SCHEMA:
        raise ValueError(f"not a {SCHEMA} document")
    try:
        claims = tuple(_claim_from(c) for c in data["claims"])
    except (KeyError, TypeError) as exc:
        raise ValueError(f"not a {SCHEMA} document: {exc}") from exc
    return Audit(claims, complete=bool(data.get("complete", True)))


def _claim_from(data: Mapping) -> ClaimAudit:
    original = data["original"]
    outcome = ClaimOutcome(
        claim_id=data["id"], title=original["title"], file=data["file"], line=int(data["line"]),
        status=data["status"], claim_text=original["claim_text"], sources=tuple(original["sources"]),
        seconds=float(original["seconds"]), error=original["error"],
        routes=tuple(outcome_from_data(r) for r in original["routes"]),
    )
    fields = {f.name for f in dataclasses.fields(MutantResult)}
    mutants = tuple(MutantResult(**{k: v for k, v in m.items() if k in fields}) for m in data["variants"])
    return ClaimAudit(outcome, mutants)


def to_json(audit: Audit, run: Mapping[str, object] | None = None) -> str:
    return json.dumps(audit_to_data(audit, run), indent=2) + "\n"


# -- terminal -------------------------------------------------------------------------------------
def claim_line(claim: ClaimAudit) -> str:
    """One line per claim: caught/mutants, equivalents, the unmutated verdict."""
    original = claim.original
    counted = len(claim.counted)
    parts = [f"{claim.caught}/{counted} caught"]
    if claim.equivalent:
        parts.append(f"{claim.equivalent} equivalent")
    parts.append(f"diagnosed {claim.diagnosed}/{claim.diagnosable}")
    flag = "" if original.status == "confirmed" else f"  [unmutated claim {original.status.upper()}]"
    return f"{original.claim_id}: {', '.join(parts)}{flag}"


def survivor_lines(claim: ClaimAudit) -> list[str]:
    lines = []
    for mutant in claim.survivors:
        routes = ", ".join(f"{name} {status}" for name, status in mutant.routes.items())
        lines.append(f"    survived: {mutant.label}  [{mutant.status or 'not run'}: {routes}]")
    return lines


def summary(audit: Audit, seconds: float) -> str:
    totals = audit.totals()
    verdict = "PASS" if audit.passed() else "FAIL"
    text = (f"mutation audit: {totals['caught']}/{totals['mutants']} mutants caught "
            f"({100 * totals['caught_fraction']:.1f}%, target {100 * totals['target']:.0f}%), "
            f"{totals['equivalent']} equivalent, {totals['diagnosed']}/{totals['diagnosable']} diagnosed correctly; "
            f"unmutated: {len(totals['false_contradictions'])} contradicted, "
            f"{len(totals['unconfirmed'])} not confirmed; {seconds:.1f} s: {verdict}")
    if not audit.complete:
        text += " (interrupted: incomplete)"
    return text
