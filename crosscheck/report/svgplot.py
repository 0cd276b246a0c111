"""A small SVG writer for the report's plots: points, error bars, lines, ticks, a legend.

Why our own: matplotlib spent 0.05-0.1 s of CPU per small figure (layout,
text measurement, tick machinery), a sixth of a library run, and needed an
optional extra.  The report's plots are one simple kind (one to three panels of
points and lines, linear or log axes), drawn here in about a millisecond.

The SVG is made for inlining into HTML: no XML prolog, DOCTYPE or namespace URL
(nothing a browser could fetch), text escaped here and drawn as <text>, ids
prefixed so that figures share a page.  Estimated text widths suffice to keep
labels apart and to size the margins.
"""

from __future__ import annotations

import html
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass

FONT = 9.0  # px; matplotlib's 9 pt at 72 dpi, as the report had
HEIGHT = 201.6  # 2.8 in at 72 dpi; width and height in pt as matplotlib wrote them: same size on the page
MINUS = "\u2212"
_SUPERSCRIPT = str.maketrans("0123456789-", "\u2070\u00b9\u00b2\u00b3\u2074\u2075\u2076\u2077\u2078\u2079\u207b")
_EM = {**dict.fromkeys(" il.,:;|!'j", 0.32), **dict.fromkeys("()[]{}/-ftr", 0.42), **dict.fromkeys("mwMW<>=+~&%_", 0.86)}
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
DEGENERATE = 1e-12  # a relative span below this is rounding noise, not a trend: drawn as a constant


@dataclass(frozen=True)
class Layer:
    """One labelled data set in a panel: markers, a line through them, or both.

    With `across`, a horizontal line at y[0] over the whole panel (ratio = 1),
    still part of the y range and the legend.
    """

    label: str
    x: Sequence[float]
    y: Sequence[float]
    color: str
    marker: str | None = "circle"  # "circle", "square" or None
    size: float = 3.0  # marker diameter (square side) in px
    line: str | None = None  # "solid", "dashed", "dotted" or None
    width: float = 1.0
    y_error: Sequence[float] | None = None
    across: bool = False


@dataclass(frozen=True)
class Panel:
    """One set of axes; `margins` (x, y): fractions of the data span added on each side.
    Layers with a label make the legend."""

    layers: Sequence[Layer]
    x_label: str = ""
    y_label: str = ""
    log_x: bool = False
    log_y: bool = False
    margins: tuple[float, float] = (0.05, 0.05)


@dataclass(frozen=True)
class Axis:
    """Limits and ticks in drawing coordinates (log10 of the value on a log axis)."""

    lo: float
    hi: float
    log: bool
    ticks: tuple[float, ...]
    labels: tuple[str, ...]
    note: str = ""  # how to read the labels: a scale factor and/or an offset

    def fraction(self, value: float, edge: bool = False) -> float | None:
        """Position of a data value along the axis (0 at `lo`, 1 at `hi`), None if it cannot be drawn;
        with `edge`, a value <= 0 on a log axis (a line to a limit h -> 0) sits at the low end."""
        if not (math.isfinite(value) and abs(value) <= 1e300) or (self.log and value <= 0):  # 1e300: spans stay finite
            return 0.0 if edge and self.log and math.isfinite(value) else None
        return self.place(math.log10(value) if self.log else value)

    def place(self, u: float) -> float:
        return (u - self.lo) / (self.hi - self.lo)


# -- text ---------------------------------------------------------------------------------------
def escape(text: str) -> str:
    """Text safe in SVG content and attributes: route labels are untrusted; XML forbids control characters."""
    return html.escape(_CONTROL.sub("", str(text)), quote=True)


def text_width(text: str, size: float = FONT) -> float:
    """Estimated width in px from DejaVu Sans advances (em), a little over rather than under."""
    return sum(_EM.get(c, 0.72 if c.isupper() else 0.63) for c in text) * size


def shorten(text: str, width: float, size: float = FONT) -> str:
    """The text cut with an ellipsis to fit `width` px, so a long label cannot run over the plot."""
    while len(text) > 1 and text_width(text, size) > width:
        text = text[:-2].rstrip() + "\u2026"  # one character fewer each time: the ellipsis replaces the last
    return text


def superscript(exponent: int) -> str:
    """10 to a power as plain text: Unicode superscripts need no markup or math parser."""
    return "10" + str(exponent).translate(_SUPERSCRIPT)


# -- ticks --------------------------------------------------------------------------------------
def _count(lo: float, hi: float, step: float) -> int:
    return math.floor(hi / step + 1e-6) - math.ceil(lo / step - 1e-6) + 1


def nice_step(lo: float, hi: float, most: int = 6) -> float:
    """The smallest step {1, 2, 5} x 10^k that puts at most `most` ticks in [lo, hi]
    (or the one before it, if that would leave a single tick: an axis needs two to be read)."""
    span = hi - lo
    if not (math.isfinite(span) and span > 0):
        raise ValueError(f"ticks need lo < hi, got {lo!r}, {hi!r}")
    exponent, previous = math.floor(math.log10(span / most)), None
    while True:
        for step in (float(f"{mantissa}e{exponent}") for mantissa in (1, 2, 5)):  # 5e-6, not 5 * 1e-6
            if _count(lo, hi, step) <= most:
                return previous if previous and _count(lo, hi, step) < 2 else step
            previous = step
        exponent += 1


def nice_ticks(lo: float, hi: float, most: int = 6) -> list[float]:
    """Tick values on a linear axis: whole multiples of `nice_step` inside [lo, hi] (a span above
    ~1e-12 of the values, as `make_axis` ensures, keeps k * step exact enough)."""
    step = nice_step(lo, hi, most)
    return [k * step for k in range(math.ceil(lo / step - 1e-6), math.floor(hi / step + 1e-6) + 1)]


def decade_ticks(lo: float, hi: float, most: int = 6) -> list[int]:
    """Exponents of the powers of ten inside [lo, hi] (log10 units); if many, multiples of a 1-2-5 step."""
    first, last = math.ceil(lo - 1e-9), math.floor(hi + 1e-9)
    every = 1 if last - first < most else round(nice_step(first, last, most))
    return list(range(first + -first % every, last + 1, every))


def _fixed(value: float, step: float) -> str:
    """A tick value with as many decimals as the step needs (no '-0', a true minus sign)."""
    decimals = max(0, -math.floor(math.log10(step) + 1e-9))
    return f"{0.0 if abs(value) < step / 2 else value:.{decimals}f}".replace("-", MINUS)


def linear_labels(ticks: Sequence[float], step: float) -> tuple[list[str], str]:
    """Labels for linear ticks, and a note for reading them ('' when they read alone).

    A span tiny against the values (all near 1.0000001) would need more digits
    than fit, or round to equal labels: the labels then count from an offset,
    "x10^e + offset".  Very large or small values get a common factor 10^e.
    """
    top = max(abs(t) for t in ticks)
    exponent = math.floor(math.log10(step) + 1e-9)
    if top / step >= 1e5:
        first = round(ticks[0] / step)
        mantissa = step / 10.0**exponent
        labels = [_fixed((round(t / step) - first) * mantissa, 1.0) for t in ticks]
        offset = _fixed(first * step, step)
        sign = "+ " + offset if not offset.startswith(MINUS) else MINUS + " " + offset[1:]
        scale = f"\u00d7{superscript(exponent)} " if exponent else ""
        return labels, scale + sign
    if top >= 1e5 or 0 < top < 1e-3:
        power = math.floor(math.log10(top))
        return [_fixed(t / 10.0**power, step / 10.0**power) for t in ticks], "\u00d7" + superscript(power)
    return [_fixed(t, step) for t in ticks], ""


def make_axis(values: Sequence[float], log: bool, margin: float, most: int = 6) -> Axis:
    """Limits around the drawable values (plus `margin` of the span each side) and their ticks."""
    unit = Axis(0.0, 1.0, log, (), ())  # its fraction() is the drawing coordinate
    coords = [u for u in map(unit.fraction, values) if u is not None]
    lo, hi = (min(coords), max(coords)) if coords else (0.0, 1.0)
    if hi - lo <= DEGENERATE * max(abs(lo), abs(hi)):  # a constant: widen by 5 % (1 at zero, half a decade)
        centre = (lo + hi) / 2
        half = 0.5 if log else (0.05 * abs(centre) or 1.0)
        lo, hi = centre - half, centre + half
    if log and len(decade_ticks(lo - margin * (hi - lo), hi + margin * (hi - lo), most)) < 2:
        lo, hi = math.floor(lo), max(math.ceil(hi), math.floor(lo) + 1)  # show whole decades
    pad = margin * (hi - lo)
    lo, hi = lo - pad, hi + pad
    if log:
        exponents = decade_ticks(lo, hi, most)
        return Axis(lo, hi, True, tuple(float(e) for e in exponents), tuple(superscript(e) for e in exponents))
    ticks = nice_ticks(lo, hi, most)
    labels, note = linear_labels(ticks, nice_step(lo, hi, most))
    return Axis(lo, hi, False, tuple(ticks), tuple(labels), note)


def x_axis(values: Sequence[float], log: bool, margin: float, length: float) -> Axis:
    """An x axis with as many ticks (up to 7) as keep their labels 6 px apart on `length` px."""
    for most in range(7, 2, -1):
        axis = make_axis(values, log, margin, most)
        places = [(axis.place(t) * length, text_width(label)) for t, label in zip(axis.ticks, axis.labels)]
        if all(b - a > (wa + wb) / 2 + 6 for (a, wa), (b, wb) in zip(places, places[1:])):
            return axis
    return axis


# -- drawing ------------------------------------------------------------------------------------
def _n(value: float) -> str:
    """A pixel coordinate to 0.1 px, short (the SVG stays small)."""
    text = f"{value:.1f}"
    return text[:-2] if text.endswith(".0") else text


_DASHES = {"solid": "", "dashed": ' stroke-dasharray="4.4 1.9"', "dotted": ' stroke-dasharray="1 1.65"'}


@dataclass(frozen=True)
class Box:
    """The plot area of one panel in px, and its axes."""

    left: float
    top: float
    width: float
    height: float
    x: Axis
    y: Axis

    def point(self, x: float, y: float, edge: bool = False) -> tuple[float, float] | None:
        """Pixel position of a data point (see `Axis.fraction` for `edge`)."""
        fx, fy = self.x.fraction(x, edge), self.y.fraction(y)
        if fx is None or fy is None:
            return None
        return self.left + fx * self.width, self.top + (1 - fy) * self.height

    def rect(self) -> str:  # attributes of the plot area's rectangle
        return f'x="{_n(self.left)}" y="{_n(self.top)}" width="{_n(self.width)}" height="{_n(self.height)}"'


def _runs(box: Box, layer: Layer, line: bool) -> list[list[tuple[float, float]]]:
    """Runs of drawable points in px; a point that cannot be drawn breaks a line, as NaN does."""
    if layer.across:
        fy = box.y.fraction(layer.y[0]) if layer.y else None
        py = 0.0 if fy is None else box.top + (1 - fy) * box.height
        return [] if fy is None else [[(box.left, py), (box.left + box.width, py)]]
    runs: list[list[tuple[float, float]]] = [[]]
    for x, y in zip(layer.x, layer.y):
        spot = box.point(x, y, edge=line)
        if spot is None:
            runs.append([])
        else:
            runs[-1].append(spot)
    return [r for r in runs if r]


def _marker(kind: str, x: float, y: float, size: float) -> str:
    if kind == "square":
        return f'<rect x="{_n(x - size / 2)}" y="{_n(y - size / 2)}" width="{_n(size)}" height="{_n(size)}"/>'
    return f'<circle cx="{_n(x)}" cy="{_n(y)}" r="{_n(size / 2 + 0.5)}"/>'  # + matplotlib's edge line


def _error_bars(box: Box, layer: Layer) -> str:
    """Bars y +- error with caps; on a log axis a bar reaching below 0 stops at the edge."""
    bars = []
    for x, y, e in zip(layer.x, layer.y, layer.y_error or ()):
        centre = box.point(x, y)
        if centre is None or not (math.isfinite(e) and e > 0):
            continue
        high, low = box.point(x, y + e), box.point(x, y - e)
        top, bottom = _n(high[1] if high else box.top), _n(low[1] if low else box.top + box.height)
        cap = _n(centre[0] - 2)
        bars.append(f"M{_n(centre[0])} {top}V{bottom}M{cap} {top}h4M{cap} {bottom}h4")
    return f'<path d="{"".join(bars)}" fill="none" stroke="{layer.color}" stroke-width="1"/>' if bars else ""


def _layer_svg(box: Box, layer: Layer) -> str:
    parts = []
    if layer.line:
        for run in _runs(box, layer, line=True):
            points = " ".join(f"{_n(x)},{_n(y)}" for x, y in run)
            parts.append(f'<polyline points="{points}" fill="none" stroke="{layer.color}" '
                         f'stroke-width="{layer.width}"{_DASHES[layer.line]}/>')
    if layer.across:
        return "".join(parts)
    if layer.y_error:
        parts.append(_error_bars(box, layer))
    if layer.marker:
        marks = "".join(_marker(layer.marker, x, y, layer.size) for run in _runs(box, layer, line=False)
                        for x, y in run)
        parts.append(f'<g fill="{layer.color}">{marks}</g>')
    return "".join(parts)


def _ticks_svg(box: Box) -> tuple[str, str]:
    """The light grid, and per axis a group of tick marks and tick labels."""
    bottom, right = box.top + box.height, box.left + box.width
    grid, marks, texts = [], [[], []], [[], []]
    for t, label in zip(box.x.ticks, box.x.labels):
        px = _n(box.left + box.x.place(t) * box.width)
        grid.append(f"M{px} {_n(box.top)}V{_n(bottom)}")
        marks[0].append(f'<line x1="{px}" y1="{_n(bottom)}" x2="{px}" y2="{_n(bottom + 3.5)}"/>')
        texts[0].append(f'<text x="{px}" y="{_n(bottom + 13)}" text-anchor="middle">{escape(label)}</text>')
    for t, label in zip(box.y.ticks, box.y.labels):
        py = _n(box.top + (1 - box.y.place(t)) * box.height)
        grid.append(f"M{_n(box.left)} {py}H{_n(right)}")
        marks[1].append(f'<line x1="{_n(box.left - 3.5)}" y1="{py}" x2="{_n(box.left)}" y2="{py}"/>')
        texts[1].append(f'<text x="{_n(box.left - 5.5)}" y="{py}" dy="3.2" text-anchor="end">{escape(label)}</text>')
    axes = "".join(f'<g class="plot-{a}-ticks"><g stroke="#000" stroke-width="0.8">{"".join(m)}</g>{"".join(t)}</g>'
                   for a, m, t in zip("xy", marks, texts))
    return f'<path d="{"".join(grid)}" stroke="#e3e3e3" stroke-width="0.8"/>', axes


def _labels_svg(box: Box, panel: Panel, width: float) -> str:
    """Axis titles, and the notes that say how to read offset or scaled tick labels."""
    bottom, x_note, y_note = box.top + box.height, escape(box.x.note), escape(box.y.note)
    room = box.width - 2 * (text_width(box.x.note, 8) + 6 if x_note else 0)
    x, y = _n(box.left - _y_tick_room(box.y) - 6), _n(box.top + box.height / 2)
    return "".join((
        f'<text class="plot-x-label" x="{_n(box.left + box.width / 2)}" y="{_n(bottom + 25)}" text-anchor="middle">'
        f'{escape(shorten(panel.x_label, room))}</text>' if panel.x_label else "",
        f'<text class="plot-x-note" x="{_n(min(box.left + box.width, width - 2))}" y="{_n(bottom + 25)}" '
        f'text-anchor="end" font-size="8">{x_note}</text>' if x_note else "",
        f'<text class="plot-y-label" x="{x}" y="{y}" transform="rotate(-90 {x} {y})" text-anchor="middle">'
        f'{escape(shorten(panel.y_label, box.height))}</text>' if panel.y_label else "",
        f'<text class="plot-y-note" x="{_n(box.left)}" y="{_n(box.top - 4)}" font-size="8">{y_note}</text>' if y_note else "",
    ))


def _legend_place(box: Box, w: float, h: float, busy: list[tuple[float, float]]) -> tuple[float, float]:
    """Where the legend covers the fewest drawn points (matplotlib's 'best', simplified)."""
    xs = (box.left + box.width - 4 - w, box.left + 4, box.left + (box.width - w) / 2)  # right, left, middle
    ys = (box.top + 4, box.top + box.height - 4 - h, box.top + (box.height - h) / 2)  # top, bottom, middle
    places = [(xs[0], ys[0]), (xs[1], ys[0]), (xs[1], ys[1]), (xs[0], ys[1]), (xs[0], ys[2]), (xs[1], ys[2]),
              (xs[2], ys[1]), (xs[2], ys[0])]  # matplotlib's order of preference
    return min(places, key=lambda p: sum(p[0] - 2 <= x <= p[0] + w + 2 and p[1] - 2 <= y <= p[1] + h + 2 for x, y in busy))


def _busy_points(box: Box, panel: Panel) -> list[tuple[float, float]]:
    """Points in px the legend should avoid: markers, lines sampled every 4 px."""
    busy: list[tuple[float, float]] = []
    for layer in panel.layers:
        for run in _runs(box, layer, line=bool(layer.line)):
            busy.extend(run)
            for (x0, y0), (x1, y1) in zip(run, run[1:]):
                steps = min(80, int(math.hypot(x1 - x0, y1 - y0) / 4))
                busy.extend((x0 + (x1 - x0) * i / steps, y0 + (y1 - y0) * i / steps) for i in range(1, steps))
    return busy


def _legend_svg(box: Box, panel: Panel) -> str:
    entries = [layer for layer in panel.layers if layer.label]
    if not entries:
        return ""
    labels = [shorten(layer.label, 0.8 * box.width - 26) for layer in entries]  # the caption has it in full
    w, h = 26 + max(text_width(label) for label in labels), 12.0 * len(entries) + 2
    x, y = _legend_place(box, w, h, _busy_points(box, panel))
    parts = [f'<rect x="{_n(x)}" y="{_n(y)}" width="{_n(w)}" height="{_n(h)}" fill="#fff" fill-opacity="0.7"/>']
    for i, (label, layer) in enumerate(zip(labels, entries)):
        row = y + 7 + 12 * i
        if layer.line:
            parts.append(f'<path d="M{_n(x + 2)} {_n(row)}h18" stroke="{layer.color}" stroke-width="1"'
                         f'{_DASHES[layer.line]}/>')
        if layer.marker:
            parts.append(f'<g fill="{layer.color}">{_marker(layer.marker, x + 11, row, layer.size)}</g>')
        parts.append(f'<text x="{_n(x + 24)}" y="{_n(row + 3.2)}">{escape(label)}</text>')
    return f'<g class="plot-legend">{"".join(parts)}</g>'


# -- layout -------------------------------------------------------------------------------------
def _values(panel: Panel) -> tuple[list[float], list[float]]:
    """Every x and y the axes must show: data, error bar ends, lines across."""
    xs = [v for layer in panel.layers if not layer.across for v in layer.x]
    ys = [v for layer in panel.layers for v in (layer.y[:1] if layer.across else layer.y)]
    for layer in panel.layers:
        ys.extend(v for y, e in zip(layer.y, layer.y_error or ()) if math.isfinite(e) and e > 0 for v in (y - e, y + e))
    return xs, ys


def _y_tick_room(axis: Axis) -> float:
    return max((text_width(label) for label in axis.labels), default=0.0) + 5.5


def _boxes(panels: Sequence[Panel], width: float) -> list[Box]:
    """Plot areas side by side; each panel's left margin fits its own y tick labels."""
    slot = (width - 12) / len(panels)
    boxes = []
    for i, panel in enumerate(panels):
        xs, ys = _values(panel)
        y = make_axis(ys, panel.log_y, panel.margins[1])
        top = 8 + (12 if y.note else 0)
        height = HEIGHT - top - 32
        left = i * slot + 4 + (11 if panel.y_label else 0) + _y_tick_room(y) + 4
        plot_width = (i + 1) * slot - left - (14 if i + 1 < len(panels) else 0)
        boxes.append(Box(left, top, plot_width, height, x_axis(xs, panel.log_x, panel.margins[0], plot_width), y))
    return boxes


def figure_svg(panels: Sequence[Panel], prefix: str, label: str) -> str:
    """The panels side by side as one inline <svg> (3.3 in per panel + 1.2 in wide, 2.8 in high)."""
    panels = list(panels)[:3] or [Panel(())]
    width = round((3.3 * len(panels) + 1.2) * 72, 1)
    safe = re.sub(r"[^A-Za-z0-9_-]", "-", prefix)
    defs, body = [], []
    for i, (panel, box) in enumerate(zip(panels, _boxes(panels, width))):
        clip = f"{safe}-clip{i}"
        defs.append(f'<clipPath id="{clip}"><rect {box.rect()}/></clipPath>')
        grid, ticks = _ticks_svg(box)
        drawn = "".join(_layer_svg(box, layer) for layer in panel.layers)
        body.append(f'<g class="plot-panel">{grid}<g clip-path="url(#{clip})">{drawn}</g>'
                    f'<rect {box.rect()} fill="none" stroke="#000" stroke-width="0.8"/>{ticks}'
                    f'{_labels_svg(box, panel, width)}{_legend_svg(box, panel)}</g>')
    return (f'<svg role="img" aria-label="{escape(label)}" class="plot" width="{_n(width)}pt" height="{HEIGHT}pt" '
            f'viewBox="0 0 {_n(width)} {HEIGHT}" font-family="DejaVu Sans, Arial, sans-serif" font-size="{_n(FONT)}">'
            f'<defs>{"".join(defs)}</defs><rect width="{_n(width)}" height="{HEIGHT}" fill="#fff"/>'
            f'{"".join(body)}</svg>')
