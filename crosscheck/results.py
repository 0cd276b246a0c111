"""Serialisable result objects: what every output format reads.

Results hold text and floats only (no sympy or mpmath objects), so that the
JSON writer, the JUnit writer, the terminal printer and the cache can all
consume them unchanged.  They are frozen: once the runner has built an
outcome nobody edits it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

RouteStatus = Literal["agree", "disagree", "inconclusive", "not-applicable", "error", "timeout"]
ClaimStatus = Literal["confirmed", "contradicted", "weak", "unchecked", "invalid"]
SymbolicVerdictKind = Literal["proved", "consistent", "disproved", "inconclusive", "unavailable"]


@dataclass(frozen=True)
class SymbolicCheck:
    """The symbolic comparison of the claim's two sides with a route's closed forms.

    `method` says how the verdict was reached ("cancel", "simplify",
    "50-digit evaluation at 6 points", ...); `counterexample` is a parameter
    point (name -> value text) where the sides differ, reproduced at higher
    precision, when the verdict is 'disproved'.
    """

    verdict: SymbolicVerdictKind
    method: str = ""
    route_side: str = ""
    claim_side: str = ""
    difference: str = ""
    counterexample: dict[str, str] | None = None


@dataclass(frozen=True)
class NumericRow:
    """One sample point of the numeric comparison.

    `route_value` is the left side evaluated with the route's numbers,
    `claim_value` the right side; `bound` is the relative tolerance actually
    used: max(claim tolerance, the route's relative error estimate).
    """

    point: dict[str, str]
    route_value: float
    claim_value: float
    rel_diff: float
    error: float
    bound: float
    agree: bool


@dataclass(frozen=True)
class Diagnosis:
    """Why a claim and a route disagree, in words and in data.

    kind: 'factor' (constant ratio, identified in `factor`), 'power' (ratio is
    a power of parameters, exponents in `exponents`), 'sign', 'offset',
    'normalization', 'horizon' (the claim matches another horizon), 'dimension',
    'unidentified'.
    """

    kind: str
    text: str
    factor: str | None = None
    exponents: dict[str, str] = field(default_factory=dict)


@dataclass(frozen=True)
class RouteOutcome:
    """The verdict of one route (or of the dimension check) on one claim."""

    route: str
    title: str
    grade: str
    status: RouteStatus
    reason: str = ""
    symbolic: SymbolicCheck | None = None
    numeric: tuple[NumericRow, ...] = ()
    max_rel_diff: float | None = None
    diagnosis: Diagnosis | None = None
    seconds: float = 0.0
    provenance: tuple[str, ...] = ()
    steps: tuple[tuple[str, str], ...] = ()
    values: dict[str, str] = field(default_factory=dict)
    evidence: dict[str, object] = field(default_factory=dict)

    def _repr_html_(self) -> str:
        """Jupyter shows a route's outcome as the HTML report's section for it (same templates)."""
        from crosscheck.report.html import route_fragment

        return route_fragment(self)


@dataclass(frozen=True)
class ClaimOutcome:
    """Everything known about one claim after the run."""

    claim_id: str
    title: str
    file: str
    line: int
    status: ClaimStatus
    claim_text: str = ""
    routes: tuple[RouteOutcome, ...] = ()
    sources: tuple[str, ...] = ()
    seconds: float = 0.0
    error: str | None = None

    def _repr_html_(self) -> str:
        """Jupyter shows a claim's outcome as the HTML report's section for it (same templates)."""
        from crosscheck.report.html import claim_fragment

        return claim_fragment(self)
