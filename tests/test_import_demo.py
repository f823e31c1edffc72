"""The demo building in every import format gives the findings of the YAML demo.

Expected values: the YAML demo itself (fixtures/demo/fernhollow-civic-centre.yaml) evaluated
directly; the CSV tables and gbXML file are generated from it by fixtures/make_demo_imports.py
(committed), the XLSX workbook and IFC model at test time. These are regression pins of the
import path, not published values. gbXML has no ceiling height (a Space has a Volume), so its
trail says V was stated rather than computed from height × Az; every number is the same.
"""

from __future__ import annotations

import pytest

from airgate.cli import main
from airgate import check
from airgate.readers.sources import read_any

from importing import (DEMO_CSV, DEMO_DIR, DEMO_GBXML, DEMO_YAML, comparable, demo_ifc,
                       demo_xlsx, findings, gbxml_xsd, need)


@pytest.fixture(scope="module")
def yaml_report():
    return check(DEMO_YAML)


@pytest.fixture(scope="module")
def sources(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo")
    out = {"csv": DEMO_CSV, "gbxml": DEMO_GBXML}
    for name, build in (("xlsx", demo_xlsx), ("ifc", demo_ifc)):
        try:
            out[name] = build(folder)
        except pytest.skip.Exception:
            pass
    return out


FORMATS = ["csv", "xlsx", "gbxml", "ifc"]


def _source(sources, fmt):
    if fmt not in sources:
        need({"xlsx": "openpyxl", "ifc": "ifcopenshell"}[fmt])
    return sources[fmt]


def test_committed_text_fixtures_are_what_the_generator_writes():
    from make_demo_imports import committed_files

    for path, text in committed_files().items():
        assert path.read_text(encoding="utf-8") == text, f"{path.name}: rerun the generator"


#: the samples a newcomer opens: the demo as a filled workbook and as an IFC model (committed)
SAMPLES = {"xlsx": DEMO_DIR / "fernhollow-civic-centre.xlsx",
           "ifc": DEMO_DIR / "fernhollow-civic-centre.ifc"}


@pytest.mark.parametrize("fmt", SAMPLES)
def test_committed_samples_are_in_step_with_the_yaml(sources, yaml_report, fmt):
    """The committed workbook and model give the YAML demo's findings and figures, and read as
    the schedule the generator writes from the YAML now (after changing the YAML, rerun
    ``python fixtures/make_demo_imports.py``)."""
    sample = SAMPLES[fmt]
    fresh = _source(sources, fmt)
    report = check(sample)
    assert findings(report) == findings(yaml_report)
    assert comparable(report) == comparable(yaml_report)
    assert read_any(sample).model == read_any(fresh).model, \
        f"{sample.name} is not what the generator writes: rerun fixtures/make_demo_imports.py"


@pytest.mark.parametrize("fmt", FORMATS)
def test_demo_in_each_format_gives_the_yaml_findings(sources, yaml_report, fmt):
    report = check(_source(sources, fmt))
    assert findings(report) == findings(yaml_report)
    # 3 fail (AHU-3 intake and zone 203 Evz in the heating condition, janitor closet 121 exhaust
    # 8 cfm short), 4 info
    assert len(report.findings) == len(yaml_report.findings) == 7
    assert comparable(report, ignore_volume_origin=fmt == "gbxml") == comparable(
        yaml_report, ignore_volume_origin=fmt == "gbxml")


@pytest.mark.parametrize("fmt", FORMATS)
def test_import_then_check_gives_the_findings_of_the_source(sources, tmp_path, capsys, fmt):
    source = _source(sources, fmt)
    target = tmp_path / "schedule.yaml"
    assert main(["import", str(source), "-o", str(target)]) == 0
    err = capsys.readouterr().err
    # 18 rooms on 5 systems: the garden pavilion 130 on natural system NV-1 among them
    assert "18 rooms read, 18 mapped to 5 systems, 0 rejected" in err
    direct, via_yaml = check(source), check(target)
    assert findings(via_yaml) == findings(direct)
    assert comparable(via_yaml) == comparable(direct)


@pytest.mark.parametrize("fmt", FORMATS)
def test_written_yaml_says_where_values_came_from(sources, tmp_path, capsys, fmt):
    # (byte-identical across runs and environments: tests/test_determinism.py)
    source = _source(sources, fmt)
    first = tmp_path / "a.yaml"
    assert main(["import", str(source), "-o", str(first)]) == 0
    capsys.readouterr()
    text = first.read_text(encoding="utf-8")
    assert text.startswith(f"# Ventilation schedule imported by airgate from {source.name}.")
    zone_203 = next(line for line in text.splitlines() if "Tidewater meeting room" in line)
    assert f"# from {source.name}" in zone_203
    # reading the written YAML and writing it again changes nothing but the comments
    again = tmp_path / "c.yaml"
    assert main(["import", str(first), "-o", str(again)]) == 0
    assert read_any(again).model == read_any(first).model


def test_workbook_findings_point_at_sheet_row_and_column(sources):
    path = _source(sources, "xlsx")
    report = check(path)
    where = {f.subject: f for f in report.findings if f.rule == "zone-limits-ev"}
    finding = where["AHU-3/203"]
    loc = finding.location
    # zone 203 is the 8th zone row (row 9); its heating primary airflow is column L of the Zones
    # sheet (Primary airflow @heating, after the three Air distribution columns and @cooling)
    assert finding.condition == "heating"
    assert (loc.file, loc.line, loc.column) == (f"{path}[Zones]", 9, 12)
    assert str(loc) == f"{path}[Zones]:9:12"


def test_csv_xml_and_ifc_findings_point_into_the_source(sources):
    intake = {}
    for fmt in ("csv", "gbxml", "ifc"):
        if fmt == "ifc" and "ifc" not in sources:
            continue
        report = check(sources[fmt])
        intake[fmt] = next(f.location for f in report.findings if f.rule == "system-intake")
    assert intake["csv"].file.endswith("fernhollow-civic-centre.systems.csv")
    # AHU-3 row, Outdoor air (column E, after Conditions)
    assert (intake["csv"].line, intake["csv"].column) == (4, 5)
    xml_lines = DEMO_GBXML.read_text(encoding="utf-8").splitlines()
    assert "<MinFlow" in xml_lines[intake["gbxml"].line - 1]  # the economizer's MinFlow
    if "ifc" in intake:
        ifc_lines = sources["ifc"].read_text(encoding="utf-8").splitlines()
        assert "OutsideAirFlowrate" in ifc_lines[intake["ifc"].line - 1] or \
            "'outdoor_air'" in ifc_lines[intake["ifc"].line - 1]


@pytest.mark.parametrize("fmt", FORMATS)
def test_report_counts_rooms_read_mapped_and_rejected(sources, fmt):
    report = check(_source(sources, fmt))
    assert any("18 rooms read, 18 mapped to 5 systems, 0 rejected" in n for n in report.notes)


def test_demo_gbxml_is_valid_against_the_published_schema():
    # gbXML 6.01 XSD (gbXML.org), the version the file declares
    import xmlschema

    schema = xmlschema.XMLSchema(str(gbxml_xsd()))
    errors = [e.reason for e in schema.iter_errors(str(DEMO_GBXML))]
    assert errors == []


def test_gbxml_reports_what_it_did_not_map(sources):
    loaded = read_any(sources["gbxml"])
    text = "\n".join(loaded.notes)
    assert "equipmentType='Coil'> of air loop 'AHU-3' not mapped" in text
    assert "Campus/Surface ×4" in text and "gbXML/Construction ×1" in text
