"""Findings: what a check concluded about a subject, with required vs provided and the source.

Every finding has a basis. ``code``: a requirement of the rule pack (the standard or the
jurisdiction's code, as the pack encodes it); only these set the zone, system and report
verdicts and the exit status. ``declared``: a limit or target the schedule sets for itself (a CO2
limit, a contaminant limit); it is reported in its own section, credited to the schedule, and
gates the run only under ``--fail-on declared``.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Protocol

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


class _Locator(Protocol):
    """Anything that finds where a field path was written: ``(file, line, column)``
    (:class:`airgate.models.loaded.LoadedSchedule`)."""

    def locate(self, path: tuple) -> tuple[str, int | None, int | None]: ...


class Location:
    """Where something is written: ``file``, and its 1-based ``line`` and ``column`` (None where
    unknown). ``str()`` gives ``file:line:column``.

    A location made by :meth:`deferred` holds a field path and what it was read from, and finds
    its file, line and column only when one is first read (``file``, ``line``, ``column``,
    ``str()``, equality, hashing, pickling), then keeps them: a portfolio's evaluation makes
    several locations per zone and a report shows few of them. Immutable, compared and hashed by
    its file, line and column; pickled as those three values (``check --jobs`` hands reports
    between processes).
    """

    __slots__ = ("_file", "_line", "_column", "_of", "_path")
    __match_args__ = ("file", "line", "column")

    def __init__(self, file: str, line: int | None, column: int | None) -> None:
        setattr_ = object.__setattr__
        setattr_(self, "_file", file)
        setattr_(self, "_line", line)
        setattr_(self, "_column", column)
        setattr_(self, "_of", None)

    @classmethod
    def deferred(cls, of: _Locator, path: tuple, file: str | None = None) -> Location:
        """The location of field ``path`` of ``of`` (a loaded schedule), found when first
        read; ``file``: the file it is in where that is known already (reading it then finds
        nothing)."""
        loc = _new(cls)
        _set_file(loc, file)
        _set_of(loc, of)
        _set_path(loc, path)
        return loc

    @staticmethod
    def deferred_in(of: _Locator, file: str | None = None):
        """``make(path)``, the :meth:`deferred` location of field ``path`` of ``of``: for the
        many locations of one schedule (several per zone), without looking the class's
        constructor up for each."""
        def make(path: tuple) -> Location:
            loc = _new(Location)
            _set_file(loc, file)
            _set_of(loc, of)
            _set_path(loc, path)
            return loc
        return make

    def _find(self) -> None:
        file, line, column = self._of.locate(self._path)
        setattr_ = object.__setattr__
        setattr_(self, "_file", file)
        setattr_(self, "_line", line)
        setattr_(self, "_column", column)
        setattr_(self, "_of", None)  # found: what it was read from is no longer needed here
        setattr_(self, "_path", None)

    @property
    def file(self) -> str:
        if self._file is None and self._of is not None:
            self._find()
        return self._file

    @property
    def line(self) -> int | None:
        if self._of is not None:
            self._find()
        return self._line

    @property
    def column(self) -> int | None:
        if self._of is not None:
            self._find()
        return self._column

    @property
    def found(self) -> bool:
        """Whether the file, line and column are known yet (False: not looked up so far)."""
        return self._of is None

    def _key(self) -> tuple[str, int | None, int | None]:
        if self._of is not None:
            self._find()
        return (self._file, self._line, self._column)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Location):
            return NotImplemented
        return self._key() == other._key()

    def __hash__(self) -> int:
        return hash(self._key())

    def __setattr__(self, name: str, value: object) -> None:
        raise dataclasses.FrozenInstanceError(f"cannot assign to field {name!r}")

    def __delattr__(self, name: str) -> None:
        raise dataclasses.FrozenInstanceError(f"cannot delete field {name!r}")

    def __reduce__(self):  # pickled (and copied) as the plain location it stands for
        return (Location, self._key())

    def __repr__(self) -> str:
        return f"Location(file={self.file!r}, line={self.line!r}, column={self.column!r})"

    def __str__(self) -> str:
        file, line, column = self._key()
        if line is None:
            return file
        return f"{file}:{line}" if column is None else f"{file}:{line}:{column}"


# a deferred location's slots set directly (the class refuses attribute assignment): half the time
# of object.__setattr__ by name, for the few hundred thousand a portfolio makes
_new = object.__new__
_set_file, _set_of, _set_path = (Location.__dict__[k].__set__ for k in ("_file", "_of", "_path"))


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
