"""Occupancy profiles: the fraction of design population Pz present over a day.

A day is either 24 hourly fractions, or a mapping of time ranges ``"HH:MM-HH:MM"`` to fractions
(times not listed are unoccupied). A profile has a weekday and optionally a weekend day.
"""

from __future__ import annotations

import re
from typing import Annotated

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, field_validator

_RANGE = re.compile(r"^\s*(\d{1,2}):(\d{2})\s*-\s*(\d{1,2}):(\d{2})\s*$")

Fraction = Annotated[float, Field(ge=0, le=10, allow_inf_nan=False)]


def _minutes(h: str, m: str, text: str) -> int:
    hours, minutes = int(h), int(m)
    if minutes >= 60 or hours > 24 or (hours == 24 and minutes):
        raise ValueError(f"'{text}' is not a time range within one day (00:00 to 24:00)")
    return hours * 60 + minutes


def parse_range(text: str) -> tuple[int, int]:
    """``"08:00-12:30"`` → (480, 750) minutes after midnight."""
    match = _RANGE.match(str(text))
    if not match:
        raise ValueError(f"'{text}' is not a time range such as '08:00-12:30'")
    start = _minutes(match[1], match[2], text)
    end = _minutes(match[3], match[4], text)
    if end <= start:
        raise ValueError(f"'{text}' ends before it starts (a range stays within one day)")
    return start, end


class Profile(BaseModel):
    """A named occupancy profile: fractions of Pz by hour or by time range. [–]"""

    model_config = ConfigDict(extra="forbid", frozen=True)

    weekday: list[Fraction] | dict[str, Fraction] = Field(
        description="24 hourly fractions of Pz, or {'HH:MM-HH:MM': fraction}. [–]")
    weekend: list[Fraction] | dict[str, Fraction] | None = Field(
        None, description="As weekday; default: the weekday profile. [–]")
    notes: str | None = Field(None, description="Free text. [–]")

    @field_validator("weekday", "weekend")
    @classmethod
    def _valid_day(cls, day):
        if day is None:
            return day
        if isinstance(day, list):
            if len(day) != 24:
                raise ValueError(f"an hourly profile has 24 values, this one has {len(day)}")
            return day
        spans = sorted(parse_range(k) for k in day)
        for (a0, a1), (b0, b1) in zip(spans, spans[1:]):
            if b0 < a1:
                raise ValueError("time ranges overlap; give each time of day once")
        return day

    def pieces(self, day: str = "weekday") -> tuple[np.ndarray, np.ndarray]:
        """Breakpoints [h] (0 … 24) and the fraction of Pz in each piece [–]."""
        spec = self.weekday if day == "weekday" or self.weekend is None else self.weekend
        if isinstance(spec, list):
            return np.arange(25, dtype=float), np.asarray(spec, dtype=float)
        edges = {0, 24 * 60}
        for key in spec:
            edges.update(parse_range(key))
        cuts = sorted(edges)
        frac = np.zeros(len(cuts) - 1)
        for key, value in spec.items():
            start, end = parse_range(key)
            for i, (a, b) in enumerate(zip(cuts, cuts[1:])):
                if a >= start and b <= end:
                    frac[i] = value
        return np.asarray(cuts, dtype=float) / 60.0, frac
