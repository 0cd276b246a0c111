"""Plots for the HTML report, drawn by matplotlib's SVG backend and inlined.

matplotlib is an optional extra (`pip install 'crosscheck[plots]'`): without
it `available()` is False and the report says which plots it would have drawn.
Two kinds of plot, both generic so that a new route needs no report code:

- every entry of a route's `evidence["series"]` (rules: name, x_label,
  y_label, x, y, optional y_error, fit_x/fit_y/fit_label, log_x/log_y);
- for a disagreement, the ratio claim/route at the numeric sample points,
  against each sampled parameter.

The SVG is made safe and self-contained for inlining: no XML prolog, DOCTYPE,
metadata or namespace URLs (nothing that looks like a network reference), ids
prefixed so that several figures can share one page, text drawn as <text>
(no mathtext parsing of route labels; matplotlib escapes the characters).
"""

from __future__ import annotations

import io
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from markupsafe import Markup

from crosscheck.results import RouteOutcome

EXTRA_HINT = "plots need the optional extra: pip install 'crosscheck[plots]' (matplotlib)"
MAX_POINTS = 2000  # evidence is meant to be small; a larger series is thinned, not refused
_RC = {
    "svg.fonttype": "none", "text.parse_math": False, "font.size": 9, "axes.grid": True,
    "grid.alpha": 0.35, "figure.dpi": 72,
}


@dataclass(frozen=True)
class Plot:
    """One figure for the report: a caption and the inline SVG (or only the caption)."""

    caption: str
    svg: Markup | None = None


def available() -> bool:
    """Whether matplotlib can be imported (the `plots` extra is installed)."""
    try:
        import matplotlib  # noqa: F401
    except ImportError:
        return False
    return True


def route_plots(route: RouteOutcome, key: str) -> list[Plot]:
    """Every plot a route's outcome calls for; `key` makes the SVG ids unique on the page."""
    wanted = [(f"{key}-s{i}", s) for i, s in enumerate(_series(route.evidence))]
    ratio = ratio_points(route) if route.status == "disagree" else []
    if not wanted and not ratio:
        return []
    if not available():
        captions = [str(s.get("name", "series")) for _, s in wanted] + (["ratio claim/route"] if ratio else [])
        return [Plot(f"{', '.join(captions)}: {EXTRA_HINT}")]
    plots = [Plot(str(s.get("name", "series")), series_svg(s, prefix)) for prefix, s in wanted]
    if ratio:
        plots.append(Plot("ratio claim/route at the sample points", ratio_svg(ratio, f"{key}-ratio")))
    return plots


def _series(evidence: Mapping[str, object]) -> list[Mapping[str, object]]:
    raw = evidence.get("series") if isinstance(evidence, Mapping) else None
    if not isinstance(raw, (list, tuple)):
        return []
    return [s for s in raw if isinstance(s, Mapping) and _floats(s.get("x")) and _floats(s.get("y"))]


def _floats(values: object) -> list[float]:
    """Floats (non-finite ones as NaN, which matplotlib leaves out), or [] for anything else."""
    if not isinstance(values, (list, tuple)):
        return []
    try:
        numbers = [float(v) for v in values]
    except (TypeError, ValueError):
        return []
    return [v if math.isfinite(v) else math.nan for v in numbers]


def _thin(xs: list[float], ys: list[float]) -> tuple[list[float], list[float]]:
    n = min(len(xs), len(ys))
    step = max(1, math.ceil(n / MAX_POINTS))
    return xs[:n:step], ys[:n:step]


def ratio_points(route: RouteOutcome) -> list[tuple[dict[str, float], float]]:
    """(point, claim/route) for every numeric row where both values are finite and route != 0."""
    points = []
    for row in route.numeric:
        if row.route_value == 0 or not (math.isfinite(row.route_value) and math.isfinite(row.claim_value)):
            continue
        try:
            point = {k: float(v) for k, v in row.point.items()}
        except ValueError:
            continue
        points.append((point, row.claim_value / row.route_value))
    return points


# -- drawing ------------------------------------------------------------------------------------
def series_svg(series: Mapping[str, object], prefix: str) -> Markup:
    """One evidence series with its error bars and fitted curve, as inline SVG."""
    import matplotlib

    with matplotlib.rc_context({**_RC, "svg.hashsalt": prefix}):
        figure, axes = _figure(1)
        x, y = _thin(_floats(series.get("x")), _floats(series.get("y")))
        errors = _floats(series.get("y_error"))[: len(y)] if series.get("y_error") else []
        label = str(series.get("name", "data"))
        if errors and len(errors) == len(y):
            axes[0].errorbar(x, y, yerr=errors, fmt="o", markersize=3, capsize=2, label=label, color="#1f3b73")
        else:
            axes[0].plot(x, y, "o-", markersize=3, linewidth=1, label=label, color="#1f3b73")
        fit_x, fit_y = _thin(_floats(series.get("fit_x")), _floats(series.get("fit_y")))
        if fit_x and fit_y:
            axes[0].plot(fit_x, fit_y, "--", linewidth=1.2, color="#b3541e", label=str(series.get("fit_label", "fit")))
        axes[0].set_xlabel(str(series.get("x_label", "x")))
        axes[0].set_ylabel(str(series.get("y_label", "y")))
        if series.get("log_x") is True:
            axes[0].set_xscale("log")
        if series.get("log_y") is True:
            axes[0].set_yscale("log")
        axes[0].legend(loc="best", frameon=False)
        return _svg(figure, prefix, label)


def ratio_svg(points: Sequence[tuple[Mapping[str, float], float]], prefix: str) -> Markup:
    """claim/route against each sampled parameter (one panel per parameter, at most three)."""
    import matplotlib

    names = sorted({k for point, _ in points for k in point})[:3] or ["sample"]
    with matplotlib.rc_context({**_RC, "svg.hashsalt": prefix}):
        figure, axes = _figure(len(names))
        ratios = [ratio for _, ratio in points]
        for ax, name in zip(axes, names):
            xs = [point.get(name, float(i)) for i, (point, _) in enumerate(points)]
            ax.plot(xs, ratios, "s", markersize=4, color="#9c1c1c", label="claim / route")
            ax.axhline(1.0, color="#555555", linewidth=0.8, linestyle=":", label="agreement (1)")
            ax.set_xlabel(name)
            ax.margins(x=0.06, y=0.15)  # points on the range's ends stay visible
        axes[0].set_ylabel("claim / route")
        axes[0].legend(loc="best", frameon=False)
        return _svg(figure, prefix, "ratio claim/route")


def _figure(panels: int):
    from matplotlib.figure import Figure

    figure = Figure(figsize=(3.3 * panels + 1.2, 2.8), layout="constrained")
    axes = [figure.add_subplot(1, panels, i + 1) for i in range(panels)]
    return figure, axes


def _svg(figure, prefix: str, label: str) -> Markup:
    from matplotlib.backends.backend_svg import FigureCanvasSVG

    buffer = io.StringIO()
    FigureCanvasSVG(figure).print_svg(buffer, metadata={"Date": None, "Creator": None, "Format": None, "Type": None})
    return Markup(inline_svg(buffer.getvalue(), prefix, label))


def inline_svg(text: str, prefix: str, label: str) -> str:
    """A standalone SVG document made fit for inlining in HTML (see the module docstring)."""
    text = re.sub(r"<\?xml[^>]*\?>", "", text)
    text = re.sub(r"<!DOCTYPE[^>]*>", "", text, flags=re.S)
    text = re.sub(r"<metadata>.*?</metadata>", "", text, flags=re.S)
    text = re.sub(r'\s+xmlns(:\w+)?="[^"]*"', "", text)
    safe_prefix = re.sub(r"[^A-Za-z0-9_-]", "-", prefix)
    text = re.sub(r'\bid="([^"]+)"', rf'id="{safe_prefix}-\1"', text)
    text = re.sub(r'href="#([^"]+)"', rf'href="#{safe_prefix}-\1"', text)
    text = re.sub(r"url\(#([^)]+)\)", rf"url(#{safe_prefix}-\1)", text)
    escaped = label.replace("&", "&amp;").replace('"', "&quot;").replace("<", "&lt;").replace(">", "&gt;")
    text = text.replace("<svg ", f'<svg role="img" aria-label="{escaped}" class="plot" ', 1)
    return text.strip()
