"""Makeup air of exhausted zones: where it comes from, and the air-class transfer rules.

A zone's ``exhaust.makeup`` says where the air that replaces its exhaust comes from: ``outdoor``,
or ``{transfer_from: ZONE}``, air transferred from another zone of the schedule. Transferred air
keeps the air class of the zone it leaves, and ANSI/ASHRAE 62.1-2019 Section 5.16.3 limits where
each class may go (the rules as recalled, ``from memory``; verify against the adopted edition):

- class 1 air may be transferred to any space (5.16.3.1);
- class 2 air may be transferred to toilet rooms and to class 4 spaces, to class 2 or 3 spaces
  only where they serve the same or similar use, and never to class 1 spaces (5.16.3.2);
- class 3 air shall not be transferred to any other space (5.16.3.3);
- class 4 air shall not be transferred to any space (5.16.3.4).

Checks ``makeup-transfer-class`` (a class that may not go there) and ``makeup-transfer-use``
(class 2 air into a class 2 or 3 zone of another category: the same or similar use must be
confirmed). Where a zone's makeup is not stated, a report note says the rules were not checked.
"""

from __future__ import annotations

from dataclasses import dataclass

from airgate.errors import AirgateError, nearest
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.models.loaded import LoadedSchedule
from airgate.models.rules import RulePack

#: what :func:`transfer` decides: the transfer is allowed, not allowed, or allowed only where
#: the two zones serve the same or similar use (to be confirmed)
ALLOWED, REFUSED, CONFIRM = "allowed", "refused", "confirm"


@dataclass(frozen=True)
class Makeup:
    """Where a zone's makeup air comes from, as the report shows it."""

    source: str  #: ``outdoor`` or ``transfer``
    zone: str | None = None  #: the zone transferred from
    air_class: int | None = None  #: that zone's air class

    def text(self) -> str:
        if self.source == "outdoor":
            return "outdoor air"
        return f"transfer from {self.zone} (class {self.air_class})"


def transfer(from_class: int, to_class: int, *, toilet_room: bool,
             same_use: bool) -> tuple[str, str]:
    """Whether air of ``from_class`` may be transferred into a zone of ``to_class``.

    ``toilet_room``: the receiving zone's exhaust row is a toilet room; ``same_use``: both zones
    are of the same occupancy category or exhaust row. Returns the decision
    (:data:`ALLOWED`, :data:`REFUSED`, :data:`CONFIRM`) and the rule's wording, citing the
    subsection of ANSI/ASHRAE 62.1-2019 Section 5.16.3 (from memory).

    >>> transfer(1, 2, toilet_room=True, same_use=False)[0]
    'allowed'
    >>> transfer(2, 1, toilet_room=False, same_use=False)[0]
    'refused'
    >>> transfer(3, 3, toilet_room=False, same_use=True)[0]
    'refused'
    """
    if from_class == 1:
        return ALLOWED, "class 1 air may be transferred to any space (5.16.3.1)"
    if from_class == 2:
        if toilet_room:
            return ALLOWED, "class 2 air may be transferred to toilet rooms (5.16.3.2)"
        if to_class == 4:
            return ALLOWED, "class 2 air may be transferred to class 4 spaces (5.16.3.2)"
        if to_class == 1:
            return REFUSED, "class 2 air shall not be transferred to class 1 spaces (5.16.3.2)"
        if same_use:
            return ALLOWED, (f"class 2 air may be transferred to a class {to_class} space of "
                             "the same use (5.16.3.2)")
        return CONFIRM, (f"class 2 air may be transferred to a class {to_class} space only "
                         "where it serves the same or similar use or pollutant sources "
                         "(5.16.3.2)")
    if from_class == 3:
        return REFUSED, "class 3 air shall not be transferred to any other space (5.16.3.3)"
    return REFUSED, "class 4 air shall not be transferred to any space (5.16.3.4)"


def _zone_paths(loaded: LoadedSchedule) -> dict[str, tuple]:
    return {zone.id: ("systems", i, "zones", j)
            for i, system in enumerate(loaded.model.systems)
            for j, zone in enumerate(system.zones)}


def _exhausted(loaded: LoadedSchedule) -> list[tuple[str, tuple, object]]:
    """Each zone that states an exhaust, in schedule order: its id, path and zone (zone ids are
    unique in a schedule); most zones of a large schedule have none."""
    return [(zone.id, ("systems", i, "zones", j), zone)
            for i, system in enumerate(loaded.model.systems)
            for j, zone in enumerate(system.zones) if zone.exhaust is not None]


def _transferred(zone) -> bool:
    made = zone.exhaust.makeup
    return made is not None and made != "outdoor"


def check_inputs(loaded: LoadedSchedule) -> list[AirgateError]:
    """Every ``transfer_from`` names another zone of the schedule (located errors with the
    nearest zone ids)."""
    transfers = [(zid, path, zone) for zid, path, zone in _exhausted(loaded)
                 if _transferred(zone)]
    if not transfers:
        return []
    paths = _zone_paths(loaded)
    errors = []
    for zid, path, zone in transfers:
        made = zone.exhaust.makeup
        at = path + ("exhaust", "makeup", "transfer_from")
        if made.transfer_from == zid:
            errors.append(loaded.error(f"zone '{zid}' cannot transfer makeup air from itself",
                                       at, hint="name the zone the air comes from, or write "
                                                "makeup: outdoor"))
        elif made.transfer_from not in paths:
            close = nearest(made.transfer_from, paths)
            errors.append(loaded.error(
                f"makeup air is transferred from zone '{made.transfer_from}', which the "
                "schedule does not have" + (f"; did you mean {', '.join(repr(c) for c in close)}?"
                                            if close else ""),
                at, hint="name a zone id of the schedule, or write makeup: outdoor"))
    return errors


def check(loaded: LoadedSchedule, pack: RulePack, results: list[SystemResult],
          emitter: Emitter, locate) -> list[str]:
    """Record each exhausted zone's makeup on its result, check transfers by air class, and
    return the report notes (the zones whose makeup is not stated)."""
    exhausted = _exhausted(loaded)
    if not exhausted:
        return []
    wanted = {zid for zid, _, _ in exhausted}
    wanted.update(zone.exhaust.makeup.transfer_from for _, _, zone in exhausted
                  if _transferred(zone))
    found: dict[str, tuple[SystemResult, ZoneResult]] = {
        z.id: (s, z) for s in results for z in s.zones if z.id in wanted}
    unstated = []
    for zid, path, zone in exhausted:
        if zid not in found:
            continue
        system, result = found[zid]
        made = zone.exhaust.makeup
        if made is None:
            unstated.append(f"{system.id}/{zid}")
            continue
        if made == "outdoor":
            result.makeup = Makeup("outdoor")
            continue
        _, source = found[made.transfer_from]
        result.makeup = Makeup("transfer", source.id, source.air_class)
        row = pack.exhaust.get(zone.exhaust.category)
        decision, rule = transfer(source.air_class, result.air_class,
                                  toilet_room=row is not None and row.toilet_room,
                                  same_use=source.space == result.space)
        if decision == ALLOWED:
            continue
        at: Location = locate(path + ("exhaust", "makeup", "transfer_from"))
        what = (f"makeup air of zone {zid} (class {result.air_class}, {result.space}) is "
                f"transferred from zone {source.id} (class {source.air_class}, {source.space}): "
                f"{rule}")
        if decision == REFUSED:
            emitter.emit("makeup-transfer-class", f"{system.id}/{zid}",
                         f"{what}; supply its makeup from outdoors or from a zone of a class "
                         "that may be transferred", at, system=system.id, zone=zid)
        else:
            emitter.emit("makeup-transfer-use", f"{system.id}/{zid}",
                         f"{what}; confirm the uses are similar, or supply its makeup from "
                         "outdoors", at, system=system.id, zone=zid)
    if not unstated or not {"makeup-transfer-class", "makeup-transfer-use"} & set(pack.checks):
        return []  # a pack without the transfer rules has nothing a stated makeup would check
    return [f"makeup air not stated for the exhaust of {', '.join(unstated)}: where it comes "
            "from decides which air may be transferred (ANSI/ASHRAE 62.1-2019 Section 5.16.3), "
            "so that was not checked; state exhaust.makeup (outdoor, or transfer_from: ZONE)"]
