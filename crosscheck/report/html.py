"""The HTML report: one self-contained file (inline CSS, no script, no network).

The template holds the layout and no logic beyond loops; everything it shows
comes from the serialisable outcomes plus a small `run` mapping (command,
versions, options).  Autoescaping is on for every variable: claim files are
untrusted and a title such as `<script>` must render as text.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import jinja2

from crosscheck.report.terminal import CLAIM_WORDS, MARKS
from crosscheck.results import ClaimOutcome


def _environment() -> jinja2.Environment:
    return jinja2.Environment(
        loader=jinja2.PackageLoader("crosscheck.report", "templates"),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )


def route_names(outcomes: Sequence[ClaimOutcome]) -> list[str]:
    """Columns of the agreement matrix: the dimension check first, then routes by name."""
    names = sorted({r.route for o in outcomes for r in o.routes} - {"dimensions"})
    return (["dimensions"] if any(r.route == "dimensions" for o in outcomes for r in o.routes) else []) + names


def to_html(outcomes: Sequence[ClaimOutcome], run: Mapping[str, object]) -> str:
    template = _environment().get_template("report.html.j2")
    columns = route_names(outcomes)
    matrix = [
        (o, [next((r for r in o.routes if r.route == name), None) for name in columns]) for o in outcomes
    ]
    counts = {word: sum(1 for o in outcomes if o.status == word) for word in CLAIM_WORDS}
    tally = ", ".join(f"{n} {word}" for word, n in counts.items() if n) or "none"
    return template.render(
        outcomes=outcomes, columns=columns, matrix=matrix, run=run, marks=MARKS,
        claim_words=CLAIM_WORDS, tally=tally,
    )
