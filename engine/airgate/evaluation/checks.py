"""The checks the engine implements; the rule pack decides which run, their severity and citation."""

from __future__ import annotations

from airgate import formatting
from airgate.evaluation.findings import Amount, Finding, Location
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
    "concentration-limit": "zone concentration (steady or peak over the profile) above a declared limit",
    "short-term-averaging": "population may be averaged over T = 3v/Vbz where the peak is brief",
}


class Emitter:
    """Collects findings for the checks the pack enables, with the pack's severity and source."""

    def __init__(self, pack: RulePack, units: str) -> None:
        self.pack = pack
        self.units = units
        self.findings: list[Finding] = []

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
