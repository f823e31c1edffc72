"""Waivers: approved alternatives a reviewer accepted for one finding (rule and subject).

A waiver is written in the schedule (``waivers:``) or in a separate waivers file (``--waivers``).
It names the check id and the subject exactly as findings name them, why the alternative is
acceptable, who approved it and, optionally, the last day it applies and the one design condition
whose finding it covers. Applying them is
:mod:`airgate.evaluation.waivers`.
"""

from __future__ import annotations

import datetime as dt
import re
from typing import Annotated, Any

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, WithJsonSchema

_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


def _iso_date(value: Any) -> dt.date:
    """A calendar date written as text ``YYYY-MM-DD`` (numbers are refused, not guessed)."""
    if isinstance(value, dt.date):
        return value
    if not isinstance(value, str) or not _DATE.match(value.strip()):
        raise ValueError(f"expected a date written YYYY-MM-DD, got {value!r}")
    try:
        return dt.date.fromisoformat(value.strip())
    except ValueError:
        raise ValueError(f"{value!r} is not a calendar date") from None


def _subject(value: Any) -> Any:
    if isinstance(value, bool):
        raise ValueError("a subject is text such as \"AHU-3\" or \"AHU-3/203\"")
    if isinstance(value, (int, float)):
        return str(value)
    return value


_SUBJECT_PATTERN = r"^[^\s/][^/]*(/[^\s/][^/]*)?$"
_SUBJECT_TEXT = ("The finding's subject: a system id, or system id/zone id as in 'AHU-3/203'. [–]")

Subject = Annotated[
    str,
    BeforeValidator(_subject),
    Field(min_length=1, max_length=401, pattern=_SUBJECT_PATTERN, description=_SUBJECT_TEXT),
]

def iso_date(description: str) -> Any:
    """A date field written as text ``YYYY-MM-DD``, published as a string of format date."""
    return Annotated[dt.date, BeforeValidator(_iso_date),
                     WithJsonSchema({"type": "string", "format": "date",
                                     "description": description})]


ExpiryDate = iso_date("Last day the waiver applies, YYYY-MM-DD. [–]")


class Waiver(BaseModel):
    """One approved alternative: the finding of ``rule`` on ``subject`` is accepted."""

    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True)

    rule: str = Field(min_length=1, description="Check id the waiver covers, e.g. "
                                                "'zone-limits-ev'. [–]")
    subject: Subject
    pack: str | None = Field(None, min_length=1,
                             description="The rule pack whose finding is waived, by id: needed "
                                         "only where several packs on the schedule name the "
                                         "same rule; none: the rule of any pack. [–]")
    reason: str = Field(min_length=1, description="Why the alternative is acceptable. [–]")
    approved_by: str = Field(min_length=1, description="Who approved it: name, role or "
                                                       "reference. [–]")
    expires: ExpiryDate | None = Field(None, description="Last day the waiver applies, "
                                                         "YYYY-MM-DD; none: until withdrawn. [–]")
    condition: str | None = Field(None, min_length=1,
                                  description="The design condition whose finding the waiver "
                                              "covers, one the subject's system lists; none: "
                                              "its finding at every condition. [–]")


class WaiversFile(BaseModel):
    """A separate waivers file: ``waivers:`` and the same entries as in a schedule."""

    model_config = ConfigDict(extra="forbid", frozen=True)

    waivers: list[Waiver] = Field(description="Approved alternatives. [–]")
