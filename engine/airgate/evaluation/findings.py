"""Findings: what a check concluded about a subject, with required vs provided and the source.

Every finding has a basis. ``code``: a requirement of the rule pack (the standard or the
jurisdiction's code, as the pack encodes it); only these set the zone, system and report
verdicts and the exit status. ``declared``: a limit or target the schedule sets for itself (a CO2
limit, a contaminant limit); it is reported in its own section, credited to the schedule, and
gates the run only under ``--fail-on declared``.
"""

from __future__ import annotations

import math

from dataclasses import dataclass, field

SEVERITY_RANK = {"fail": 0, "warning": 1, "info": 2}
CODE = "code"
DECLARED = "declared"
BASES = (CODE, DECLARED)


@dataclass(frozen=True)
class Amount:
    """A value in internal units of ``kind``. ``at_most`` marks a required amount that is an
    upper limit (a greatest depth, density or air class): the provided value must not exceed it,
    so what is left of it is ``required − provided``."""

    value: float
    kind: str
    at_most: bool = False


@dataclass(frozen=True)
class Margin:
    """How far the provided value is on the passing side of the requirement, in the internal unit
    of the amounts' kind: ``provided − required`` for a minimum, ``required − provided`` for an
    upper limit (``Amount.at_most``), so a positive margin passes and a negative one falls short;
    and that as a share of the requirement (None where it is not positive)."""

    difference: float
    relative: float | None


def margin(required: Amount | None, provided: Amount | None) -> Margin | None:
    """The margin of ``provided`` over ``required``; None where either is missing or nothing
    can meet the requirement (an infinite requirement). Writers show it; they never work it out."""
    if required is None or provided is None or math.isinf(required.value):
        return None
    diff = provided.value - required.value
    if required.at_most:
        diff = -diff
    return Margin(diff, diff / required.value if required.value > 0 else None)


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
    #: ``code`` (a requirement of the pack) or ``declared`` (a limit the schedule sets itself)
    basis: str = CODE
    #: the design condition the finding is about (None: the system lists no conditions, or the
    #: finding holds at every condition)
    condition: str | None = None
    #: the rule pack whose rule this is; None: the report's (first) pack, set on every finding
    #: of a report that lists several packs
    pack: str | None = None

    @property
    def waived(self) -> bool:
        return self.waiver is not None

    @property
    def declared(self) -> bool:
        return self.basis == DECLARED

    def sort_key(self) -> tuple:
        """Code findings first, then declared ones; each by severity, position, rule, subject."""
        return (BASES.index(self.basis), SEVERITY_RANK[self.severity], self.location.file,
                self.location.line or 0, self.location.column or 0, self.rule, self.subject)
