"""Design conditions: each condition a system lists is evaluated; the one that needs the most
intake relative to its schedule governs.

Hand calculations follow ANSI/ASHRAE 62.1-2019, Section 6.2.2.1 (Vbz = Rp·Pz + Ra·Az), Section
6.2.2.3 (Voz = Vbz / Ez), Section 6.2.5 (D = Ps / ΣPz, Vou = D·Σ(Rp·Pz) + Σ(Ra·Az), Vot = Vou / Ev)
and Normative Appendix A (Vps = ΣVpz, Xs = Vou / Vps, Zpz = Voz / Vpz, Evz = 1 + Xs − Zpz,
Ev = lowest Evz). Table values used below, from memory (Table 6-1 office space: Rp = 5 cfm per
person, Ra = 0.06 cfm/ft²; Table 6-4: ceiling supply of cool air Ez = 1.0, ceiling supply of warm
air 15 °F or more above space temperature with ceiling return Ez = 0.8).
"""

from __future__ import annotations

import json
import math
import tempfile
from pathlib import Path

import jsonschema
import pytest
import yaml
from hypothesis import given
from hypothesis import strategies as st

from airgate import check
from airgate.errors import AirgateError
from airgate.writers import json_report, text

from conftest import ROOT, schedule

COOL = "ceiling-supply-cool"
WARM = "ceiling-supply-warm-ceiling-return-stratified"
RP, RA = 5.0, 0.06  # Table 6-1, office space [cfm/person, cfm/ft²] (from memory)
EZ_COOL, EZ_WARM = 1.0, 0.8  # Table 6-4 (from memory)


def _zone(zid: str, vpz: dict | float, **kw) -> dict:
    return {"id": zid, "space": "office-space", "area": "1000 ft2", "occupants": 5,
            "primary_airflow": ({k: f"{v} cfm" for k, v in vpz.items()} if isinstance(vpz, dict)
                                else f"{vpz} cfm"),
            "air_distribution": kw.pop("air_distribution", {"cooling": COOL, "heating": WARM}),
            **kw}


def _vav(outdoor_air="185 cfm", **kw) -> dict:
    return {"id": "AHU-1", "kind": "multiple-zone", "conditions": ["cooling", "heating"],
            "ventilation_efficiency": "detailed", "outdoor_air": outdoor_air,
            "zones": kw.pop("zones", [_zone("201", {"cooling": 1000, "heating": 400}),
                                      _zone("202", {"cooling": 1000, "heating": 800})]), **kw}


def _hand(vpz: list[float], ez: float) -> dict[str, float]:
    """The multiple-zone procedure written out for two 1000 ft², five-person office zones."""
    vbz = RP * 5 + RA * 1000  # Section 6.2.2.1
    voz = vbz / ez  # Section 6.2.2.3
    vou = 1.0 * (RP * 5 * 2) + RA * 1000 * 2  # Section 6.2.5, D = Ps / ΣPz = 1
    xs = vou / sum(vpz)  # Appendix A, Vps = ΣVpz
    evz = [1 + xs - voz / v for v in vpz]  # Appendix A, single path
    ev = min(evz)
    return {"Voz": voz, "Vou": vou, "Xs": xs, "Evz": evz, "Ev": ev, "Vot": vou / ev}


def _run(tmp_path: Path, systems: list[dict]):
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(schedule(systems), sort_keys=False), encoding="utf-8")
    return check(path)


CFM = 0.3048 ** 3 * 1000 / 60  # L/s per cfm: 1 ft = 0.3048 m exactly, 1 min = 60 s


def test_heating_governs_hand_calculation(tmp_path):
    report = _run(tmp_path, [_vav()])
    s = report.systems[0]
    cool = _hand([1000, 1000], EZ_COOL)
    heat = _hand([400, 800], EZ_WARM)
    # heating: Voz 106.25 cfm, Xs = 170/1200, Evz(201) = 1 + 0.14167 − 0.26563 = 0.8760
    assert heat["Ev"] == pytest.approx(0.876042, rel=1e-5)
    assert heat["Vot"] == pytest.approx(194.055, rel=1e-5)
    assert cool["Ev"] == pytest.approx(1.0) and cool["Vot"] == pytest.approx(170.0)
    assert s.condition == "heating"
    by_id = {c.id: c for c in s.conditions}
    assert [c.id for c in s.conditions] == ["cooling", "heating"]
    for cid, hand in (("cooling", cool), ("heating", heat)):
        t = by_id[cid].trail
        assert t.value("Ev") == pytest.approx(hand["Ev"], rel=1e-9)
        assert t.value("Vot") / CFM == pytest.approx(hand["Vot"], rel=1e-6)
        assert t.value("Xs") == pytest.approx(hand["Xs"], rel=1e-9)
        evz = [z.trail.value("Evz") for z in by_id[cid].zones]
        assert evz == pytest.approx(hand["Evz"], rel=1e-9)
        zpz = [z.trail.value("Voz") / CFM for z in by_id[cid].zones]
        assert zpz == pytest.approx([hand["Voz"]] * 2, rel=1e-6)
    assert by_id["heating"].critical_zone == "201"
    # the system's own figures are the governing condition's
    assert s.trail.value("Vot") == by_id["heating"].trail.value("Vot")
    # 185 cfm scheduled: enough for cooling (170), short for heating (194.1)
    assert by_id["cooling"].verdict == "pass"
    assert by_id["heating"].verdict == "fail"
    assert s.verdict == "fail" and report.verdict == "fail"
    intake = [f for f in report.findings if f.rule == "system-intake"]
    assert [f.condition for f in intake] == ["heating"]
    assert intake[0].message.startswith("[heating]")


def test_least_primary_airflow_per_condition(tmp_path):
    report = _run(tmp_path, [_vav()])
    heat = next(c for c in report.systems[0].conditions if c.id == "heating")
    z = next(z for z in heat.zones if z.id == "201")
    # Appendix A solved for Vpz with Ev_needed = Vou / Vot_design and Xs held:
    # Vpz = Voz / (1 + Xs − Ev_needed)
    needed = 170 / 185
    xs = 170 / 1200
    assert z.trail.value("Vpz_min") / CFM == pytest.approx(106.25 / (1 + xs - needed), rel=1e-6)


def test_a_plain_value_applies_to_every_condition(tmp_path):
    zones = [_zone("201", 1000, air_distribution=COOL), _zone("202", 1000, air_distribution=COOL)]
    report = _run(tmp_path, [_vav(zones=zones)])
    s = report.systems[0]
    vots = [c.trail.value("Vot") for c in s.conditions]
    assert vots[0] == vots[1] and vots[0] / CFM == pytest.approx(170.0, rel=1e-6)
    assert s.condition == "cooling"  # a tie: the first listed governs


def test_outdoor_air_per_condition_sets_the_governing_one(tmp_path):
    # heating needs 194.1 cfm of 400 scheduled (0.49); cooling 170 of 180 (0.94): cooling governs
    report = _run(tmp_path, [_vav(outdoor_air={"cooling": "180 cfm", "heating": "400 cfm"})])
    s = report.systems[0]
    assert s.condition == "cooling"
    assert s.trail.value("Vot_design") / CFM == pytest.approx(180.0, rel=1e-9)
    assert report.verdict == "pass"


def test_report_names_each_condition(tmp_path):
    report = _run(tmp_path, [_vav()])
    out = text.render(report)
    assert "design conditions (2): heating governs" in out
    row = next(line for line in out.splitlines() if "▸" in line and "heating" in line)
    assert "194" in row and "0.876" in row and "FAIL" in row
    data = json.loads(json_report.render(report))
    schema = json.loads((ROOT / "rules/schema/report.schema.json").read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    sysd = data["systems"][0]
    assert sysd["condition"] == "heating"
    assert [c["id"] for c in sysd["conditions"]] == ["cooling", "heating"]
    assert [c["verdict"] for c in sysd["conditions"]] == ["pass", "fail"]
    assert sysd["conditions"][1]["values"]["Vot"]["value"] == pytest.approx(194.055, rel=1e-5)
    assert sysd["conditions"][1]["values"]["Ev"]["value"] == pytest.approx(0.876042, rel=1e-5)
    assert sysd["values"]["Vot"] == sysd["conditions"][1]["values"]["Vot"]
    assert any(f.get("condition") == "heating" for f in data["findings"])


def test_without_conditions_no_condition_keys(tmp_path):
    zones = [_zone("201", 1000, air_distribution=COOL)]
    plain = {"id": "AHU-1", "kind": "multiple-zone", "outdoor_air": "185 cfm", "zones": zones}
    report = _run(tmp_path, [plain])
    data = json.loads(json_report.render(report))
    assert "condition" not in data["systems"][0] and "conditions" not in data["systems"][0]
    assert all("condition" not in f for f in data["findings"])
    assert "design conditions" not in text.render(report)


@pytest.mark.parametrize("change, field, words", [
    (lambda s: s["zones"][0]["primary_airflow"].update({"heatng": "1 cfm"}),
     ("systems", 0, "zones", 0, "primary_airflow", "heatng"), "unknown condition 'heatng'"),
    (lambda s: s["zones"][0]["primary_airflow"].pop("heating"),
     ("systems", 0, "zones", 0, "primary_airflow"), "no value for condition 'heating'"),
    (lambda s: s.pop("conditions"),
     ("systems", 0, "zones", 0, "primary_airflow"), "lists no conditions"),
    (lambda s: s.update(conditions=["a", "a"]), ("systems", 0, "conditions"), "listed twice"),
    (lambda s: s.update(conditions=["supply", "heating"]), ("systems", 0, "conditions"),
     "'supply' cannot name a condition"),
    (lambda s: s.update(conditions=[str(k) for k in range(9)]), ("systems", 0, "conditions"),
     "at most 8"),
])
def test_condition_input_errors_are_located(tmp_path, change, field, words):
    system = _vav()
    change(system)
    with pytest.raises(AirgateError) as info:
        _run(tmp_path, [system])
    errors = getattr(info.value, "errors", [info.value])
    hit = [e for e in errors if words in e.message]
    assert hit, [e.message for e in errors]
    assert hit[0].field == field and hit[0].line is not None


def test_unknown_row_at_one_condition_is_located_at_its_key(tmp_path):
    zones = [_zone("201", {"cooling": 1000, "heating": 400},
                   air_distribution={"cooling": COOL, "heating": "warm"})]
    with pytest.raises(AirgateError) as info:
        _run(tmp_path, [_vav(zones=zones)])
    errors = getattr(info.value, "errors", [info.value])
    assert errors[0].field == ("systems", 0, "zones", 0, "air_distribution", "heating")


# --- properties --------------------------------------------------------------------------------

_airflow = st.integers(min_value=200, max_value=3000)


def _evaluate(systems: list[dict]):
    with tempfile.TemporaryDirectory() as d:
        return _run(Path(d), systems)


@given(vpz=st.lists(_airflow, min_size=1, max_size=4), oa=st.integers(50, 2000),
       warm=st.booleans())
def test_one_condition_gives_the_plain_figures(vpz, oa, warm):
    """A system listing one condition, every value plain, computes what it does without
    conditions (the same procedure on the same inputs; its figures are pinned to the plain
    report's)."""
    row = WARM if warm else COOL
    zones = [_zone(str(k), v, air_distribution=row) for k, v in enumerate(vpz)]
    plain = {"id": "S", "kind": "multiple-zone", "ventilation_efficiency": "detailed",
             "outdoor_air": f"{oa} cfm", "zones": zones}
    one = {**plain, "conditions": ["design"]}
    a, b = _evaluate([plain]), _evaluate([one])
    sa, sb = a.systems[0], b.systems[0]
    assert sb.condition == "design" and len(sb.conditions) == 1
    assert {k: s.value for k, s in sa.trail.steps.items()} == \
        {k: s.value for k, s in sb.trail.steps.items()}
    assert sa.verdict == sb.verdict == sb.conditions[0].verdict
    assert [f.rule for f in a.findings] == [f.rule for f in b.findings]


@given(cool=st.lists(_airflow, min_size=2, max_size=2), heat=st.lists(_airflow, min_size=2,
       max_size=2), oa=st.integers(100, 1000))
def test_adding_a_condition_never_lowers_the_required_intake(cool, heat, oa):
    zones1 = [_zone(str(k), {"cooling": c}, air_distribution={"cooling": COOL})
              for k, c in enumerate(cool)]
    zones2 = [_zone(str(k), {"cooling": c, "heating": h}) for k, (c, h) in
              enumerate(zip(cool, heat))]
    one = _vav(outdoor_air=f"{oa} cfm", zones=zones1, conditions=["cooling"])
    two = _vav(outdoor_air=f"{oa} cfm", zones=zones2)
    v1 = _evaluate([one]).systems[0].trail.value("Vot")
    r2 = _evaluate([two])
    v2 = r2.systems[0].trail.value("Vot")
    assert v2 >= v1 * (1 - 1e-12) or math.isinf(v2)
    # and the governing figure is the largest of the conditions' (one intake scheduled)
    assert v2 == max(c.trail.value("Vot") for c in r2.systems[0].conditions)


# --- the other writers and explain --------------------------------------------------------------

def _cli(tmp_path: Path, *args: str):
    import subprocess
    import sys

    from conftest import subprocess_env
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(schedule([_vav()]), sort_keys=False), encoding="utf-8")
    return subprocess.run([sys.executable, "-m", "airgate", *args, str(path)], cwd=tmp_path,
                          capture_output=True, text=True, env=subprocess_env())


def test_markdown_html_junit_sarif_name_the_condition(tmp_path):
    from airgate.evaluation.batch import Batch
    from airgate.writers import html, junit, markdown, sarif

    report = _run(tmp_path, [_vav()])
    batch = Batch([report])
    md = markdown.render(batch)
    row = next(line for line in md.splitlines() if "▸ **heating**" in line)
    assert "194" in row and "0.876" in row and "FAIL" in row
    page = "".join(html.render(batch))
    assert "▸ heating" in page
    assert "[heating] outdoor-air intake" in "".join(junit.render(batch))
    log = json.loads("".join(sarif.render(batch)))
    intake = [r for r in log["runs"][0]["results"] if r["ruleId"] == "system-intake"]
    assert [r["properties"]["condition"] for r in intake] == ["heating"]


def test_explain_condition(tmp_path):
    out = _cli(tmp_path, "explain", "--system", "AHU-1", "--condition", "cooling")
    assert out.returncode == 0, out.stderr
    assert "at design condition cooling: not the governing condition (heating governs)" in out.stdout
    # cooling: Vot = Vou / Ev = 170 / 1.0 (hand calculation above)
    assert "Vot" in out.stdout and "170 cfm" in out.stdout
    assert "[heating]" not in out.stdout  # the findings of another condition are left out
    gov = _cli(tmp_path, "explain", "--zone", "201")
    assert "at design condition heating: the governing condition" in gov.stdout
    assert "0.876" in gov.stdout  # Evz of zone 201 at heating
    bad = _cli(tmp_path, "explain", "--zone", "201", "--condition", "cool")
    assert bad.returncode == 2 and "has no condition 'cool'" in bad.stderr
    assert "Traceback" not in bad.stderr


def test_explicit_ez_and_stated_distribution_per_condition(tmp_path):
    """Heating Ez 0.8 given as an explicit value on one zone and as stated conditions (warm air
    20 °F above the room, ceiling supply and return: Table 6-4, from memory) on the other; the
    figures are those of the hand calculation above."""
    warm = {"supply": "ceiling", "return": "ceiling", "mode": "heating",
            "temperature_difference": "20 delta_degF"}
    zones = [
        _zone("201", {"cooling": 1000, "heating": 400}, air_distribution=None,
              ez={"cooling": 1.0, "heating": 0.8}, ez_basis="Table 6-4 rows, cool and warm air"),
        _zone("202", {"cooling": 1000, "heating": 800},
              air_distribution={"cooling": COOL, "heating": warm}),
    ]
    zones[0].pop("air_distribution")
    report = _run(tmp_path, [_vav(outdoor_air={"cooling": "300 cfm", "heating": "300 cfm"},
                                  zones=zones)])
    s = report.systems[0]
    heat = _hand([400, 800], EZ_WARM)
    assert s.condition == "heating"
    by_id = {c.id: c for c in s.conditions}
    assert by_id["heating"].trail.value("Ev") == pytest.approx(heat["Ev"], rel=1e-9)
    assert by_id["heating"].trail.value("Vot") / CFM == pytest.approx(heat["Vot"], rel=1e-6)
    assert [z.trail.value("Ez") for z in by_id["heating"].zones] == [0.8, 0.8]
    assert [z.trail.value("Ez") for z in by_id["cooling"].zones] == [1.0, 1.0]
    assert [c.verdict for c in s.conditions] == ["pass", "pass"]


def test_detailed_ev_needs_every_conditions_primary_airflow(tmp_path):
    """A null primary airflow at one condition is a located input error (the detailed method
    needs Vpz for every zone, 62.1-2019 Normative Appendix A), not a failed evaluation."""
    zone = _zone("201", {"cooling": 1000, "heating": 400})
    zone["primary_airflow"]["cooling"] = None
    with pytest.raises(AirgateError) as err:
        _run(tmp_path, [_vav(zones=[zone, _zone("202", {"cooling": 1000, "heating": 800})])])
    found = err.value.errors if hasattr(err.value, "errors") else [err.value]
    assert [(e.field, e.message) for e in found] == [
        (("systems", 0, "zones", 0, "primary_airflow", "cooling"),
         "the detailed Ev method needs primary_airflow (Vpz) for every zone; zone '201' gives "
         "none at condition 'cooling'")]
    assert found[0].line is not None


def test_a_waiver_covers_its_finding_at_every_condition(tmp_path):
    """docs/report-format.md, Waivers: a waiver without ``condition`` covers its finding at every
    condition."""
    data = schedule([_vav(outdoor_air="160 cfm")])  # short of 170 (cooling) and 194 (heating)
    data["waivers"] = [{"rule": "system-intake", "subject": "AHU-1", "reason": "invented",
                        "approved_by": "Test reviewer (invented)"}]
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    report = check(path)
    intake = [f for f in report.findings if f.rule == "system-intake"]
    assert [(f.condition, f.waived) for f in intake] == [("cooling", True), ("heating", True)]
    assert [s.state for s in report.waivers] == ["applied"]


def _waived(tmp_path: Path, outdoor_air: str, **waiver) -> tuple[Path, dict]:
    data = schedule([_vav(outdoor_air=outdoor_air)])
    data["waivers"] = [{"rule": "system-intake", "subject": "AHU-1", "reason": "invented",
                        "approved_by": "Test reviewer (invented)", **waiver}]
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return path, data


def test_a_waiver_naming_a_condition_covers_that_condition_only(tmp_path):
    """docs/report-format.md, Waivers: with ``condition`` a waiver covers its finding at that
    condition only. Vot = Vou / Ev by the hand calculation above (Table 6-1, 6-4 and Appendix A):
    170 cfm cooling and 194 cfm heating, so 160 cfm is short at both."""
    path, _ = _waived(tmp_path, "160 cfm", condition="heating")
    report = check(path)
    intake = [f for f in report.findings if f.rule == "system-intake"]
    assert [(f.condition, f.waived) for f in intake] == [("cooling", False), ("heating", True)]
    assert report.verdict == "fail"  # the cooling finding still counts
    [status] = report.waivers
    assert (status.state, status.count) == ("applied", 1)
    doc = json_report.to_dict(report)
    assert doc["waivers"][0]["condition"] == "heating"
    assert "system-intake on AHU-1 [heating]: covers 1 finding" in text.render(report)
    # read back from the stored report, the waiver keeps its condition
    from airgate.api.stored import load_report

    stored = tmp_path / "s.json"
    stored.write_text(json_report.render(report), encoding="utf-8")
    assert load_report(stored).waivers[0].entry.waiver.condition == "heating"


def test_a_waiver_at_a_condition_without_its_finding_matches_nothing(tmp_path):
    # 185 cfm: enough for cooling (170 cfm), short of heating (194 cfm)
    path, _ = _waived(tmp_path, "185 cfm", condition="cooling")
    report = check(path)
    [status] = report.waivers
    assert status.state == "unmatched"
    assert status.detail.startswith("no 'system-intake' finding on AHU-1 at condition cooling")
    assert [f.waived for f in report.findings if f.rule == "system-intake"] == [False]


def test_an_unknown_waiver_condition_is_a_located_input_error(tmp_path, capsys):
    from airgate.cli import main

    path, _ = _waived(tmp_path, "160 cfm", condition="heatng")
    line = next(i for i, t in enumerate(path.read_text().splitlines(), 1) if "heatng" in t)
    assert main(["check", str(path)]) == 2
    captured = capsys.readouterr()
    assert captured.out == "" and "Traceback" not in captured.err
    assert (f"{path}:{line}:" in captured.err and "waivers[0].condition" in captured.err
            and "system AHU-1 has no design condition 'heatng'; did you mean 'heating'?"
            in captured.err), captured.err
    # a waivers file naming a condition of a system that lists none
    plain = schedule([{"id": "S-1", "kind": "single-zone", "outdoor_air": "100 cfm",
                       "zones": [{"id": "1", "space": "office-space", "area": "1000 ft2",
                                  "occupants": 10, "air_distribution": COOL}]}])
    sched = tmp_path / "plain.yaml"
    sched.write_text(yaml.safe_dump(plain, sort_keys=False), encoding="utf-8")
    waivers = tmp_path / "w.yaml"
    waivers.write_text("waivers:\n  - rule: system-intake\n    subject: S-1\n"
                       "    reason: invented\n    approved_by: Test reviewer (invented)\n"
                       "    condition: heating\n", encoding="utf-8")
    assert main(["check", str(sched), "--waivers", str(waivers)]) == 2
    err = capsys.readouterr().err
    assert f"{waivers}:6:16: input error: waivers[0].condition: system S-1 lists no design " \
           "conditions" in err, err
    # a subject the schedule does not have is no error: the waiver matches nothing
    waivers.write_text(waivers.read_text().replace("subject: S-1", "subject: S-9"),
                       encoding="utf-8")
    assert main(["check", str(sched), "--waivers", str(waivers)]) == 1
