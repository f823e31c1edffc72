"""``airgate check`` on several schedules or a folder (docs/report-format.md, "Several schedules").

Expected behaviour is the project's contract: every schedule is evaluated first and bad input
anywhere stops the run with exit 2 and nothing written; JUnit and SARIF gather every schedule in
one document; JSON wraps one report object per schedule; text and Markdown close with a summary
of the run; the progress bar goes to standard error only when it is a terminal.
"""

from __future__ import annotations

import io
import json
import shutil
import xml.etree.ElementTree as ET

import pytest
import yaml

from airgate.cli import main

from conftest import DEMO, ROOT
from test_report_formats import assert_valid_sarif


@pytest.fixture
def folder(tmp_path):
    """A folder with the demo (fails), a passing variant in JSON and a file that is no schedule."""
    shutil.copy(DEMO, tmp_path / "a-demo.yaml")
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["systems"] = data["systems"][:2]
    data["project"]["name"] = "Fernhollow annex (invented)"
    (tmp_path / "b-annex.json").write_text(json.dumps(data), encoding="utf-8")
    (tmp_path / "notes.txt").write_text("not a schedule\n", encoding="utf-8")
    return tmp_path


def run(capsys, *args) -> tuple[int, str, str]:
    code = main(["check", *map(str, args)])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_folder_is_expanded_to_its_schedules_in_name_order(folder, capsys):
    code, out, _ = run(capsys, folder, "--format", "json")
    assert code == 1  # the demo fails
    doc = json.loads(out)
    assert doc["batch_version"] == 1
    assert [r["schedule"]["file"] for r in doc["reports"]] == [
        str(folder / "a-demo.yaml"), str(folder / "b-annex.json")]
    assert [r["report_version"] for r in doc["reports"]] == [2, 2]
    assert doc["summary"]["schedules"] == 2 and doc["summary"]["failing_schedules"] == 1
    assert doc["verdict"] == "fail" and "licensed professional" in doc["cautions"][0]


def test_junit_gathers_every_schedule_in_one_document(folder, capsys):
    _, out, _ = run(capsys, folder / "a-demo.yaml", folder / "b-annex.json", "--format", "junit")
    root = ET.fromstring(out.encode("utf-8"))
    suites = root.findall("testsuite")
    assert len(suites) == 2
    assert int(root.get("tests")) == sum(int(s.get("tests")) for s in suites)
    assert [s.get("failures") for s in suites] == ["3", "0"]  # the demo: AHU-3 twice, EF-1


def test_sarif_gathers_every_schedule_in_one_run(folder, capsys):
    _, out, _ = run(capsys, folder, "--format", "sarif")
    doc = assert_valid_sarif(out)
    (run_,) = doc["runs"]
    uris = [a["location"]["uri"] for a in run_["artifacts"]]
    assert len(uris) == 2 and uris[0].endswith("a-demo.yaml") and uris[1].endswith("b-annex.json")
    assert len(run_["properties"]["schedules"]) == 2


def test_text_and_markdown_close_with_a_summary_of_the_run(folder, capsys):
    _, out, _ = run(capsys, folder)
    assert out.count("airgate 0.1.0 — ventilation review") == 2
    assert "Run summary — 2 schedules, 1 fail" in out
    assert out.rstrip().endswith("inputs given.")  # the caution closes the run, too
    _, md, _ = run(capsys, folder, "--format", "markdown")
    assert md.startswith("### airgate: 2 schedules — **FAIL**")
    assert md.count("#### airgate:") == 2


def test_html_holds_every_schedule(folder, capsys):
    _, out, _ = run(capsys, folder, "--format", "html")
    assert out.count('<article class="schedule"') == 2 and 'id="overview"' in out


def test_bad_schedule_in_a_batch_stops_it_and_writes_nothing(folder, capsys, tmp_path_factory):
    (folder / "c-broken.yaml").write_text((ROOT / "fixtures/bad/negative-area.yaml").read_text(
        "utf-8"), encoding="utf-8")
    out_dir = tmp_path_factory.mktemp("out")
    code, out, err = run(capsys, folder, "--format", f"junit:{out_dir / 'r.xml'}",
                         "--format", "text", "--exit-zero")
    assert code == 2 and out == ""
    assert f"{folder / 'c-broken.yaml'}:15:15" in err and "must be greater than zero" in err
    assert list(out_dir.iterdir()) == []


def test_every_bad_schedule_of_a_batch_is_reported(folder, capsys):
    for name in ("c-broken.yaml", "d-broken.yaml"):
        (folder / name).write_text((ROOT / "fixtures/bad/negative-area.yaml").read_text("utf-8"),
                                   encoding="utf-8")
    code, _, err = run(capsys, folder)
    assert code == 2 and "c-broken.yaml:15:15" in err and "d-broken.yaml:15:15" in err


def test_folder_without_schedules_is_a_usage_error(tmp_path, capsys):
    code, _, err = run(capsys, tmp_path)
    assert code == 2 and "holds no schedule" in err


def test_waivers_file_over_a_batch(folder, tmp_path_factory, capsys):
    waivers = tmp_path_factory.mktemp("w") / "approvals.yaml"
    waivers.write_text(yaml.safe_dump({"waivers": [
        {"rule": "system-intake", "subject": "AHU-3", "reason": "interim (invented)",
         "approved_by": "reviewer (fictional)"},
        {"rule": "system-intake", "subject": "AHU-7", "reason": "typo (invented)",
         "approved_by": "reviewer (fictional)"}]}), encoding="utf-8")
    _, out, _ = run(capsys, folder, "--waivers", waivers, "--format", "json")
    doc = json.loads(out)
    demo, annex = doc["reports"]
    assert [w["state"] for w in demo["waivers"]] == ["applied"]
    assert annex["waivers"] == []  # matched elsewhere, or reported once for the run
    (stale,) = doc["waivers"]
    assert stale["subject"] == "AHU-7" and stale["state"] == "unmatched"
    assert "any of the 2 schedules" in stale["detail"]
    assert main(["check", str(folder), "--waivers", str(waivers), "--fail-on", "warning",
                 "--format", "json"]) == 1  # zone 203 still fails; so would the stale waiver


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_bar_only_on_a_terminal(folder, capsys, monkeypatch):
    code, _, err = run(capsys, folder)
    assert code == 1 and err == ""  # not a terminal: nothing on standard error
    fake = _Terminal()
    monkeypatch.setattr("sys.stderr", fake)
    main(["check", str(folder)])
    shown = fake.getvalue()
    assert "checking" in shown and "2/2" in shown and shown.endswith("\r\033[K")
