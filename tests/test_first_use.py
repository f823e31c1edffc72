"""What a new user tripped on: folders with reports in them, plots, the gate's outcome in every
report, messages and wording (each behaviour pinned here against the fix)."""

from __future__ import annotations

import json
import re
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


def test_counts_are_pluralised(capsys):
    """English plurals (common practice): one warning, two warnings; one expectation."""
    from airgate.formatting import count

    assert [count(0, "warning"), count(1, "warning"), count(2, "warning"),
            count(1, "expectation"), count(1200, "case")] == [
        "0 warnings", "1 warning", "2 warnings", "1 expectation", "1,200 cases"]
    main(["rules", "test", "ashrae-62.2-2019"])  # two of its cases hold one expectation
    out = capsys.readouterr().out
    shown = re.findall(r"\((\d+) (expectations?)\)", out)
    assert ("1", "expectation") in shown
    assert all((n == "1") == (w == "expectation") for n, w in shown)


def test_markdown_names_info_findings_as_the_other_formats_do(capsys):
    """'info' in every format's counts (text, JSON, JUnit say info), never 'notes'."""
    main(["check", str(DEMO), "--format", "markdown"])
    out = capsys.readouterr().out
    assert "0 warnings · 5 info · 0 waived" in out
    assert "5 info findings</summary>" in out and "notes" not in out
