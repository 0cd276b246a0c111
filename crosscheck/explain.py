"""`crosscheck explain`: a claim's check written out for a referee (LaTeX or Markdown).

This module runs the claims of one file and turns each outcome into an
`Explanation`: format-neutral text (the claim, each route's method as one
paragraph with its steps, the agreement table, the command that reproduces
it).  `report.latex` and `report.markdown` only typeset it, so the two
formats always say the same thing.
"""

from __future__ import annotations

import shlex
import sys
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from crosscheck.results import ClaimOutcome, RouteOutcome

STATUS_WORDS = {
    "confirmed": "confirmed (at least two exact routes agree and none disagrees)",
    "contradicted": "contradicted (an exact route disagrees)",
    "weak": "weak (only one route covers the claim)",
    "unchecked": "unchecked (no route covers the claim)",
    "invalid": "invalid (the claim file could not be read)",
}


@dataclass(frozen=True)
class RouteExplanation:
    """One route's part of the explanation: its method in words, then its steps."""

    name: str
    status: str
    method: str
    steps: tuple[tuple[str, str], ...]
    diagnosis: str


@dataclass(frozen=True)
class TableRow:
    """One row of the agreement table."""

    route: str
    grade: str
    status: str
    symbolic: str
    numeric: str
    seconds: str


@dataclass(frozen=True)
class Explanation:
    claim_id: str
    title: str
    location: str
    status: str
    claim_text: str
    sources: tuple[str, ...]
    routes: tuple[RouteExplanation, ...]
    table: tuple[TableRow, ...]
    not_applicable: tuple[str, ...]
    command: str
    versions: str
    error: str | None = None


def explain(outcome: ClaimOutcome, run: Mapping[str, object]) -> Explanation:
    """The explanation of one claim's outcome."""
    checked = [r for r in outcome.routes if r.status != "not-applicable"]
    versions = run.get("versions") if isinstance(run.get("versions"), Mapping) else {}
    return Explanation(
        claim_id=outcome.claim_id,
        title=outcome.title,
        location=f"{outcome.file}:{outcome.line}",
        status=STATUS_WORDS.get(outcome.status, outcome.status),
        claim_text=outcome.claim_text,
        sources=outcome.sources,
        routes=tuple(route_explanation(r) for r in checked),
        table=tuple(table_row(r) for r in checked),
        not_applicable=tuple(f"{r.route} ({r.reason})" if r.reason else r.route for r in outcome.routes if r not in checked),
        command=command_for(outcome.file, run),
        versions=", ".join(f"{k} {v}" for k, v in versions.items()),  # type: ignore[union-attr]
        error=outcome.error,
    )


def route_explanation(route: RouteOutcome) -> RouteExplanation:
    """The method paragraph: what the route is, what it used, how it compared, what it found."""
    parts = [f"{route.title} (grade {route.grade})."]
    if route.provenance:
        parts.append("It used: " + "; ".join(route.provenance) + ".")
    if route.symbolic is not None:
        how = f" ({route.symbolic.method})" if route.symbolic.method else ""
        parts.append(f"Symbolic comparison with the claim: {route.symbolic.verdict}{how}.")
    if route.numeric:
        parts.append(
            f"Numeric comparison at {len(route.numeric)} sample points: largest relative difference "
            f"{max(r.rel_diff for r in route.numeric):.2e}."
        )
    parts.append(f"Verdict: {route.status}" + (f" ({route.reason})." if route.reason else "."))
    return RouteExplanation(
        name=route.route, status=route.status, method=" ".join(parts), steps=route.steps,
        diagnosis=route.diagnosis.text if route.diagnosis else "",
    )


def table_row(route: RouteOutcome) -> TableRow:
    numeric = f"{route.max_rel_diff:.1e} at {len(route.numeric)} points" if route.max_rel_diff is not None else "none"
    return TableRow(
        route=route.route, grade=route.grade, status=route.status,
        symbolic=route.symbolic.verdict if route.symbolic else "none", numeric=numeric,
        seconds=f"{route.seconds:.2f}",
    )


def command_for(path: str, run: Mapping[str, object]) -> str:
    parts = ["crosscheck", "run", shlex.quote(path)]
    options = run.get("options")
    if isinstance(options, Mapping):
        for key in ("samples", "digits", "seed"):
            if key in options:
                parts += [f"--{key}", str(options[key])]
    return " ".join(parts)


def render(explanations: Sequence[Explanation], fmt: str) -> str:
    """Typeset in 'latex' (a complete document) or 'markdown'."""
    if fmt == "latex":
        from crosscheck.report.latex import to_latex

        return to_latex(explanations)
    if fmt == "markdown":
        from crosscheck.report.markdown import to_markdown

        return to_markdown(explanations)
    raise ValueError(f"unknown format '{fmt}': latex or markdown")


def run_explain(path: str, fmt: str, output: str | None = None, options=None, route_names: Sequence[str] | None = None) -> int:
    """The `crosscheck explain` command: run one claim file, write the explanation.

    Returns the exit code: 0 when nothing is contradicted or errored, 1 when
    something is, 2 when the file cannot be read (as `crosscheck run`).
    """
    from crosscheck.claimfile import load_claim_file
    from crosscheck.report.files import write_atomic
    from crosscheck.routes.registry import load_routes, select
    from crosscheck.runner import RunOptions, invalid_outcome, run_claims

    options = options or RunOptions()
    routes, _failures = load_routes()
    try:
        chosen = select(routes, list(route_names) if route_names else None)
    except KeyError as exc:
        print(f"crosscheck: {exc.args[0]}", file=sys.stderr)
        return 2
    claims, errors = load_claim_file(path, known_routes=routes)
    for error in errors:
        print(str(error), file=sys.stderr)
    outcomes = [invalid_outcome(e) for e in errors] + run_claims(claims, chosen, options)
    run = {
        "command": "crosscheck " + " ".join(shlex.quote(a) for a in sys.argv[1:]),
        "versions": _versions(),
        "options": {"samples": options.samples, "digits": options.digits, "seed": options.seed},
    }
    text = render([explain(o, run) for o in outcomes], fmt)
    if output:
        write_atomic(output, text)
    else:
        sys.stdout.write(text)
    if errors and not claims:
        return 2
    failed = any(o.status in ("contradicted", "invalid") for o in outcomes) or any(
        r.status in ("error", "timeout") for o in outcomes for r in o.routes
    )
    return 1 if failed else 0


def _versions() -> dict[str, str]:
    import platform

    import mpmath
    import sympy

    from crosscheck import __version__

    return {"crosscheck": __version__, "python": platform.python_version(), "sympy": sympy.__version__,
            "mpmath": mpmath.__version__}
