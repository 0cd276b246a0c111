"""The `spectrum:` assertion of a detector claim, judged against a route's evidence.

A route that judges spectra lists "spectrum" among its observables and puts, at
every sample point, `evidence["spectrum"] = {"verdict": ..., "detail": ...,
"spread": ..., "tolerance": ...}` into its NumericResult, with verdict one of
bose | fermi | non-thermal (or "thermal" when the shape is undecided).  The claim's
spectrum holds for that route when every point's verdict matches it; otherwise the
route disagrees with a diagnosis in words (DESIGN.md section 5).

The runner combines this with the value comparison: a claim with both `claim:` and
`spectrum:` needs both to hold; a route that does not judge spectra can then only
be inconclusive about such a claim.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import mpmath

from crosscheck.errors import CannotCompute
from crosscheck.results import Diagnosis

KEY = "spectrum"
SHAPES = ("bose", "fermi")
_WHY = {
    "fermi": "the response is fermi-shaped in odd dimensions (F(w) = rho(w)/(exp(w/T) + 1) with an even "
             "polynomial rho: the inversion of statistics), although detailed balance still gives one T",
    "bose": "the response is bose-shaped (F(w) = rho(w)/(exp(w/T) - 1) with an odd polynomial rho), as in even dimensions",
}


@dataclass(frozen=True)
class Judgement:
    """A route's verdict on a claimed spectrum: status agree | disagree | inconclusive."""

    status: str
    reason: str
    diagnosis: Diagnosis | None = None
    evidence: dict | None = None  # the first point's full evidence (spectrum-only claims)


def judges_spectrum(route: object) -> bool:
    """Routes that decide spectra say so by listing "spectrum" among their observables."""
    return KEY in getattr(route, "observables", ())


def evidence_of(result: object) -> dict | None:
    """The spectrum evidence of one NumericResult (None if the route gave none)."""
    evidence = getattr(result, "evidence", None) or {}
    found = evidence.get(KEY)
    return found if isinstance(found, dict) and "verdict" in found else None


def judge(claimed: str, evidences: Sequence[dict | None]) -> Judgement:
    """Compare the claimed spectrum with the verdicts at all sample points."""
    found = [e for e in evidences if e is not None]
    if not found:
        return Judgement("inconclusive", "the route gave no spectrum verdict")
    wrong = [e for e in found if not _matches(claimed, e["verdict"])]
    if not wrong:
        return Judgement("agree", f"spectrum '{claimed}' at all {len(found)} points ({found[0].get('detail', '')})")
    worst = max(wrong, key=lambda e: float(e.get("spread", 0.0)))
    text = _diagnosis_text(claimed, worst)
    reason = f"spectrum: claimed '{claimed}', found '{worst['verdict']}' at {len(wrong)} of {len(found)} points: {text}"
    return Judgement("disagree", reason, Diagnosis(kind="spectrum", text=text))


def _matches(claimed: str, verdict: str) -> bool:
    if claimed == "non-thermal":
        return verdict == "non-thermal"
    return verdict == claimed


def _diagnosis_text(claimed: str, evidence: dict) -> str:
    verdict = evidence["verdict"]
    if verdict == "non-thermal":
        return evidence.get("detail") or "T(omega) varies across the band: not thermal"
    if claimed == "non-thermal":
        shape = f" ({verdict}-shaped)" if verdict in SHAPES else ""
        return f"T(omega) is constant across the band to {float(evidence.get('spread', 0.0)):.1e}: the response is thermal{shape}"
    if verdict in SHAPES:
        return _WHY[verdict]
    return evidence.get("detail", f"found '{verdict}'")


def combine(value_status: str, value_reason: str, value_diagnosis: Diagnosis | None,
            judgement: Judgement) -> tuple[str, str, Diagnosis | None]:
    """Both must hold: any disagreement wins, then inconclusive, then agree."""
    reason = "; ".join(r for r in (value_reason, judgement.reason) if r)
    if value_status == "disagree" or judgement.status == "disagree":
        diagnosis = value_diagnosis if value_status == "disagree" else judgement.diagnosis
        if value_status == "disagree" and judgement.diagnosis is not None:
            diagnosis = Diagnosis(kind=value_diagnosis.kind if value_diagnosis else "spectrum",
                                  text="; ".join(d.text for d in (value_diagnosis, judgement.diagnosis) if d),
                                  factor=value_diagnosis.factor if value_diagnosis else None,
                                  exponents=value_diagnosis.exponents if value_diagnosis else {})
        return "disagree", reason, diagnosis
    if value_status == "agree" and judgement.status == "agree":
        return "agree", reason, None
    return "inconclusive", reason, value_diagnosis


def spectrum_only(claimed: str, route: object, problem: object, points: Sequence, digits: int) -> Judgement:
    """Judge a claim that has `spectrum:` but no `claim:` line from the route's numeric
    side at every sample point (points as the runner draws them: exact rationals)."""
    evidences, first = [], None
    for point in points:
        with mpmath.workdps(digits + 10):
            numeric_point = {s: mpmath.mpf(v.p) / v.q for s, v in point.items()}
        try:
            result = route.numeric(problem, numeric_point, digits)
        except CannotCompute as exc:
            return Judgement("inconclusive", f"numeric side unavailable: {exc}")
        first = first or dict(result.evidence)
        evidences.append(evidence_of(result))
    judgement = judge(claimed, evidences)
    return Judgement(judgement.status, judgement.reason, judgement.diagnosis, first)


class RecordingRoute:
    """Wraps a route so that every NumericResult it returns is kept (for the spectrum
    evidence at all sample points while the runner compares the values)."""

    def __init__(self, route: object) -> None:
        self.route = route
        self.results: list = []

    def __getattr__(self, name: str):
        return getattr(self.route, name)

    def numeric(self, problem, point, digits):
        result = self.route.numeric(problem, point, digits)
        self.results.append(result)
        return result
