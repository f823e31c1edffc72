"""Number and quantity formatting shared by finding messages and writers (locale-independent)."""

from __future__ import annotations

import math

from airgate import units


def number(value: float, kind: str) -> str:
    """A display value rounded as a reviewer writes it, e.g. ``1,250`` cfm, ``0.06`` cfm/ft²."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    if math.isinf(value):
        return "∞" if value > 0 else "−∞"
    if kind == "fraction":
        return f"{value:.3f}"
    if kind == "concentration_ppm":
        return f"{value:,.0f}"
    if kind == "time":
        return f"{value:,.0f}" if abs(value) >= 10 else f"{value:.1f}"
    if kind == "rate":
        return f"{value:.2f}"
    if kind in ("gas_flow", "gas_generation", "emission", "concentration"):
        return f"{value:.4g}"
    if kind == "people":
        text = f"{value:,.1f}"
        return text[:-2] if text.endswith(".0") else text
    if kind in ("airflow", "area", "volume"):
        if abs(value) >= 100:
            return f"{value:,.0f}"
        return f"{value:.1f}" if abs(value) >= 10 else f"{value:.2f}"
    text = f"{value:.4g}"
    return text


def amount(value: float, kind: str, system: str) -> str:
    """An internal value shown in the schedule's unit system with its unit, e.g. ``425 cfm``."""
    shown = number(units.to_display(value, kind, system), kind)
    unit = units.label(kind, system)
    return f"{shown} {unit}" if unit else shown


def percent(fraction: float) -> str:
    """``0.129`` → ``+12.9 %``."""
    if math.isinf(fraction) or math.isnan(fraction):
        return "n/a"
    return f"{fraction * 100:+.1f} %"


def count(n: int, word: str, words: str | None = None) -> str:
    """``1, "warning"`` → ``1 warning``; ``2, "warning"`` → ``2 warnings`` (``words`` for an
    irregular plural)."""
    return f"{n:,} {word if n == 1 else (words or word + 's')}"
