"""Inline SVG charts for the HTML report: outdoor air per zone, and CO2 over the design day.

Plain SVG markup with fixed number formatting, so the same report gives the same bytes. Every
label passes through the caller's escaping function; colours come from CSS classes of the page.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

Escape = Callable[[object], str]


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


def airflow_chart(bars: Sequence[Bar], unit: str, esc: Escape, title: str) -> str:
    """Bullet rows: the bar is what the zone gets, the dark tick what it requires."""
    label_w, plot_w, value_w, row_h, top_pad = 250, 400, 230, 24, 26
    width = label_w + plot_w + value_w
    height = top_pad + row_h * len(bars) + 22
    finite = [v for b in bars for v in (b.required, b.provided) if v is not None
              and not math.isinf(v)]
    step = nice_step(max(finite, default=1.0))
    top = step * max(1, math.ceil(max(finite, default=1.0) / step))
    x = lambda v: label_w + plot_w * min(max(v, 0.0), top) / top  # noqa: E731
    out = [f'<svg class="chart airflow" role="img" viewBox="0 0 {width} {height}" '
           f'width="100%" preserveAspectRatio="xMinYMin meet" aria-label="{esc(title)}">',
           f"<title>{esc(title)}</title>"]
    n = 0
    while n * step <= top + 1e-9:
        gx = _f(x(n * step))
        out.append(f'<line class="grid" x1="{gx}" y1="{top_pad - 6}" x2="{gx}" '
                   f'y2="{height - 20}"/>')
        out.append(f'<text class="tick" x="{gx}" y="{height - 6}" text-anchor="middle">'
                   f"{_tick(n * step)}</text>")
        n += 1
    out.append(f'<text class="axis" x="{label_w + plot_w}" y="14" text-anchor="end">'
               f"{esc(unit)}</text>")
    for i, b in enumerate(bars):
        y = top_pad + i * row_h
        mid = y + row_h / 2
        label = b.label if len(b.label) <= 40 else b.label[:39] + "…"
        out.append(f'<g class="row{" short" if b.short else ""}"><title>{esc(b.label)}: '
                   f"{esc(b.text)}</title>")
        out.append(f'<text class="label" x="{label_w - 8}" y="{_f(mid + 4)}" '
                   f'text-anchor="end">{esc(label)}</text>')
        out.append(f'<rect class="track" x="{label_w}" y="{_f(y + 5)}" width="{plot_w}" '
                   f'height="{row_h - 10}"/>')
        if b.provided is not None:
            out.append(f'<rect class="got" x="{label_w}" y="{_f(y + 7)}" '
                       f'width="{_f(x(b.provided) - label_w)}" height="{row_h - 14}"/>')
        if not math.isinf(b.required):
            rx = _f(x(b.required))
            out.append(f'<line class="need" x1="{rx}" y1="{_f(y + 3)}" x2="{rx}" '
                       f'y2="{_f(y + row_h - 3)}"/>')
        out.append(f'<text class="value" x="{label_w + plot_w + 8}" y="{_f(mid + 4)}">'
                   f"{esc(b.text)}</text></g>")
    out.append("</svg>")
    return "\n".join(out)


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


def co2_chart(c: Curve, esc: Escape, every: int = 5) -> str:
    """CO2 against the hour of day, with outdoor level, declared limit and occupancy."""
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
    title = f"CO2 over the design day, {c.label}: peak {c.peak:,.0f} ppm"
    out = [f'<svg class="chart co2" role="img" viewBox="0 0 {w} {h}" width="100%" '
           f'aria-label="{esc(title)}"><title>{esc(title)}</title>']
    v = y0
    while v <= y1 + 1e-9:
        gy = _f(fy(v))
        out.append(f'<line class="grid" x1="{left}" y1="{gy}" x2="{w - right}" y2="{gy}"/>')
        out.append(f'<text class="tick" x="{left - 4}" y="{_f(fy(v) + 3)}" '
                   f'text-anchor="end">{v:,.0f}</text>')
        v += step
    for hour in (0, 6, 12, 18, 24):
        anchor = "end" if hour == 24 else "middle"
        out.append(f'<text class="tick" x="{_f(fx(hour))}" y="{h - 6}" '
                   f'text-anchor="{anchor}">{hour:02d}:00</text>')
    occ = _points(c.hours, c.occupancy, fx, occ_y, every)
    out.append(f'<polygon class="occupancy" points="{_f(fx(c.hours[0]))},{_f(occ_y(0))} {occ} '
               f'{_f(fx(c.hours[-1]))},{_f(occ_y(0))}"/>')
    oy = _f(fy(c.outdoor))
    out.append(f'<line class="outdoor" x1="{left}" y1="{oy}" x2="{w - right}" y2="{oy}"/>')
    if c.limit is not None:
        ly = _f(fy(c.limit))
        out.append(f'<line class="limit" x1="{left}" y1="{ly}" x2="{w - right}" y2="{ly}"/>')
        out.append(f'<text class="tick limit-label" x="{w - right}" y="{_f(fy(c.limit) - 3)}" '
                   f'text-anchor="end">limit {c.limit:,.0f}</text>')
    out.append(f'<polyline class="ppm" points="{_points(c.hours, c.ppm, fx, fy, every)}"/>')
    out.append("</svg>")
    return "\n".join(out)
