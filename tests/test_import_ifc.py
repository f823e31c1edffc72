"""IFC (ISO 16739): spaces, quantities, occupancy and systems read with ifcopenshell.

The small models are built here with ifcopenshell itself. Property and quantity names are those
of the IFC4 standard sets: Qto_SpaceBaseQuantities (NetFloorArea, Height),
Pset_SpaceOccupancyRequirements (OccupancyType, OccupancyNumber, AreaPerOccupant),
Pset_UnitaryEquipmentTypeAirConditioningUnit (OutsideAirFlowrate) — ISO 16739-1:2018 (IFC4
ADD2 TC1) property set templates, as shipped with ifcopenshell. Expected values are worked by
hand (the models are in millimetres, square metres and m³/s; 1 cfm = 0.3048³ m³/min exactly,
NIST SP 811).
"""

from __future__ import annotations

import pytest

from airgate.cli import main
from airgate.readers.sources import read_any

from conftest import CFM
from importing import need

ifcopenshell = need("ifcopenshell")

import ifcopenshell.api.aggregate  # noqa: E402
import ifcopenshell.api.pset  # noqa: E402
import ifcopenshell.api.root  # noqa: E402
import ifcopenshell.api.unit  # noqa: E402
import ifcopenshell.guid  # noqa: E402


class Model:
    """A small invented building: Tarnmoor community hall (fictional)."""

    def __init__(self, units: str | None = "SI") -> None:
        self.f = ifcopenshell.file(schema="IFC4")
        api = ifcopenshell.api
        self.project = api.root.create_entity(self.f, ifc_class="IfcProject",
                                              name="Tarnmoor community hall (invented)")
        api.unit.assign_unit(self.f)  # millimetre, square metre, cubic metre
        self.storey = api.root.create_entity(self.f, ifc_class="IfcBuildingStorey", name="L0")
        api.aggregate.assign_object(self.f, products=[self.storey], relating_object=self.project)
        props = {"rules": "ashrae-62.1-2019-si"}
        if units:
            props["units"] = units
        self.pset(self.project, "Airgate_Project", props)

    def pset(self, product, name, props):
        pset = ifcopenshell.api.pset.add_pset(self.f, product=product, name=name)
        ifcopenshell.api.pset.edit_pset(self.f, pset=pset, properties=props)

    def space(self, number, name, *, area=None, height_mm=None, category="multi-use-assembly",
              people=None, per_occupant=None, zone=None):
        s = ifcopenshell.api.root.create_entity(self.f, ifc_class="IfcSpace", name=number)
        s.LongName = name
        ifcopenshell.api.aggregate.assign_object(self.f, products=[s], relating_object=self.storey)
        q = {}
        if area is not None:
            q["NetFloorArea"] = area
        if height_mm is not None:
            q["Height"] = height_mm
        if q:
            qto = ifcopenshell.api.pset.add_qto(self.f, product=s, name="Qto_SpaceBaseQuantities")
            ifcopenshell.api.pset.edit_qto(self.f, qto=qto, properties=q)
        occ = {"OccupancyType": category}
        if people is not None:
            occ["OccupancyNumber"] = self.f.createIfcCountMeasure(people)
        if per_occupant is not None:
            occ["AreaPerOccupant"] = self.f.createIfcAreaMeasure(per_occupant)
        self.pset(s, "Pset_SpaceOccupancyRequirements", occ)
        self.pset(s, "Airgate_Zone", zone or {"air_distribution": "ceiling-supply-cool"})
        return s

    def system(self, name, spaces, props, via="services"):
        sys_ = ifcopenshell.api.root.create_entity(self.f, ifc_class="IfcDistributionSystem",
                                                   name=name, predefined_type="VENTILATION")
        if props is not None:
            self.pset(sys_, "Airgate_System", props)
        if via == "services":
            self.rel("IfcRelServicesBuildings", RelatingSystem=sys_, RelatedBuildings=spaces)
        else:
            self.rel("IfcRelAssignsToGroup", RelatingGroup=sys_, RelatedObjects=spaces)
        return sys_

    def rel(self, cls, **attrs):
        return self.f.create_entity(cls, GlobalId=ifcopenshell.guid.new(), **attrs)

    def flow(self, litres_per_second):
        return self.f.createIfcVolumetricFlowRateMeasure(litres_per_second / 1000.0)

    def save(self, path):
        self.f.write(str(path))
        return path


def test_space_quantities_occupancy_and_units(tmp_path):
    m = Model()
    hall = m.space("G01", "Main hall", area=120.0, height_mm=4500.0, people=80.0)
    foyer = m.space("G02", "Foyer", area=30.0, category="lobbies", per_occupant=3.0)
    m.system("AHU-1", [hall, foyer], {"kind": "multiple-zone", "outdoor_air": m.flow(900.0),
                                      "ventilation_efficiency": "simplified"})
    loaded = read_any(m.save(tmp_path / "hall.ifc"))
    system = loaded.model.systems[0]
    assert (system.id, system.kind) == ("AHU-1", "multiple-zone")
    assert system.outdoor_air == pytest.approx(900.0)  # 0.9 m³/s, internal L/s
    hall_z, foyer_z = system.zones
    assert (hall_z.id, hall_z.name) == ("G01", "Main hall")
    assert hall_z.area == pytest.approx(120.0)
    assert hall_z.height == pytest.approx(4.5)  # 4500 mm
    assert hall_z.occupants == 80
    assert foyer_z.occupants == pytest.approx(10.0)  # 30 m² ÷ 3 m² per occupant
    assert loaded.summary.text() == "hall.ifc: 2 rooms read, 2 mapped to 1 system, 0 rejected"
    assert loaded.doc.origin(("systems", 0, "zones", 0, "area")).source.endswith(
        "Qto_SpaceBaseQuantities.NetFloorArea")


def test_ip_schedule_from_an_si_model_shows_ip_values(tmp_path):
    m = Model(units="IP")
    hall = m.space("G01", "Main hall", area=92.90304, people=50.0)  # 1000 ft²
    m.system("RTU-1", [hall], {"kind": "single-zone", "outdoor_air": m.flow(1000 * CFM)})
    data = read_any(m.save(tmp_path / "ip.ifc")).doc.data
    assert data["systems"][0]["outdoor_air"] == "1000 cfm"
    assert data["systems"][0]["zones"][0]["area"] == "1000 ft2"


def test_zone_grouping_and_unitary_equipment_intake(tmp_path):
    m = Model()
    a = m.space("101", "Meeting A", area=40.0, people=20.0, category="conference-meeting")
    b = m.space("102", "Meeting B", area=40.0, people=20.0, category="conference-meeting")
    zone = ifcopenshell.api.root.create_entity(m.f, ifc_class="IfcZone", name="Meeting suite")
    m.rel("IfcRelAssignsToGroup", RelatingGroup=zone, RelatedObjects=[a, b])
    system = m.system("RTU-2", [zone], {"kind": "multiple-zone",
                                        "ventilation_efficiency": "simplified"}, via="group")
    unit = ifcopenshell.api.root.create_entity(m.f, ifc_class="IfcUnitaryEquipment",
                                               name="RTU-2 unit",
                                               predefined_type="AIRCONDITIONINGUNIT")
    m.rel("IfcRelAssignsToGroup", RelatingGroup=system, RelatedObjects=[unit])
    m.pset(unit, "Pset_UnitaryEquipmentTypeAirConditioningUnit",
           {"OutsideAirFlowrate": m.flow(250.0)})
    loaded = read_any(m.save(tmp_path / "zone.ifc"))
    [s] = loaded.model.systems
    assert [z.id for z in s.zones] == ["101", "102"]
    assert s.outdoor_air == pytest.approx(250.0)
    assert "unitary equipment" in loaded.doc.origin(("systems", 0, "outdoor_air")).note


def test_a_zone_with_the_airgate_system_set_is_a_system(tmp_path):
    m = Model()
    a = m.space("201", "Studio", area=60.0, people=10.0, category="music-theater-dance")
    zone = ifcopenshell.api.root.create_entity(m.f, ifc_class="IfcZone", name="FCU-4")
    m.rel("IfcRelAssignsToGroup", RelatingGroup=zone, RelatedObjects=[a])
    m.pset(zone, "Airgate_System", {"kind": "single-zone", "outdoor_air": "200 L/s"})
    [s] = read_any(m.save(tmp_path / "z.ifc")).model.systems
    assert (s.id, [z.id for z in s.zones], s.outdoor_air) == ("FCU-4", ["201"], 200.0)


def test_a_space_no_system_serves_is_an_error(tmp_path, capsys):
    m = Model()
    a = m.space("101", "Hall", area=100.0, people=50.0)
    m.space("102", "Store", area=10.0, people=0.0)
    m.system("AHU-1", [a], {"kind": "single-zone", "outdoor_air": m.flow(500.0)})
    path = m.save(tmp_path / "lost.ifc")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "the space is served by no system (IfcSpace #" in err and "'102')" in err
    assert "2 rooms read, 1 mapped to 1 system, 1 rejected" in err


def test_a_space_two_systems_serve_is_an_error(tmp_path, capsys):
    m = Model()
    a = m.space("101", "Hall", area=100.0, people=50.0)
    m.system("AHU-1", [a], {"kind": "single-zone", "outdoor_air": m.flow(500.0)})
    m.system("DOAS-1", [a], {"kind": "outdoor-air", "outdoor_air": m.flow(500.0)})
    assert main(["check", str(m.save(tmp_path / "twice.ifc"))]) == 2
    assert "also served by system 'AHU-1'" in capsys.readouterr().err


def test_missing_kind_and_intake_say_which_property_to_add(tmp_path, capsys):
    m = Model()
    a = m.space("101", "Hall", area=100.0, people=50.0)
    m.system("AHU-1", [a], {"notes": "nothing else"})
    assert main(["check", str(m.save(tmp_path / "bare.ifc"))]) == 2
    err = capsys.readouterr().err
    assert "systems[0].kind: the system's kind is not stated" in err
    assert "fix: add the property kind" in err and "Airgate_System" in err
    assert "minimum outdoor-air intake is not stated" in err


def test_wrong_measure_and_unknown_property_are_located(tmp_path, capsys):
    m = Model()
    a = m.space("101", "Hall", area=100.0, people=50.0,
                zone={"air_distribution": "ceiling-supply-cool",
                      "primary_airflow": m.f.createIfcAreaMeasure(3.0),
                      "ocupants": 4.0})
    m.system("AHU-1", [a], {"kind": "single-zone", "outdoor_air": m.flow(500.0)})
    path = m.save(tmp_path / "props.ifc")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    lines = path.read_text(encoding="utf-8").splitlines()
    assert "a IfcAreaMeasure cannot give primary_airflow" in err
    assert "unknown zone field 'ocupants'; did you mean 'occupants'?" in err
    where = next(i for i, t in enumerate(lines, start=1) if "'primary_airflow'" in t)
    assert f"{path}:{where}: " in err  # the line of the property in the file


def test_without_a_net_area_the_gross_area_is_not_used(tmp_path, capsys):
    m = Model()
    a = m.space("101", "Hall", people=50.0)
    qto = ifcopenshell.api.pset.add_qto(m.f, product=a, name="Qto_SpaceBaseQuantities")
    ifcopenshell.api.pset.edit_qto(m.f, qto=qto, properties={"GrossFloorArea": 110.0})
    m.system("AHU-1", [a], {"kind": "single-zone", "outdoor_air": m.flow(500.0)})
    assert main(["check", str(m.save(tmp_path / "gross.ifc"))]) == 2
    err = capsys.readouterr().err
    assert "systems[0].zones[0].area: missing required field 'area'" in err
    assert "(IfcSpace #" in err


def test_an_ifc2x3_model_reads_as_the_ifc4_one(tmp_path, monkeypatch):
    # IFC2X3 (ISO/PAS 16739:2005): IfcSystem instead of IfcDistributionSystem, the space's
    # quantities in an IfcElementQuantity named BaseQuantities (the IFC2X3 convention), and
    # an owner history on every rooted entity (mandatory in IFC2X3). Same values by hand as
    # test_space_quantities_occupancy_and_units: 4500 mm = 4.5 m, 0.9 m³/s = 900 L/s.
    import ifcopenshell.api.owner
    import ifcopenshell.api.owner.settings

    f = ifcopenshell.file(schema="IFC2X3")
    org = f.createIfcOrganization(Name="Quillby Bay Civic Trust (fictional)")
    user = f.createIfcPersonAndOrganization(f.createIfcPerson(FamilyName="Reviewer"), org)
    app = f.createIfcApplication(org, "1", "airgate test model", "airgate-test")
    monkeypatch.setattr(ifcopenshell.api.owner.settings, "get_user", lambda _f: user)
    monkeypatch.setattr(ifcopenshell.api.owner.settings, "get_application", lambda _f: app)
    api = ifcopenshell.api
    project = api.root.create_entity(f, ifc_class="IfcProject", name="Tarnmoor annexe (invented)")
    api.unit.assign_unit(f)
    storey = api.root.create_entity(f, ifc_class="IfcBuildingStorey", name="L0")
    api.aggregate.assign_object(f, products=[storey], relating_object=project)

    def pset(product, name, props):
        ps = api.pset.add_pset(f, product=product, name=name)
        api.pset.edit_pset(f, pset=ps, properties=props)

    pset(project, "Airgate_Project", {"rules": "ashrae-62.1-2019-si", "units": "SI"})
    hall = api.root.create_entity(f, ifc_class="IfcSpace", name="G01")
    hall.LongName = "Annexe hall"
    api.aggregate.assign_object(f, products=[hall], relating_object=storey)
    qto = api.pset.add_qto(f, product=hall, name="BaseQuantities")
    api.pset.edit_qto(f, qto=qto, properties={"NetFloorArea": 120.0, "Height": 4500.0})
    pset(hall, "Pset_SpaceOccupancyRequirements",
         {"OccupancyType": "multi-use-assembly", "OccupancyNumber": f.createIfcCountMeasure(80.0)})
    pset(hall, "Airgate_Zone", {"air_distribution": "ceiling-supply-cool"})
    system = api.root.create_entity(f, ifc_class="IfcSystem", name="AHU-1")
    pset(system, "Airgate_System",
         {"kind": "single-zone", "outdoor_air": f.createIfcVolumetricFlowRateMeasure(0.9)})
    f.create_entity("IfcRelServicesBuildings", GlobalId=ifcopenshell.guid.new(),
                    OwnerHistory=api.owner.create_owner_history(f), RelatingSystem=system,
                    RelatedBuildings=[hall])
    path = tmp_path / "annexe.ifc"
    f.write(str(path))
    loaded = read_any(path)
    s = loaded.model.systems[0]
    z = s.zones[0]
    assert (s.id, s.kind, s.outdoor_air) == ("AHU-1", "single-zone", pytest.approx(900.0))
    assert (z.id, z.name, z.area, z.height, z.occupants) == (
        "G01", "Annexe hall", pytest.approx(120.0), pytest.approx(4.5), 80)
    assert loaded.summary.text() == "annexe.ifc: 1 room read, 1 mapped to 1 system, 0 rejected"
    assert loaded.doc.origin(("systems", 0, "zones", 0, "area")).source.endswith(
        "BaseQuantities.NetFloorArea")
    assert main(["check", str(path), "--exit-zero"]) == 0


def _exhaust_model(fans: int):
    """An EXHAUST distribution system (no Airgate kind) with ``fans`` IfcFans stating their
    Pset_FanTypeCommon.NominalAirFlowRate, exhausting one toilet room (ISO 16739 IFC4 names)."""
    m = Model()
    s = ifcopenshell.api.root.create_entity(m.f, ifc_class="IfcSpace", name="130")
    ifcopenshell.api.aggregate.assign_object(m.f, products=[s], relating_object=m.storey)
    qto = ifcopenshell.api.pset.add_qto(m.f, product=s, name="Qto_SpaceBaseQuantities")
    ifcopenshell.api.pset.edit_qto(m.f, qto=qto, properties={"NetFloorArea": 20.0})
    m.pset(s, "Airgate_Zone", {"exhaust": "{category: toilets-public, airflow: 80 L/s, "
                                          "fixtures: 3}"})
    ef = ifcopenshell.api.root.create_entity(m.f, ifc_class="IfcDistributionSystem",
                                             name="EF-3", predefined_type="EXHAUST")
    m.rel("IfcRelServicesBuildings", RelatingSystem=ef, RelatedBuildings=[s])
    for n in range(fans):
        fan = ifcopenshell.api.root.create_entity(m.f, ifc_class="IfcFan", name=f"EF-3 fan {n}")
        m.rel("IfcRelAssignsToGroup", RelatingGroup=ef, RelatedObjects=[fan])
        m.pset(fan, "Pset_FanTypeCommon", {"NominalAirFlowRate": m.flow(90.0)})
    return m


def test_an_exhaust_system_and_its_fan_airflow(tmp_path):
    loaded = read_any(_exhaust_model(1).save(tmp_path / "ef.ifc"))
    [s] = loaded.model.systems
    assert (s.id, s.kind, s.airflow) == ("EF-3", "exhaust", pytest.approx(90.0))
    assert "EXHAUST" in loaded.doc.origin(("systems", 0, "kind")).note
    assert "fan" in loaded.doc.origin(("systems", 0, "airflow")).note
    [z] = s.zones
    assert (z.exhaust.category, z.exhaust.airflow, z.exhaust.fixtures) == (
        "toilets-public", pytest.approx(80.0), 3)


def test_two_fans_leave_the_exhaust_airflow_ambiguous(tmp_path, capsys):
    assert main(["check", str(_exhaust_model(2).save(tmp_path / "ef2.ifc"))]) == 2
    err = capsys.readouterr().err
    assert "2 fans of the exhaust system state NominalAirFlowRate" in err
    assert "Airgate_System" in err and "Traceback" not in err
