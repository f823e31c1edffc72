"""Waivers (approved alternatives) and gating (``--fail-on``, ``--exit-zero``).

Expected behaviour is the project's contract (issue: waivers; docs/report-format.md): a waived
finding stays in every report, marked, and no longer fails the gate; an expired waiver no longer
applies and says so; a waiver that matches nothing is reported; bad waivers are input errors
(exit 2) with a location; exit 2 is never downgraded. Dates are ISO 8601 calendar dates.
"""

from __future__ import annotations

import datetime as dt
import json
import shutil

import pytest
import yaml

from airgate.cli import main
from airgate import check
from airgate.evaluation.waivers import from_file
from airgate.readers.waivers import read_waivers

from conftest import DEMO, ROOT

APPROVALS = ROOT / "fixtures" / "demo" / "approvals" / "fernhollow-approvals.yaml"


def demo_with(tmp_path, waivers: list[dict], systems: slice = slice(None)) -> str:
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["systems"] = data["systems"][systems]
    data["waivers"] = waivers
    path = tmp_path / "demo-waived.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    return str(path)


def waiver(rule="system-intake", subject="AHU-3", **kw) -> dict:
    return {"rule": rule, "subject": subject, "reason": "approved alternative (invented)",
            "approved_by": "plan reviewer (fictional)", **kw}


def demo_failures(**kw) -> list[dict]:
    """A waiver for each of the demo's three failing findings (its fixture's header)."""
    return [waiver(**kw), waiver("zone-limits-ev", "AHU-3/203", **kw),
            waiver("zone-exhaust", "EF-1/121", **kw)]


def test_waived_findings_stay_marked_and_pass_the_gate(tmp_path, capsys):
    path = demo_with(tmp_path, demo_failures())
    report = check(path)
    assert report.verdict == "pass" and report.counts()["fail"] == 0
    assert report.waived_count() == 3
    waived = [f for f in report.findings if f.waived]
    assert {f.rule for f in waived} == {"system-intake", "zone-limits-ev", "zone-exhaust"}
    assert all(f.waiver.origin == "schedule" for f in waived)
    assert [s.state for s in report.waivers] == ["applied", "applied", "applied"]
    assert report.system("AHU-3").verdict == "pass"
    assert report.system("EF-1").verdict == "pass"
    assert main(["check", path]) == 0
    out = capsys.readouterr().out
    assert out.count("WAIVED") == 3 and "approved alternative (invented)" in out


@pytest.mark.parametrize("fmt", ["json", "markdown", "html", "junit", "sarif"])
def test_waived_finding_is_in_every_format(tmp_path, capsys, fmt):
    path = demo_with(tmp_path, demo_failures())
    assert main(["check", path, "--format", fmt]) == 0
    out = capsys.readouterr().out
    assert "approved alternative (invented)" in out
    assert "zone-limits-ev" in out


def test_json_marks_the_waiver(tmp_path, capsys):
    path = demo_with(tmp_path, demo_failures(expires="2999-12-31"))
    main(["check", path, "--format", "json", "--as-of", "2026-12-01"])
    doc = json.loads(capsys.readouterr().out)
    assert doc["verdict"] == "pass"
    assert doc["summary"] == {"fail": 0, "warning": 0, "info": 4, "declared": 0, "waived": 3}
    f = next(f for f in doc["findings"] if f["rule"] == "system-intake")
    assert f["waiver"]["expires"] == "2999-12-31" and f["waiver"]["origin"] == "schedule"
    assert doc["waivers_judged_on"] == "2026-12-01"
    assert [w["state"] for w in doc["waivers"]] == ["applied", "applied", "applied"]


def test_expired_waiver_no_longer_applies(tmp_path, capsys):
    path = demo_with(tmp_path, demo_failures(expires="2026-06-30"))
    report = check(path, as_of=dt.date(2026, 7, 1))
    assert report.verdict == "fail" and report.waived_count() == 0
    assert [s.state for s in report.waivers] == ["expired", "expired", "expired"]
    assert "expired on 2026-06-30" in report.waivers[0].detail
    # the last day still applies (an expiry date is the last day the waiver applies)
    assert check(path, as_of=dt.date(2026, 6, 30)).verdict == "pass"
    assert main(["check", path, "--as-of", "2026-07-01"]) == 1


def test_waiver_that_matches_nothing_is_reported(tmp_path):
    path = demo_with(tmp_path, [waiver("air-class-mixing", "AHU-3"),
                                waiver("system-intake", "AHU-9"),
                                waiver("system-intake", "RTU-1")])
    report = check(path)
    states = [(s.state, s.detail) for s in report.waivers]
    assert [s for s, _ in states] == ["unmatched"] * 3
    assert "check passes or does not apply" in states[0][1]
    assert "no system or zone 'AHU-9'" in states[1][1] and "did you mean 'AHU-3'" in states[1][1]
    assert report.verdict == "fail"  # nothing was waived


def test_waiver_for_a_check_the_pack_does_not_run(tmp_path):
    # fixtures/edge/packs/sample-pack.yaml runs system-intake only
    data = yaml.safe_load((ROOT / "fixtures" / "edge" / "uses-sample-pack.yaml").read_text("utf-8"))
    shutil.copy(ROOT / "fixtures" / "edge" / "packs" / "sample-pack.yaml", tmp_path)
    data["rules"] = "./sample-pack.yaml"  # a pack path in a schedule: in the schedule's folder
    data["waivers"] = [waiver("zone-limits-ev", "RTU-1/101")]
    path = tmp_path / "sample.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    report = check(path)
    assert report.waivers[0].state == "unmatched"
    assert "does not run check 'zone-limits-ev'" in report.waivers[0].detail


def test_unknown_check_id_is_a_located_input_error(tmp_path, capsys):
    path = demo_with(tmp_path, [waiver("zone-limit-ev", "AHU-3/203")])
    assert main(["check", path, "--format", "json:" + str(tmp_path / "r.json")]) == 2
    err = capsys.readouterr().err
    assert "waivers[0].rule" in err and "unknown check id 'zone-limit-ev'" in err
    assert "did you mean 'zone-limits-ev'" in err and f"{path}:" in err
    assert not (tmp_path / "r.json").exists()


@pytest.mark.parametrize("entry, text", [
    ({"rule": "system-intake", "subject": "AHU-3", "reason": "r"}, "approved_by"),
    (waiver(expires="30/06/2027"), "expected a date written YYYY-MM-DD"),
    (waiver(expires="2027-02-30"), "is not a calendar date"),
    (waiver(expires=20270630), "expected a date written YYYY-MM-DD"),
    ({**waiver(), "aproved_by": "x"}, "did you mean 'approved_by'"),
    (waiver(subject="AHU-3/203/x"), "subject"),
])
def test_bad_waiver_entries_in_a_schedule(tmp_path, capsys, entry, text):
    path = demo_with(tmp_path, [entry])
    assert main(["check", path, "--exit-zero"]) == 2  # exit 2 is never downgraded
    captured = capsys.readouterr()
    assert captured.out == "" and text in captured.err and "waivers[0]" in captured.err


def test_waivers_file_is_applied_and_reported(capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    entries = from_file(read_waivers(APPROVALS.relative_to(ROOT)))
    report = check(DEMO.relative_to(ROOT), waivers=entries,
                        as_of=dt.date(2026, 12, 1))
    assert [s.state for s in report.waivers] == ["applied", "expired", "unmatched"]
    assert all(s.entry.origin == "waivers file" for s in report.waivers)
    intake = next(f for f in report.findings if f.rule == "system-intake")
    assert intake.waived and str(intake.waiver.location).startswith(
        "fixtures/demo/approvals/fernhollow-approvals.yaml:8:")
    # zone 203: its waiver expired; janitor closet 121: the file waives nothing of it
    assert report.verdict == "fail"
    assert {f.subject for f in report.findings if f.severity == "fail" and not f.waived} == {
        "AHU-3/203", "EF-1/121"}


@pytest.mark.parametrize("text, message", [
    ("- rule: x\n", "a waivers file is a mapping"),
    ("waivers:\n  - rule: system-intake\n    subject: AHU-3\n    reason: r\n", "approved_by"),
    ("waiver: []\n", "unknown field 'waiver'; did you mean 'waivers'?"),
    ("waivers:\n  - {rule: zone-limit-ev, subject: AHU-3, reason: r, approved_by: p}\n",
     "unknown check id 'zone-limit-ev'"),
])
def test_bad_waivers_file_is_a_located_input_error(tmp_path, capsys, text, message):
    bad = tmp_path / "waivers.yaml"
    bad.write_text(text, encoding="utf-8")
    target = tmp_path / "out.html"
    assert main(["check", str(DEMO), "--waivers", str(bad), "--format", f"html:{target}"]) == 2
    err = capsys.readouterr().err
    assert message in err and f"{bad}:" in err and "Traceback" not in err
    assert not target.exists()


def test_fail_on_warning_fails_on_warnings_and_stale_waivers(tmp_path, capsys):
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["systems"] = data["systems"][:2]  # the two passing systems
    zone = data["systems"][1]["zones"][0]
    del zone["air_distribution"]  # an assumed Ez: a warning in the built-in pack
    path = tmp_path / "warn.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    assert check(path).counts()["warning"] == 1
    assert main(["check", str(path)]) == 0
    assert main(["check", str(path), "--fail-on", "warning"]) == 1
    assert main(["check", str(path), "--fail-on", "warning", "--exit-zero"]) == 0
    stale = demo_with(tmp_path, [waiver("system-intake", "RTU-1")], systems=slice(0, 2))
    assert main(["check", stale]) == 0
    assert main(["check", stale, "--fail-on", "warning"]) == 1


def test_exit_codes_of_the_gate(capsys):
    assert main(["check", str(DEMO)]) == 1
    assert main(["check", str(DEMO), "--exit-zero"]) == 0
    assert main(["check", str(ROOT / "fixtures" / "bad" / "negative-area.yaml"),
                 "--exit-zero"]) == 2
    with pytest.raises(SystemExit) as stop:  # argparse: not a choice
        main(["check", str(DEMO), "--fail-on", "error"])
    assert stop.value.code == 2


def test_explain_shows_the_waiver_of_a_finding(tmp_path, capsys):
    path = demo_with(tmp_path, demo_failures())
    assert main(["explain", path, "--zone", "203"]) == 0
    out = capsys.readouterr().out
    assert "FAIL [zone-limits-ev]" in out and "waived: approved alternative (invented)" in out


def test_waiver_may_name_a_pack_requirement(tmp_path, capsys):
    # A requirement declared by a layered pack is waivable like an engine check (docs/ci.md).
    import yaml

    from airgate.cli import main
    from conftest import DEMO

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["rules"] = "ashrae-62.1-2019-quillby-bay"
    data["waivers"] = [{"rule": "recirculating-filter-merv-13", "subject": "RTU-1",
                        "reason": "filter rating on the submitted unit data sheet",
                        "approved_by": "Plan reviewer (invented)"}]
    path = tmp_path / "w.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    code = main(["check", str(path)])
    out = capsys.readouterr()
    assert code in (0, 1) and "unknown check id" not in out.err
