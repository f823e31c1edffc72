"""Findings: what a check concluded about a subject, with required vs provided and the source."""

from __future__ import annotations

from dataclasses import dataclass, field

SEVERITY_RANK = {"fail": 0, "warning": 1, "info": 2}


@dataclass(frozen=True)
class Amount:
    """A value in internal units of ``kind``."""

    value: float
    kind: str


@dataclass(frozen=True)
class Location:
    file: str
    line: int | None
    column: int | None

    def __str__(self) -> str:
        parts = [self.file]
        if self.line is not None:
            parts.append(str(self.line))
            if self.column is not None:
                parts.append(str(self.column))
        return ":".join(parts)


@dataclass(frozen=True)
class WaiverMark:
    """The approved alternative (waiver) that covers a finding; see evaluation/waivers.py."""

    reason: str
    approved_by: str
    expires: str | None  #: last day it applies, ISO date; None: no expiry
    location: Location  #: where the waiver is written
    origin: str  #: "schedule" (the schedule's waivers:) or "waivers file" (--waivers)


@dataclass(frozen=True)
class Finding:
    rule: str
    severity: str
    subject: str
    message: str
    source: str
    location: Location
    required: Amount | None = None
    provided: Amount | None = None
    system: str = ""
    zone: str | None = None
    extra: dict[str, str] = field(default_factory=dict)
    #: set when an approved alternative covers the finding: it stays in every report, marked
    waiver: WaiverMark | None = None

    @property
    def waived(self) -> bool:
        return self.waiver is not None

    def sort_key(self) -> tuple:
        return (SEVERITY_RANK[self.severity], self.location.file, self.location.line or 0,
                self.location.column or 0, self.rule, self.subject)
