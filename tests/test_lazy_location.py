"""Positions are found only for what a finding, an error or a writer shows (lazy locations).

The reference for every line and column is the eager lookup the evaluation made before
(``Location(*loaded.locate(path))`` for each field), run on the same schedule: the lazy
locations must name the same places (common practice: an optimisation is held to the plain
computation it replaces). Schedules are small synthetic portfolios from bench/synthetic.py
(invented data).
"""

from __future__ import annotations

import copy
import dataclasses
import json
import pickle
import sys

import pytest

from conftest import ROOT

sys.path.insert(0, str(ROOT / "bench"))

import synthetic  # noqa: E402

from airgate.api.core import check, evaluate, load_pack, load_schedule  # noqa: E402
from airgate.evaluation import engine  # noqa: E402
from airgate.evaluation.findings import Location  # noqa: E402
from airgate.readers import document, document_json  # noqa: E402
from airgate.writers import json_report  # noqa: E402


def _eager(loaded, path):
    """The lookup the evaluation made before locations were deferred (the reference)."""
    return Location(*loaded.locate(path))


@pytest.fixture
def counted(monkeypatch):
    """Counts of the document's position lookups and of the JSON position scans."""
    counts = {"locate": 0, "scan": 0}
    locate, scan = document.Document.locate, document_json._scan_json_positions

    def counting_locate(self, path):
        counts["locate"] += 1
        return locate(self, path)

    def counting_scan(text):
        counts["scan"] += 1
        return scan(text)

    monkeypatch.setattr(document.Document, "locate", counting_locate)
    monkeypatch.setattr(document_json, "_scan_json_positions", counting_scan)
    return counts


def _passing(n: int) -> dict:
    """A synthetic district whose every system is a dedicated outdoor-air unit with far more
    intake than its zones need: no finding at all."""
    doc = synthetic.vav_portfolio(n, per_system=20)
    for s in doc["systems"]:
        s.update(kind="outdoor-air", outdoor_air="100000 cfm")
        s.pop("ventilation_efficiency", None)
        for z in s["zones"]:
            z.pop("primary_airflow", None)
    return doc


def _checked(tmp_path, doc: dict, name: str = "district.json"):
    path = synthetic.write(doc, tmp_path / name)
    loaded = load_schedule(path)
    return loaded, evaluate(loaded, load_pack(loaded.model.rule_refs[0]))


def test_a_passing_district_finds_no_position(tmp_path, counted):
    loaded, report = _checked(tmp_path, _passing(60))
    assert report.findings == [] and sum(len(s.zones) for s in report.systems) == 60
    assert counted == {"locate": 0, "scan": 0}  # common practice: nothing shown, nothing found
    zone = report.systems[0].zones[0]
    assert not zone.location.found
    json_report.render(report)  # without zone trails: a zone's line and column are not written
    # common practice: what the report shows, the systems' locations and the schedule values
    # of their trails (the intake), is found; no zone's position
    shown = [st.source for s in report.systems for st in s.trail.steps.values()
             if isinstance(st.source, Location)]
    assert shown and counted["locate"] == len(report.systems) + len(shown)
    assert counted["scan"] == 0
    assert not any(z.location.found for s in report.systems for z in s.zones)


def test_a_district_finds_the_positions_of_its_findings_only(tmp_path, counted):
    loaded, report = _checked(tmp_path, synthetic.vav_portfolio(200))
    zones = sum(len(s.zones) for s in report.systems)
    assert report.findings and zones == 200
    # common practice: each finding's location is looked up once (some share one), no zone's
    assert 0 < counted["locate"] <= len(report.findings)
    assert counted["scan"] == 0  # found path by path (the finder), the text never scanned whole
    assert all(f.location.found for f in report.findings)
    assert sum(z.location.found for s in report.systems for z in s.zones) < zones // 4


def _shown(report) -> dict:
    """Every location and schedule source a report holds, as text."""
    out = {"findings": [(f.rule, f.subject, str(f.location), f.location.line, f.location.column)
                        for f in report.findings],
           "cases": [(c.rule, c.subject, str(c.location)) for c in report.cases]}
    for s in report.systems:
        out[s.id] = str(s.location)
        for z in s.zones:
            out[f"{s.id}/{z.id}"] = (str(z.location),
                                     [(st.symbol, str(st.source)) for st in z.trail.steps.values()])
    return out


@pytest.mark.parametrize("make", [
    lambda: synthetic.vav_portfolio(120, per_system=40, heights=True),
    lambda: synthetic.demo_portfolio(17),  # every system kind of the demo, exhaust, natural
], ids=["district-with-heights", "demo"])
def test_lazy_locations_are_the_eager_ones(tmp_path, monkeypatch, make):
    doc = make()
    lazy = check(synthetic.write(copy.deepcopy(doc), tmp_path / "s.json"))
    monkeypatch.setattr(engine, "_location", _eager)
    eager = check(synthetic.write(doc, tmp_path / "s.json"))
    assert lazy.findings and _shown(lazy) == _shown(eager)  # the eager lookup (common practice)
    assert json_report.render(lazy, trails=True) == json_report.render(eager, trails=True)


def test_a_deferred_location_behaves_as_a_plain_one(tmp_path):
    loaded = load_schedule(synthetic.write(synthetic.vav_portfolio(10, per_system=10),
                                           tmp_path / "d.json"))
    path = ("systems", 0, "zones", 3, "area")
    line, column = loaded.doc.locate(path)
    plain = Location(loaded.file, line, column)
    deferred = Location.deferred(loaded, path, loaded.file)
    assert deferred.file == loaded.file and not deferred.found  # the file alone finds nothing
    assert deferred == plain and hash(deferred) == hash(plain) and deferred.found
    assert str(deferred) == f"{loaded.file}:{line}:{column}" == str(plain)
    assert repr(deferred) == repr(plain)
    # pickled (check --jobs) as the plain location, without the schedule it was read from
    again = pickle.loads(pickle.dumps(Location.deferred(loaded, path)))
    assert again == plain and again.found
    assert len(pickle.dumps(Location.deferred(loaded, path))) < 200
    with pytest.raises(dataclasses.FrozenInstanceError):
        deferred.line = 1  # type: ignore[misc]
    assert Location("a.yaml", None, None) != Location("a.yaml", 1, None)
    assert str(Location("a.yaml", None, None)) == "a.yaml"
    assert str(Location("a.yaml", 3, None)) == "a.yaml:3"

def test_zone_lines_come_with_the_trails(tmp_path):
    loaded, report = _checked(tmp_path, synthetic.vav_portfolio(40, per_system=20))
    short = json.loads(json_report.render(report))
    full = json.loads(json_report.render(report, trails=True))
    for s_short, s_full, s in zip(short["systems"], full["systems"], report.systems):
        assert s_short["location"] == s_full["location"] == {
            "file": s.location.file, "line": s.location.line, "column": s.location.column}
        for z_short, z_full, z in zip(s_short["zones"], s_full["zones"], s.zones):
            assert z_short["location"] == {"file": loaded.file, "line": None, "column": None}
            assert z_full["location"] == {"file": loaded.file, "line": z.location.line,
                                          "column": z.location.column}
            assert z_full["location"]["line"] is not None
    assert [f["location"] for f in short["findings"]] == [f["location"] for f in full["findings"]]


def _every_path(data, path=()):
    yield path
    if isinstance(data, dict):
        for k, v in data.items():
            yield from _every_path(v, path + (k,))
    elif isinstance(data, list):
        for i, v in enumerate(data):
            yield from _every_path(v, path + (i,))


_ODD = ('{"a": {"k\\u00e9y \\"q\\"": [1, -2.5e3, true, null, {}, [], [[{"x": "é𝄞\\n"}]]],'
        '\n\t"": {"b": [ ]}, "ünï": "a\\\\b"},\n  "z"  :  {  "c" : [ 7 ,\n 8 ] } }\n')


@pytest.mark.parametrize("text", [
    _ODD, json.dumps(json.loads(_ODD)), json.dumps(json.loads(_ODD), indent=4),
    json.dumps(synthetic.vav_portfolio(30, per_system=10, heights=True), indent=2),
    json.dumps(synthetic.demo_portfolio(17), indent=1, ensure_ascii=False),
    "[]", " {} ", "3",
], ids=["odd", "one-line", "indented", "district", "demo", "empty-list", "empty-map", "scalar"])
def test_the_finder_gives_the_positions_of_the_scan(text):
    """Each value's position found path by path is the one the scan of every token gives
    (that scan is itself held to a YAML composition of the same text in
    test_document_loaders.py), and so is the nearest ancestor of a path the text lacks."""
    positions, _ = document_json._scan_json_positions(text)
    finder = document_json._Finder(text)
    scanned = document.Document(file="s.json", data=json.loads(text), positions=positions)
    paths = list(_every_path(json.loads(text)))
    assert set(paths) == set(positions)
    missing = [p + ("nowhere", 3) for p in paths] + [p + (0,) for p in paths] + [("zz",)]
    for path in paths + missing:
        assert finder.locate(path) == scanned.locate(path), path


def test_a_json_schedule_is_located_without_the_scan(tmp_path, counted):
    loaded, report = _checked(tmp_path, synthetic.vav_portfolio(100, per_system=20))
    assert report.findings and counted["scan"] == 0
    assert loaded.doc.finder is not None and counted["locate"] > 0
