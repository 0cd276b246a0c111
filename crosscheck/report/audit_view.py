"""The HTML report's "Audit of the checks" section: what the template needs, as plain text.

Everything here is text for the template to escape (claim ids, labels and
mutated formulas come from claim files, so they are untrusted); numbers are
formatted here so the template only loops.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from crosscheck.audit import Audit


@dataclass(frozen=True)
class AuditRow:
    claim_id: str
    anchor: str
    status: str
    mutants: int
    caught: int
    equivalent: int
    diagnosed: str
    survivors: str


@dataclass(frozen=True)
class SurvivorView:
    claim_id: str
    anchor: str
    label: str
    text: str
    status: str
    routes: str


@dataclass(frozen=True)
class AuditView:
    passed: bool
    headline: str
    caught_percent: str
    totals: dict
    rows: list[AuditRow]
    survivors: list[SurvivorView]
    equivalents: list[SurvivorView]
    unconfirmed: list[str]


def audit_view(audit: Audit, anchors: Mapping[str, str]) -> AuditView:
    """`anchors` maps claim id -> the id of its section in the report (for links)."""
    totals = audit.totals()
    rows, survivors, equivalents = [], [], []
    for claim in audit.claims:
        cid = claim.original.claim_id
        anchor = anchors.get(cid, "")
        rows.append(AuditRow(
            claim_id=cid, anchor=anchor, status=claim.original.status, mutants=len(claim.counted),
            caught=claim.caught, equivalent=claim.equivalent, diagnosed=f"{claim.diagnosed}/{claim.diagnosable}",
            survivors=", ".join(m.label for m in claim.survivors),
        ))
        for mutant in claim.mutants:
            if mutant.equivalent:
                equivalents.append(SurvivorView(cid, anchor, mutant.label, mutant.text, "equivalent", mutant.equivalence))
            elif not mutant.caught:
                routes = ", ".join(f"{name}: {status}" for name, status in mutant.routes.items())
                survivors.append(SurvivorView(cid, anchor, mutant.label, mutant.text, mutant.status or "not run", routes))
    percent = f"{100 * totals['caught_fraction']:.1f}%"
    headline = (f"{totals['caught']} of {totals['mutants']} mutants caught ({percent}; target "
                f"{100 * totals['target']:.0f}%), {totals['equivalent']} equivalent (not counted), "
                f"{totals['diagnosed']} of {totals['diagnosable']} caught mutants with a known slip diagnosed as that slip.")
    return AuditView(
        passed=audit.passed(), headline=headline, caught_percent=percent, totals=totals, rows=rows,
        survivors=survivors, equivalents=equivalents, unconfirmed=list(totals["unconfirmed"]),
    )
