"""Apply waivers (approved alternatives) to the findings of one evaluation.

A waiver covers the findings of its rule on its subject (at its design condition, where it names
one). A waived finding stays in every report, marked with the waiver's reason, and no longer fails
the gate. A waiver past its ``expires`` date no longer applies (the finding counts again) and
says so; a waiver that matches no finding is reported with the reason, so a stale approval is
never forgotten silently. Expiry is judged on one date for the whole run (``check --as-of``,
default today) so a run can be reproduced.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from airgate.errors import AirgateError, ScheduleError, nearest
from airgate.evaluation.checks import DECLARED_CHECKS
from airgate.evaluation.findings import Finding, Location, WaiverMark
from airgate.models.rules import RulePack
from airgate.models.waivers import Waiver

SCHEDULE = "schedule"
FILE = "waivers file"

APPLIED, EXPIRED, UNMATCHED = "applied", "expired", "unmatched"


@dataclass(frozen=True)
class WaiverEntry:
    """A waiver and where it is written."""

    waiver: Waiver
    location: Location  #: the entry
    rule_location: Location  #: its ``rule`` field
    field: tuple  #: field path of the entry in its document
    origin: str  #: SCHEDULE or FILE
    condition_location: Location | None = None  #: its ``condition`` field, where it has one

    @property
    def expires(self) -> str | None:
        return self.waiver.expires.isoformat() if self.waiver.expires else None

    def mark(self) -> WaiverMark:
        return WaiverMark(reason=self.waiver.reason, approved_by=self.waiver.approved_by,
                          expires=self.expires, location=self.location, origin=self.origin)

    @property
    def rule(self) -> str:
        return self.waiver.rule

    def key(self) -> tuple:
        """Identity across the schedules of a batch."""
        return (self.origin, str(self.location), self.waiver.rule, self.waiver.subject,
                self.waiver.condition)

    def covers(self, f: Finding) -> bool:
        """Whether the waiver names ``f``: its rule and subject, and its design condition where
        the waiver names one."""
        w = self.waiver
        return f.rule == w.rule and f.subject == w.subject and (
            w.condition is None or f.condition == w.condition)


@dataclass(frozen=True)
class WaiverStatus:
    """What became of one waiver in one evaluation."""

    entry: WaiverEntry
    state: str  #: APPLIED, EXPIRED or UNMATCHED
    detail: str  #: one sentence for people
    count: int  #: findings it covers (applied) or would have covered (expired)

    @property
    def stale(self) -> bool:
        """Expired or matching nothing: a reviewer should renew or withdraw it."""
        return self.state != APPLIED


def _entries(waivers: Sequence[Waiver], locate, file: str, origin: str,
             base: tuple, where: Sequence[int] | None = None) -> list[WaiverEntry]:
    out = []
    for i, w in zip(range(len(waivers)) if where is None else where, waivers):
        path = base + (i,)
        out.append(WaiverEntry(
            waiver=w, location=Location(file, *locate(path)),
            rule_location=Location(file, *locate(path + ("rule",))), field=path, origin=origin,
            condition_location=(None if w.condition is None else
                                Location(file, *locate(path + ("condition",))))))
    return out


def from_schedule(loaded) -> list[WaiverEntry]:
    """The waivers written in a loaded schedule's ``waivers:``."""
    return _entries(loaded.model.waivers, loaded.doc.locate, loaded.file, SCHEDULE, ("waivers",))


def from_file(loaded, where: Sequence[int] | None = None) -> list[WaiverEntry]:
    """The waivers of a file read by :func:`airgate.readers.waivers.read_waivers`; ``where``:
    their positions in the file's list, when only some of its entries were read."""
    return _entries(loaded.waivers, loaded.doc.locate, loaded.doc.file, FILE, ("waivers",),
                    where)


def rule_errors(entries: Iterable, known: Iterable[str]) -> list[AirgateError]:
    """A waiver (or any entry with ``rule``, ``rule_location``, ``field`` and ``origin``, such as
    a reviewer's comment) naming a check id the engine does not know is a typo: an input error."""
    known = sorted(known)
    out: list[AirgateError] = []
    for e in entries:
        rule = e.rule
        if rule in known:
            continue
        close = nearest(rule, known)
        cls = ScheduleError if e.origin == SCHEDULE else AirgateError
        at = e.rule_location
        out.append(cls(f"unknown check id '{rule}'"
                       + (f"; did you mean '{close[0]}'?" if close else ""),
                       file=at.file, line=at.line, column=at.column, field=e.field + ("rule",),
                       allowed=known, hint="name the check as the finding does "
                                           "(airgate rules show PACK lists them)"))
    return out


def condition_errors(entries: Iterable[WaiverEntry], systems) -> list[AirgateError]:
    """A waiver naming a design condition its subject's system does not list: an input error.

    ``systems``: the schedule's systems (``id`` and ``conditions``). A subject with no such
    system is left to the waiver's outcome (it matches nothing)."""
    listed = {s.id: tuple(s.conditions or ()) for s in systems}
    out: list[AirgateError] = []
    for e in entries:
        w = e.waiver
        system = w.subject.split("/", 1)[0]
        if w.condition is None or system not in listed or w.condition in listed[system]:
            continue
        known = listed[system]
        close = nearest(w.condition, list(known))
        cls = ScheduleError if e.origin == SCHEDULE else AirgateError
        at = e.condition_location or e.location
        what = (f"system {system} lists no design conditions" if not known else
                f"system {system} has no design condition '{w.condition}'"
                + (f"; did you mean '{close[0]}'?" if close else ""))
        out.append(cls(what, file=at.file, line=at.line, column=at.column,
                       field=e.field + ("condition",), allowed=list(known),
                       hint=("name one of the conditions the system lists, or remove "
                             "'condition' to cover the finding at every condition")))
    return out


def pack_errors(entries: Sequence[WaiverEntry], packs: Sequence[RulePack]) -> list[AirgateError]:
    """A schedule's waiver's ``pack`` must be a pack of the evaluation (a waivers file serves
    several schedules: its waiver for another pack matches nothing here, and says so); where
    several packs name the waived rule, the waiver must say which pack's finding it covers."""
    ids = [p.id for p in packs]
    out: list[AirgateError] = []
    for e in entries:
        w = e.waiver
        cls = ScheduleError if e.origin == SCHEDULE else AirgateError
        if w.pack is not None and w.pack not in ids and e.origin == SCHEDULE:
            close = nearest(w.pack, ids)
            out.append(cls(f"waiver names rule pack '{w.pack}', which this schedule is not "
                           "checked under" + (f"; did you mean '{close[0]}'?" if close else ""),
                           file=e.location.file, line=e.location.line,
                           column=e.location.column, field=e.field + ("pack",), allowed=ids,
                           hint="name one of the schedule's rule packs, or leave pack out"))
            continue
        owners = [p.id for p in packs if w.rule in p.checks or w.rule in p.requirements]
        if w.pack is None and len(owners) > 1:
            out.append(cls(f"rule '{w.rule}' is a rule of {len(owners)} packs of this schedule "
                           f"({', '.join(owners)}): say which pack's finding the waiver covers",
                           file=e.location.file, line=e.location.line,
                           column=e.location.column, field=e.field, allowed=owners,
                           hint=f"add pack: {owners[0]} (or another of them) to the waiver"))
    return out


def _unmatched(w: Waiver, packs: Sequence[RulePack], subjects: Sequence[str]) -> str:
    named = [p for p in packs if w.pack in (None, p.id)]
    if not any(w.rule in p.checks or w.rule in p.requirements for p in named) \
            and w.rule not in DECLARED_CHECKS:
        which = " or ".join(p.id for p in named)
        return f"rule pack {which} does not run check '{w.rule}'"
    if w.subject not in subjects:
        close = nearest(w.subject, subjects)
        return (f"no system or zone '{w.subject}' in the schedule"
                + (f"; did you mean '{close[0]}'?" if close else ""))
    at = "" if w.condition is None else f" at condition {w.condition}"
    return (f"no '{w.rule}' finding on {w.subject}{at}: the check passes or does not apply; "
            "withdraw the waiver if it is no longer needed")


def apply(findings: list[Finding], entries: Sequence[WaiverEntry], *,
          pack: RulePack | Sequence[RulePack], subjects: Sequence[str],
          as_of: dt.date) -> tuple[list[Finding], list[WaiverStatus]]:
    """Mark the findings each live waiver covers; say what became of every waiver.

    The first waiver that covers a finding marks it (schedule waivers come before file ones).
    """
    packs = [pack] if isinstance(pack, RulePack) else list(pack)
    base = packs[0].id
    out = list(findings)
    statuses: list[WaiverStatus] = []
    for entry in entries:
        w = entry.waiver
        hits = [i for i, f in enumerate(out) if entry.covers(f)
                and w.pack in (None, f.pack or base)]
        plural = "s" if len(hits) != 1 else ""
        if w.expires is not None and as_of > w.expires:
            again = ("the finding it covered counts again" if len(hits) == 1 else
                     f"the {len(hits)} findings it covered count again")
            detail = (f"expired on {entry.expires}: {again}" if hits else
                      f"expired on {entry.expires}; it would match nothing now either")
            statuses.append(WaiverStatus(entry, EXPIRED, detail, len(hits)))
            continue
        if not hits:
            statuses.append(WaiverStatus(entry, UNMATCHED, _unmatched(w, packs, subjects), 0))
            continue
        for i in hits:
            if not out[i].waived:
                out[i] = dataclasses.replace(out[i], waiver=entry.mark())
        statuses.append(WaiverStatus(entry, APPLIED, f"covers {len(hits)} finding{plural}",
                                     len(hits)))
    return out, statuses


def review(findings: list[Finding], entries: Sequence[WaiverEntry],
           pack: RulePack | Sequence[RulePack], results, as_of: dt.date | None) -> tuple[list[Finding], list[WaiverStatus], str | None]:
    """:func:`apply` for an evaluation: findings, statuses, and the date expiry was judged on.

    The date is only returned (and so only shown in reports) when some waiver has an expiry.
    """
    day = as_of or dt.date.today()
    subjects = [s.id for s in results] + [f"{s.id}/{z.id}" for s in results for z in s.zones]
    findings, statuses = apply(findings, entries, pack=pack, subjects=subjects, as_of=day)
    shown = day.isoformat() if any(e.waiver.expires for e in entries) else None
    return findings, statuses, shown
