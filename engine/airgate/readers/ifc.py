"""Read a schedule from an IFC model (ISO 16739; IFC4 and IFC2X3) with ifcopenshell.

ifcopenshell is an optional extra (``pip install 'airgate[ifc]'``). What is read (the full
mapping is in ``docs/importing.md``):

- every ``IfcSpace`` → a zone: ``Name`` (the room number) is its id, ``LongName`` its name,
  ``Qto_SpaceBaseQuantities`` ``NetFloorArea``, ``Height`` and ``NetVolume`` (or
  ``Pset_SpaceCommon.NetPlannedArea``), ``Pset_SpaceOccupancyRequirements`` ``OccupancyType``
  (the rule pack's category id) and ``OccupancyNumber`` (else ``OccupancyNumberPeak``, else area
  ÷ ``AreaPerOccupant``);
- systems: each ``IfcDistributionSystem`` (``IfcSystem``) that serves spaces
  (``IfcRelServicesBuildings``) or groups them directly or through ``IfcZone``\\ s
  (``IfcRelAssignsToGroup``), and each ``IfcZone`` that carries an ``Airgate_System`` set; the
  intake may come from ``Pset_UnitaryEquipmentTypeAirConditioningUnit.OutsideAirFlowrate`` of
  the system's unitary equipment; a system of type ``EXHAUST`` is an exhaust fan, its airflow
  ``Pset_FanTypeCommon.NominalAirFlowRate`` of its ``IfcFan`` (IFC has no standard property for
  a space's exhaust airflow: ``Airgate_Zone.exhaust`` gives it);
- what IFC has no standard property for: the sets ``Airgate_Project``, ``Airgate_Profiles``
  (``NAME.weekday`` = ``"07:30-08:30=0.3; …"``), ``Airgate_System`` and ``Airgate_Zone``, one
  property per schedule field, named as in the schedule.

Measures are converted from the model's units. Locations are the line of the entity in the
file (``building.ifc:123``) and the reference names it (``IfcSpace #45 '203'``).
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

from airgate import units
from airgate.errors import ScheduleError
from airgate.models.schedule import SYSTEM_KINDS
from airgate.readers import condition_columns as C
from airgate.readers import fields as F
from airgate.readers import step
from airgate.readers.document import read_bytes
from airgate.readers.sources import Builder, ImportedSchedule, Origin

#: IFC measure → (unit type of the project's units, airgate quantity kind, SI unit text)
_MEASURES = {
    "IfcAreaMeasure": ("AREAUNIT", "area", "m2"),
    "IfcLengthMeasure": ("LENGTHUNIT", "length", "m"),
    "IfcPositiveLengthMeasure": ("LENGTHUNIT", "length", "m"),
    "IfcNonNegativeLengthMeasure": ("LENGTHUNIT", "length", "m"),
    "IfcVolumeMeasure": ("VOLUMEUNIT", "volume", "m3"),
    "IfcVolumetricFlowRateMeasure": ("VOLUMETRICFLOWRATEUNIT", "airflow", "m3/s"),
}
_QUANTITY_VALUES = {"IfcQuantityArea": ("AreaValue", "IfcAreaMeasure"),
                    "IfcQuantityLength": ("LengthValue", "IfcLengthMeasure"),
                    "IfcQuantityVolume": ("VolumeValue", "IfcVolumeMeasure"),
                    "IfcQuantityCount": ("CountValue", "IfcCountMeasure")}
_SYSTEM_CLASSES = ("IfcSystem", "IfcDistributionSystem", "IfcDistributionCircuit")
_QTO = ("Qto_SpaceBaseQuantities", "BaseQuantities")


class _Prop:
    """One property or quantity value with its measure type and entity."""

    def __init__(self, value: Any, measure: str, entity, unit=None, pset: str = "") -> None:
        self.value, self.measure, self.entity, self.unit = value, measure, entity, unit
        self.what = f"{pset}.{entity.Name}" if pset else entity.Name


class _Reader:
    def __init__(self, model, path: Path, lines: dict[int, int]) -> None:
        self.model = model
        self.file = str(path)
        self.name = path.name
        self.lines = lines
        self.b = Builder(file=self.file, source=path.name)
        self.system = units.SI
        #: the element whose properties were read last (where a structural error is reported)
        self.current = None

    # -- places ---------------------------------------------------------------------------------

    def label(self, entity) -> str:
        name = getattr(entity, "Name", None)
        return f"{entity.is_a()} #{entity.id()}" + (f" '{name}'" if name else "")

    def origin(self, entity, owner=None, what: str | None = None) -> Origin:
        ref = (f"{what} of " if what else "") + self.label(owner or entity)
        source = f"{self.name} #{entity.id()}" + (f" {what}" if what else "")
        return Origin(self.file, self.lines.get(entity.id()), None, ref, source)

    # -- properties -----------------------------------------------------------------------------

    def props(self, element) -> dict[str, dict[str, _Prop]]:
        """Property sets and quantity sets of ``element``; its own win over its type's."""
        self.current = element
        out: dict[str, dict[str, _Prop]] = {}
        own, typed = [], []
        for rel in getattr(element, "IsDefinedBy", None) or ():
            if rel.is_a("IfcRelDefinesByProperties"):
                pdef = rel.RelatingPropertyDefinition
                own += list(pdef) if isinstance(pdef, tuple) else [pdef]
            elif rel.is_a("IfcRelDefinesByType"):
                typed += list(rel.RelatingType.HasPropertySets or ())
        for rel in getattr(element, "IsTypedBy", None) or ():
            typed += list(rel.RelatingType.HasPropertySets or ())
        for pdef in typed + own:
            target = out.setdefault(pdef.Name or "", {})
            if pdef.is_a("IfcPropertySet"):
                for p in pdef.HasProperties or ():
                    if p.is_a("IfcPropertySingleValue") and p.NominalValue is not None:
                        v = p.NominalValue
                        if self._plain(getattr(v, "wrappedValue", v), p, element, pdef.Name):
                            target[p.Name] = _Prop(v.wrappedValue, v.is_a(), p, p.Unit,
                                                   pdef.Name)
            elif pdef.is_a("IfcElementQuantity"):
                for q in pdef.Quantities or ():
                    attr, measure = _QUANTITY_VALUES.get(q.is_a(), (None, None))
                    if attr is not None and getattr(q, attr) is not None \
                            and self._plain(getattr(q, attr), q, element, pdef.Name):
                        target[q.Name] = _Prop(getattr(q, attr), measure, q,
                                               getattr(q, "Unit", None), pdef.Name)
        return out

    def _plain(self, value: Any, prop, element, pset: str) -> bool:
        """Whether a property's value is a number, text or truth value; an entity where a
        value belongs (``IFCPROPERTYSINGLEVALUE('x',$,#12,$)``) is an error at the property."""
        if isinstance(value, (bool, int, float, str)):
            return True
        what = (f"the entity {self.label(value)}" if hasattr(value, "is_a")
                else type(value).__name__)
        self.b.error(self.origin(prop, element, f"{pset}.{prop.Name}"),
                     f"the property's value is {what}, not a value",
                     hint="give the property a value such as IFCLABEL('…') or a measure")
        return False

    def value(self, col: F.Column, prop: _Prop, owner, path: tuple = ()) -> Any:
        """A property as a schedule value; measures converted from the model's units."""
        where = self.origin(prop.entity, owner, prop.what)
        spec = _MEASURES.get(prop.measure)
        try:
            if spec is None:
                return F.convert(col, prop.value)
            unit_type, kind, si_unit = spec
            if col.kind != "quantity" or col.unit != kind:
                raise F.CellError(f"a {prop.measure} cannot give {col.field}",
                                  hint="use the measure type of the field's quantity, or a "
                                       "text with its unit such as '300 cfm'")
            import ifcopenshell.util.unit as iu

            scale = (iu.get_unit_scale(prop.unit) if prop.unit is not None
                     else iu.calculate_unit_scale(self.model, unit_type))
            internal = units.parse(f"{float(prop.value) * scale!r} {si_unit}", kind, units.SI)
            shown = units.to_display(internal, kind, self.system)
            ip, si = F.UNIT_TEXT[kind]
            return f"{shown:.10g} {ip if self.system == units.IP else si}"
        except (F.CellError, units.QuantityError, ValueError) as exc:
            self.b.error(where, getattr(exc, "message", str(exc)), hint=getattr(exc, "hint", None),
                         field=path)
            return None

    def put(self, path: tuple, col: F.Column, prop: _Prop, owner, note: str = "") -> bool:
        converted = self.value(col, prop, owner, path)
        if converted is None:
            return False
        where = self.origin(prop.entity, owner, prop.what)
        self.b.put(path, converted, where.with_note(note) if note else where)
        return True

    def airgate_set(self, props: dict, name: str, level: str, base: tuple, owner,
                    skip: tuple[str, ...] = ()) -> None:
        for field, prop in props.get(name, {}).items():
            if field in skip:
                continue
            try:
                col, condition = C.column_at(field, level)
            except F.CellError as exc:
                self.b.error(self.origin(prop.entity, owner, prop.what), exc.message,
                             hint=exc.hint, field=base + (field,))
                continue
            if condition is None:
                self.put(base + tuple(col.field.split(".")), col, prop, owner)
                continue
            path = base + (col.field,)
            converted = self.value(col, prop, owner, path)
            if converted is not None:
                self.b.put_condition(path, condition, converted,
                                     self.origin(prop.entity, owner, prop.what))

    # -- the model ------------------------------------------------------------------------------

    def read(self) -> ImportedSchedule:
        b = self.b
        projects = self.model.by_type("IfcProject")
        if not projects:
            raise ScheduleError("the IFC model has no IfcProject", file=self.file,
                                hint="export the model with its project")
        self._project(projects[0])
        systems = self._systems()
        if not systems:
            b.error(self.origin(projects[0]), "no system of the model serves a space",
                    field=("systems",), hint="relate the spaces to IfcDistributionSystems "
                    "(IfcRelServicesBuildings), or group them in IfcZones assigned to one")
        served: dict[int, tuple[int, Any]] = {}
        b.data["systems"] = []
        for entity, spaces, equipment in systems:
            i = len(b.data["systems"])
            base = ("systems", i)
            b.data["systems"].append({"zones": []})
            self._system(entity, equipment, base)
            j = 0
            for space in spaces:
                if space.id() in served:
                    other = b.data["systems"][served[space.id()][0]]["id"]
                    b.error(self.origin(space), f"the space is also served by system "
                            f"'{other}'; airgate evaluates each zone on one system",
                            hint="serve the space from one ventilation system", room=space.id())
                    continue
                served[space.id()] = (i, entity)
                self._space(space, base + ("zones", j))
                j += 1
        for space in self.model.by_type("IfcSpace"):
            if space.id() in served:
                continue
            if getattr(space, "PredefinedType", None) == "GFA":
                b.note(self.origin(space), f"{self.label(space)} is a gross-floor-area space, "
                       "not a room: not read")
                continue
            b.room(space.id())
            b.error(self.origin(space), "the space is served by no system", room=space.id(),
                    hint="relate it to an IfcDistributionSystem (IfcRelServicesBuildings) or "
                         "group it in an IfcZone assigned to one")
        return b.finish()

    def _project(self, project) -> None:
        b = self.b
        props = self.props(project)
        b.data["project"] = {}
        b.origins[("project",)] = self.origin(project)
        own = props.get("Airgate_Project", {})
        if "units" in own and str(own["units"].value) in units.UNIT_SYSTEMS:
            self.system = str(own["units"].value)
        else:
            import ifcopenshell.util.unit as iu
            length = iu.get_project_unit(self.model, "LENGTHUNIT")
            imperial = length is not None and length.is_a("IfcConversionBasedUnit")
            self.system = units.IP if imperial else units.SI
            b.put(("project", "units"), self.system, self.origin(project).with_note(
                "from the model's length unit"))
        name = project.Name or project.LongName
        if name:
            b.put(("project", "name"), name, self.origin(project, what="Name"))
        b.at(("rules",), self.origin(project))
        schedule_fields = ("rules", *F.list_tables())
        self.airgate_set(props, "Airgate_Project", "project", ("project",), project,
                         skip=schedule_fields)
        for field in schedule_fields:
            if field in own:
                col = F.Column("rules", "Rules", "text") if field == "rules" else F.Column(
                    field, field, "value")
                self.put((field,), col, own[field], project)
        for key, prop in props.get("Airgate_Profiles", {}).items():
            name, _, day = key.rpartition(".")
            where = self.origin(prop.entity, project, prop.what)
            if day not in ("weekday", "weekend") or not name:
                b.error(where, f"profile property {key!r} is not NAME.weekday or NAME.weekend")
                continue
            try:
                spec = F.parse_day(str(prop.value))
            except F.CellError as exc:
                b.error(where, exc.message, hint=exc.hint)
                continue
            b.origins.setdefault(("profiles", name), where)
            b.put(("profiles", name, day), spec, where)

    def _members(self, group, seen: set[int]) -> tuple[list, list]:
        """Spaces (through zones too) and distribution elements grouped by ``group``."""
        spaces, equipment = [], []
        for rel in getattr(group, "IsGroupedBy", None) or ():
            for obj in rel.RelatedObjects or ():
                if obj.id() in seen:
                    continue
                seen.add(obj.id())
                if obj.is_a("IfcSpace"):
                    spaces.append(obj)
                elif obj.is_a("IfcZone"):
                    more, _ = self._members(obj, seen)
                    spaces += more
                elif obj.is_a("IfcDistributionElement") or obj.is_a("IfcUnitaryEquipment"):
                    equipment.append(obj)
        return spaces, equipment

    def _systems(self) -> list[tuple[Any, list, list]]:
        out = []
        grouped: set[int] = set()
        for entity in sorted(self.model.by_type("IfcSystem"), key=lambda e: e.id()):
            if entity.is_a() not in _SYSTEM_CLASSES:
                continue
            seen: set[int] = set()
            spaces = []
            for rel in getattr(entity, "ServicesBuildings", None) or ():
                for el in rel.RelatedBuildings or ():
                    if el.is_a("IfcSpace") and el.id() not in seen:
                        seen.add(el.id())
                        spaces.append(el)
                    elif not el.is_a("IfcSpace"):
                        self.b.note(self.origin(el), f"{self.label(entity)} serves "
                                    f"{self.label(el)}: not mapped (airgate needs the spaces "
                                    "a system serves)")
            more, equipment = self._members(entity, seen)
            grouped |= seen
            spaces += more
            if spaces:
                out.append((entity, spaces, equipment))
            else:
                self.b.note(self.origin(entity), f"{self.label(entity)} serves no space: not "
                            "mapped")
        for zone in sorted(self.model.by_type("IfcZone"), key=lambda e: e.id()):
            if zone.id() in grouped:
                continue
            if "Airgate_System" in self.props(zone):
                spaces, equipment = self._members(zone, set())
                out.append((zone, spaces, equipment))
            else:
                self.b.note(self.origin(zone), f"{self.label(zone)} is in no system and has "
                            "no Airgate_System set: not mapped")
        return sorted(out, key=lambda t: t[0].id())

    def _system(self, entity, equipment: list, base: tuple) -> None:
        b = self.b
        props = self.props(entity)
        b.origins[base] = self.origin(entity)
        b.put(base + ("id",), entity.Name or entity.GlobalId, self.origin(entity, what="Name"))
        long_name = getattr(entity, "LongName", None) or entity.Description
        if long_name:
            b.put(base + ("name",), long_name, self.origin(entity, what="LongName"))
        self.airgate_set(props, "Airgate_System", "system", base, entity)
        node = b.data["systems"][base[1]]
        if "kind" not in node and getattr(entity, "PredefinedType", None) == "EXHAUST":
            b.put(base + ("kind",), "exhaust", self.origin(entity, what="PredefinedType")
                  .with_note("an EXHAUST distribution system: an exhaust fan"))
        if "kind" not in node:
            b.error(self.origin(entity), "the system's kind is not stated", field=base + ("kind",),
                    hint="add the property kind (single-zone, outdoor-air, multiple-zone, "
                         "natural or exhaust) to its Airgate_System property set")
        rules = SYSTEM_KINDS.get(node.get("kind"))
        if rules is not None and not rules.supplies:
            self._fan_airflow(equipment, base, node)
            return
        if "outdoor_air" in node or base + ("outdoor_air",) in b.by_condition or (
                rules is not None and not rules.intake):
            return  # stated in the Airgate_System set (also per design condition), or no intake
        found = [(eq, p) for eq in equipment for name, ps in self.props(eq).items()
                 if name == "Pset_UnitaryEquipmentTypeAirConditioningUnit"
                 for key, p in ps.items() if key == "OutsideAirFlowrate"]
        if len(found) == 1:
            col = F.column_for("outdoor_air", "system")
            self.put(base + ("outdoor_air",), col, found[0][1], found[0][0],
                     note="outside airflow of the system's unitary equipment")
            return
        b.error(self.origin(entity), "the system's minimum outdoor-air intake is not stated"
                + (f" ({len(found)} unitary units state OutsideAirFlowrate)" if found else ""),
                field=base + ("outdoor_air",),
                hint="add outdoor_air to its Airgate_System set, or OutsideAirFlowrate "
                     "(Pset_UnitaryEquipmentTypeAirConditioningUnit) to its one unit")

    def _fan_airflow(self, equipment: list, base: tuple, node: dict) -> None:
        """An exhaust fan's airflow: ``Pset_FanTypeCommon.NominalAirFlowRate`` of the one
        ``IfcFan`` grouped in the system, unless ``Airgate_System.airflow`` states it (it is
        optional: without it the fan is not checked against its zones)."""
        if "airflow" in node:
            return
        found = [(eq, p) for eq in equipment for name, ps in self.props(eq).items()
                 if name == "Pset_FanTypeCommon"
                 for key, p in ps.items() if key == "NominalAirFlowRate"]
        if len(found) == 1:
            self.put(base + ("airflow",), F.column_for("airflow", "system"), found[0][1],
                     found[0][0], note="nominal airflow of the system's fan")
        elif found:
            self.b.error(self.origin(found[1][0]), f"{len(found)} fans of the exhaust system "
                         "state NominalAirFlowRate; the fan airflow is ambiguous",
                         field=base + ("airflow",),
                         hint="add airflow to the system's Airgate_System set")

    def _space(self, space, base: tuple) -> None:
        b = self.b
        b.room(space.id())
        b.place(space.id(), base)
        b.origins[base] = self.origin(space)
        props = self.props(space)
        if space.Name:
            b.put(base + ("id",), space.Name, self.origin(space, what="Name"))
        else:
            b.put(base + ("id",), space.GlobalId, self.origin(space, what="GlobalId").with_note(
                "no Name (room number)"))
        if space.LongName:
            b.put(base + ("name",), space.LongName, self.origin(space, what="LongName"))
        qto = next((props[n] for n in _QTO if n in props), {})
        for key, field in (("NetFloorArea", "area"), ("Height", "height"),
                           ("NetVolume", "volume")):
            if key in qto:
                self.put(base + (field,), F.column_for(field, "zone"), qto[key], space)
        node = b.data["systems"][base[1]]["zones"][base[3]]
        common = props.get("Pset_SpaceCommon", {})
        if "area" not in node and "NetPlannedArea" in common:
            self.put(base + ("area",), F.column_for("area", "zone"), common["NetPlannedArea"],
                     space)
        if "area" not in node:
            b.at(base + ("area",), self.origin(space))
            if "GrossFloorArea" in qto:
                b.note(self.origin(space), f"{self.label(space)}: GrossFloorArea is not used; "
                       "Az is the net occupiable area (NetFloorArea)")
        occ = props.get("Pset_SpaceOccupancyRequirements", {})
        if "OccupancyType" in occ:
            self.put(base + ("space",), F.column_for("space", "zone"), occ["OccupancyType"],
                     space)
        else:
            b.at(base + ("space",), self.origin(space))
        people = F.column_for("occupants", "zone")
        if "OccupancyNumber" in occ:
            self.put(base + ("occupants",), people, occ["OccupancyNumber"], space)
        elif "OccupancyNumberPeak" in occ:
            self.put(base + ("occupants",), people, occ["OccupancyNumberPeak"], space,
                     note="peak occupancy")
        elif "AreaPerOccupant" in occ and "area" in node:
            per = self.value(F.column_for("area", "zone"), occ["AreaPerOccupant"], space)
            if per is not None and not units.parse(per, "area", self.system) > 0:
                b.error(self.origin(occ["AreaPerOccupant"].entity, space, "AreaPerOccupant"),
                        "AreaPerOccupant must be greater than zero", field=base + (
                            "occupants",), hint="give the floor area per occupant, or "
                        "OccupancyNumber")
            elif per is not None:
                count = units.parse(node["area"], "area", self.system) / units.parse(
                    per, "area", self.system)
                b.put(base + ("occupants",), float(f"{count:.10g}"), self.origin(
                    occ["AreaPerOccupant"].entity, space, "AreaPerOccupant").with_note(
                        "area ÷ AreaPerOccupant"))
        self.airgate_set(props, "Airgate_Zone", "zone", base, space, skip=("system",))


def read(path: str | Path) -> ImportedSchedule:
    """Read an IFC model into a validated schedule (needs the optional ifcopenshell)."""
    path = Path(path)
    name = str(path)
    data = read_bytes(path, ScheduleError)
    if not data.lstrip().startswith(b"ISO-10303-21"):
        raise ScheduleError("not an IFC file: it does not start with ISO-10303-21", file=name,
                            line=1, column=1, hint="export the model as IFC (.ifc, STEP)")
    if not data.rstrip().endswith(b"END-ISO-10303-21;"):
        raise ScheduleError("the IFC file ends too early: END-ISO-10303-21; is missing",
                            file=name, line=data.count(b"\n") + 1,
                            hint="the file ends too early; export the model again")
    lines = step.scan(data, name)  # syntax, duplicate ids and dangling references, located
    try:
        import ifcopenshell
    except ImportError:
        raise ScheduleError("reading IFC needs the optional ifcopenshell package", file=name,
                            hint="pip install 'airgate[ifc]'") from None
    try:
        model = ifcopenshell.open(name)
    except Exception as exc:  # the parser's own errors: a damaged or truncated file
        raise ScheduleError(f"not a readable IFC file ({type(exc).__name__}: {exc})", file=name,
                            hint="export the model as IFC again") from None
    reader = _Reader(model, path, lines)
    try:
        return reader.read()
    except (AttributeError, TypeError, IndexError, RuntimeError) as exc:
        # an attribute holding what IFC does not allow there (an entity of another type, a
        # list for a single value): a model airgate cannot read, said where it was reading
        at = reader.current
        raise ScheduleError(
            "the IFC model's structure is not what the IFC schema allows near "
            + (reader.label(at) if at is not None else "its start")
            + f" ({type(exc).__name__})", file=name,
            line=lines.get(at.id()) if at is not None else None,
            hint="check the model with an IFC validator and export it again") from None
