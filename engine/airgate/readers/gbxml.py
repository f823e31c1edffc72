"""Read a schedule from a gbXML file (the open green-building XML schema, versions 5 and 6).

What is read (the full mapping is in ``docs/importing.md``):

- ``Space`` → a zone: ``Name`` is its id (gbXML ids cannot start with a digit, room numbers can),
  the first free line of ``Description`` its name, ``Area``, ``Volume``, ``PeopleNumber``, the
  space type from ``TypeCode`` (a rule-pack category id) or ``spaceType`` (a short built-in
  mapping), the occupancy profile from ``peopleScheduleIdRef``, the minimum primary airflow from
  the ``MinFlow`` of the VAV box or terminal unit it names (``AirLoopEquipmentId``);
- ``Zone`` → links its spaces to an air loop (``AirLoopId``); its ``OAFlowPerZone`` is the
  outdoor air of a zone that holds one space;
- ``AirLoop`` → a system: ``Name`` is its id, ``systemType`` gives the kind where it is clear,
  the ``Economizer``'s ``MinFlow`` (or, for a 100 % outdoor-air system, the ``Fan``'s
  ``RatedFlow``) the minimum outdoor-air intake; an ``Exhaust`` loop is an exhaust fan, its
  ``Fan``'s ``RatedFlow`` the fan airflow (gbXML has no element for a space's exhaust airflow:
  ``airgate.exhaust.…`` lines give it); a loop of kind ``natural`` (``airgate.kind: natural``,
  openings to the outdoors) has no intake and needs no equipment;
- ``Schedule`` / ``WeekSchedule`` / ``DaySchedule`` → occupancy profiles;
- what gbXML cannot say (the Ez configuration, Ps, the Ev method, the rule pack …) is written in
  a ``Description`` as ``airgate.FIELD: value`` lines, one per field.

Every Space becomes a zone or is an error; every other element that is not used is listed as a
note saying why. DTDs and entities are refused (:mod:`airgate.readers.xmltree`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from airgate import units
from airgate.errors import ScheduleError, nearest
from airgate.models.schedule import SYSTEM_KINDS as SCHEDULE_KINDS
from airgate.readers import condition_columns as C
from airgate.readers import fields as F
from airgate.readers.document import read_bytes
from airgate.readers.sources import Builder, ImportedSchedule, Origin
from airgate.readers.xmltree import Element, parse

NAMESPACE = "http://www.gbxml.org/schema"

AREA_UNITS = {"SquareFeet": "ft2", "SquareMeters": "m2", "SquareInches": "in2",
              "SquareYards": "yd2", "SquareCentimeters": "cm2", "SquareMillimeters": "mm2",
              "SquareKilometers": "km2", "SquareMiles": "mi2"}
VOLUME_UNITS = {"CubicFeet": "ft3", "CubicMeters": "m3", "CubicInches": "in3",
                "CubicYards": "yd3", "CubicCentimeters": "cm3", "CubicMillimeters": "mm3",
                "CubicKilometers": "km3", "CubicMiles": "mi3"}
FLOW_UNITS = {"CFM": "cfm", "CubicMPerHr": "m3/h", "LPerSec": "L/s", "LPM": "L/min",
              "GPM": "gal/min", "GPH": "gal/h"}
_IP_AREAS = {"SquareFeet", "SquareInches", "SquareYards", "SquareMiles"}

#: gbXML systemType → schedule kind, where the type leaves no doubt. Others need airgate.kind.
SYSTEM_KINDS = {
    **dict.fromkeys(("PackagedSingleZone", "SingleZoneReheat", "SingleZoneCeilingInduction"),
                    "single-zone"),
    **dict.fromkeys(("VariableAirVolume", "PackagedVariableAirVolume", "VAVSingleDuct",
                     "VAVReheatFan", "VAVIndoorPackagedCabinet", "MultiZone", "PackagedMultiZone",
                     "CeilingBypassVariableAirVolume", "ConstantVolumeTerminalReheat"),
                    "multiple-zone"),
    "Exhaust": "exhaust",
}

#: gbXML spaceType → occupancy category id of the built-in packs (airgate's mapping, common
#: practice; only unambiguous pairs). TypeCode or airgate.space take precedence.
SPACE_TYPES = {
    "OfficeEnclosed": "office-space", "OfficeOpenPlan": "office-space",
    "ConferenceMeetingOrMultipurpose": "conference-meeting", "CorridorOrTransition": "corridors",
    "ReadingAreaLibrary": "libraries", "StacksLibrary": "libraries",
    "CourtroomCourtHouse": "courtrooms", "AudienceOrSeatingAreaAuditorium":
        "auditorium-seating-area", "WorshipPulpitChoirReligious": "places-of-religious-worship",
    "GeneralExhibitionMuseum": "museums-galleries", "SupermarketSalesAreaRetail": "supermarket",
    "ServerRoom": "computer-not-printing", "FoodPreparation": "kitchen-cooking",
    "PlayingAreaGymnasium": "gym-sports-arena-play-area", "BankCustomerArea":
        "banks-or-bank-lobbies", "LaundryIroningAndSorting": "laundry-rooms-central",
}

_TERMINALS = ("VAVBox", "TerminalUnit")
#: Children each container's mapping reads; the others are counted in one note.
_READ = {
    "gbXML": {"Campus", "Zone", "AirLoop", "Schedule", "WeekSchedule", "DaySchedule"},
    "Campus": {"Name", "Description", "Location", "Building"},
    "Building": {"Name", "Description", "Space"},
    "Space": {"Name", "Description", "Area", "Volume", "PeopleNumber", "AirLoopId",
              "AirLoopEquipmentId", "TypeCode"},
    "Zone": {"Name", "Description", "AirLoopId", "OAFlowPerZone"},
    "AirLoop": {"Name", "Description", "AirLoopEquipment"},
}


class _Reader:
    def __init__(self, root: Element, path: Path) -> None:
        self.root = root
        self.file = str(path)
        self.name = path.name
        self.b = Builder(file=self.file, source=path.name)
        self.ids: dict[str, Element] = {}
        for node in root.iter():
            ident = node.attrib.get("id")
            if ident is None:
                continue
            if ident in self.ids:
                first = self.ids[ident]
                raise ScheduleError(f"id '{ident}' is used twice (first on line {first.line})",
                                    file=self.file, line=node.line, column=node.column,
                                    hint="gbXML ids are unique in the document")
            self.ids[ident] = node

    # -- places and values ----------------------------------------------------------------------

    def origin(self, node: Element, owner: Element | None = None, offset: int = 0,
               what: str | None = None) -> Origin:
        label = f"<{node.tag}" + (f" id='{node.attrib['id']}'" if "id" in node.attrib else "")
        label += ">"
        if owner is not None and owner is not node:
            label += f" of <{owner.tag} id='{owner.attrib.get('id', '?')}'>"
        if what:
            label = f"{what} in {label}"
        line = node.line + offset
        return Origin(self.file, line, node.column if not offset else 1, label,
                      f"{self.name}:{line} <{node.tag}>" + (f" {what}" if what else ""))

    def quantity(self, node: Element, table: dict[str, str], default: str | None,
                 owner: Element, path: tuple) -> tuple[str, Origin] | None:
        where = self.origin(node, owner)
        unit_name = node.attrib.get("unit", default)
        unit = table.get(unit_name or "")
        if unit is None:
            self.b.error(where, f"unit {unit_name!r} cannot be read here", field=path,
                         allowed=sorted(table), hint="give a unit attribute such as "
                         f"unit=\"{next(iter(table))}\"")
            return None
        return f"{node.text.strip()} {unit}", where

    def annotate(self, node: Element, level: str, base: tuple, skip: tuple = ()) -> list[str]:
        """Apply the ``airgate.FIELD: value`` lines of ``node``'s Description; its free lines."""
        desc = node.find("Description")
        if desc is None:
            return []
        free, notes = F.annotations(desc.text)
        for name, value, offset in notes:
            where = self.origin(desc, node, offset, what=f"airgate.{name}")
            if name in skip:
                continue
            try:
                col, condition = (C.column_at(name, level) if level != "schedule"
                                  else (_schedule_column(name), None))
                converted = F.convert(col, value)
            except F.CellError as exc:
                self.b.error(where, exc.message, hint=exc.hint, field=base + (name,))
                continue
            if condition is not None:  # empty: no value at that condition
                self.b.put_condition(base + (col.field,), condition, converted, where)
            elif converted is not None:
                self.b.put(base + tuple(col.field.split(".")), converted, where)
        return free

    # -- the document ---------------------------------------------------------------------------

    def read(self) -> ImportedSchedule:
        root, b = self.root, self.b
        campus = root.find("Campus")
        if campus is None:
            raise ScheduleError("the gbXML document has no Campus element", file=self.file,
                                line=root.line, column=root.column,
                                hint="a gbXML building model holds Campus/Building/Space")
        buildings = campus.findall("Building")
        b.data["project"] = {}
        b.origins[("project",)] = self.origin(buildings[0] if buildings else campus)
        self._project(campus, buildings)
        self.profiles: dict[str, str] = {}
        self.loops = {n.attrib.get("id"): n for n in root.findall("AirLoop")}
        self.systems: dict[str, int] = {}
        spaces = [s for bld in buildings for s in bld.findall("Space")]
        zones_of = self._zone_members(spaces)
        b.data["systems"] = []
        counts: dict[int, int] = {}
        terminals_used: set[str] = set()
        for space in spaces:
            key = ("Space", space.line, space.column)
            b.room(key)
            loop, zone = self._loop_of(space, key)
            if loop is None:
                continue
            i = self._system(loop)
            j = counts.get(i, 0)
            counts[i] = j + 1
            base = ("systems", i, "zones", j)
            b.place(key, base)
            self._space(space, zone, zones_of, base, terminals_used)
        if not self.systems:
            b.error(self.origin(campus), "no AirLoop of the document serves a Space",
                    field=("systems",), hint="link each Space to an AirLoop: <AirLoopId "
                    "airLoopIdRef=\"…\"/> on its Zone or on the Space")
        self._unused(terminals_used, zones_of)
        if "profiles" in b.data:  # in the order the file gives them
            b.data["profiles"] = dict(sorted(
                b.data["profiles"].items(), key=lambda kv: b.origins[("profiles", kv[0])].line))
        return b.finish()

    def _project(self, campus: Element, buildings: list[Element]) -> None:
        b = self.b
        main = buildings[0] if len(buildings) == 1 else campus
        name = main.find("Name") or campus.find("Name")
        if name is not None and name.text.strip():
            b.put(("project", "name"), name.text.strip(), self.origin(name, main))
        else:
            b.at(("project", "name"), self.origin(main))
        location = campus.find("Location")
        loc_name = location.find("Name") if location is not None else None
        if loc_name is not None and loc_name.text.strip():
            b.put(("project", "location"), loc_name.text.strip(), self.origin(loc_name, campus))
        area_unit = self.root.attrib.get("areaUnit", "")
        b.put(("project", "units"), units.IP if area_unit in _IP_AREAS else units.SI,
              self.origin(self.root, what=f"areaUnit {area_unit}"))
        b.at(("rules",), self.origin(main))
        for node in (campus, *buildings):
            self.annotate(node, "project", ("project",), skip=_SCHEDULE_FIELDS)
            self.annotate_schedule(node)

    def annotate_schedule(self, node: Element) -> None:
        desc = node.find("Description")
        if desc is None:
            return
        _, notes = F.annotations(desc.text)
        for name, value, offset in notes:
            if name not in _SCHEDULE_FIELDS:
                continue
            where = self.origin(desc, node, offset, what=f"airgate.{name}")
            try:
                converted = F.convert(_schedule_column(name), value)
            except F.CellError as exc:
                self.b.error(where, exc.message, hint=exc.hint)
                continue
            self.b.put((name,), converted, where)

    def _zone_members(self, spaces: list[Element]) -> dict[str, list[Element]]:
        out: dict[str, list[Element]] = {}
        for space in spaces:
            ref = space.attrib.get("zoneIdRef")
            if ref is not None:
                out.setdefault(ref, []).append(space)
        return out

    def _ref(self, node: Element, attr: str, tag: str, owner: Element, key) -> Element | None:
        ref = node.attrib.get(attr)
        target = self.ids.get(ref or "")
        if target is None or target.tag != tag:
            close = nearest(ref or "", [i for i, n in self.ids.items() if n.tag == tag])
            self.b.error(self.origin(node, owner, what=attr),
                         f"{attr} '{ref}' names no {tag}"
                         + (f"; did you mean '{close[0]}'?" if close else ""),
                         hint=f"refer to the id of a {tag} element", room=key)
            return None
        return target

    def _loop_of(self, space: Element, key) -> tuple[Element | None, Element | None]:
        zone = None
        if "zoneIdRef" in space.attrib:
            zone = self._ref(space, "zoneIdRef", "Zone", space, key)
        refs = [(r, space) for r in space.findall("AirLoopId")]
        if not refs and zone is not None:
            refs = [(r, zone) for r in zone.findall("AirLoopId")]
        loops = [self._ref(r, "airLoopIdRef", "AirLoop", owner, key) for r, owner in refs]
        loops = [lp for lp in loops if lp is not None]
        if len(loops) == len(refs) == 1:
            return loops[0], zone
        where = self.origin(space)
        if not refs:
            self.b.error(where, "the space is served by no air loop", room=key,
                         hint="add <AirLoopId airLoopIdRef=\"…\"/> to its Zone or to the Space")
        elif len(refs) > 1:
            self.b.error(where, f"the space is served by {len(refs)} air loops "
                         f"({', '.join(r.attrib.get('airLoopIdRef', '?') for r, _ in refs)}); "
                         "airgate evaluates each zone on one ventilation system", room=key,
                         hint="keep only the AirLoopId of the system that ventilates it")
        return None, zone

    def _system(self, loop: Element) -> int:
        ident = loop.attrib["id"]
        if ident in self.systems:
            return self.systems[ident]
        b = self.b
        i = len(self.systems)
        self.systems[ident] = i
        base = ("systems", i)
        b.data["systems"].append({"zones": []})
        b.origins[base] = self.origin(loop)
        name = loop.find("Name")
        b.put(base + ("id",), (name.text.strip() if name is not None and name.text.strip()
                               else ident), self.origin(name or loop, loop))
        free = self.annotate(loop, "system", base)
        if free and "name" not in b.data["systems"][i]:
            b.put(base + ("name",), free[0], self.origin(loop.find("Description"), loop))
        system = b.data["systems"][i]
        kind = system.get("kind")
        if kind is None and loop.attrib.get("systemType") in SYSTEM_KINDS:
            kind = SYSTEM_KINDS[loop.attrib["systemType"]]
            b.put(base + ("kind",), kind, self.origin(loop, what="systemType").with_note(
                f"systemType {loop.attrib['systemType']}"))
        elif kind is None:
            b.at(base + ("kind",), self.origin(loop))
        equipment = loop.findall("AirLoopEquipment")
        field = "airflow" if kind == "exhaust" else "outdoor_air"
        rules = SCHEDULE_KINDS.get(kind or "")
        if field not in system and (rules is None or rules.intake or not rules.supplies):
            self._intake(loop, equipment, kind, base + (field,))
        for eq in equipment:
            kind_eq = eq.attrib.get("equipmentType", "")
            if kind_eq in ("Economizer", "Fan") + _TERMINALS:
                continue
            self.b.note(self.origin(eq), f"<AirLoopEquipment id='{eq.attrib.get('id')}' "
                        f"equipmentType='{kind_eq}'> of air loop '{ident}' not mapped: it does "
                        "not set a ventilation airflow")
        return i

    def _intake(self, loop: Element, equipment: list[Element], kind: str | None,
                path: tuple) -> None:
        """The minimum outdoor-air intake (``outdoor_air``) of an air loop, or the airflow of
        an exhaust fan (``airflow``, the ``Fan``'s ``RatedFlow``), at ``path``."""
        econ = [e for e in equipment if e.attrib.get("equipmentType") == "Economizer"]
        fans = [e for e in equipment if e.attrib.get("equipmentType") == "Fan"]
        if kind == "exhaust":
            econ = []
        pick, tag = (econ, "MinFlow") if econ else (
            (fans, "RatedFlow") if kind in ("outdoor-air", "exhaust") else ([], ""))
        if len(pick) > 1:
            self.b.error(self.origin(pick[1]), f"the air loop has {len(pick)} "
                         f"{pick[0].attrib['equipmentType']} elements; the "
                         + ("fan airflow" if kind == "exhaust" else "intake") + " is ambiguous",
                         field=path, hint=f"state it as airgate.{path[-1]}: in the AirLoop's "
                                          "Description")
            return
        flow = pick[0].find(tag) if pick else None
        if flow is None:
            self.b.at(path, self.origin(pick[0] if pick else loop))
            return
        got = self.quantity(flow, FLOW_UNITS, None, pick[0], path)
        if got:
            what = ("the economizer's minimum outdoor airflow" if econ
                    else "the exhaust fan's rated airflow" if kind == "exhaust"
                    else "the supply fan of a 100 % outdoor-air system")
            self.b.put(path, got[0], got[1].with_note(what))

    def _space(self, space: Element, zone: Element | None, zones_of: dict[str, list[Element]],
               base: tuple, terminals_used: set[str]) -> None:
        b = self.b
        b.origins[base] = self.origin(space)
        name = space.find("Name")
        zid = name.text.strip() if name is not None and name.text.strip() else space.attrib["id"]
        b.put(base + ("id",), zid, self.origin(name or space, space))
        free: list[str] = []
        if zone is not None:
            self.annotate(zone, "zone", base, skip=("id", "name"))
        free = self.annotate(space, "zone", base)
        node = b.data["systems"][base[1]]["zones"][base[3]]
        if free and "name" not in node:
            b.put(base + ("name",), free[0], self.origin(space.find("Description"), space))
        defaults = self.root.attrib
        for tag, field, table, unit in (("Area", "area", AREA_UNITS, defaults.get("areaUnit")),
                                        ("Volume", "volume", VOLUME_UNITS,
                                         defaults.get("volumeUnit"))):
            el = space.find(tag)
            if field in node:
                continue
            if el is None:
                b.at(base + (field,), self.origin(space))
                continue
            got = self.quantity(el, table, unit, space, base + (field,))
            if got:
                b.put(base + (field,), *got)
        self._people(space, base, node)
        if "space" not in node:
            self._space_type(space, base)
        if "profile" not in node and "peopleScheduleIdRef" in space.attrib:
            profile = self._profile(space)
            if profile:
                b.put(base + ("profile",), profile, self.origin(space, what="peopleScheduleIdRef"))
        for ref in space.findall("AirLoopEquipmentId"):
            eq = self._ref(ref, "airLoopEquipIdRef", "AirLoopEquipment", space, None)
            if eq is None:
                continue
            if eq.attrib.get("equipmentType") not in _TERMINALS:
                b.note(self.origin(ref, space), f"AirLoopEquipmentId names "
                       f"'{eq.attrib.get('id')}' ({eq.attrib.get('equipmentType')}), not a "
                       "terminal unit: not used for the primary airflow")
                continue
            terminals_used.add(eq.attrib.get("id"))
            flow = eq.find("MinFlow")
            if flow is not None and "primary_airflow" not in node:
                got = self.quantity(flow, FLOW_UNITS, None, eq, base + ("primary_airflow",))
                if got:
                    b.put(base + ("primary_airflow",), got[0],
                          got[1].with_note("the terminal's minimum primary airflow"))
        if zone is not None:
            oa = zone.find("OAFlowPerZone")
            members = zones_of.get(zone.attrib.get("id"), [])
            if oa is not None and len(members) == 1 and "outdoor_air" not in node:
                got = self.quantity(oa, FLOW_UNITS, None, zone, base + ("outdoor_air",))
                if got:
                    b.put(base + ("outdoor_air",), *got)

    def _people(self, space: Element, base: tuple, node: dict[str, Any]) -> None:
        el = space.find("PeopleNumber")
        if el is None or "occupants" in node:
            return
        where = self.origin(el, space)
        unit = el.attrib.get("unit", "NumberOfPeople")
        text = el.text.strip()
        if unit == "NumberOfPeople":
            self.b.put(base + ("occupants",), text, where)
            return
        per = {"SquareFtPerPerson": "ft2", "SquareMPerPerson": "m2"}.get(unit)
        if per is None or "area" not in node:
            self.b.error(where, f"PeopleNumber unit {unit!r} cannot be read",
                         field=base + ("occupants",),
                         allowed=["NumberOfPeople", "SquareFtPerPerson", "SquareMPerPerson"])
            return
        try:
            people = units.parse(node["area"], "area", units.SI) / units.parse(
                f"{text} {per}", "area", units.SI)
        except (units.QuantityError, ZeroDivisionError) as exc:
            self.b.error(where, f"cannot read PeopleNumber {text!r}: {exc}",
                         field=base + ("occupants",))
            return
        self.b.put(base + ("occupants",), float(f"{people:.10g}"),
                   where.with_note(f"area ÷ {text} {unit}"))

    def _space_type(self, space: Element, base: tuple) -> None:
        code = space.find("TypeCode")
        if code is not None and code.text.strip():
            self.b.put(base + ("space",), code.text.strip(), self.origin(code, space))
            return
        kind = space.attrib.get("spaceType")
        if kind in SPACE_TYPES:
            self.b.put(base + ("space",), SPACE_TYPES[kind], self.origin(
                space, what="spaceType").with_note(f"spaceType {kind} mapped by airgate; check"))
            return
        self.b.at(base + ("space",), self.origin(space))
        if kind:
            self.b.note(self.origin(space), f"spaceType '{kind}' has no unambiguous occupancy "
                        "category; give the category id in <TypeCode> or airgate.space:")

    def _profile(self, space: Element) -> str | None:
        from airgate.readers.gbxml_schedules import profile

        ref = space.attrib["peopleScheduleIdRef"]
        if ref in self.profiles:
            return self.profiles[ref]
        sched = self._ref(space, "peopleScheduleIdRef", "Schedule", space, None)
        if sched is None:
            return None
        name = profile(self, sched)
        if name is not None:
            self.profiles[ref] = name
        return name

    def _unused(self, terminals_used: set[str], zones_of: dict[str, list[Element]]) -> None:
        for ident, loop in self.loops.items():
            if ident not in self.systems:
                self.b.note(self.origin(loop), f"air loop '{ident}' serves no space: not mapped")
            for eq in loop.findall("AirLoopEquipment"):
                if (eq.attrib.get("equipmentType") in _TERMINALS
                        and eq.attrib.get("id") not in terminals_used):
                    self.b.note(self.origin(eq), f"terminal '{eq.attrib.get('id')}' is named by "
                                "no Space (AirLoopEquipmentId): its MinFlow is not used")
        for zone in self.root.findall("Zone"):
            members = zones_of.get(zone.attrib.get("id"), [])
            if zone.find("OAFlowPerZone") is not None and len(members) != 1:
                self.b.note(self.origin(zone.find("OAFlowPerZone"), zone),
                            f"OAFlowPerZone of a zone with {len(members)} spaces not mapped: "
                            "airgate needs each space's outdoor air (give it per space, e.g. "
                            "airgate.outdoor_air:)")
        used = set(self.profiles)
        for sched in self.root.findall("Schedule"):
            if sched.attrib.get("id") not in used:
                self.b.note(self.origin(sched), f"schedule '{sched.attrib.get('id')}' is no "
                            "space's people schedule: not mapped")
        counts: dict[str, int] = {}
        for container in self.root.iter():
            read = _READ.get(container.tag)
            if read is None:
                continue
            for child in container.children:
                if child.tag not in read:
                    key = f"{container.tag}/{child.tag}"
                    counts[key] = counts.get(key, 0) + 1
        if counts:
            self.b.note(None, f"{self.name}: elements not used for ventilation checks: "
                        + ", ".join(f"{k} ×{n}" for k, n in sorted(counts.items())))


#: Top-level schedule fields an ``airgate.`` line on Campus or Building may set.
_SCHEDULE_FIELDS = ("rules", *F.list_tables())


def _schedule_column(name: str) -> F.Column:
    if name == "rules":
        return F.Column("rules", "Rules", "text")
    return F.Column(name, name, "value")


def read(path: str | Path) -> ImportedSchedule:
    """Read a gbXML file into a validated schedule (errors name the element and its line)."""
    path = Path(path)
    name = str(path)
    data = read_bytes(path, ScheduleError)
    root = parse(data, name, "gbXML")
    if root.tag != "gbXML" or root.ns not in (NAMESPACE, ""):
        raise ScheduleError(f"not a gbXML document: the root element is <{root.tag}>"
                            + (f" in namespace {root.ns}" if root.ns else ""), file=name,
                            line=root.line, column=root.column,
                            hint=f"a gbXML file starts with <gbXML xmlns=\"{NAMESPACE}\" …>")
    foreign = root.prune(root.ns)
    loaded = _Reader(root, path).read()
    if foreign:
        first = foreign[0]
        loaded.notes.append(
            f"{name}:{first.line}: {len(foreign)} element{'s' if len(foreign) != 1 else ''} in "
            f"other namespaces not read as gbXML (first <{first.tag}> in {first.ns})")
    return loaded
