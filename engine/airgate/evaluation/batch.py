"""Several schedules checked in one run: their reports, the waivers of a waivers file, the gate.

A waivers file applies to every schedule of the run. In a run of one schedule its waivers are
reported in that schedule's report like the schedule's own. In a run of several, a file waiver is
reported with each schedule where it covers (or, expired, would cover) a finding, and once for the
whole run when it matches nothing in any schedule.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

from airgate.evaluation.gate import FAIL_ON, fail_on_levels
from airgate.evaluation.report import SAFETY_CAUTION, Report
from airgate.evaluation.waivers import EXPIRED, FILE, UNMATCHED, WaiverEntry, WaiverStatus

__all__ = ["FAIL_ON", "fail_on_levels", "Batch", "gather"]

@dataclass
class Batch:
    """The reports of one run, in the order the schedules were given."""

    reports: list[Report]
    #: waivers of a waivers file that match nothing in any schedule of a run of several
    waivers: list[WaiverStatus] = field(default_factory=list)
    #: the ``--fail-on`` levels in force (:func:`fail_on_levels`)
    fail_on: tuple[str, ...] = ("fail",)

    @property
    def fail_on_label(self) -> str:
        """``fail``, ``fail,warning``, ``fail,declared`` …: the gate as written in reports."""
        return ",".join(self.fail_on)

    def fails_on(self, level: str) -> bool:
        """Whether ``--fail-on level`` is in force (``fail`` always is)."""
        return level in self.fail_on

    @property
    def single(self) -> bool:
        return len(self.reports) == 1

    @property
    def verdict(self) -> str:
        return "fail" if any(r.verdict == "fail" for r in self.reports) else "pass"

    def counts(self) -> dict[str, int]:
        """Code findings not waived by severity, declared limits missed, waived findings."""
        out = {"fail": 0, "warning": 0, "info": 0, "declared": 0, "waived": 0}
        for r in self.reports:
            for k, v in r.counts().items():
                out[k] += v
            out["declared"] += r.declared_count()
            out["waived"] += r.waived_count()
        return out

    def stale_waivers(self) -> list[WaiverStatus]:
        """Every waiver of the run that is expired or matches nothing."""
        return [s for r in self.reports for s in r.waivers if s.stale] + \
            [s for s in self.waivers if s.stale]

    def gate_fails(self) -> bool:
        """Whether the run fails the gate: a live ``fail`` finding of basis code; with
        ``--fail-on warning`` also a live warning or a stale waiver; with ``--fail-on declared``
        also a declared limit missed."""
        c = self.counts()
        if c["fail"]:
            return True
        if self.fails_on("declared") and c["declared"]:
            return True
        return self.fails_on("warning") and bool(c["warning"] or self.stale_waivers())

    @property
    def gate(self) -> str:
        """``fail`` when the run fails the gate (:meth:`gate_fails`: the exit status 1 unless
        --exit-zero), else ``pass``."""
        return "fail" if self.gate_fails() else "pass"

    @property
    def gate_beyond_verdict(self) -> bool:
        """Whether ``--fail-on`` names more than ``fail``, so that the gate can fail a run whose
        verdict passes (reports then state the gate's outcome beside the verdict)."""
        return self.fail_on != ("fail",)

    def cautions(self) -> list[str]:
        """The safety caution, then every pack caution of the run once, in order."""
        out = [SAFETY_CAUTION]
        for r in self.reports:
            out += [c for c in r.cautions if c not in out]
        return out


def gather(reports: Sequence[Report], file_entries: Sequence[WaiverEntry],
           fail_on: str | Sequence[str] | None = "fail") -> Batch:
    """Put reports together, moving file waivers that match nothing to the run's own list.

    ``fail_on``: the ``--fail-on`` level or levels given (:data:`FAIL_ON`).
    """
    reports = list(reports)
    batch = Batch(reports=reports, fail_on=fail_on_levels(fail_on))
    if len(reports) <= 1 or not file_entries:
        return batch
    keys = {e.key() for e in file_entries}
    matched: set[tuple] = set()
    last: dict[tuple, WaiverStatus] = {}
    for r in reports:
        kept = []
        for s in r.waivers:
            k = s.entry.key()
            if s.entry.origin == FILE and k in keys and s.count == 0:
                last[k] = s
                continue
            if s.entry.origin == FILE:
                matched.add(k)
            kept.append(s)
        r.waivers = kept
    for e in file_entries:
        k = e.key()
        if k in matched or k not in last:
            continue
        s = last[k]
        detail = (s.detail if s.state == EXPIRED else
                  f"matches no finding in any of the {len(reports)} schedules checked")
        batch.waivers.append(WaiverStatus(e, s.state if s.state == EXPIRED else UNMATCHED,
                                          detail, 0))
    return batch
