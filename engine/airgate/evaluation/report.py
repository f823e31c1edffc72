"""Result objects of an evaluation: per zone, per system, and the whole report."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

from airgate.evaluation.findings import Finding, Location
from airgate.evaluation.trail import Trail
from airgate.models.rules import RulePack

if TYPE_CHECKING:
    from airgate.evaluation.coverage import CheckCase
    from airgate.evaluation.review import CommentStatus
    from airgate.evaluation.waivers import WaiverStatus

SAFETY_CAUTION = (
    "Ventilation affects health. This report is an aid to review, not an approval: the adopted "
    "local code and the licensed professional of record govern, and every result depends on the "
    "inputs given."
)


@dataclass(frozen=True)
class Supplement:
    """A supplement pack checked beside the rate pack, on every system (``systems`` None) or on
    the systems named."""

    pack: RulePack
    systems: frozenset[str] | None = None

    def applies(self, system_id: str) -> bool:
        return self.systems is None or system_id in self.systems


@dataclass
class ZoneResult:
    id: str
    name: str | None
    space: str
    space_label: str
    location: Location
    trail: Trail
    air_class: int = 1
    verdict: str = "pass"
    #: CO2 dilution trail and design-day series, where the zone's volume is known
    dilution: Trail | None = None
    series: object | None = None
    #: without an occupancy profile: CO2 rising from the outdoor level to the steady state at
    #: design occupancy over a day (what ``airgate plot`` draws in place of the design day)
    rise: object | None = None
    #: declared contaminants: id → trail (same zones as the CO2 analysis)
    contaminants: dict[str, Trail] = field(default_factory=dict)
    #: the exhaust table row the zone's exhaust was checked against (its trail holds Ve and
    #: Ve_design); None: the zone states no exhaust
    exhaust: str | None = None
    #: where the zone's makeup air comes from (``evaluation.makeup.Makeup``); None: the zone
    #: states no exhaust, or not where its makeup comes from
    makeup: object | None = None
    #: what supplement packs computed on the zone, by pack id (e.g. its equivalent clean airflow)
    packs: dict[str, Trail] = field(default_factory=dict)


@dataclass
class ConditionResult:
    """One design condition of a system: its own trail, zones and verdict."""

    id: str
    trail: Trail
    zones: list[ZoneResult]
    method: str | None = None
    critical_zone: str | None = None
    #: Vot / Vot_design: the share of the scheduled intake this condition needs [–]
    load: float = 0.0
    verdict: str = "pass"


@dataclass
class SystemResult:
    id: str
    name: str | None
    kind: str
    location: Location
    trail: Trail
    zones: list[ZoneResult]
    method: str | None = None
    critical_zone: str | None = None
    verdict: str = "pass"
    #: the compliance path: ``vrp`` (the rate procedure), ``iaqp`` (the IAQ procedure, whose
    #: trail's Vot is the least intake of the mass balance and Vot_vrp the rate procedure's),
    #: ``nvp`` (natural ventilation); None for an exhaust fan, which supplies nothing
    procedure: str | None = "vrp"
    #: the system supplies air (False: an exhaust fan, whose trail holds ΣVe, ΣVe_design and
    #: V_fan instead of an intake, and whose zones' trails hold only their exhaust)
    supplies: bool = True
    #: what the evaluation of this system wants a reader to know (the report lists them)
    notes: list[str] = field(default_factory=list)
    #: the governing design condition (None: the system lists no conditions); the trail, zones,
    #: method and critical zone above are those of this condition
    condition: str | None = None
    #: every design condition the system lists, in its order (empty without conditions)
    conditions: list[ConditionResult] = field(default_factory=list)


@dataclass
class Report:
    schedule_file: str
    project_name: str
    units: str
    pack: RulePack
    systems: list[SystemResult]
    findings: list[Finding]
    notes: list[str] = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)
    #: every waiver that concerns this schedule and what became of it (applied, expired, unmatched)
    waivers: list[WaiverStatus] = field(default_factory=list)
    #: the date expiry was judged on (ISO), when some waiver has an expiry date
    waiver_date: str | None = None
    #: every check that ran, per subject, with its findings (passes included)
    cases: list[CheckCase] = field(default_factory=list)
    #: every requirement of the pack on every subject it applies to (airgate.evaluation.requirements)
    requirements: list = field(default_factory=list)
    #: the amount each declared contaminant is counted in (its ``unit``), by contaminant id
    contaminant_units: dict[str, str] = field(default_factory=dict)
    #: the reviewer's record given (``--review``), each comment against this report's findings
    review: list[CommentStatus] = field(default_factory=list)
    #: the supplement packs checked beside ``pack`` (docs/schedule-format.md, several packs),
    #: each with the systems it applies to (None: every system)
    supplements: list[Supplement] = field(default_factory=list)
    #: whether the zones' design-day series were kept (evaluated with ``series=False``, every
    #: zone's ``series`` is None: its peak and average are in its trail all the same)
    series: bool = True

    @property
    def packs(self) -> list[RulePack]:
        """Every pack of the report: ``pack`` first, then the supplements."""
        return [self.pack, *(s.pack for s in self.supplements)]

    def pack_of(self, finding: Finding) -> str:
        """The id of the pack whose rule a finding names."""
        return finding.pack or self.pack.id

    @property
    def verdict(self) -> str:
        """``fail`` when a finding of basis code and severity fail is not waived."""
        return "fail" if any(f.severity == "fail" and not f.waived
                             for f in self.code_findings) else "pass"

    @property
    def code_findings(self) -> list[Finding]:
        """Findings on the requirements of the pack (basis ``code``), in report order."""
        return [f for f in self.findings if not f.declared]

    @property
    def declared_findings(self) -> list[Finding]:
        """Limits the schedule declares for itself and misses (basis ``declared``)."""
        return [f for f in self.findings if f.declared]

    def counts(self) -> dict[str, int]:
        """Code findings that are not waived, by severity."""
        out = {"fail": 0, "warning": 0, "info": 0}
        for f in self.code_findings:
            if not f.waived:
                out[f.severity] += 1
        return out

    def declared_count(self) -> int:
        """Declared limits missed (findings of basis ``declared`` that are not waived)."""
        return sum(1 for f in self.declared_findings if not f.waived)

    def waived_count(self) -> int:
        return sum(1 for f in self.findings if f.waived)

    def zone(self, zone_id: str) -> tuple[SystemResult, ZoneResult] | None:
        for s in self.systems:
            for z in s.zones:
                if z.id == zone_id:
                    return s, z
        return None

    def system(self, system_id: str) -> SystemResult | None:
        return next((s for s in self.systems if s.id == system_id), None)
