"""Command-line behaviour: commands, exit codes, output files (README contract)."""

from __future__ import annotations

import json
import re

import pytest
import yaml

from airgate.cli import main

from conftest import DEMO, ROOT


def test_check_exit_codes(tmp_path, capsys):
    assert main(["check", str(DEMO)]) == 1
    assert main(["check", str(DEMO), "--exit-zero"]) == 0
    out = capsys.readouterr().out
    assert "licensed professional of record govern" in out  # safety caution in every report


def test_check_passing_schedule_exits_zero(tmp_path, capsys):
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["systems"] = data["systems"][:2]  # the two passing systems
    path = tmp_path / "pass.yaml"
    path.write_text(yaml.safe_dump(data), encoding="utf-8")
    assert main(["check", str(path)]) == 0


def test_output_file_is_written(tmp_path, capsys):
    out = tmp_path / "report.json"
    assert main(["check", str(DEMO), "--format", "json", "-o", str(out)]) == 1
    assert json.loads(out.read_text(encoding="utf-8"))["report_version"] == 1
    assert capsys.readouterr().out == ""


def test_rules_override(tmp_path, capsys):
    # The SI pack on an IP schedule: converted, and the report says so.
    assert main(["check", str(DEMO), "--rules", "ashrae-62.1-2019-si"]) == 1
    assert "converted exactly" in capsys.readouterr().out


def test_rules_list_and_show(capsys):
    assert main(["rules", "list"]) == 0
    listing = capsys.readouterr().out
    assert "ashrae-62.1-2019 " in listing and "ashrae-62.1-2019-si" in listing
    assert main(["rules", "show", "ashrae-62.1-2019"]) == 0
    shown = capsys.readouterr().out
    assert "office-space" in shown and "ceiling-supply-cool" in shown


def test_schema_schedule_validates_the_demo(capsys):
    import jsonschema

    assert main(["schema", "schedule"]) == 0
    schema = json.loads(capsys.readouterr().out)
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.validate(yaml.safe_load(DEMO.read_text(encoding="utf-8")), schema)


def test_explain_zone_shows_equations_with_values(capsys):
    assert main(["explain", str(DEMO), "--zone", "203"]) == 0
    out = capsys.readouterr().out
    assert re.search(r"Vbz\s+= Rp·Pz \+ Ra·Az", out)
    assert re.search(r"= 5 × 30 \+ 0\.06 × 600", out)
    assert "Evz" in out and "Table 6.2.2.1" in out


def test_explain_unknown_zone_is_usage_error(capsys):
    assert main(["explain", str(DEMO), "--zone", "2O3"]) == 2
    err = capsys.readouterr().err
    assert "no zone '2O3'" in err and "203" in err


def test_python_dash_m(tmp_path):
    import subprocess
    import sys

    run = subprocess.run([sys.executable, "-m", "airgate", "rules", "list"], capture_output=True,
                         text=True, cwd=tmp_path)
    assert run.returncode == 0 and "ashrae-62.1-2019" in run.stdout


def test_readme_example_schedule_evaluates(tmp_path, capsys):
    # README examples run (style.md habit): the schedule excerpt is a valid schedule.
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    block = next(b for b in re.findall(r"```yaml\n(.*?)```", readme, re.S) if "schedule: 1" in b)
    path = tmp_path / "readme.yaml"
    path.write_text(block, encoding="utf-8")
    assert main(["check", str(path)]) in (0, 1)
    assert "AHU-3" in capsys.readouterr().out


def test_reports_of_one_run_are_written_together_or_not_at_all(tmp_path, monkeypatch):
    # Atomic replacement of a set of files (common practice): every report of a run goes to a
    # temporary file first; when one fails while it is produced, no target is touched and no
    # temporary file is left.
    from airgate.writers import output

    old = tmp_path / "old.txt"
    old.write_text("previous report\n", encoding="utf-8")

    def failing():
        yield "{\n"
        raise RuntimeError("encoder broke")

    with pytest.raises(RuntimeError):
        output.write_all_atomic([(old, "new text\n"), (tmp_path / "new.json", failing())])
    assert old.read_text(encoding="utf-8") == "previous report\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["old.txt"]
    output.write_all_atomic([(old, "new text\n"), (tmp_path / "new.json", iter(["{}", "\n"])),
                             (tmp_path / "raw.bin", b"\x00\x01")])
    assert old.read_text(encoding="utf-8") == "new text\n"
    assert (tmp_path / "new.json").read_text(encoding="utf-8") == "{}\n"
    assert (tmp_path / "raw.bin").read_bytes() == b"\x00\x01"


def test_streamed_json_equals_the_standard_indented_dump():
    # Python's json module (json.dumps, indent=2) as the outside reference for the streamed
    # encoder used by the JSON, SARIF and pack writers: byte-identical text.
    from airgate.writers import output

    data = {"a": [1, 2.5, None, True], "b": {"ü": "Σ·²", "e": {}, "l": []}, "c": 1e-05}
    ref = json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    assert output.json_text(data) == ref
    assert "".join(output.json_chunks(data)) == ref
