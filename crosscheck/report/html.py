"""The HTML report: one self-contained file (inline CSS and SVG, MathML, no network).

The templates hold the layout and nothing but loops and conditions; this module
turns the serialisable outcomes into small view objects (formulas already as
checked MathML, numbers already formatted, plots already drawn).  Autoescaping
is on for every variable: claim files are untrusted and a title such as
`<script>` must render as text.  The only markup passed through unescaped is
what `mathml` and `plots` built and checked themselves.

The page needs no script: the status filter is pure CSS (radio buttons and
`:checked`).  One tiny inline script opens every <details> before printing, so
a printed report is complete; the Content-Security-Policy allows exactly that
script by its hash and forbids every network load.
"""

from __future__ import annotations

import base64
import hashlib
import shlex
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import jinja2
from markupsafe import Markup

from crosscheck.report import plots
from crosscheck.report.mathml import text_mathml
from crosscheck.results import ClaimOutcome, NumericRow, RouteOutcome

ROUTE_MARKS = {
    "agree": "\u2713", "disagree": "\u2717", "inconclusive": "?", "not-applicable": "\u2013",
    "error": "!", "timeout": "\u2298",
}
ROUTE_WORDS = {
    "agree": "agree", "disagree": "disagree", "inconclusive": "inconclusive",
    "not-applicable": "not applicable", "error": "error", "timeout": "timeout",
}
CLAIM_MARKS = {"confirmed": "\u2713", "contradicted": "\u2717", "weak": "~", "unchecked": "\u2013", "invalid": "!"}
CLAIM_WORDS = {
    "confirmed": "CONFIRMED", "contradicted": "CONTRADICTED", "weak": "WEAK",
    "unchecked": "UNCHECKED", "invalid": "INVALID",
}
CLAIM_MEANINGS = {
    "confirmed": "at least two exact routes agree and none disagrees",
    "contradicted": "an exact route disagrees",
    "weak": "only one route covers the claim",
    "unchecked": "no route covers the claim",
    "invalid": "the claim file could not be read",
}
PRINT_SCRIPT = "addEventListener('beforeprint',()=>document.querySelectorAll('details').forEach(d=>d.open=true));"


@dataclass(frozen=True)
class RowView:
    point: str
    route_value: str
    claim_value: str
    rel_diff: str
    error: str
    bound: str
    agree: bool


@dataclass(frozen=True)
class RouteView:
    outcome: RouteOutcome
    anchor: str
    mark: str
    word: str
    steps: list[tuple[str, Markup]]
    values: list[Markup]
    rows: list[RowView]
    plots: list[plots.Plot]
    symbolic_sides: list[tuple[str, Markup]] = field(default_factory=list)


@dataclass(frozen=True)
class ClaimView:
    outcome: ClaimOutcome
    anchor: str
    mark: str
    word: str
    meaning: str
    claim_math: Markup | None
    command: str
    routes: list[RouteView]
    skipped: list[RouteOutcome]


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


def script_hash(script: str = PRINT_SCRIPT) -> str:
    """The CSP source expression that allows exactly this inline script."""
    digest = hashlib.sha256(script.encode("utf-8")).digest()
    return "'sha256-" + base64.b64encode(digest).decode("ascii") + "'"


def content_security_policy() -> str:
    """No network at all: styles and images only inline, one hashed script, no forms or frames."""
    return (
        f"default-src 'none'; style-src 'unsafe-inline'; img-src data:; script-src {script_hash()}; "
        "base-uri 'none'; form-action 'none'"
    )


def to_html(outcomes: Sequence[ClaimOutcome], run: Mapping[str, object], audit=None) -> str:
    """The whole report page; with a mutation audit (`crosscheck.audit.Audit`) its section too."""
    template = _environment().get_template("report.html.j2")
    columns = route_names(outcomes)
    views = [claim_view(o, i + 1, run) for i, o in enumerate(outcomes)]
    audit_section = None
    if audit is not None:
        from crosscheck.report.audit_view import audit_view

        audit_section = audit_view(audit, {v.outcome.claim_id: v.anchor for v in views})
    matrix = [(v, [_cell(v, name) for name in columns]) for v in views]
    present = [s for s in CLAIM_WORDS if any(o.status == s for o in outcomes)]
    tally = ", ".join(f"{sum(1 for o in outcomes if o.status == s)} {s}" for s in present) or "none"
    return template.render(
        views=views, columns=columns, matrix=matrix, run=run, tally=tally, present=present,
        claim_words=CLAIM_WORDS, claim_marks=CLAIM_MARKS, claim_meanings=CLAIM_MEANINGS,
        route_marks=ROUTE_MARKS, route_words=ROUTE_WORDS, csp=Markup(content_security_policy()),
        print_script=Markup(PRINT_SCRIPT), plots_note=_plots_note(), command=str(run.get("command", "")),
        versions=_listing(run.get("versions")), settings=_listing(run.get("options")), audit=audit_section,
    )


def _listing(mapping: object) -> str:
    """`name value, name value` for the reproduction footer (unset values left out)."""
    if not isinstance(mapping, Mapping):
        return ""
    return ", ".join(f"{k} {v}" for k, v in mapping.items() if v is not None)


def claim_fragment(outcome: ClaimOutcome, run: Mapping[str, object] | None = None) -> str:
    """One claim's section with the report's styles (Jupyter's `_repr_html_`)."""
    template = _environment().get_template("fragment.html.j2")
    return template.render(
        view=claim_view(outcome, 1, run or {}), route=None, route_marks=ROUTE_MARKS, route_words=ROUTE_WORDS,
    )


def route_fragment(outcome: RouteOutcome) -> str:
    """One route's section with the report's styles (Jupyter's `_repr_html_`)."""
    template = _environment().get_template("fragment.html.j2")
    return template.render(view=None, route=route_view(outcome, "route"), route_marks=ROUTE_MARKS,
                           route_words=ROUTE_WORDS)


def _plots_note() -> str:
    return "Plots drawn as SVG by crosscheck's own writer (crosscheck.report.svgplot)."


def _cell(view: ClaimView, name: str) -> RouteView | RouteOutcome | None:
    for route in view.routes:
        if route.outcome.route == name:
            return route
    return next((r for r in view.skipped if r.route == name), None)


# -- views --------------------------------------------------------------------------------------
def claim_view(outcome: ClaimOutcome, index: int, run: Mapping[str, object]) -> ClaimView:
    anchor = f"claim-{index}"
    shown = [r for r in outcome.routes if r.status != "not-applicable"]
    skipped = [r for r in outcome.routes if r.status == "not-applicable"]
    return ClaimView(
        outcome=outcome,
        anchor=anchor,
        mark=CLAIM_MARKS[outcome.status],
        word=CLAIM_WORDS[outcome.status],
        meaning=CLAIM_MEANINGS[outcome.status],
        claim_math=text_mathml(outcome.claim_text, "block") if outcome.claim_text else None,
        command=reproduce_command(outcome.file, run),
        routes=[route_view(r, f"{anchor}-{r.route}") for r in shown],
        skipped=skipped,
    )


def route_view(outcome: RouteOutcome, anchor: str) -> RouteView:
    symbolic = outcome.symbolic
    sides = []
    if symbolic is not None and symbolic.route_side:
        sides = [("route side", text_mathml(symbolic.route_side)), ("claim side", text_mathml(symbolic.claim_side))]
    return RouteView(
        outcome=outcome,
        anchor=anchor,
        mark=ROUTE_MARKS[outcome.status],
        word=ROUTE_WORDS[outcome.status],
        steps=[(label, text_mathml(expr)) for label, expr in outcome.steps],
        values=[text_mathml(f"{name} = {value}") for name, value in outcome.values.items()],
        rows=[row_view(row) for row in outcome.numeric],
        plots=plots.route_plots(outcome, anchor),
        symbolic_sides=sides,
    )


def row_view(row: NumericRow) -> RowView:
    return RowView(
        point=", ".join(f"{k} = {v}" for k, v in row.point.items()),
        route_value=f"{row.route_value:.12g}",
        claim_value=f"{row.claim_value:.12g}",
        rel_diff=f"{row.rel_diff:.2e}",
        error=f"{row.error:.1e}",
        bound=f"{row.bound:.1e}",
        agree=row.agree,
    )


def reproduce_command(path: str, run: Mapping[str, object]) -> str:
    """The command that re-checks one claim file with the run's settings."""
    options = run.get("options") if isinstance(run, Mapping) else None
    parts = ["crosscheck", "run", shlex.quote(path)]
    if isinstance(options, Mapping):
        for key in ("samples", "digits", "seed", "timeout"):
            if key in options:
                parts += [f"--{key}", shlex.quote(str(options[key]))]
    return " ".join(parts)
