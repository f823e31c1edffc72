"""``airgate rules list | show | validate | test | diff`` and ``--rules-path`` on check/explain.

Expected output is the project's contract (README command table, docs/rule-packs.md).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import yaml

from airgate.cli import main
from airgate.readers.rulepack import builtin_pack_ids

from conftest import DEMO

QUILLBY = "ashrae-62.1-2019-quillby-bay"


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main(list(argv))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_list_shows_every_built_in_pack_and_what_it_extends(capsys):
    code, out, _ = _run(capsys, "rules", "list")
    assert code == 0
    for pack_id in builtin_pack_ids():
        assert f"{pack_id} " in out
    line = next(ln for ln in out.splitlines() if ln.startswith(QUILLBY))
    assert line.rstrip().endswith("(extends ashrae-62.1-2019)")


def test_list_shows_folders_of_the_search_path(tmp_path, capsys):
    (tmp_path / "mine-1.yaml").write_text(
        "pack: 1\nid: mine-1\nextends: ashrae-62.1-2019\ntitle: Mine (invented)\n", "utf-8")
    code, out, _ = _run(capsys, "rules", "list", "--rules-path", str(tmp_path))
    assert code == 0 and "mine-1 " in out and f"[{tmp_path}]" in out


def test_show_options_by_choice_and_chosen(capsys):
    code, out, _ = _run(capsys, "rules", "show", "en-16798-1-2019")
    assert code == 0
    assert "perceived-air-quality (by category: I 10 · II 7 · III 4 · IV 2.5)" in out
    code, out, _ = _run(capsys, "rules", "show", "en-16798-1-2019", "--option", "category=II",
                        "--option", "pollution=low")
    assert code == 0 and "= II" in out and "[a]" not in out
    row = next(ln for ln in out.splitlines() if ln.strip().startswith("conference-room"))
    assert row.split()[1:3] == ["7", "0.7"]  # EN 16798-1 Annex B, category II, low (from memory)


@pytest.mark.parametrize("argv", [
    ["--option", "category"], ["--option", "category=V", "--option", "pollution=low"],
    ["--option", "colour=red"],
])
def test_show_bad_option_is_a_usage_error(capsys, argv):
    code, out, err = _run(capsys, "rules", "show", "en-16798-1-2019", *argv)
    assert code == 2 and out == "" and "usage error: --option:" in err


def test_show_resolved_with_options(capsys):
    code, out, _ = _run(capsys, "rules", "show", "en-16798-1-2019", "--resolved",
                        "--option", "category=I", "--option", "pollution=non-low")
    assert code == 0
    data = yaml.safe_load(out)
    row = data["occupancy"]["categories"][0]
    assert (row["Rp"], row["Ra"]) == (10, 2.0)  # EN 16798-1 Annex B, category I (from memory)


def test_validate_a_file_an_id_and_a_folder(capsys):
    code, out, _ = _run(capsys, "rules", "validate", "en-16798-1-2019")
    # 4 categories × 3 pollution classes × 2 design methods
    assert code == 0 and "24 option combinations" in out
    code, out, _ = _run(capsys, "rules", "validate", "rules")
    assert code == 0 and out.count("\nok  ") + out.startswith("ok  ") == len(builtin_pack_ids())


def test_validate_refuses_a_broken_pack(capsys):
    from conftest import ROOT

    pack = ROOT / "fixtures" / "bad" / "packs" / "layered-change-unknown.yaml"
    code, out, err = _run(capsys, "rules", "validate", str(pack))
    assert code == 2 and out == "" and f"{pack}:12:13: rule pack error:" in err


def test_diff_text_of_the_worked_example(capsys):
    code, out, _ = _run(capsys, "rules", "diff", "ashrae-62.1-2019", QUILLBY)
    assert code == 0
    assert "occupancy categories: 1 added, 1 removed, 1 changed" in out
    assert "  ~ libraries  Ra: 0.12 → 0.15" in out
    assert "  - gambling-casinos (retired: Gaming establishments" in out
    assert "  + community-workshop" in out
    assert "requirements: 5 added, 0 removed, 0 changed" in out
    assert "  ~ air-distribution-assumed  severity: \"warning\" → \"fail\"" in out
    assert "  - simplified (retired:" in out
    assert "\n6 added, 2 removed, 3 changed\n" in out
    assert out.rstrip().endswith("the licensed professional of record govern.")


def test_diff_json(capsys):
    code, out, _ = _run(capsys, "rules", "diff", "ashrae-62.1-2019-ev-table",
                        "ashrae-62.1-2019-ev-table-extended", "--format", "json")
    assert code == 0
    data = json.loads(out)
    assert data["diff_version"] == 1 and data["from"]["id"] == "ashrae-62.1-2019-ev-table"
    methods = next(s for s in data["sections"] if s["name"] == "ventilation_efficiency")
    changed = {f["field"]: f for c in methods["changed"] for f in c["fields"]}
    assert changed["above_last"] == {"field": "above_last", "from": "detailed", "to": 0.3}
    assert len(changed["rows"]["to"]) == 7 and len(changed["rows"]["from"]) == 5


def test_diff_of_two_unit_systems_says_so(capsys):
    code, out, _ = _run(capsys, "rules", "diff", "ashrae-62.1-2019", "ashrae-62.1-2019-si")
    assert code == 0 and "not converted" in out
    assert "  ~ office-space  Rp: 5 → 2.5" in out  # 62.1-2019 Table 6-1 IP vs SI (from memory)


def test_diff_of_a_pack_with_itself(capsys):
    code, out, _ = _run(capsys, "rules", "diff", QUILLBY, QUILLBY)
    assert code == 0 and "\nno differences\n" in out


def test_rules_without_an_action(capsys):
    code, _, err = _run(capsys, "rules")
    assert code == 2 and "test [PATH]" in err and "diff A B" in err


def test_check_and_explain_take_a_rules_path(tmp_path, capsys):
    folder = tmp_path / "mine"
    folder.mkdir()
    (folder / "town-1.yaml").write_text("""\
pack: 1
id: town-1
extends: ashrae-62.1-2019
title: "Invented town (fictional)"
document: Invented town code (fictional)
edition: "1"
amend:
  occupancy:
    change:
      - {id: conference-meeting, set: {Rp: 10}, source: {section: "1"}, provenance: invented}
""", encoding="utf-8")
    code, out, _ = _run(capsys, "explain", str(DEMO), "--zone", "203", "--rules", "town-1",
                        "--rules-path", str(folder))
    assert code == 0
    assert "Invented town code (fictional), 1 edition, 1 (invented), amending" in out
    code, out, err = _run(capsys, "check", str(DEMO), "--rules", "town-1")
    assert code == 2 and "unknown rule pack 'town-1'" in err
    code, out, _ = _run(capsys, "check", str(DEMO), "--rules", "town-1", "--rules-path",
                        str(folder), "--exit-zero")
    assert code == 0 and "rule pack: town-1" in out


def test_a_missing_rules_path_folder_is_a_usage_error(tmp_path, capsys):
    code, _, err = _run(capsys, "check", str(DEMO), "--rules-path", str(tmp_path / "nope"))
    assert code == 2 and "--rules-path:" in err and "is not a folder" in err


def test_a_schedule_names_a_pack_on_the_search_path(tmp_path, capsys, monkeypatch):
    folder = tmp_path / "mine"
    folder.mkdir()
    (folder / "town-2.yaml").write_text(
        "pack: 1\nid: town-2\nextends: ashrae-62.1-2019\ntitle: Town (invented)\n", "utf-8")
    data = yaml.safe_load(Path(DEMO).read_text(encoding="utf-8"))
    data["rules"] = "town-2"
    path = tmp_path / "demo.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    monkeypatch.setenv("AIRGATE_RULES_PATH", str(folder))
    code, out, _ = _run(capsys, "check", str(path), "--exit-zero")
    assert code == 0 and "rule pack: town-2" in out
