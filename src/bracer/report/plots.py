"""SVG charts written by bracer's own code: time series with limit bands, event spans and stop markers, and
bar charts of stop timings against their budgets.

The charts must read on a greyscale printout and for a colour-blind reader, so nothing is told by colour
alone: every limit layer has its own fill *pattern* and line *dash* (planned: light fill, dashed line; device:
diagonal hatching, dash-dot line; mechanical: cross-hatching, solid heavy line; participant: dotted line),
each line carries a text label, series are told apart by dash and by a label at their end, and event spans
carry their finding or stop number.

Output is deterministic (fixed number formatting, no random ids), so the same data give the same bytes.  For
HTML the SVG is inlined without an ``xmlns`` attribute (HTML5 needs none; the report holds no URL at all); a
standalone file (Markdown's plot files, the PDF's images) carries it.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Literal
from xml.sax.saxutils import escape

import numpy as np

__all__ = [
    "Band",
    "Bar",
    "BarChart",
    "Chart",
    "Level",
    "Marker",
    "Panel",
    "Series",
    "Span",
    "nice_ticks",
    "render",
]

LayerStyle = Literal["planned", "device", "mechanical", "participant", "near", "reference"]
SpanStyle = Literal["violation", "near_miss", "stop", "note"]
MarkerStyle = Literal["trigger", "standstill", "torque_off", "end"]

# ------------------------------------------------------------------------------------------------ the spec


@dataclass(frozen=True, eq=False)
class Series:
    """One line: its pieces (each a pair of time and value arrays, already decimated) and a label."""

    label: str
    pieces: tuple[tuple[np.ndarray, np.ndarray], ...]
    style: int = 0  # index into the line styles; 0 is the main signal


@dataclass(frozen=True, slots=True)
class Band:
    """The zone beyond a limit: from ``edge`` (the limit) outwards to the plot border.

    ``side`` +1: the zone above the limit; −1: below it.
    """

    edge: float
    side: int
    style: LayerStyle
    label: str


@dataclass(frozen=True, slots=True)
class Level:
    """A horizontal line with a label (a limit without a band, e.g. the participant's range)."""

    y: float
    style: LayerStyle
    label: str


@dataclass(frozen=True, slots=True)
class Span:
    """A time span marked across the panel (a finding's event), labelled with its number."""

    t0: float
    t1: float
    label: str
    style: SpanStyle = "violation"


@dataclass(frozen=True, slots=True)
class Marker:
    """A vertical line at one time (stop trigger, standstill, torque off), labelled."""

    t: float
    label: str
    style: MarkerStyle


@dataclass(frozen=True, eq=False)
class Panel:
    """One plot area sharing the chart's time axis."""

    ylabel: str
    series: tuple[Series, ...] = ()
    bands: tuple[Band, ...] = ()
    levels: tuple[Level, ...] = ()
    spans: tuple[Span, ...] = ()
    markers: tuple[Marker, ...] = ()
    note: str = ""  # shown in the panel when it has no series (e.g. "channel not in the log")
    #: values the y axis must show whatever the data (e.g. zero force)
    y_include: tuple[float, ...] = ()
    #: "limits": the y axis shows every limit line; "data": the data, and the limit lines near them (zooms)
    fit: Literal["limits", "data"] = "limits"


@dataclass(frozen=True, eq=False)
class Chart:
    """Panels stacked on one time axis, ``t0``–``t1`` in seconds on the log clock."""

    panels: tuple[Panel, ...]
    t0: float
    t1: float
    xlabel: str = "time on the log clock (s)"


@dataclass(frozen=True, slots=True)
class Bar:
    """One bar: a measured time against a budget, both in ``unit``; ``value`` None: the event never came."""

    label: str
    value: float | None
    budget: float | None
    unit: str
    style: Literal["standstill", "torque_off"] = "standstill"
    note: str = ""


@dataclass(frozen=True, eq=False)
class BarChart:
    bars: tuple[Bar, ...]
    xlabel: str
    cap: float | None = None  # where a bar for an event that never came ends (the log end), in the bars' unit
    notes: tuple[str, ...] = field(default=())


# ------------------------------------------------------------------------------------------------ geometry

WIDTH = 800
LEFT = 66
RIGHT = 190  # room for the labels of limits and series
TOP = 16
PANEL_H = 118
GAP = 26
BOTTOM = 40
FONT = "DejaVu Sans, Helvetica, Arial, sans-serif"
#: pixel columns of the plot area: the decimation keeps the extremes of each
PLOT_COLUMNS = WIDTH - LEFT - RIGHT

_INK = "#1a1a1a"
_GRID = "#d9d9d9"
_SERIES = (  # colour, dash: distinguishable in greyscale by the dash alone
    ("#1a1a1a", ""),
    ("#1f5fa8", "7 3"),
    ("#b35806", "2 2"),
    ("#4d7f17", "9 3 2 3"),
    ("#6a3d9a", "12 4"),
    ("#7f7f7f", "4 2 1 2"),
)
_LAYER_LINE = {
    "planned": ("#9a6a00", "6 3", 1.2),
    "device": ("#b2401a", "9 3 2 3", 1.3),
    "mechanical": ("#6b0f0f", "", 1.8),
    "participant": ("#0b6b5e", "1.5 2.5", 1.6),
    "near": ("#7f7f7f", "3 3", 0.9),
    "reference": ("#555555", "4 2 1 2", 1.0),
}
_SPAN_FILL = {
    "violation": ("#c0392b", 0.16),
    "near_miss": ("#7f7f7f", 0.14),
    "stop": ("#1f5fa8", 0.10),
    "note": ("#7f7f7f", 0.08),
}
_MARKER = {
    "trigger": ("#1a1a1a", "", 1.6),
    "standstill": ("#1f5fa8", "6 3", 1.4),
    "torque_off": ("#6a3d9a", "2 2", 1.6),
    "end": ("#7f7f7f", "1 3", 1.0),
}


def _n(v: float) -> str:
    """A coordinate with one decimal, no negative zero."""
    text = f"{v:.1f}"
    return "0.0" if text == "-0.0" else text


def _esc(text: str) -> str:
    return escape(text, {'"': "&quot;"})


def nice_ticks(lo: float, hi: float, target: int = 5) -> list[float]:
    """Round tick values (1, 2, 2.5 or 5 × 10^k apart) covering ``[lo, hi]``, about ``target`` of them."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo] if math.isfinite(lo) else []
    raw = (hi - lo) / max(target, 1)
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)
    first = math.ceil(lo / step - 1e-9)
    last = math.floor(hi / step + 1e-9)
    return [round(k * step, 12) for k in range(first, last + 1)]


def _tick_text(v: float, step: float) -> str:
    if step >= 1 or v == 0:
        return f"{v:.0f}" if abs(v - round(v)) < 1e-9 else f"{v:g}"
    decimals = max(0, -math.floor(math.log10(step) + 1e-9))
    if abs(step * 10**decimals - round(step * 10**decimals)) > 1e-6:
        decimals += 1
    return f"{v:.{decimals}f}"


def _y_range(panel: Panel) -> tuple[float, float]:
    values: list[float] = list(panel.y_include)
    for s in panel.series:
        for _, x in s.pieces:
            if x.size:
                values += [float(np.min(x)), float(np.max(x))]
    data_lo = min(values) if values else None
    data_hi = max(values) if values else None
    limits = [b.edge for b in panel.bands] + [lv.y for lv in panel.levels]
    if panel.fit == "data" and data_lo is not None and data_hi is not None:
        reach = (data_hi - data_lo) or abs(data_hi) * 0.1 or 1.0
        limits = [v for v in limits if data_lo - reach <= v <= data_hi + reach]
    values += limits
    if not values:
        return 0.0, 1.0
    lo, hi = min(values), max(values)
    if data_lo is not None and data_hi is not None:
        # every band's edge is shown; when a zone lies on one side only, leave room for the zone itself
        lo = min(lo, data_lo)
        hi = max(hi, data_hi)
    if hi - lo <= 0:
        pad = abs(hi) * 0.1 or 1.0
        return lo - pad, hi + pad
    pad = (hi - lo) * 0.08
    return lo - pad, hi + pad


# ------------------------------------------------------------------------------------------------ patterns


def _defs(uid: str) -> str:
    return (
        "<defs>"
        f'<pattern id="{uid}-dev" patternUnits="userSpaceOnUse" width="7" height="7" '
        'patternTransform="rotate(45)">'
        '<line x1="0" y1="0" x2="0" y2="7" stroke="#b2401a" stroke-width="1.4"/></pattern>'
        f'<pattern id="{uid}-mech" patternUnits="userSpaceOnUse" width="5" height="5">'
        '<path d="M0 0L5 5M5 0L0 5" stroke="#6b0f0f" stroke-width="1"/></pattern>'
        f'<pattern id="{uid}-viol" patternUnits="userSpaceOnUse" width="6" height="6" '
        'patternTransform="rotate(-45)">'
        '<line x1="0" y1="0" x2="0" y2="6" stroke="#c0392b" stroke-width="0.8" stroke-opacity="0.5"/>'
        "</pattern>"
        "</defs>"
    )


def _band_fill(style: LayerStyle, uid: str) -> tuple[str, str]:
    """(fill, opacity) of the zone beyond a limit of this layer."""
    if style == "planned":
        return "#e9d9a6", "0.55"
    if style == "device":
        return f"url(#{uid}-dev)", "0.55"
    if style == "mechanical":
        return f"url(#{uid}-mech)", "0.75"
    return "none", "0"


# ------------------------------------------------------------------------------------------------ rendering


def _spread(wanted: list[float], low: float, high: float, gap: float = 11.0) -> list[float]:
    """Label positions near ``wanted`` (pixel y, any order) at least ``gap`` apart, kept in [low, high]."""
    if not wanted:
        return []
    order = sorted(range(len(wanted)), key=lambda i: wanted[i])
    placed = [0.0] * len(wanted)
    y_prev = -math.inf
    for i in order:
        y = max(wanted[i], y_prev + gap, low)
        placed[i] = y
        y_prev = y
    overflow = y_prev - high
    if overflow > 0:  # shift the stack up, keeping the gaps
        for i in order:
            placed[i] -= overflow
    return placed


def _text(
    x: float,
    y: float,
    text: str,
    *,
    size: float = 10.5,
    anchor: str = "start",
    weight: str = "",
    fill: str = _INK,
    extra: str = "",
) -> str:
    w = f' font-weight="{weight}"' if weight else ""
    return (
        f'<text x="{_n(x)}" y="{_n(y)}" font-size="{size:g}" text-anchor="{anchor}" fill="{fill}"{w}{extra}>'
        f"{_esc(text)}</text>"
    )


def _panel(panel: Panel, chart: Chart, top: float, uid: str) -> list[str]:
    out: list[str] = []
    x0, x1 = LEFT, WIDTH - RIGHT
    y_top, y_bot = top, top + PANEL_H
    lo, hi = _y_range(panel)
    span_t = chart.t1 - chart.t0 if chart.t1 > chart.t0 else 1.0

    def px(t: float) -> float:
        return x0 + (t - chart.t0) / span_t * (x1 - x0)

    def py(v: float) -> float:
        return y_bot - (v - lo) / (hi - lo) * (y_bot - y_top)

    clip = f"{uid}-clip{int(top)}"
    out.append(
        f'<clipPath id="{clip}"><rect x="{_n(x0)}" y="{_n(y_top)}" width="{_n(x1 - x0)}" '
        f'height="{_n(y_bot - y_top)}"/></clipPath>'
    )
    out.append(
        f'<rect x="{_n(x0)}" y="{_n(y_top)}" width="{_n(x1 - x0)}" height="{_n(PANEL_H)}" '
        'fill="#ffffff" stroke="none"/>'
    )
    # zones beyond limits, innermost layer first so that outer layers lie on top
    order = {"planned": 0, "device": 1, "mechanical": 2}
    for band in sorted(panel.bands, key=lambda b: order.get(b.style, 3)):
        fill, opacity = _band_fill(band.style, uid)
        if fill == "none":
            continue
        edge = py(band.edge)
        ya, yb = (y_top, edge) if band.side > 0 else (edge, y_bot)
        ya, yb = max(ya, y_top), min(yb, y_bot)
        if yb > ya:
            out.append(
                f'<rect x="{_n(x0)}" y="{_n(ya)}" width="{_n(x1 - x0)}" height="{_n(yb - ya)}" '
                f'fill="{fill}" fill-opacity="{opacity}" stroke="none"/>'
            )
    # grid and y ticks
    ticks = nice_ticks(lo, hi, 5)
    step = ticks[1] - ticks[0] if len(ticks) > 1 else 1.0
    for v in ticks:
        y = py(v)
        out.append(
            f'<line x1="{_n(x0)}" y1="{_n(y)}" x2="{_n(x1)}" y2="{_n(y)}" stroke="{_GRID}" '
            'stroke-width="0.6"/>'
        )
        out.append(_text(x0 - 5, y + 3.5, _tick_text(v, step), size=9.5, anchor="end"))
    scale = _time_scale(chart)
    tticks = nice_ticks(chart.t0 / scale, chart.t1 / scale, 6)
    tstep = tticks[1] - tticks[0] if len(tticks) > 1 else 1.0
    for t in tticks:
        x = px(t * scale)
        out.append(
            f'<line x1="{_n(x)}" y1="{_n(y_top)}" x2="{_n(x)}" y2="{_n(y_bot)}" stroke="{_GRID}" '
            'stroke-width="0.6"/>'
        )
        out.append(_text(x, y_bot + 13, _tick_text(t, tstep), size=9.5, anchor="middle"))
    # event spans
    for sp in panel.spans:
        xa, xb = max(px(sp.t0), x0), min(px(sp.t1), x1)
        if xb - xa < 2.0:  # a short event still shows as a visible strip
            mid = (xa + xb) / 2
            xa, xb = mid - 1.0, mid + 1.0
        colour, alpha = _SPAN_FILL[sp.style]
        out.append(
            f'<rect x="{_n(xa)}" y="{_n(y_top)}" width="{_n(xb - xa)}" height="{_n(PANEL_H)}" '
            f'fill="{colour}" fill-opacity="{alpha}" stroke="{colour}" stroke-width="0.6"/>'
        )
        if sp.style == "violation":
            out.append(
                f'<rect x="{_n(xa)}" y="{_n(y_top)}" width="{_n(xb - xa)}" height="{_n(PANEL_H)}" '
                f'fill="url(#{uid}-viol)" stroke="none"/>'
            )
    # limit lines with their labels
    lines: list[tuple[float, str, LayerStyle]] = [(b.edge, b.label, b.style) for b in panel.bands]
    lines += [(lv.y, lv.label, lv.style) for lv in panel.levels]
    for y_val, _, style in lines:
        colour, dash, width = _LAYER_LINE[style]
        y = py(y_val)
        if y_top - 0.5 <= y <= y_bot + 0.5:
            d = f' stroke-dasharray="{dash}"' if dash else ""
            out.append(
                f'<line x1="{_n(x0)}" y1="{_n(y)}" x2="{_n(x1)}" y2="{_n(y)}" stroke="{colour}" '
                f'stroke-width="{width:g}"{d}/>'
            )
    # series
    out.append(f'<g clip-path="url(#{clip})">')
    ends: list[tuple[float, str, int]] = []
    for s in panel.series:
        colour, dash = _SERIES[s.style % len(_SERIES)]
        d = f' stroke-dasharray="{dash}"' if dash else ""
        width = 1.2 if s.style == 0 else 1.3
        last: tuple[float, float] | None = None
        for t_piece, x_piece in s.pieces:
            tp: np.ndarray = np.asarray(t_piece)
            xp: np.ndarray = np.asarray(x_piece)
            if tp.size == 0:
                continue
            xs: np.ndarray = x0 + (tp - chart.t0) / span_t * (x1 - x0)
            ys: np.ndarray = y_bot - (xp - lo) / (hi - lo) * (y_bot - y_top)
            pts = " ".join(f"{_n(a)},{_n(b)}" for a, b in zip(xs.tolist(), ys.tolist(), strict=True))
            if tp.size == 1:
                out.append(
                    f'<circle cx="{_n(float(xs[0]))}" cy="{_n(float(ys[0]))}" r="1.6" fill="{colour}"/>'
                )
            else:
                out.append(
                    f'<polyline points="{pts}" fill="none" stroke="{colour}" stroke-width="{width:g}"'
                    f' stroke-linejoin="round"{d}/>'
                )
            last = (float(xs[-1]), float(ys[-1]))
        if last is not None and (len(panel.series) > 1 or s.label):
            ends.append((last[1], s.label, s.style))
    out.append("</g>")
    # markers
    for m in panel.markers:
        x = px(m.t)
        if not (x0 - 0.5 <= x <= x1 + 0.5):
            continue
        colour, dash, width = _MARKER[m.style]
        d = f' stroke-dasharray="{dash}"' if dash else ""
        out.append(
            f'<line x1="{_n(x)}" y1="{_n(y_top)}" x2="{_n(x)}" y2="{_n(y_bot)}" stroke="{colour}" '
            f'stroke-width="{width:g}"{d}/>'
        )
    # labels: spans and markers along the top, limit lines and series ends in the right margin
    tops: list[tuple[float, str]] = [
        ((max(px(sp.t0), x0) + min(px(sp.t1), x1)) / 2, sp.label) for sp in panel.spans if sp.label
    ]
    tops += [(px(m.t), m.label) for m in panel.markers if m.label and x0 - 0.5 <= px(m.t) <= x1 + 0.5]
    tops.sort()
    x_prev = -math.inf
    row = 0
    for x, label in tops:
        row = row + 1 if x - x_prev < 6.5 * len(label) + 6 else 0
        x_prev = x if row == 0 else x_prev
        y_label = y_top + 10 + 11 * (row % 3)
        # a white card under the label, so it reads over hatching (SVG's paint-order is not everywhere)
        out.append(
            f'<rect x="{_n(x + 1)}" y="{_n(y_label - 8.5)}" width="{_n(5.8 * len(label) + 3)}" height="11" '
            'fill="#ffffff" fill-opacity="0.9" stroke="none"/>'
        )
        out.append(_text(x + 2, y_label, label, size=9, weight="bold"))
    right: list[tuple[float, str, str]] = []
    for y_val, label, style in lines:
        y = py(y_val)
        if label and y_top - 0.5 <= y <= y_bot + 0.5:
            right.append((y, label, _LAYER_LINE[style][0]))
    for y, label, style_idx in ends:
        right.append((y, label, _SERIES[style_idx % len(_SERIES)][0]))
    placed = _spread([y + 3.5 for y, _, _ in right], y_top + 8, y_bot + 4)
    for (_, label, colour), y in zip(right, placed, strict=True):
        out.append(_text(x1 + 6, y, label, size=9, fill=colour))
    if not panel.series and panel.note:
        out.append(
            _text((x0 + x1) / 2, (y_top + y_bot) / 2, panel.note, size=11, anchor="middle", fill="#555555")
        )
    # frame and y label
    out.append(
        f'<rect x="{_n(x0)}" y="{_n(y_top)}" width="{_n(x1 - x0)}" height="{_n(PANEL_H)}" '
        f'fill="none" stroke="{_INK}" stroke-width="0.8"/>'
    )
    yl = (y_top + y_bot) / 2
    out.append(
        _text(14, yl, panel.ylabel, size=10.5, anchor="middle", extra=f' transform="rotate(-90 14 {_n(yl)})"')
    )
    return out


#: Time axes longer than this are labelled in minutes.
MINUTES_FROM = 900.0


def _time_scale(chart: Chart) -> float:
    """Seconds per unit of the time axis' labels: 60 for a long span (minutes), else 1."""
    return 60.0 if chart.t1 - chart.t0 > MINUTES_FROM else 1.0


def _chart(chart: Chart, uid: str) -> tuple[list[str], float]:
    parts: list[str] = []
    top = TOP
    for panel in chart.panels:
        parts += _panel(panel, chart, top, uid)
        top += PANEL_H + GAP
    height = top - GAP + BOTTOM
    xlabel = chart.xlabel.replace("(s)", "(min)") if _time_scale(chart) == 60.0 else chart.xlabel
    parts.append(_text((LEFT + WIDTH - RIGHT) / 2, height - 8, xlabel, size=10.5, anchor="middle"))
    return parts, height


def _bars(chart: BarChart, uid: str) -> tuple[list[str], float]:
    row_h = 30
    x0, x1 = LEFT + 110, WIDTH - 90
    top = TOP + 4
    values = [b.value for b in chart.bars if b.value is not None] + [b.budget for b in chart.bars if b.budget]
    hi = max(values + ([chart.cap] if chart.cap else []), default=1.0) * 1.1 or 1.0
    height = top + row_h * len(chart.bars) + 36 + 14 * len(chart.notes)
    out: list[str] = []

    def px(v: float) -> float:
        return x0 + v / hi * (x1 - x0)

    ticks = nice_ticks(0.0, hi, 6)
    step = ticks[1] - ticks[0] if len(ticks) > 1 else 1.0
    y_axis = top + row_h * len(chart.bars)
    for v in ticks:
        out.append(
            f'<line x1="{_n(px(v))}" y1="{_n(top)}" x2="{_n(px(v))}" y2="{_n(y_axis)}" '
            f'stroke="{_GRID}" stroke-width="0.6"/>'
        )
        out.append(_text(px(v), y_axis + 13, _tick_text(v, step), size=9.5, anchor="middle"))
    for k, b in enumerate(chart.bars):
        y = top + k * row_h
        out.append(_text(x0 - 8, y + row_h / 2 - 1, b.label, size=10, anchor="end"))
        if b.budget is not None:
            budget = f"budget {_tick_text(b.budget, step)} {b.unit}"
            out.append(_text(x0 - 8, y + row_h / 2 + 9, budget, size=8.5, anchor="end", fill="#b2401a"))
        if b.value is not None:
            w = max(px(b.value) - x0, 1.0)
            fill = "#4a4a4a" if b.style == "standstill" else f"url(#{uid}-dev)"
            stroke = "#1a1a1a" if b.style == "standstill" else "#b2401a"
            out.append(
                f'<rect x="{_n(x0)}" y="{_n(y + 6)}" width="{_n(w)}" height="{_n(row_h - 12)}" '
                f'fill="{fill}" stroke="{stroke}" stroke-width="0.8"/>'
            )
            over = b.budget is not None and b.value > b.budget
            out.append(
                _text(x0 + w + 4, y + row_h / 2 + 3.5, b.note, size=9.5, weight="bold" if over else "")
            )
        else:
            end = px(chart.cap) if chart.cap else x1
            out.append(
                f'<rect x="{_n(x0)}" y="{_n(y + 6)}" width="{_n(end - x0)}" height="{_n(row_h - 12)}" '
                'fill="none" stroke="#1a1a1a" stroke-width="0.8" stroke-dasharray="3 2"/>'
            )
            out.append(_text(x0 + 4, y + row_h / 2 + 3.5, b.note or "never reached", size=9.5, weight="bold"))
        if b.budget is not None:
            xb = px(b.budget)
            out.append(
                f'<line x1="{_n(xb)}" y1="{_n(y + 2)}" x2="{_n(xb)}" y2="{_n(y + row_h - 2)}" '
                'stroke="#b2401a" stroke-width="2" stroke-dasharray="4 2"/>'
            )
    out.append(
        f'<line x1="{_n(x0)}" y1="{_n(top)}" x2="{_n(x0)}" y2="{_n(y_axis)}" stroke="{_INK}" '
        'stroke-width="0.8"/>'
    )
    out.append(
        f'<line x1="{_n(x0)}" y1="{_n(y_axis)}" x2="{_n(x1)}" y2="{_n(y_axis)}" stroke="{_INK}" '
        'stroke-width="0.8"/>'
    )
    out.append(_text((x0 + x1) / 2, y_axis + 28, chart.xlabel, size=10.5, anchor="middle"))
    for i, note in enumerate(chart.notes):
        out.append(_text(LEFT, y_axis + 44 + 14 * i, note, size=9.5, fill="#333333"))
    return out, height


def render(chart: Chart | BarChart, uid: str, *, standalone: bool, title: str = "") -> str:
    """The chart as SVG text.

    Parameters
    ----------
    uid
        Prefix of the ids inside this SVG (patterns, clip paths): unique per chart within one document.
    standalone
        True for an ``.svg`` file (with the SVG namespace), False for inline use in HTML (no URL at all).
    title
        Accessible name (``<title>``) of the chart.
    """
    parts, height = _chart(chart, uid) if isinstance(chart, Chart) else _bars(chart, uid)
    ns = ' xmlns="http://www.w3.org/2000/svg"' if standalone else ""
    head = (
        f'<svg{ns} viewBox="0 0 {WIDTH} {_n(height)}" width="{WIDTH}" height="{_n(height)}" '
        f'font-family="{FONT}" role="img">'
    )
    body = [f"<title>{_esc(title)}</title>"] if title else []
    body.append(_defs(uid))
    body.append(f'<rect x="0" y="0" width="{WIDTH}" height="{_n(height)}" fill="#ffffff"/>')
    return head + "".join(body) + "".join(parts) + "</svg>"


def legend_items() -> Sequence[tuple[str, str]]:
    """What each mark means, in words, for the legend under the plots."""
    return (
        ("planned limit", "dashed line; the zone beyond it lightly shaded"),
        ("device limit", "dash-dot line; the zone beyond it hatched diagonally"),
        ("mechanical limit", "solid heavy line; the zone beyond it cross-hatched"),
        ("participant's range", "dotted line"),
        ("finding", "shaded strip labelled with its number (F…); exceedances also hatched"),
        ("stop", "solid line at the trigger, dashed at standstill, dotted at torque off (S…)"),
        ("gap in a line", "samples not fit to analyse (see the data-quality findings) are not drawn"),
        (
            "long sessions",
            "each pixel column keeps the smallest and the largest sample, so no peak is hidden",
        ),
    )
