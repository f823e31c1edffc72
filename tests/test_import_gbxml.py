"""gbXML: spaces, zones, air loops and schedules mapped to systems and zones.

Element and attribute names and enumerations are those of the published gbXML 6.01 schema
(gbXML.org XSD; the test files are validated against it where it is installed). The mapping
itself is airgate's (docs/importing.md). Expected values are worked by hand from the invented
test building below (SI: areas in m², flows in L/s).
"""

from __future__ import annotations

import pytest

from airgate.readers.gbxml_schedules import day_ranges
from airgate.readers.sources import read_any

from importing import gbxml_xsd

HOURS_9_TO_17 = [0.0] * 9 + [0.8] * 8 + [0.0] * 7  # 24 hourly values

BUILDING = f"""<?xml version="1.0" encoding="UTF-8"?>
<gbXML xmlns="http://www.gbxml.org/schema" temperatureUnit="C" lengthUnit="Meters"
       areaUnit="SquareMeters" volumeUnit="CubicMeters" useSIUnitsForResults="true" version="6.01">
  <Campus id="campus">
    <Name>Marrowby fire station (invented)</Name>
    <Location><ZipcodeOrPostalCode>00000</ZipcodeOrPostalCode><Name>Marrowby (fictional)</Name></Location>
    <Building id="station" buildingType="FireStation">
      <Name>Marrowby fire station (invented)</Name>
      <Description>airgate.rules: ashrae-62.1-2019-si</Description>
      <Area>170</Area>
      <Space id="sp-a" zoneIdRef="z-offices" spaceType="OfficeOpenPlan" peopleScheduleIdRef="crew">
        <Name>A1</Name>
        <Description>Watch office
airgate.air_distribution: ceiling-supply-cool</Description>
        <Area>50</Area><Volume>150</Volume>
        <PeopleNumber unit="SquareMPerPerson">10</PeopleNumber>
        <AirLoopEquipmentId airLoopEquipIdRef="vav-a"/>
      </Space>
      <Space id="sp-b" zoneIdRef="z-offices">
        <Name>A2</Name>
        <Description>Briefing room
airgate.air_distribution: ceiling-supply-cool</Description>
        <Area unit="SquareMeters">40</Area><Volume>120</Volume>
        <PeopleNumber unit="NumberOfPeople">20</PeopleNumber>
        <TypeCode>conference-meeting</TypeCode>
        <AirLoopEquipmentId airLoopEquipIdRef="vav-b"/>
      </Space>
      <Space id="sp-c" zoneIdRef="z-gym">
        <Name>A3</Name>
        <Description>Crew fitness room
airgate.air_distribution: ceiling-supply-cool
airgate.notes: invented</Description>
        <Area>80</Area><Volume>320</Volume>
        <PeopleNumber unit="NumberOfPeople">6</PeopleNumber>
        <TypeCode>health-club-weight-rooms</TypeCode>
      </Space>
    </Building>
  </Campus>
  <Zone id="z-offices"><Name>Offices</Name><OAFlowPerZone unit="LPerSec">90</OAFlowPerZone><AirLoopId airLoopIdRef="AHU-1"/></Zone>
  <Zone id="z-gym"><Name>Gym</Name><OAFlowPerZone unit="LPerSec">110</OAFlowPerZone><AirLoopId airLoopIdRef="DOAS-2"/></Zone>
  <AirLoop id="AHU-1" systemType="VariableAirVolume">
    <Name>AHU-1</Name>
    <Description>Office air handler
airgate.ventilation_efficiency: simplified</Description>
    <AirLoopEquipment id="econ" equipmentType="Economizer"><MinFlow unit="LPerSec">140</MinFlow></AirLoopEquipment>
    <AirLoopEquipment id="vav-a" equipmentType="VAVBox"><MinFlow unit="LPerSec">120</MinFlow></AirLoopEquipment>
    <AirLoopEquipment id="vav-b" equipmentType="VAVBox"><MinFlow unit="CubicMPerHr">540</MinFlow></AirLoopEquipment>
    <AirLoopEquipment id="vav-spare" equipmentType="VAVBox"><MinFlow unit="LPerSec">50</MinFlow></AirLoopEquipment>
  </AirLoop>
  <AirLoop id="DOAS-2">
    <Name>DOAS-2</Name>
    <Description>Fitness room outdoor-air unit
airgate.kind: outdoor-air</Description>
    <AirLoopEquipment id="doas-fan" equipmentType="Fan"><RatedFlow unit="LPerSec">150</RatedFlow></AirLoopEquipment>
  </AirLoop>
  <AirLoop id="EF-1"><Name>EF-1</Name></AirLoop>
  <Schedule id="crew" type="Fraction"><Name>crew</Name>
    <YearSchedule id="crew-year"><BeginDate>2025-01-01</BeginDate><EndDate>2025-12-31</EndDate><WeekScheduleId weekScheduleIdRef="crew-week"/></YearSchedule>
  </Schedule>
  <Schedule id="lights" type="Fraction"><Name>lights</Name>
    <YearSchedule id="lights-year"><BeginDate>2025-01-01</BeginDate><EndDate>2025-12-31</EndDate><WeekScheduleId weekScheduleIdRef="crew-week"/></YearSchedule>
  </Schedule>
  <WeekSchedule id="crew-week" scheduleType="Fraction">
    {"".join(f'<Day dayType="{d}" dayScheduleIdRef="crew-day"/>' for d in ("Mon", "Tue", "Wed", "Thu", "Fri"))}
    <Day dayType="Weekend" dayScheduleIdRef="crew-off"/>
  </WeekSchedule>
  <DaySchedule id="crew-day" scheduleType="Fraction">{"".join(f"<ScheduleValue>{v}</ScheduleValue>" for v in HOURS_9_TO_17)}</DaySchedule>
  <DaySchedule id="crew-off" scheduleType="Fraction">{"<ScheduleValue>0</ScheduleValue>" * 24}</DaySchedule>
</gbXML>
"""


@pytest.fixture
def station(tmp_path):
    path = tmp_path / "station.xml"
    path.write_text(BUILDING, encoding="utf-8")
    return path


def test_test_building_is_valid_gbxml(station):
    import xmlschema

    schema = xmlschema.XMLSchema(str(gbxml_xsd()))
    assert [e.reason for e in schema.iter_errors(str(station))] == []


def test_spaces_become_zones_of_their_air_loops(station):
    loaded = read_any(station)
    model = loaded.model
    assert model.project.units == "SI"  # from areaUnit="SquareMeters"
    assert model.rules == "ashrae-62.1-2019-si"
    assert [(s.id, s.kind, [z.id for z in s.zones]) for s in model.systems] == [
        ("AHU-1", "multiple-zone", ["A1", "A2"]), ("DOAS-2", "outdoor-air", ["A3"])]
    ahu, doas = model.systems
    assert ahu.name == "Office air handler" and ahu.ventilation_efficiency == "simplified"
    assert ahu.outdoor_air == pytest.approx(140.0)  # economizer MinFlow, L/s
    assert doas.outdoor_air == pytest.approx(150.0)  # supply fan of a 100 % OA system
    a1, a2 = ahu.zones
    assert (a1.name, a1.area, a1.volume) == ("Watch office", 50.0, 150.0)
    assert a1.occupants == pytest.approx(5.0)  # 50 m² ÷ 10 m² per person
    assert a1.space == "office-space"  # spaceType OfficeOpenPlan, airgate's mapping
    assert a1.primary_airflow == pytest.approx(120.0)
    assert a2.primary_airflow == pytest.approx(150.0)  # 540 m³/h = 150 L/s
    assert a2.space == "conference-meeting"  # TypeCode
    gym = doas.zones[0]
    assert gym.outdoor_air == pytest.approx(110.0)  # OAFlowPerZone of a one-space zone
    assert gym.notes == "invented"
    assert loaded.summary.text() == "station.xml: 3 rooms read, 3 mapped to 2 systems, 0 rejected"


def test_people_schedule_becomes_a_profile(station):
    model = read_any(station).model
    assert model.systems[0].zones[0].profile == "crew"
    profile = model.profiles["crew"]
    assert profile.weekday == {"09:00-17:00": 0.8}
    assert profile.weekend == {}


def test_what_was_not_mapped_is_reported(station):
    notes = "\n".join(read_any(station).notes)
    assert "OAFlowPerZone of a zone with 2 spaces not mapped" in notes
    assert "air loop 'EF-1' serves no space: not mapped" in notes
    assert "terminal 'vav-spare' is named by no Space" in notes
    assert "schedule 'lights' is no space's people schedule" in notes


def test_provenance_of_a_mapped_value(station):
    doc = read_any(station).doc
    origin = doc.origin(("systems", 0, "zones", 0, "space"))
    assert origin.note == "spaceType OfficeOpenPlan mapped by airgate; check"
    occupants = doc.origin(("systems", 0, "zones", 0, "occupants"))
    assert occupants.note == "area ÷ 10 SquareMPerPerson"
    line = next(i for i, text in enumerate(BUILDING.splitlines(), start=1)
                if "SquareMPerPerson" in text)
    assert occupants.file == str(station) and occupants.line == line


def test_day_blocks_merge_into_ranges():
    # gbXML 6.01: a DaySchedule's values divide the day evenly (48 values = half hours)
    assert day_ranges([0.0] * 15 + [0.3] * 2 + [0.9] * 7 + [0.0] * 24) == {
        "07:30-08:30": 0.3, "08:30-12:00": 0.9}
    assert day_ranges([1.0] * 24) == {"00:00-24:00": 1.0}


def test_ids_must_be_unique(tmp_path, capsys):
    from airgate.cli import main

    path = tmp_path / "dup.xml"
    path.write_text(BUILDING.replace('id="sp-b"', 'id="sp-a"'), encoding="utf-8")
    assert main(["check", str(path)]) == 2
    assert "id 'sp-a' is used twice (first on line 11)" in capsys.readouterr().err


def _with_exhaust_loop(fans: int) -> str:
    """The test building with a toilet room exhausted by an Exhaust air loop (gbXML 6.01:
    AirLoop systemType 'Exhaust'; the space's exhaust in airgate. lines, gbXML having no
    element for it) whose fans state RatedFlow."""
    space = ('<Space id="sp-t" zoneIdRef="z-wc"><Name>T1</Name><Description>Toilets\n'
             'airgate.exhaust.category: toilets-public\nairgate.exhaust.airflow: 80 L/s\n'
             'airgate.exhaust.fixtures: 3</Description><Area>20</Area></Space>\n    </Building>')
    loop = ('<Zone id="z-wc"><Name>WC</Name><AirLoopId airLoopIdRef="EF-9"/></Zone>\n'
            '  <AirLoop id="EF-9" systemType="Exhaust"><Name>EF-9</Name>'
            + "".join(f'<AirLoopEquipment id="ef9-fan-{n}" equipmentType="Fan"><RatedFlow '
                      f'unit="LPerSec">90</RatedFlow></AirLoopEquipment>' for n in range(fans))
            + '</AirLoop>\n  <AirLoop id="EF-1">')
    return BUILDING.replace("</Building>", space, 1).replace('<AirLoop id="EF-1">', loop, 1)


def test_an_exhaust_air_loop_is_an_exhaust_fan(tmp_path):
    path = tmp_path / "ef.xml"
    path.write_text(_with_exhaust_loop(1), encoding="utf-8")
    loaded = read_any(path)
    ef = next(s for s in loaded.model.systems if s.id == "EF-9")
    assert (ef.kind, ef.airflow) == ("exhaust", pytest.approx(90.0))
    [z] = ef.zones
    assert (z.id, z.exhaust.category, z.exhaust.fixtures) == ("T1", "toilets-public", 3)


def test_two_fans_on_an_exhaust_loop_are_ambiguous(tmp_path, capsys):
    from airgate.cli import main

    path = tmp_path / "ef2.xml"
    path.write_text(_with_exhaust_loop(2), encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "2 Fan elements; the fan airflow is ambiguous" in err and "airgate.airflow" in err
