"""A zone's exhaust in the dilution balance: what leaves besides the return, what replaces it.

Air exhausted from a zone leaves at the zone's concentration and is not returned to a
recirculating system (the CMFR material balance, Nazaroff & Alvarez-Cohen 2001: every outflow
at the zone's concentration). What replaces it is what the zone's ``exhaust.makeup`` says:

* ``outdoor``: outdoor air entering the zone besides its supply (a makeup unit or openings; it
  passes no system filter), so the supply still returns in full: a makeup inflow ``Q_mu = Ve``
  at the outdoor concentration;
* ``{transfer_from: Y}``: air transferred from zone Y at Y's concentration, a makeup inflow
  ``Q_mu = Ve`` at ``C_Y`` (the two zones are coupled); zone Y loses that air, which it does
  not return either;
* not stated (assumed, and said so in the trail): the exhaust is drawn from the zone's own
  supply, as is the air a zone gives away as another zone's transferred makeup. The air drawn,
  ``Vd = Ve + ΣVtr_out`` [L/s], leaves instead of returning: a single-zone or outdoor-air
  system relieves that much less at its air handler, and a multiple-zone system's return is
  reduced by it (its zone exhaust ``E_z``). Where the air drawn is more than the zone's supply
  can give — the outdoor air of a single-path supply (more would leave than its air handler
  takes in), a multiple-zone zone's primary airflow — the rest is taken as outdoor air
  infiltrating the zone, ``Q_inf = Vd − Q`` (assumed; common practice for an unbalanced
  room, which is depressurised).

Units: L/s (internal). The result is a :class:`ZoneAir` per zone; the CO2 and contaminant
analyses add its steps to their trails.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from airgate import formatting
from airgate.evaluation.trail import Trail
from airgate.evaluation.report import SystemResult
from airgate.models.schedule import Schedule, System

#: what the trails say of the assumption for an unstated makeup
UNSTATED = ("makeup not stated: taken as drawn from the zone's supply (assumed), so the "
            "exhaust leaves instead of returning")
INFILTRATION = ("the air drawn exceeds {what}, so the rest is taken as outdoor air infiltrating "
                "the zone (assumed)")
SOURCE = "well-mixed mass balance (Nazaroff & Alvarez-Cohen 2001): every outflow at C_zone"


@dataclass(frozen=True)
class ZoneAir:
    """The air a zone exhausts, gives away and receives besides its supply [L/s]."""

    exhaust: float = 0.0  #: the zone's own scheduled exhaust, Ve_design
    makeup: str | None = None  #: ``outdoor``, ``transfer`` or None (not stated)
    source: str | None = None  #: the zone its makeup is transferred from
    transfers_out: tuple[tuple[str, float], ...] = field(default_factory=tuple)

    @property
    def given(self) -> float:
        """Air transferred out of the zone as other zones' makeup [L/s]."""
        return sum(q for _, q in self.transfers_out)

    @property
    def drawn(self) -> float:
        """Air drawn from the zone's supply that does not return [L/s]."""
        return (self.exhaust if self.makeup is None else 0.0) + self.given

    @property
    def outdoor_makeup(self) -> float:
        """Stated outdoor makeup air [L/s]."""
        return self.exhaust if self.makeup == "outdoor" else 0.0

    @property
    def transferred_in(self) -> float:
        """Makeup air transferred in from :attr:`source` [L/s]."""
        return self.exhaust if self.makeup == "transfer" else 0.0

    @property
    def any(self) -> bool:
        return self.exhaust > 0 or self.given > 0


#: the last schedule read and its zones' air: every system of one evaluation asks for it, so it
#: is worked out once per schedule, not once per system (a portfolio has thousands of systems)
#: (one tuple, replaced whole, so that evaluations in threads never read each other's)
_LAST: tuple = (None, {})


def forget() -> None:
    """Drop the remembered schedule (the engine calls it as an evaluation starts)."""
    global _LAST
    _LAST = (None, {})


def zone_air(schedule: Schedule) -> dict[str, ZoneAir]:
    """Every zone's :class:`ZoneAir`, by zone id (zones with no exhaust and giving no makeup
    air are left out)."""
    global _LAST
    last = _LAST
    if last[0] is schedule:
        return last[1]
    found = _zone_air(schedule)
    _LAST = (schedule, found)
    return found


def _zone_air(schedule: Schedule) -> dict[str, ZoneAir]:
    given: dict[str, list[tuple[str, float]]] = {}
    own: dict[str, tuple[float, str | None, str | None]] = {}
    for system in schedule.systems:
        for zone in system.zones:
            ex = zone.exhaust
            if ex is None:
                continue
            made = ex.makeup
            if made is None or made == "outdoor":
                own[zone.id] = (ex.airflow, made, None)
            else:
                own[zone.id] = (ex.airflow, "transfer", made.transfer_from)
                given.setdefault(made.transfer_from, []).append((zone.id, ex.airflow))
    out = {}
    for zid in sorted(set(own) | set(given)):
        airflow, makeup, source = own.get(zid, (0.0, None, None))
        out[zid] = ZoneAir(airflow, makeup, source, tuple(given.get(zid, ())))
    return out


def add_steps(t: Trail, air: ZoneAir, zone_trail: Trail) -> None:
    """The zone's exhaust, the air it gives away and the air drawn from its supply, as steps
    of a dilution trail ``t`` (``Ve_design``, ``Vtr_out``, ``Vd``)."""
    if air.exhaust > 0:
        t.copy_from(zone_trail, "Ve_design")
    if air.given > 0:
        names = ", ".join(f"{z}" for z, _ in air.transfers_out)
        t.add("Vtr_out", air.given, "airflow", source=SOURCE,
              note=f"air transferred out as the makeup of zone{'s' if len(air.transfers_out) > 1 else ''} "
                   f"{names}: leaves at this zone's concentration, not returned")
    if air.drawn > 0:
        parts = ([("{Ve_design}", air.makeup is None and air.exhaust > 0),
                  ("{Vtr_out}", air.given > 0)])
        formula = " + ".join(p for p, on in parts if on)
        note = (UNSTATED if air.makeup is None and air.exhaust > 0 else
                "the air given away is replaced by the zone's supply")
        t.add("Vd", air.drawn, "airflow", formula=formula, source=SOURCE,
              note="air drawn from the zone's supply that does not return; " + note)


def makeup_note(air: ZoneAir) -> str:
    """What the makeup inflow ``Q_mu`` of a zone is made of."""
    parts = []
    if air.makeup == "outdoor":
        parts.append("outdoor makeup air (exhaust.makeup: outdoor; no system filter)")
    if air.makeup == "transfer":
        parts.append(f"air transferred from zone {air.source} at its concentration")
    return "; ".join(parts)


def single_path(t: Trail, air: ZoneAir | None, zone_trail: Trail) -> None:
    """Add the exhaust steps and the makeup inflow ``Q_mu`` of a zone of a single-zone or
    outdoor-air system to its trail ``t``, which already holds ``Q_oa``, the outdoor air its
    supply brings [L/s].

    ``Q_inf = Vd − Q_oa`` where the air drawn exceeds it (assumed, module docstring);
    ``Q_mu = Ve_design`` (outdoor or transferred makeup) ``+ Q_inf``.
    """
    if air is None or not air.any:
        return
    add_steps(t, air, zone_trail)
    terms = []
    if air.makeup in ("outdoor", "transfer"):
        terms.append("{Ve_design}")
    infiltration = max(air.drawn - t.value("Q_oa"), 0.0)
    if infiltration > 0:
        t.add("Q_inf", infiltration, "airflow", formula="{Vd} − {Q_oa}", source=SOURCE,
              origin="assumed", note=INFILTRATION.format(
                  what="the outdoor air the supply brings (the air handler would relieve less "
                       "than nothing)"))
        terms.append("{Q_inf}")
    if terms:
        total = air.outdoor_makeup + air.transferred_in + infiltration
        what = [makeup_note(air)] if air.makeup in ("outdoor", "transfer") else []
        what += ["outdoor air infiltrating"] if infiltration > 0 else []
        t.add("Q_mu", total, "airflow", formula=" + ".join(terms), source=SOURCE,
              note="makeup air entering besides the supply, leaving with the exhaust at the "
                   "zone's concentration: " + "; ".join(w for w in what if w))


@dataclass(frozen=True)
class CoupledAir:
    """The exhaust terms of a multiple-zone system's zones for the coupled balance [L/s]."""

    not_returned: np.ndarray  #: E_z: air drawn from each zone's supply, at most Vpz
    makeup: np.ndarray  #: outdoor air entering each zone besides its supply (stated, infiltrating)
    intake: float  #: the intake the balance uses: the scheduled one, or ΣE_z where larger
    airs: tuple  #: each zone's ZoneAir (None: no exhaust)

    def kwargs(self) -> dict:
        """Arguments of the coupled procedures (makeup at the outdoor concentration, which the
        caller adds as ``makeup_concentration``)."""
        return dict(zone_exhaust=self.not_returned, makeup_airflow=self.makeup)


def coupled(ids: list[str], vpz: np.ndarray, vot: float, airs: dict[str, ZoneAir]) -> CoupledAir:
    """The exhaust terms of a multiple-zone system's zones ``ids`` with primary airflows
    ``vpz`` at scheduled intake ``vot`` (module docstring): ``E_z = min(Vd, Vpz)``,
    ``Q_inf = max(Vd − Vpz, 0)``, outdoor makeup ``Ve_design`` where stated; the intake the
    balance uses is ``max(Vot, ΣE_z)`` (an air handler cannot relieve less than nothing: the
    return it lacks is taken as outdoor air, assumed)."""
    zair = tuple(airs.get(z) for z in ids)
    drawn = np.array([a.drawn if a else 0.0 for a in zair])
    stated = np.array([a.outdoor_makeup if a else 0.0 for a in zair])
    not_returned = np.minimum(drawn, vpz)
    makeup = stated + np.maximum(drawn - vpz, 0.0)
    return CoupledAir(not_returned, makeup, max(vot, float(not_returned.sum())), zair)


def coupled_steps(t: Trail, air: ZoneAir | None, zone_trail: Trail) -> None:
    """The exhaust steps of one zone of a multiple-zone system (trail ``t`` holds ``Vpz``):
    ``Ve_design``, ``Vtr_out``, ``Vd``, ``Q_inf``, ``Q_mu``."""
    if air is None or not air.any:
        return
    add_steps(t, air, zone_trail)
    terms = ["{Ve_design}"] if air.makeup in ("outdoor", "transfer") else []
    infiltration = max(air.drawn - t.value("Vpz"), 0.0)
    if infiltration > 0:
        t.add("Q_inf", infiltration, "airflow", formula="{Vd} − {Vpz}", source=SOURCE,
              origin="assumed", note=INFILTRATION.format(what="the zone's primary airflow"))
        terms.append("{Q_inf}")
    if terms:
        what = [makeup_note(air)] if air.makeup in ("outdoor", "transfer") else []
        what += ["outdoor air infiltrating"] if infiltration > 0 else []
        t.add("Q_mu", air.outdoor_makeup + air.transferred_in + infiltration, "airflow",
              formula=" + ".join(terms), source=SOURCE,
              note="makeup air entering besides the supply, leaving with the exhaust at the "
                   "zone's concentration: " + "; ".join(what))


def intake_note(system_id: str, vot: float, intake: float, units: str) -> str:
    """A note where the zones draw more air that does not return than the intake."""
    return (f"in the dilution analysis of {system_id}, its zones' exhaust drawn from the supply "
            f"(ΣE_z = {formatting.amount(intake, 'airflow', units)}) exceeds the scheduled "
            f"intake ({formatting.amount(vot, 'airflow', units)}): an air handler cannot relieve "
            "less than nothing, so the balance takes the return it lacks as outdoor air and "
            "uses an intake of ΣE_z (assumed)")


def transfer_note(zid: str, air: ZoneAir) -> str:
    """Why a zone whose makeup is transferred from another zone has no dilution figures."""
    return (f"no dilution analysis for zone {zid}: its makeup air is transferred from zone "
            f"{air.source}, and a balance coupled to another zone's concentration is not "
            "computed for this system kind")


def system_air(system: System, result: SystemResult, schedule: Schedule) -> CoupledAir | None:
    """The exhaust terms of a multiple-zone system's zones (:func:`coupled`), or None
    where a zone's makeup is transferred from another zone (a note says so)."""
    airs = zone_air(schedule)
    ids = [z.id for z in result.zones]
    for zid in ids:
        air = airs.get(zid)
        if air is not None and air.makeup == "transfer":
            note = transfer_note(zid, air)
            if note not in result.notes:
                result.notes.append(note)
            return None
    vpz = np.array([z.trail.value("Vpz") for z in result.zones])
    return coupled(ids, vpz, system.outdoor_air, airs)
