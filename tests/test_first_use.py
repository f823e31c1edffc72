"""What a new user tripped on: folders with reports in them, plots, the gate's outcome in every
report, messages and wording (each behaviour pinned here against the fix)."""

from __future__ import annotations

import json
import shutil

from airgate.cli import main

from conftest import DEMO


def test_folder_with_its_own_json_reports_still_checks(tmp_path, capsys):
    shutil.copy(DEMO, tmp_path / DEMO.name)
    assert main(["check", str(DEMO), "--format", "json", "-o", str(tmp_path / "report.json")]) == 1
    two = tmp_path / "two.yaml"
    shutil.copy(DEMO, two)
    assert main(["check", str(DEMO), str(two), "--format", "json",
                 "-o", str(tmp_path / "batch.json")]) == 1
    capsys.readouterr()
    assert main(["check", str(tmp_path), "--format", "json"]) == 1
    captured = capsys.readouterr()
    batch = json.loads(captured.out)
    assert [r["schedule"]["file"] for r in batch["reports"]] == [
        str(tmp_path / DEMO.name), str(two)]
    assert f"note: skipped {tmp_path / 'report.json'}: an airgate report" in captured.err
    assert f"note: skipped {tmp_path / 'batch.json'}: an airgate report" in captured.err


def test_a_json_schedule_beside_reports_is_still_read(tmp_path, capsys):
    """Only files that begin like airgate's reports are skipped: a broken JSON file is refused."""
    (tmp_path / "broken.json").write_text('{"report_version": 1}', encoding="utf-8")
    assert main(["check", str(tmp_path)]) == 2
    assert "broken.json" in capsys.readouterr().err
