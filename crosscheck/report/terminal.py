"""Terminal output: one line per claim with each route's mark and time, then a summary."""

from __future__ import annotations

from collections import Counter
from collections.abc import Sequence

from crosscheck.results import ClaimOutcome, RouteOutcome

MARKS = {
    "agree": "ok", "disagree": "XX", "inconclusive": "??", "not-applicable": "--",
    "error": "!!", "timeout": "TO",
}
CLAIM_WORDS = {
    "confirmed": "CONFIRMED", "contradicted": "CONTRADICTED", "weak": "WEAK",
    "unchecked": "UNCHECKED", "invalid": "INVALID",
}


def route_mark(outcome: RouteOutcome) -> str:
    return f"{outcome.route}:{MARKS[outcome.status]}"


def claim_line(outcome: ClaimOutcome) -> str:
    """`CONFIRMED    schwarzschild/temperature  killing-horizon:ok(0.3s) ...`"""
    word = CLAIM_WORDS[outcome.status].ljust(12)
    if outcome.error:
        return f"{word} {outcome.error}"
    marks = " ".join(
        f"{route_mark(r)}({r.seconds:.1f}s)" for r in outcome.routes if r.status != "not-applicable"
    )
    return f"{word} {outcome.claim_id}  {marks}"


def detail_lines(outcome: ClaimOutcome) -> list[str]:
    """Extra lines for contradicted claims and failed routes: what went wrong, and where
    (`file:line:` first, so that editors can jump to the claim)."""
    lines = []
    for route in outcome.routes:
        if route.status in ("disagree", "error", "timeout"):
            text = route.diagnosis.text if route.diagnosis else route.reason
            lines.append(f"    {outcome.file}:{outcome.line}: {route.route}: {route.status}: {text}")
    return lines


def summary(outcomes: Sequence[ClaimOutcome], seconds: float) -> str:
    counts = Counter(o.status for o in outcomes)
    parts = [f"{counts[s]} {s}" for s in CLAIM_WORDS if counts[s]]
    return f"{len(outcomes)} claims: {', '.join(parts) or 'none'} in {seconds:.1f} s"


def cache_note(cached: int, computed: int) -> str:
    """`(40 results from the cache, 3 computed)`; empty when nothing came from the cache."""
    return f"({cached} results from the cache, {computed} computed)" if cached else ""


def incomplete_line(stopped_by: str | None, unfinished: Sequence[str]) -> str:
    """What an interrupted run did not do."""
    shown = ", ".join(unfinished[:5]) + (", ..." if len(unfinished) > 5 else "")
    return f"INCOMPLETE: stopped by {stopped_by or 'an interrupt'}; {len(unfinished)} claims not checked" + (
        f": {shown}" if unfinished else ""
    )
