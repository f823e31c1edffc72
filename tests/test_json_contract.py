"""The JSON report follows contract version 2 (docs/report-format.md)."""

from __future__ import annotations

import json

import pint
import pytest

from airgate.cli import main

from conftest import DEMO

SYSTEM_VALUES = {"multiple-zone": {"Vot", "Vot_design", "Ps", "D", "Vou", "Vps", "Xs", "Ev"},
                 "single-zone": {"Vot", "Vot_design"}, "outdoor-air": {"Vot", "Vot_design"},
                 # an exhaust fan (docs/report-format.md, "Which keys appear"); the demo's EF-1
                 # states its airflow, so V_fan is there too
                 "exhaust": {"sum_Ve", "sum_Ve_design", "V_fan"},
                 # natural ventilation has no intake, so no Vot (docs/natural-ventilation.md)
                 "natural": set()}
ZONE_VALUES = {"Pz", "Az", "Rp", "Ra", "Ez", "Vbz", "Voz"}
#: a zone of an exhaust fan: no supply figures, its exhaust row's
EXHAUST_ZONE_VALUES = {"Az", "Re", "Ve", "Ve_design"}
#: a naturally ventilated zone (docs/natural-ventilation.md)
NATURAL_ZONE_VALUES = {"A_open", "A_open_min", "depth", "depth_max"}


def _check_json(*args):
    import contextlib
    import io

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        code = main(["check", str(DEMO), "--format", "json", *args])
    assert code == 1
    return json.loads(out.getvalue())


@pytest.fixture(scope="module")
def report():
    return _check_json()


@pytest.fixture(scope="module")
def with_trails():
    return _check_json("--trails")


def _values(obj):
    yield from obj["values"].values()


def test_top_level(report):
    assert report["report_version"] == 2
    assert report["trails"] is False
    assert report["verdict"] in ("pass", "fail")
    assert {"id", "title", "document", "edition", "units"} <= set(report["rules"])
    assert isinstance(report["systems"], list) and isinstance(report["findings"], list)
    assert report["cautions"] and "licensed professional" in report["cautions"][0]


def test_systems_and_zones(report):
    for s in report["systems"]:
        assert {"id", "kind", "verdict", "values", "zones"} <= set(s)
        assert SYSTEM_VALUES[s["kind"]] <= set(s["values"])
        for z in s["zones"]:
            assert {"id", "name", "space", "verdict", "values"} <= set(z)
            need = ZONE_VALUES | ({"Vpz", "Zpz", "Evz"} if s["kind"] == "multiple-zone" else set())
            if s["kind"] == "exhaust":
                need = EXHAUST_ZONE_VALUES
                assert not {"Vbz", "Voz", "Pz"} & set(z["values"])
            if s["kind"] == "natural":  # the openings and depth against the pack's limits
                need = ZONE_VALUES | NATURAL_ZONE_VALUES
            assert need <= set(z["values"])
    # the demo has an exhaust fan and a naturally ventilated room
    assert {"exhaust", "natural"} <= {s["kind"] for s in report["systems"]}
    assert {s["kind"]: s["procedure"] for s in report["systems"]}["natural"] == "nvp"


def test_values_have_units_a_stock_pint_registry_parses(report):
    # pint as the outside reference: every unit string parses with a stock registry once a
    # dimensionless 'person' is defined, and has the dimension its symbol implies.
    ureg = pint.UnitRegistry()
    ureg.define("person = []")
    airflow = ureg.Quantity(1, "L/s").dimensionality
    for s in report["systems"]:
        for key, v in s["values"].items():
            assert set(v) == {"value", "unit"}
            q = ureg.Quantity(1, v["unit"]) if v["unit"] else None
            if key in ("Vot", "Vot_design", "Vou", "Vps", "sum_Ve", "sum_Ve_design", "V_fan"):
                assert q.dimensionality == airflow
            if key in ("D", "Xs", "Ev"):
                assert v["unit"] == ""
        for z in s["zones"]:
            for key in ("Ve", "Ve_design") if s["kind"] == "exhaust" else ("Vbz", "Voz"):
                assert ureg.Quantity(1, z["values"][key]["unit"]).dimensionality == airflow
            assert ureg.Quantity(1, z["values"]["Az"]["unit"]).dimensionality == \
                ureg.Quantity(1, "m**2").dimensionality


def test_ip_values_are_in_cfm(report):
    # The demo is in IP: 1 ft**3/min is 0.471947 L/s (pint as outside reference).
    ureg = pint.UnitRegistry()
    s = report["systems"][0]
    q = ureg.Quantity(s["values"]["Vot"]["value"], s["values"]["Vot"]["unit"])
    assert q.to("L/s").magnitude == pytest.approx(930 * 0.47194745, rel=1e-4)


def test_findings(report):
    assert report["findings"]
    for f in report["findings"]:
        assert {"rule", "severity", "basis", "subject", "message", "required", "provided",
                "source", "location"} <= set(f)
        assert f["severity"] in ("fail", "warning", "info")
        assert f["basis"] == "code"  # the demo declares no limit of its own
        assert {"file", "line", "column"} == set(f["location"]) and f["location"]["line"] >= 1
        assert f["subject"].count("/") <= 1
    intake = next(f for f in report["findings"] if f["rule"] == "system-intake")
    assert intake["required"]["value"] > intake["provided"]["value"]


def test_summary_counts_code_findings_and_declared_apart(report):
    # docs/report-format.md, "Top level" and "Basis": summary by severity counts the code
    # findings not waived; "declared" counts the declared ones not waived.
    assert list(report["summary"]) == ["fail", "warning", "info", "declared", "waived"]
    live = [f for f in report["findings"] if f["waiver"] is None]
    for severity in ("fail", "warning", "info"):
        assert report["summary"][severity] == sum(
            1 for f in live if f["basis"] == "code" and f["severity"] == severity)
    assert report["summary"]["declared"] == sum(1 for f in live if f["basis"] == "declared")


def test_declared_findings_follow_the_code_findings(tmp_path):
    # docs/report-format.md, "Finding object": sorted by basis first; a declared limit is
    # credited to the schedule and changes no verdict.
    import contextlib
    import io

    import yaml

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["project"]["co2_limit"] = 600  # ppm, the schedule's own (invented) limit
    path = tmp_path / "demo-with-limit.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        main(["check", str(path), "--format", "json"])
    doc = json.loads(out.getvalue())
    bases = [f["basis"] for f in doc["findings"]]
    assert set(bases) == {"code", "declared"}
    assert bases == sorted(bases, key=["code", "declared"].index)
    for f in doc["findings"]:
        if f["basis"] == "declared":
            assert f["rule"] == "concentration-limit" and "project.co2_limit" in f["source"]
    assert doc["summary"]["declared"] == bases.count("declared")
    failing = {f["subject"] for f in doc["findings"]
               if f["basis"] == "code" and f["severity"] == "fail" and f["waiver"] is None}
    for s in doc["systems"]:
        for z in s["zones"]:
            if z["verdict"] == "fail":
                assert f"{s['id']}/{z['id']}" in failing or s["id"] in failing


def _report_schema():
    import jsonschema

    out = __import__("io").StringIO()
    with __import__("contextlib").redirect_stdout(out):
        assert main(["schema", "report"]) == 0
    schema = json.loads(out.getvalue())
    jsonschema.Draft202012Validator.check_schema(schema)  # jsonschema as the outside checker
    return jsonschema.Draft202012Validator(schema)


def test_the_report_follows_the_published_schema(report):
    validator = _report_schema()
    assert not list(validator.iter_errors(report))
    # the schema holds the contract: a finding's basis is one of the two, and summary counts
    # the declared findings
    bad = json.loads(json.dumps(report))
    bad["findings"][0]["basis"] = "standard"
    assert list(validator.iter_errors(bad))
    del bad["summary"]["declared"]
    assert list(validator.iter_errors(bad))


def test_a_report_with_declared_findings_follows_the_schema(tmp_path):
    import contextlib
    import io

    import yaml

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["project"]["co2_limit"] = 600  # ppm, the schedule's own (invented) limit
    path = tmp_path / "demo-with-limit.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        main(["check", str(path), "--format", "json", "--series-step", "60", "--waivers",
              str(DEMO.parent / "approvals" / "fernhollow-approvals.yaml"),
              "--as-of", "2026-12-01"])
    doc = json.loads(out.getvalue())
    assert any(f["basis"] == "declared" for f in doc["findings"])
    assert doc["waivers"] and any(f["waiver"] for f in doc["findings"])
    assert not list(_report_schema().iter_errors(doc))


def _zone_parts(report):
    """Every zone, and every trailed part of it (the zone, its dilution, its contaminants)."""
    for s in report["systems"]:
        for z in s["zones"]:
            yield z
            if z["dilution"] is not None:
                yield z["dilution"]
            yield from z["contaminants"].values()


def test_zone_trails_only_on_request(report, with_trails):
    # docs/report-format.md, "Zone object": a zone carries its values always and its trails
    # (its own, its dilution's, its contaminants') only with --trails; systems always.
    assert with_trails["trails"] is True
    parts, full = list(_zone_parts(report)), list(_zone_parts(with_trails))
    assert len(parts) == len(full) and any("contaminant" in p for p in parts)
    assert all("trail" not in p for p in parts) and all("trail" in p for p in full)
    for p, q in zip(parts, full):  # the values are the same either way
        assert p["values"] == q["values"]
        assert list(p["values"]) == [step["symbol"] for step in q["trail"]]
    assert all(s["trail"] for s in report["systems"] if s["kind"] != "natural")
    assert [s["trail"] for s in report["systems"]] == [s["trail"] for s in with_trails["systems"]]
    without = {k: v for k, v in with_trails.items() if k not in ("systems", "trails")}
    assert without == {k: v for k, v in report.items() if k not in ("systems", "trails")}


def test_the_report_with_trails_follows_the_published_schema(report, with_trails):
    validator = _report_schema()
    assert not list(validator.iter_errors(with_trails))
    # the schema holds a report to its trails flag, both ways
    mixed = json.loads(json.dumps(report))
    mixed["trails"] = True
    assert list(validator.iter_errors(mixed))
    mixed = json.loads(json.dumps(with_trails))
    mixed["trails"] = False
    assert list(validator.iter_errors(mixed))
