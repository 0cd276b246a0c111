"""The report's own SVG plots: ticks, geometry, escaping, ids, non-finite data.

The SVG is read back as a reader would read it: tick marks and their labels
give the data-to-pixel map, which must put every plotted point where its data
says (within a pixel).  Tick rules are common practice (1-2-5 tick steps;
decades on log axes); the expected tick lists are derived by hand beside each case.
"""

from __future__ import annotations

import math
import re
import xml.etree.ElementTree as ET
from decimal import Decimal
from fractions import Fraction

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from crosscheck.report import plots, svgplot
from crosscheck.results import NumericRow, RouteOutcome

SUPERSCRIPTS = str.maketrans("\u2070\u00b9\u00b2\u00b3\u2074\u2075\u2076\u2077\u2078\u2079\u207b", "0123456789-")


def parse(svg: str) -> ET.Element:
    root = ET.fromstring(str(svg))  # well-formed XML, and (no xmlns) plain tag names
    assert root.tag == "svg"
    return root


def number(text: str) -> float:
    return float(text.replace("\u2212", "-"))


def ticks(root: ET.Element, axis: str, panel: int = 0) -> list[tuple[float, str]]:
    """(pixel position, label) of every tick of one axis, from the tick marks and their labels."""
    group = root.findall(".//g[@class='plot-panel']")[panel].find(f"g[@class='plot-{axis}-ticks']")
    attr = "x1" if axis == "x" else "y1"
    marks = [float(line.get(attr)) for line in group.iter("line")]
    labels = ["".join(t.itertext()) for t in group.findall("text")]
    assert len(marks) == len(labels) >= 2
    return list(zip(marks, labels))


def to_data(pairs: list[tuple[float, float]], pixel: float, log: bool = False) -> tuple[float, float]:
    """Data value at `pixel` from two (pixel, value) ticks, and the data width of one pixel there."""
    (p0, v0), (p1, v1) = pairs[0], pairs[-1]
    if log:
        v0, v1 = math.log10(v0), math.log10(v1)
    per_pixel = (v1 - v0) / (p1 - p0)
    value = v0 + (pixel - p0) * per_pixel
    return (10**value, abs(per_pixel) * math.log(10) * 10**value) if log else (value, abs(per_pixel))


def decade(label: str) -> float:
    assert label.startswith("10"), label
    return 10.0 ** int(label[2:].translate(SUPERSCRIPTS))


# -- ticks --------------------------------------------------------------------------------------
@pytest.mark.parametrize(("lo", "hi", "expected"), [
    # Common practice: 1-2-5 tick steps.  By hand: span/6 = 0.167; step 0.1 gives 11 ticks, 0.2 gives 6.
    (0.0, 1.0, [0.0, 0.2, 0.4, 0.6, 0.8, 1.0]),
    # step 0.01 gives 14 ticks in [0.012, 0.152], 0.02 gives 7, 0.05 gives 0.05, 0.10, 0.15.
    (0.012, 0.152, [0.05, 0.10, 0.15]),
    # step 0.2 gives 15 ticks in [-3.1375, -0.1125], 0.5 gives -3.0 ... -0.5 (6 ticks).
    (-3.1375, -0.1125, [-3.0, -2.5, -2.0, -1.5, -1.0, -0.5]),
    # step 0.2 gives 10 ticks in [257.5, 259.4] (257.6 ... 259.4), 0.5 gives 4.
    (257.5, 259.4, [257.5, 258.0, 258.5, 259.0]),
    # step 1e-10 gives 8 ticks in [6.28318530714e0, 6.28318530802], 2e-10 gives 5 (...72 to ...80).
    (6.28318530714, 6.28318530802, [6.2831853072, 6.2831853074, 6.2831853076, 6.2831853078, 6.2831853080]),
])
def test_linear_ticks_are_hand_derived_1_2_5_steps(lo, hi, expected):
    assert svgplot.nice_ticks(lo, hi, most=6) == pytest.approx(expected, rel=1e-13, abs=1e-15)


@settings(max_examples=200, deadline=None)
@given(st.floats(-1e6, 1e6), st.floats(1e-9, 1e6), st.integers(3, 8))
def test_ticks_use_the_smallest_1_2_5_step_that_fits(lo, span, most):
    """Common practice: 1-2-5 tick steps; counted here in exact decimal arithmetic."""
    hi = lo + span
    assume(span > 1e-11 * abs(lo))  # smaller spans are float noise: make_axis widens them (DEGENERATE)
    got = svgplot.nice_ticks(lo, hi, most)
    step = Decimal(repr(svgplot.nice_step(lo, hi, most)))
    mantissa = step.scaleb(-step.adjusted()).normalize()
    assert mantissa in (1, 2, 5)
    assert all(lo - 1e-6 * float(step) <= t <= hi + 1e-6 * float(step) for t in got)
    assert [round(t / float(step)) for t in got] == list(range(round(got[0] / float(step)), round(got[0] / float(step)) + len(got)))
    smaller = {1: step / 2, 2: step / 2, 5: step * 2 / 5}[int(mantissa)]  # the 1-2-5 steps next to it
    larger = {1: step * 2, 2: step * 5 / 2, 5: step * 2}[int(mantissa)]

    def inside(s: Decimal) -> int:
        a, b, q = Fraction(lo), Fraction(hi), Fraction(s)
        return math.floor(b / q) - math.ceil(a / q) + 1

    assert len(got) >= 2  # an axis needs two ticks to be read
    if len(got) > most:
        assert inside(larger) < 2  # more than `most` only where the next step would leave one tick
    else:
        assert inside(smaller) > most - 1  # the smallest step that fits (one tick of slack at the range's ends)


def test_log_axes_put_ticks_at_decades_evenly_spaced():
    x = [10.0**-k for k in range(1, 12)]
    svg = plots.series_svg({"name": "log", "x": x, "y": [v * v for v in x], "log_x": True, "log_y": True}, "lg")
    root = parse(svg)
    for axis in "xy":
        pairs = ticks(root, axis)
        exponents = [math.log10(decade(label)) for _, label in pairs]  # every label is a power of ten
        gaps = [(b[0] - a[0]) / (eb - ea) for a, b, ea, eb in zip(pairs, pairs[1:], exponents, exponents[1:])]
        assert max(gaps) - min(gaps) < 0.3  # px per decade is the same everywhere (0.1 px rounding)
    # Within one decade there is no power of ten inside: the axis widens to whole decades.
    axis = svgplot.make_axis([2.0, 3.0, 8.0], log=True, margin=0.05)
    assert axis.labels == ("10\u2070", "10\u00b9") and axis.lo < 0 and axis.hi > 1


# -- geometry -----------------------------------------------------------------------------------
def test_plotted_points_map_back_to_their_data_within_a_pixel():
    x, y = [0.5, 1.25, 2.0, 3.5], [0.2, -0.7, 1.9, 0.4]
    root = parse(plots.series_svg({"name": "d", "x_label": "x", "y_label": "y", "x": x, "y": y}, "g"))
    xt = [(p, number(label)) for p, label in ticks(root, "x")]
    yt = [(p, number(label)) for p, label in ticks(root, "y")]
    circles = root.find(".//g[@class='plot-panel']").find("g[@clip-path]").findall(".//circle")
    assert len(circles) == len(x)
    for circle, xv, yv in zip(circles, x, y):
        got_x, px_x = to_data(xt, float(circle.get("cx")))
        got_y, px_y = to_data(yt, float(circle.get("cy")))
        assert abs(got_x - xv) <= px_x and abs(got_y - yv) <= px_y


def test_error_bars_and_log_points_map_back():
    x, y = [1.0, 2.0, 3.0], [1e-3, 1e-5, 1e-7]
    err = [5e-4, 5e-6, 5e-8]
    root = parse(plots.series_svg({"name": "e", "x": x, "y": y, "y_error": err, "log_y": True}, "eb"))
    yt = [(p, decade(label)) for p, label in ticks(root, "y")]
    bars = root.find(".//g[@clip-path]").find("path").get("d")
    ends = [float(v) for v in re.findall(r"M[\d.]+ ([\d.]+)V([\d.]+)", bars)[0]]  # first bar: top, bottom
    high, px_high = to_data(yt, ends[0], log=True)
    low, px_low = to_data(yt, ends[1], log=True)
    assert abs(high - (y[0] + err[0])) <= px_high and abs(low - (y[0] - err[0])) <= px_low


def test_tiny_span_gets_distinct_labels_read_through_an_offset():
    y = [1.0000001, 1.0000002, 1.0000003, 1.00000015]
    root = parse(plots.series_svg({"name": "t", "x": [1, 2, 3, 4], "y": y}, "tiny"))
    pairs = ticks(root, "y")
    labels = [label for _, label in pairs]
    assert len(set(labels)) == len(labels)
    note = "".join(root.find(".//text[@class='plot-y-note']").itertext())
    scale, offset = re.fullmatch(r"\u00d7(10\S+) \+ (\S+)", note).groups()
    values = [(p, number(label) * decade(scale) + float(offset)) for p, label in pairs]
    for circle, yv in zip(root.find(".//g[@clip-path]").findall(".//circle"), y):
        got, per_px = to_data(values, float(circle.get("cy")))
        assert abs(got - yv) <= per_px


def test_a_constant_series_still_gets_distinct_ticks():
    root = parse(plots.series_svg({"name": "c", "x": [4, 8, 16], "y": [20.5, 20.500000000000004, 20.5]}, "c"))
    labels = [label for _, label in ticks(root, "y")]
    assert len(set(labels)) == len(labels) >= 2
    assert root.find(".//text[@class='plot-y-note']") is None


# -- safety -------------------------------------------------------------------------------------
HOSTILE = "<script>alert(\"x\" & 'y')</script>"


def test_svg_is_self_contained_and_labels_are_escaped():
    svg = str(plots.series_svg({"name": HOSTILE, "x_label": HOSTILE, "y_label": "<b>", "x": [1, 2], "y": [3, 4],
                                "fit_x": [1, 2], "fit_y": [3, 4], "fit_label": "<i>fit</i>"}, "s"))
    assert "<script" not in svg and "<b>" not in svg and "<i>" not in svg
    for banned in ("<?xml", "DOCTYPE", "xmlns", "http", "//", "href", "<style", "<foreignObject", "<image"):
        assert banned not in svg, banned  # common practice: nothing a browser would fetch or run
    root = parse(svg)
    assert root.get("role") == "img" and root.get("class") == "plot" and root.get("aria-label") == HOSTILE
    texts = ["".join(t.itertext()) for t in root.iter("text")]
    assert "<i>fit</i>" in texts and "<b>" in texts
    assert any(t.startswith("<script>alert") for t in texts)  # the legend shows the name (maybe shortened)


def test_ids_carry_the_prefix_and_references_stay_inside():
    first = str(plots.ratio_svg([({"M": 1.0, "Q": 0.1}, 2.0), ({"M": 2.0, "Q": 0.3}, 2.0)], "claim-1 <x>"))
    second = str(plots.ratio_svg([({"M": 1.0}, 2.0)], "claim-2"))
    ids = {figure: re.findall(r'\bid="([^"]+)"', figure) for figure in (first, second)}
    assert ids[first] and all(i.startswith("claim-1--x--") for i in ids[first])
    assert all(i.startswith("claim-2-") for i in ids[second])
    assert not set(ids[first]) & set(ids[second])
    for figure in (first, second):
        for ref in re.findall(r"url\(#([^)]+)\)", figure):
            assert ref in ids[figure]


# -- data handling ------------------------------------------------------------------------------
def test_non_finite_values_are_skipped():
    nan, inf = math.nan, math.inf
    series = {"name": "n", "x": [1, 2, 3, 4, nan], "y": [1.0, nan, inf, 4.0, 5.0], "y_error": [0.1, 0.1, 0.1, nan, 0.1]}
    root = parse(plots.series_svg(series, "nf"))
    circles = root.find(".//g[@clip-path]").findall(".//circle")
    assert len(circles) == 2  # (1, 1) and (4, 4); the others have a NaN or inf coordinate
    xt = [(p, number(label)) for p, label in ticks(root, "x")]
    assert [round(to_data(xt, float(c.get("cx")))[0], 1) for c in circles] == [1.0, 4.0]
    assert "nan" not in str(plots.series_svg(series, "nf")).lower() and "inf" not in str(plots.series_svg(series, "nf"))


def fabricated(series: list[dict], status: str = "agree") -> RouteOutcome:
    row = NumericRow({"M": "1"}, 0.5, 0.25, 1.0, 1e-12, 1e-9, False)
    return RouteOutcome(route="r", title="t", grade="exact", status=status, numeric=(row,), evidence={"series": series})


def test_empty_series_give_no_plot_and_long_ones_are_thinned():
    empty = [{"name": "none", "x": [], "y": []}, {"name": "nan", "x": [math.nan], "y": [1.0]}]
    assert plots.route_plots(fabricated(empty), "k") == []
    n = 3 * plots.MAX_POINTS + 1
    long = {"name": "long", "x": [float(i) for i in range(n)], "y": [math.sin(i / 50) for i in range(n)],
            "y_error": [0.01] * n}
    (plot,) = plots.route_plots(fabricated([long]), "k")
    circles = parse(plot.svg).find(".//g[@clip-path]").findall(".//circle")
    assert len(circles) <= plots.MAX_POINTS and len(circles) == math.ceil(n / math.ceil(n / plots.MAX_POINTS))
    assert len(re.findall(r"V", parse(plot.svg).find(".//g[@clip-path]").find("path").get("d"))) == len(circles)


def test_ratio_plot_has_a_panel_per_parameter_and_a_line_at_one():
    # Source: Hawking 1975, T = 1/(8 pi M); a claim 1/(4 pi M) is twice it at every point.
    points = [({"M": m, "Q": q, "a": 0.1, "b": 0.2}, 2.0) for m, q in ((0.5, 0.1), (5.0, 0.2), (20.0, 0.3))]
    root = parse(plots.ratio_svg(points, "ratio"))
    panels = root.findall(".//g[@class='plot-panel']")
    assert len(panels) == 3  # at most three of the four parameters
    assert root.get("width") == f"{(3.3 * 3 + 1.2) * 72:.1f}pt" and root.get("height") == "201.6pt"  # as matplotlib's
    assert len(root.findall(".//g[@class='plot-legend']")) == 1
    for i, panel in enumerate(panels):
        yt = [(p, number(label)) for p, label in ticks(root, "y", i)]
        drawn = panel.find("g[@clip-path]")
        line = drawn.find("polyline")
        assert line.get("stroke-dasharray")  # dotted
        one, per_px = to_data(yt, float(line.get("points").split()[0].split(",")[1]))
        assert abs(one - 1.0) <= per_px
        squares = drawn.findall(".//rect")
        assert len(squares) == len(points)
        for square in squares:
            centre = float(square.get("y")) + float(square.get("height")) / 2
            value, per_px = to_data(yt, centre)
            assert abs(value - 2.0) <= per_px
