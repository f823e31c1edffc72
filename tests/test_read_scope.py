"""Scope of reads: what a schedule can make airgate open, and how much of a file a message shows.

The contract (docs/limits.md "Scope of reads"; README "Exit codes"): a rule pack is found by id
on the search path, or by a path the user gives on the command line. A pack path written inside
a schedule or an imported file resolves only inside that file's folder (and below it) and the
folders of the search path, symbolic links followed, and must name a .yaml/.yml/.json file; the
file must look like a pack (a mapping with ``pack:``) before anything of it is shown. No message
quotes more than a short, escaped excerpt of any file. The expected values are that contract.
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest

from airgate.cli import main
from airgate.errors import MAX_MESSAGE, AirgateError
from airgate.escaping import EXCERPT

from conftest import DEMO, ROOT

SAMPLE = ROOT / "fixtures" / "edge" / "packs" / "sample-pack.yaml"
SECRET = "invented-token-0000-do-not-print"
SCHEDULE = """schedule: 1
project: {{name: Brackenfold depot (invented), units: IP}}
rules: {rules}
systems:
  - id: RTU-1
    kind: single-zone
    outdoor_air: 150 cfm
    zones:
      - {{id: "101", space: office-space, area: 1000 ft2, air_distribution: ceiling-supply-cool}}
"""


def _run(capsys, argv):
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def _schedule(folder: Path, rules: str, name: str = "s.yaml") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(SCHEDULE.format(rules=rules), encoding="utf-8")
    return path


def _clean(err: str) -> None:
    assert "Traceback" not in err and "internal error" not in err


def test_a_pack_in_the_schedules_folder_tree_is_read(tmp_path, capsys):
    shutil.copy(SAMPLE, tmp_path / "packs-sample.yaml")
    (tmp_path / "sub").mkdir()
    shutil.copy(SAMPLE, tmp_path / "sub" / "sample-pack.yaml")
    for rules in ("./packs-sample.yaml", "sub/sample-pack.yaml", str(tmp_path / "sub" /
                                                                     "sample-pack.yaml")):
        code, _, err = _run(capsys, ["check", _schedule(tmp_path, rules)])
        assert code == 0, err


def test_a_pack_on_the_search_path_may_be_named_by_path(tmp_path, capsys):
    packs = tmp_path / "packs"
    packs.mkdir()
    shutil.copy(SAMPLE, packs / "sample-pack.yaml")
    path = _schedule(tmp_path / "project", str(packs / "sample-pack.yaml"))
    code, _, err = _run(capsys, ["check", path])
    assert code == 2 and "leads outside the schedule's folder" in err
    code, _, err = _run(capsys, ["check", path, "--rules-path", packs])
    assert code == 0, err


def test_a_link_in_the_folder_that_leads_outside_is_refused(tmp_path, capsys):
    outside = tmp_path / "elsewhere"
    outside.mkdir()
    (outside / "settings.yaml").write_text(f"API_TOKEN: {SECRET}\n", encoding="utf-8")
    project = tmp_path / "project"
    project.mkdir()
    os.symlink(outside / "settings.yaml", project / "pack.yaml")
    code, out, err = _run(capsys, ["check", _schedule(project, "./pack.yaml")])
    assert code == 2 and out == ""
    assert "leads outside the schedule's folder" in err and SECRET not in err


def test_a_loop_of_links_as_pack_path_or_schedule_is_an_input_error(tmp_path, capsys):
    os.symlink(tmp_path / "b.yaml", tmp_path / "a.yaml")
    os.symlink(tmp_path / "a.yaml", tmp_path / "b.yaml")
    code, _, err = _run(capsys, ["check", _schedule(tmp_path, "a.yaml", "s.yaml")])
    assert code == 2 and "cannot be followed (a loop of symbolic links?)" in err
    assert f"{tmp_path / 's.yaml'}:3:8: schedule error: rules: " in err
    for argv in (["check", tmp_path / "a.yaml"], ["explain", tmp_path / "a.yaml", "--zone", "1"],
                 ["check", DEMO, "--waivers", tmp_path / "a.yaml"]):
        code, out, err = _run(capsys, argv)
        assert code == 2 and out == "", err
        _clean(err)
        assert f"{tmp_path / 'a.yaml'}: " in err


def test_a_file_that_is_not_a_pack_is_never_quoted(capsys):
    bad = ROOT / "fixtures" / "bad"
    for argv in (["check", bad / "pack-path-not-a-pack.yaml"],
                 ["check", DEMO, "--rules", bad / "packs" / "not-a-pack.yaml"],
                 ["rules", "show", bad / "packs" / "not-a-pack.yaml"],
                 ["rules", "validate", bad / "packs" / "not-a-pack.yaml"]):
        code, out, err = _run(capsys, argv)
        assert code == 2 and out == ""
        assert "this file is not a rule pack" in err
        assert SECRET not in err and "API_TOKEN" not in err and "PASSWORD" not in err


@pytest.mark.skipif(not Path("/etc/passwd").is_file(), reason="needs a system file to point at")
def test_a_system_file_given_on_the_command_line_is_not_echoed(capsys):
    # The user may name any file with --rules; still nothing of a non-pack is shown.
    first_line = Path("/etc/passwd").read_text(encoding="utf-8", errors="replace").split("\n")[0]
    for argv in (["check", DEMO, "--rules", "/etc/passwd"], ["rules", "show", "/etc/passwd"]):
        code, _, err = _run(capsys, argv)
        assert code == 2
        assert "this file is not a rule pack" in err
        assert first_line[:8] not in err


def test_a_dotfile_named_in_a_schedule_is_not_a_pack_id(tmp_path, capsys):
    (tmp_path / ".env").write_text(f"TOKEN={SECRET}\n", encoding="utf-8")
    code, _, err = _run(capsys, ["check", _schedule(tmp_path, ".env")])
    assert code == 2 and "'.env' is not a pack id" in err and SECRET not in err


def test_import_refuses_a_pack_path_outside_the_scope(tmp_path, capsys):
    # import writes no schedule that check would refuse for its pack path
    source = ROOT / "fixtures" / "bad" / "import" / "gbxml-rules-system-file.xml"
    target = tmp_path / "s.yaml"
    code, out, err = _run(capsys, ["import", source, "-o", target])
    assert code == 2 and out == "" and not target.exists()
    assert "'/etc/passwd' is not the name of a rule pack file" in err


def test_schema_messages_quote_only_an_excerpt(tmp_path, capsys):
    long_text = "x" * 5000
    pack = tmp_path / "p.yaml"
    text = SAMPLE.read_text(encoding="utf-8")
    pack.write_text(text.replace("\nunits: IP\n", f"\nunits: {long_text}\n"), encoding="utf-8")
    code, _, err = _run(capsys, ["rules", "show", pack])
    assert code == 2 and "rule pack error: units: 'xxx" in err
    assert "x" * (EXCERPT + 1) not in err and "…" in err


def test_every_message_is_capped_and_escaped():
    err = AirgateError("a" * 5000 + "\x1b[2J", file="f\x07.yaml", line=1, hint="b" * 5000)
    text = err.render()
    assert len(text) < 2 * MAX_MESSAGE + 200
    assert "\x1b" not in text and "\x07" not in text and "f\\x07.yaml:1:" in text
