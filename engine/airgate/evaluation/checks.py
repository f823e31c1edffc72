"""The checks the engine implements; the rule pack decides which run, their severity and citation.

Limits a schedule declares for itself (``project.co2_limit``, a contaminant's ``limit``) are not
checks of a pack: they are :data:`DECLARED_CHECKS`, always evaluated where a limit is declared,
reported with basis ``declared`` and credited to the schedule (evaluation/findings.py).
"""

from __future__ import annotations

from airgate import formatting
from collections.abc import Callable

from airgate.evaluation.findings import DECLARED, Amount, Finding, Location
from airgate.models.rules import RulePack

#: check id → what it verifies (the pack's ``checks`` must be a subset of these)
KNOWN_CHECKS: dict[str, str] = {
    "system-intake": "scheduled outdoor-air intake ≥ required Vot",
    "zone-outdoor-air": "outdoor-air system: each zone's scheduled outdoor air ≥ Voz",
    "zone-primary-airflow": "zone primary airflow Vpz ≥ Voz",
    "zone-limits-ev": "zones whose Evz is below the Ev the scheduled intake needs",
    "ventilation-efficiency-positive": "system ventilation efficiency Ev > 0",
    "simplified-vav-minimum": "simplified Ev: VAV zone minimum Vpz ≥ ratio × Voz",
    "air-class-recirculation": "class 3 air only within its space; class 4 never recirculated",
    "air-class-mixing": "class 2 air into class 1 spaces of another use",
    "space-without-rates": "occupancy category with no outdoor air rates",
    "air-distribution-assumed": "Ez assumed where the zone states no air distribution",
    "population-without-density": "no occupants stated and no default density",
    "diversity-above-one": "system population Ps above ΣPz",
    "zone-air-sum": "outdoor-air system: zone outdoor air sums above the intake",
    "short-term-averaging": "population may be averaged over T = 3v/Vbz where the peak is brief",
    "natural-opening-area": "natural ventilation: openable area ≥ the pack's fraction of Az",
    "natural-depth": "natural ventilation: zone depth ≤ the pack's multiple of the ceiling height",
    "natural-mechanical-system": "natural ventilation: a mechanical system also, unless the "
                                 "openings are permanently open or the zone is unconditioned",
    "zone-exhaust": "a zone's scheduled exhaust airflow ≥ the minimum exhaust rate of its row",
    "exhaust-fan-airflow": "an exhaust fan's scheduled airflow ≥ the exhaust its zones schedule",
    "makeup-transfer-class": "air transferred to an exhausted zone as makeup may be transferred "
                             "there by its air class",
    "makeup-transfer-use": "class 2 makeup air goes to a class 2 or 3 space of another use only "
                           "where the uses are the same or similar",
    "iaqp-concentration": "IAQ procedure: each design compound's breathing-zone steady state ≤ "
                          "its design limit at the scheduled outdoor air",
    "iaqp-intake": "IAQ procedure: scheduled outdoor-air intake ≥ the least intake the mass "
                   "balance needs to meet every design limit",
}

#: check id → what it verifies, for limits the schedule declares (never listed in a pack)
DECLARED_CHECKS: dict[str, str] = {
    "concentration-limit": "zone concentration (steady, or the peak over the design day) at or "
                           "below the limit the schedule declares",
}


def what_it_verifies(check_id: str) -> str:
    """What an engine check or a declared check verifies (the id itself when unknown)."""
    return KNOWN_CHECKS.get(check_id) or DECLARED_CHECKS.get(check_id, check_id)


class Emitter:
    """Collects findings for the checks the pack enables, with the pack's severity and source,
    and findings of the limits the schedule declares (:meth:`declare`)."""

    def __init__(self, pack: RulePack, units: str,
                 locate: Callable[[tuple], Location] | None = None) -> None:
        self.pack = pack
        self.units = units
        self.findings: list[Finding] = []
        #: schedule field path → its location (to credit a declared limit to where it is written)
        self.locate = locate

    def enabled(self, check_id: str) -> bool:
        return check_id in self.pack.checks

    def emit(self, check_id: str, subject: str, message: str, location: Location, *,
             required: Amount | None = None, provided: Amount | None = None,
             system: str = "", zone: str | None = None, severity: str | None = None) -> None:
        check = self.pack.checks.get(check_id)
        if check is None:
            return
        self.findings.append(Finding(
            rule=check_id, severity=severity or check.severity, subject=subject, message=message,
            source=check.source.cite(), location=location, required=required, provided=provided,
            system=system, zone=zone,
        ))

    def declare(self, check_id: str, subject: str, message: str, location: Location, *,
                declared_at: tuple, system: str = "", zone: str | None = None,
                required: Amount | None = None, provided: Amount | None = None) -> None:
        """A declared limit the subject misses: basis ``declared``, severity ``fail`` (the limit
        is not met), credited to the schedule field ``declared_at`` that sets it."""
        field = ".".join(str(p) if not isinstance(p, int) else f"[{p}]" for p in declared_at)
        field = field.replace(".[", "[")
        where = self.locate(declared_at) if self.locate is not None else None
        source = (f"limit declared by the schedule ({field}"
                  + (f" at {where}" if where is not None else "")
                  + f"); not a requirement of rule pack {self.pack.id}")
        self.findings.append(Finding(
            rule=check_id, severity="fail", subject=subject, message=message, source=source,
            location=location, required=required, provided=provided, system=system, zone=zone,
            basis=DECLARED,
        ))

    def compare(self, check_id: str, subject: str, what: str, required: float, provided: float,
                kind: str, location: Location, *, system: str, zone: str | None = None,
                advice: str = "") -> bool:
        """Emit a failing finding when ``provided < required``; True when it passes."""
        if provided >= required * (1 - 1e-9):
            return True
        amt = lambda v: formatting.amount(v, kind, self.units)  # noqa: E731
        shortfall = formatting.amount(required - provided, kind, self.units)
        message = (f"{what}: {amt(provided)} provided, {amt(required)} required "
                   f"(short by {shortfall})")
        if advice:
            message += f"; {advice}"
        self.emit(check_id, subject, message, location, required=Amount(required, kind),
                  provided=Amount(provided, kind), system=system, zone=zone)
        return False
