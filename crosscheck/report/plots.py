"""Plots for the HTML report, drawn by crosscheck's own SVG writer (`svgplot`) and inlined.

Two kinds of plot, both generic so that a new route needs no report code:

- every entry of a route's `evidence["series"]` (rules: name, x_label,
  y_label, x, y, optional y_error, fit_x/fit_y/fit_label, log_x/log_y):
  the data as points (with error bars when given, else joined by a line),
  the fit as a dashed line;
- for a disagreement, the ratio claim/route at the numeric sample points,
  against each sampled parameter (at most three panels), with a dotted line at 1.

Non-finite values are left out, a series without a drawable point gives no
plot, and one longer than MAX_POINTS is thinned.  `svgplot` makes the SVG
safe for inlining (escaped text, prefixed ids, nothing a browser could fetch);
it replaced matplotlib, which cost ~0.08 s of CPU per figure.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from markupsafe import Markup

from crosscheck.report import svgplot
from crosscheck.results import RouteOutcome

MAX_POINTS = 2000  # evidence is meant to be small; a larger series is thinned, not refused
DATA, FIT, RATIO = "#1f3b73", "#b3541e", "#9c1c1c"


@dataclass(frozen=True)
class Plot:
    """One figure for the report: a caption and the inline SVG (or only the caption)."""

    caption: str
    svg: Markup | None = None


def available() -> bool:
    """Always True: the plots need no optional package any more (kept for callers that ask)."""
    return True


def route_plots(route: RouteOutcome, key: str) -> list[Plot]:
    """Every plot a route's outcome calls for; `key` makes the SVG ids unique on the page."""
    plots = [Plot(str(s.get("name", "series")), series_svg(s, f"{key}-s{i}"))
             for i, s in enumerate(_series(route.evidence))]
    ratio = ratio_points(route) if route.status == "disagree" else []
    if ratio:
        plots.append(Plot("ratio claim/route at the sample points", ratio_svg(ratio, f"{key}-ratio")))
    return plots


def _series(evidence: Mapping[str, object]) -> list[Mapping[str, object]]:
    """The well-formed series with at least one drawable point."""
    raw = evidence.get("series") if isinstance(evidence, Mapping) else None
    if not isinstance(raw, (list, tuple)):
        return []
    return [s for s in raw if isinstance(s, Mapping) and _drawable(s)]


def _drawable(series: Mapping[str, object]) -> bool:
    """Whether some point is finite (and positive where its axis is logarithmic)."""
    log_x, log_y = series.get("log_x") is True, series.get("log_y") is True
    return any(math.isfinite(x) and math.isfinite(y) and (x > 0 or not log_x) and (y > 0 or not log_y)
               for x, y in zip(_floats(series.get("x")), _floats(series.get("y"))))


def _floats(values: object) -> list[float]:
    """Floats (non-finite ones as NaN, which the drawing leaves out), or [] for anything else."""
    if not isinstance(values, (list, tuple)):
        return []
    try:
        numbers = [float(v) for v in values]
    except (TypeError, ValueError):
        return []
    return [v if math.isfinite(v) else math.nan for v in numbers]


def _thin(*columns: list[float]) -> list[list[float]]:
    """Every n-th entry of equally long columns so that at most MAX_POINTS remain."""
    n = min(len(c) for c in columns)
    step = max(1, math.ceil(n / MAX_POINTS))
    return [c[:n:step] for c in columns]


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
    label = str(series.get("name", "data"))
    x, y = _floats(series.get("x")), _floats(series.get("y"))
    errors = _floats(series.get("y_error"))
    if len(errors) >= min(len(x), len(y)) > 0:
        x, y, errors = _thin(x, y, errors)
    else:
        (x, y), errors = _thin(x, y), []
    layers = [svgplot.Layer(label, x, y, DATA, "circle", 3.0, None if errors else "solid", 1.0, errors or None)]
    fit_x, fit_y = _thin(_floats(series.get("fit_x")), _floats(series.get("fit_y")))
    if fit_x:
        layers.append(svgplot.Layer(str(series.get("fit_label", "fit")), fit_x, fit_y, FIT, None, line="dashed",
                                    width=1.2))
    panel = svgplot.Panel(layers, str(series.get("x_label", "x")), str(series.get("y_label", "y")),
                          log_x=series.get("log_x") is True, log_y=series.get("log_y") is True)
    return Markup(svgplot.figure_svg([panel], prefix, label))


def ratio_svg(points: Sequence[tuple[Mapping[str, float], float]], prefix: str) -> Markup:
    """claim/route against each sampled parameter (one panel per parameter, at most three)."""
    names = sorted({k for point, _ in points for k in point})[:3] or ["sample"]
    ratios = [ratio for _, ratio in points]
    one = svgplot.Layer("agreement (1)", [], [1.0], "#555555", None, line="dotted", width=0.8, across=True)
    panels = []
    for i, name in enumerate(names):
        xs = [point.get(name, float(j)) for j, (point, _) in enumerate(points)]
        layers = [svgplot.Layer("claim / route", xs, ratios, RATIO, "square", 4.0), one]
        if i:  # one y label and one legend (from the labels) for the figure
            layers = [dataclasses.replace(layer, label="") for layer in layers]
        panels.append(svgplot.Panel(layers, name, "" if i else "claim / route", margins=(0.06, 0.15)))
        # margins: points on the range's ends stay visible
    return Markup(svgplot.figure_svg(panels, prefix, "ratio claim/route"))
