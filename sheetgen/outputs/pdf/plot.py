"""Small black-and-white line plots as reportlab vector drawings.

Drawn with plain shapes rather than a chart widget so that every line style,
tick and label is ours to place: curves are told apart by dash pattern and
weight, never by colour, and labels are kept inside the drawing's box.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from reportlab.graphics.shapes import Circle, Drawing, Group, Line, PolyLine, Rect, String
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, register

BLACK = colors.black
WHITE = colors.white
TICK_PT = 3.0
LABEL_PT = 7.5
AXIS_TITLE_PT = 8.0
GRID = colors.Color(0.55, 0.55, 0.55)  # mid grey: survives a photocopier, stays behind the curves


@dataclass(frozen=True)
class Series:
    """One curve: data in axis units, drawn on the left or right value axis."""

    x: np.ndarray
    y: np.ndarray
    dash: tuple[float, ...] | None = None  # None = solid
    width_pt: float = 1.4
    right_axis: bool = False


@dataclass(frozen=True)
class Marker:
    """A marked point with a text label, and guide lines down and across to the axes."""

    x: float
    y: float
    text: str
    right_axis: bool = False


@dataclass(frozen=True)
class Panel:
    """One plot area: its x range, curves, markers and vertical event lines ``(x, label)``."""

    x_range: tuple[float, float]
    x_title: str
    series: tuple[Series, ...]
    markers: tuple[Marker, ...] = ()
    events: tuple[tuple[float, str], ...] = ()
    heading: str = ""


@dataclass(frozen=True)
class Axis:
    """A value axis: its range and title; ``ticks`` None means chosen automatically."""

    lo: float
    hi: float
    title: str
    ticks: tuple[float, ...] | None = field(default=None)


def nice_ticks(lo: float, hi: float, *, target: int = 5) -> tuple[float, ...]:
    """Round tick values (steps of 1, 2 or 5 × 10^k) covering lo..hi."""
    span = hi - lo
    if span <= 0 or not math.isfinite(span):
        return (lo,)
    raw = span / target
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)
    first = math.ceil(lo / step - 1e-9) * step
    out = []
    v = first
    while v <= hi + step * 1e-9:
        out.append(round(v, 12))
        v += step
    return tuple(out)


def tick_label(v: float, ticks: tuple[float, ...]) -> str:
    """Tick text with just enough decimals that every tick reads as its value (2.5, not 2)."""
    step = abs(ticks[1] - ticks[0]) if len(ticks) > 1 else 1.0
    decimals = 0
    while decimals < 6 and abs(step * 10**decimals - round(step * 10**decimals)) > 1e-6 * max(1.0, step * 10**decimals):
        decimals += 1
    return f"{v:.{decimals}f}"


def nice_ceiling(x: float) -> float:
    """The next round value at or above x, for an axis top."""
    if x <= 0:
        return 1.0
    ticks = nice_ticks(0.0, x, target=5)
    step = ticks[1] - ticks[0] if len(ticks) > 1 else x
    return ticks[-1] if ticks[-1] >= x - 1e-12 else ticks[-1] + step


def panels_drawing(*, width_pt: float, height_pt: float, panels: tuple[Panel, ...], left: Axis,
                   right: Axis | None = None, legend: tuple[tuple[str, tuple[float, ...] | None, float], ...] = (),
                   gap_pt: float = 14.0) -> Drawing:
    """Side-by-side plot panels sharing the value axes: left axis on the first, right on the last.

    ``legend`` items are ``(text, dash, width_pt)`` drawn as line samples under the panels.
    """
    register()
    d = Drawing(width_pt, height_pt)
    left_w = _axis_room(left)
    right_w = _axis_room(right) if right is not None else 8.0
    legend_h = 12.0 * _legend_rows(legend, width_pt) if legend else 0.0
    bottom = 26.0 + legend_h
    top_pad = 14.0 if any(p.heading or p.events for p in panels) else 6.0
    plot_h = height_pt - bottom - top_pad
    usable = width_pt - left_w - right_w - gap_pt * (len(panels) - 1)
    panel_w = usable / len(panels)
    for k, panel in enumerate(panels):
        x0 = left_w + k * (panel_w + gap_pt)
        _panel(d, panel, x0=x0, y0=bottom, w=panel_w, h=plot_h, left=left, right=right,
               show_left=(k == 0), show_right=(right is not None and k == len(panels) - 1))
    if legend:
        _legend(d, legend, x0=left_w, y_top=legend_h + 2.0, width=width_pt - left_w)
    return d


def _axis_room(axis: Axis | None) -> float:
    if axis is None:
        return 0.0
    ticks = axis.ticks or nice_ticks(axis.lo, axis.hi)
    widest = max(stringWidth(tick_label(t, ticks), REGULAR, LABEL_PT) for t in ticks)
    return widest + TICK_PT + 4.0 + AXIS_TITLE_PT + 4.0


def _legend_rows(legend, width_pt: float) -> int:
    total = sum(stringWidth(t, REGULAR, LABEL_PT) + 34.0 for t, _, _ in legend)
    return 1 if total < width_pt - 40 else len(legend)


def _legend(d: Drawing, legend, *, x0: float, y_top: float, width: float) -> None:
    one_row = _legend_rows(legend, width + 40) == 1
    x, y = x0, y_top - 8.0
    for text, dash, w in legend:
        d.add(Line(x, y + 2.5, x + 24, y + 2.5, strokeColor=BLACK, strokeWidth=w, strokeDashArray=dash))
        d.add(String(x + 28, y, text, fontName=REGULAR, fontSize=LABEL_PT, fillColor=BLACK))
        if one_row:
            x += 28 + stringWidth(text, REGULAR, LABEL_PT) + 16
        else:
            y -= 12.0


def _panel(d: Drawing, p: Panel, *, x0, y0, w, h, left: Axis, right: Axis | None, show_left, show_right) -> None:
    xs_lo, xs_hi = p.x_range
    xt = nice_ticks(xs_lo, xs_hi)

    def px(x):
        return x0 + (np.asarray(x, dtype=float) - xs_lo) / (xs_hi - xs_lo) * w

    def py(y, axis: Axis):
        return y0 + (np.asarray(y, dtype=float) - axis.lo) / (axis.hi - axis.lo) * h

    lt = left.ticks or nice_ticks(left.lo, left.hi)
    for t in lt:  # light horizontal grid at the left axis ticks
        y = float(py(t, left))
        d.add(Line(x0, y, x0 + w, y, strokeColor=GRID, strokeWidth=0.3))
    d.add(Rect(x0, y0, w, h, strokeColor=BLACK, fillColor=None, strokeWidth=0.8))
    for t in xt:
        x = float(px(t))
        d.add(Line(x, y0, x, y0 - TICK_PT, strokeColor=BLACK, strokeWidth=0.6))
        d.add(String(x, y0 - TICK_PT - LABEL_PT - 0.5, tick_label(t, xt), fontName=REGULAR, fontSize=LABEL_PT,
                     textAnchor="middle", fillColor=BLACK))
    if p.heading:
        d.add(String(x0, y0 + h + 4.0, p.heading, fontName=BOLD, fontSize=AXIS_TITLE_PT, fillColor=BLACK))
    if show_left:
        _value_axis(d, left, lt, x=x0, y0=y0, h=h, side=-1)
    if show_right and right is not None:
        _value_axis(d, right, right.ticks or nice_ticks(right.lo, right.hi), x=x0 + w, y0=y0, h=h, side=1)

    heading_end = x0 + (stringWidth(p.heading, BOLD, AXIS_TITLE_PT) + 6 if p.heading else 0)
    events_labels: list[tuple[float, float, str]] = []
    x_title_notes: list[str] = []
    for x_event, label in p.events:
        x = float(px(x_event))
        d.add(Line(x, y0, x, y0 + h, strokeColor=BLACK, strokeWidth=0.6, strokeDashArray=(1, 2)))
        if label:
            # Above the frame, where no curve runs, centred on the line; if the heading is in the way
            # the axis title says which line it is instead.
            lw = stringWidth(label, REGULAR, LABEL_PT)
            lx = min(x - lw / 2, x0 + w - lw)
            if lx >= heading_end:
                events_labels.append((lx, y0 + h + 4.0, label))
            else:
                x_title_notes.append(f"dotted: {label}")
    x_title = "; ".join([p.x_title, *x_title_notes])
    d.add(String(x0 + w / 2, y0 - TICK_PT - LABEL_PT - AXIS_TITLE_PT - 3.5, x_title, fontName=REGULAR,
                 fontSize=AXIS_TITLE_PT, textAnchor="middle", fillColor=BLACK))
    clip = Group()
    for s in p.series:
        axis = right if (s.right_axis and right is not None) else left
        keep = (s.x >= xs_lo) & (s.x <= xs_hi)
        xs, ys = px(s.x[keep]), py(np.clip(s.y[keep], axis.lo, axis.hi), axis)
        if xs.size < 2:
            continue
        pts = np.column_stack([xs, ys]).ravel().tolist()
        clip.add(PolyLine(pts, strokeColor=BLACK, strokeWidth=s.width_pt, strokeDashArray=s.dash,
                          strokeLineJoin=1, strokeLineCap=0))
    d.add(clip)
    for lx, ly, label in events_labels:
        d.add(String(lx, ly, label, fontName=REGULAR, fontSize=LABEL_PT, fillColor=BLACK))

    for m in p.markers:
        axis = right if (m.right_axis and right is not None) else left
        x, y = float(px(m.x)), float(py(m.y, axis))
        d.add(Line(x0, y, x, y, strokeColor=BLACK, strokeWidth=0.6, strokeDashArray=(3, 2)))
        d.add(Line(x, y0, x, y, strokeColor=BLACK, strokeWidth=0.6, strokeDashArray=(3, 2)))
        d.add(Circle(x, y, 2.6, strokeColor=BLACK, fillColor=WHITE, strokeWidth=1.0))
        tw = stringWidth(m.text, BOLD, LABEL_PT)
        # Keep the label inside the panel: to the right of the point unless that would run off.
        tx = x + 5 if x + 5 + tw <= x0 + w - 2 else x - 5 - tw
        ty = y - LABEL_PT - 3 if y - LABEL_PT - 3 > y0 + 2 else y + 4
        d.add(Rect(tx - 1.5, ty - 2, tw + 3, LABEL_PT + 3, fillColor=WHITE, strokeColor=None))
        d.add(String(tx, ty, m.text, fontName=BOLD, fontSize=LABEL_PT, fillColor=BLACK))


def _value_axis(d: Drawing, axis: Axis, ticks, *, x: float, y0: float, h: float, side: int) -> None:
    """Ticks, labels and the rotated title of a value axis; side -1 = left, +1 = right."""
    widest = 0.0
    for t in ticks:
        y = y0 + (t - axis.lo) / (axis.hi - axis.lo) * h
        d.add(Line(x, y, x + side * TICK_PT, y, strokeColor=BLACK, strokeWidth=0.6))
        text = tick_label(t, ticks)
        widest = max(widest, stringWidth(text, REGULAR, LABEL_PT))
        d.add(String(x + side * (TICK_PT + 2), y - LABEL_PT * 0.35, text, fontName=REGULAR, fontSize=LABEL_PT,
                     textAnchor="end" if side < 0 else "start", fillColor=BLACK))
    tx = x + side * (TICK_PT + 2 + widest + 3 + (AXIS_TITLE_PT if side > 0 else 0))
    title = Group(String(0, 0, axis.title, fontName=REGULAR, fontSize=AXIS_TITLE_PT, textAnchor="middle",
                         fillColor=BLACK))
    title.transform = (0, 1, -1, 0, tx, y0 + h / 2)  # rotated 90° to read bottom to top
    d.add(title)
