"""Inline SVG charts for the HTML report: outdoor air per zone, and CO2 over the design day.

The geometry only (coordinates with fixed number formatting, so the same report gives the same
bytes); the markup is in ``templates/macros.html.j2``, whose environment escapes every label.
Colours come from CSS classes of the page.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass


@dataclass(frozen=True)
class Bar:
    """One zone of the outdoor-air chart, values in display units."""

    label: str
    required: float
    provided: float | None
    text: str  #: value text shown at the right of the row
    short: bool  #: provided below required


def _f(x: float) -> str:
    """Coordinates with one decimal, no '-0.0'."""
    s = f"{x:.1f}"
    return "0.0" if s == "-0.0" else s


def nice_step(top: float, ticks: int = 5) -> float:
    """A round axis step (1, 2 or 5 × 10ⁿ) giving about ``ticks`` intervals up to ``top``."""
    if not top > 0 or math.isinf(top):
        return 1.0
    raw = top / ticks
    mag = 10 ** math.floor(math.log10(raw))
    for m in (1, 2, 5, 10):
        if raw <= m * mag:
            return m * mag
    return 10 * mag


def _tick(v: float) -> str:
    return f"{v:,.0f}" if abs(v) >= 10 or v == 0 else f"{v:g}"


def airflow_chart(bars: Sequence[Bar], unit: str, title: str) -> dict:
    """Geometry of the bullet rows (the bar is what the zone gets, the dark tick what it
    requires) for the ``airflow_chart`` macro of ``templates/macros.html.j2``."""
    label_w, plot_w, value_w, row_h, top_pad = 250, 400, 230, 24, 26
    width = label_w + plot_w + value_w
    height = top_pad + row_h * len(bars) + 22
    finite = [v for b in bars for v in (b.required, b.provided) if v is not None
              and not math.isinf(v)]
    step = nice_step(max(finite, default=1.0))
    top = step * max(1, math.ceil(max(finite, default=1.0) / step))
    x = lambda v: label_w + plot_w * min(max(v, 0.0), top) / top  # noqa: E731
    grid = []
    n = 0
    while n * step <= top + 1e-9:
        grid.append({"x": _f(x(n * step)), "label": _tick(n * step)})
        n += 1
    rows = []
    for i, b in enumerate(bars):
        y = top_pad + i * row_h
        mid = y + row_h / 2
        rows.append({
            "label": b.label, "text": b.text, "short": b.short,
            "short_label": b.label if len(b.label) <= 40 else b.label[:39] + "…",
            "text_y": _f(mid + 4), "track_y": _f(y + 5), "got_y": _f(y + 7),
            "got_w": None if b.provided is None else _f(x(b.provided) - label_w),
            "need_x": None if math.isinf(b.required) else _f(x(b.required)),
            "need_y1": _f(y + 3), "need_y2": _f(y + row_h - 3)})
    return {"width": width, "height": height, "title": title, "unit": unit, "grid": grid,
            "grid_top": top_pad - 6, "grid_bottom": height - 20, "tick_y": height - 6,
            "axis_x": label_w + plot_w, "label_x": label_w - 8, "plot_x": label_w,
            "plot_w": plot_w, "value_x": label_w + plot_w + 8, "track_h": row_h - 10,
            "got_h": row_h - 14, "rows": rows}


@dataclass(frozen=True)
class Curve:
    """A zone's design-day CO2: hours, ppm, occupancy fraction (same length)."""

    label: str
    hours: Sequence[float]
    ppm: Sequence[float]
    occupancy: Sequence[float]
    outdoor: float
    limit: float | None
    peak: float  #: the design day's peak from the zone's trail (C_peak) [ppm]


def _points(xs, ys, fx, fy, every: int) -> str:
    idx = list(range(0, len(xs), every))
    if idx[-1] != len(xs) - 1:
        idx.append(len(xs) - 1)
    return " ".join(f"{_f(fx(xs[i]))},{_f(fy(ys[i]))}" for i in idx)


def co2_chart(c: Curve, every: int = 5) -> dict:
    """Geometry of CO2 against the hour of day, with outdoor level, declared limit and
    occupancy, for the ``co2_chart`` macro of ``templates/macros.html.j2``."""
    w, h, left, right, top_pad, bottom = 320, 170, 40, 8, 10, 22
    pw, ph = w - left - right, h - top_pad - bottom
    hi = max(max(c.ppm), c.peak, c.limit or 0.0)
    lo = min(min(c.ppm), c.outdoor)
    step = nice_step(hi - lo if hi > lo else 100.0, 4)
    y0 = step * math.floor(lo / step)
    y1 = step * math.ceil(hi * 1.02 / step)
    if y1 <= y0:
        y1 = y0 + step
    fx = lambda t: left + pw * t / 24.0  # noqa: E731
    fy = lambda v: top_pad + ph * (1 - (v - y0) / (y1 - y0))  # noqa: E731
    occ_y = lambda f: top_pad + ph - 0.25 * ph * f  # noqa: E731
    grid = []
    v = y0
    while v <= y1 + 1e-9:
        grid.append({"y": _f(fy(v)), "label_y": _f(fy(v) + 3), "label": f"{v:,.0f}"})
        v += step
    hours = [{"x": _f(fx(hour)), "label": f"{hour:02d}:00",
              "anchor": "end" if hour == 24 else "middle"} for hour in (0, 6, 12, 18, 24)]
    occ = _points(c.hours, c.occupancy, fx, occ_y, every)
    limit = None
    if c.limit is not None:
        limit = {"y": _f(fy(c.limit)), "label_y": _f(fy(c.limit) - 3),
                 "label": f"limit {c.limit:,.0f}"}
    return {"width": w, "height": h, "left": left, "right": w - right, "tick_x": left - 4,
            "hour_y": h - 6, "title": f"CO2 over the design day, {c.label}: peak "
            f"{c.peak:,.0f} ppm", "grid": grid, "hours": hours,
            "occupancy": f"{_f(fx(c.hours[0]))},{_f(occ_y(0))} {occ} "
                         f"{_f(fx(c.hours[-1]))},{_f(occ_y(0))}",
            "outdoor_y": _f(fy(c.outdoor)), "limit": limit,
            "ppm": _points(c.hours, c.ppm, fx, fy, every)}
