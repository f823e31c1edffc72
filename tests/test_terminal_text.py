"""Control codes and bidirectional controls from the input never reach a terminal or a report raw.

A terminal acts on ESC (0x1b: ECMA-48 control sequences, e.g. ``ESC [2J`` clears the screen) and
BEL (0x07); a Unicode bidirectional override (U+202E, UAX #9) reorders what a reader sees. The
contract (docs/limits.md): every message and listing a terminal may show escapes them visibly
(``\\x1b``, ``\\u202e``); every report shows the bidirectional controls visibly, through one shared
function (``airgate.escaping``); JSON keeps the data (its ``\\u202e`` escape decodes to the same
text). The expected values are that contract and the ECMA-48 / UAX #9 characters named above.
"""

from __future__ import annotations

import json
import shutil

import pytest
import yaml

from airgate.cli import main
from airgate.readers.document import parse_yaml
from airgate.errors import ScheduleError

from conftest import DEMO, ROOT

ESC, BEL, RLO = "\x1b", "\x07", "\u202e"
FAKE = f"{ESC}[2J{ESC}[HResult: PASS — all checks passed{BEL}"
BIDI = f"Room {RLO}txt.exe"
RAW = (ESC, BEL, RLO, "\u2028", "\u2066")


def _schedule(tmp_path, **zone_fields) -> str:
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["project"]["name"] = f"Hall {BIDI} {FAKE}"
    zone = data["systems"][2]["zones"][0]
    zone.update({"name": FAKE, **zone_fields})
    data["systems"][2]["name"] = f"AHU {RLO}\u2066x\u2069"
    path = tmp_path / "s.yaml"
    path.write_text(yaml.safe_dump(data, allow_unicode=True), encoding="utf-8")
    return str(path)


def _no_raw(text: str) -> None:
    for ch in RAW:
        assert ch not in text, f"raw {ch!r} in output"


@pytest.mark.parametrize("fmt", ["text", "json", "markdown", "html", "junit", "sarif"])
def test_reports_show_controls_visibly(fmt, tmp_path, capsys):
    code = main(["check", _schedule(tmp_path), "--format", fmt, "--exit-zero"])
    out = capsys.readouterr().out
    assert code == 0
    _no_raw(out)
    assert "\\u202e" in out  # shown, not dropped
    if fmt == "text":
        assert "\\x1b[2J" in out  # the fake screen-clear is visible text
    if fmt == "json":
        data = json.loads(out)  # the data is intact: the escape decodes to U+202E
        assert BIDI in json.dumps(data, ensure_ascii=False)


def test_explain_shows_controls_visibly(tmp_path, capsys):
    path = _schedule(tmp_path)
    zone = yaml.safe_load(open(path, encoding="utf-8"))["systems"][2]["zones"][0]["id"]
    assert main(["explain", path, "--zone", str(zone)]) in (0, 1)
    out = capsys.readouterr().out
    _no_raw(out)
    assert "\\x1b[2J" in out


def test_error_messages_escape_control_codes(tmp_path, capsys):
    path = _schedule(tmp_path, space=f"office{FAKE}")
    assert main(["check", path]) == 2
    err = capsys.readouterr().err
    _no_raw(err)
    assert "office\\x1b[2J\\x1b[HResult: PASS" in err


def test_rules_listings_escape_control_codes(tmp_path, capsys):
    pack = ROOT / "fixtures" / "edge" / "packs" / "sample-pack.yaml"
    folder = tmp_path / "packs"
    folder.mkdir()
    text = pack.read_text(encoding="utf-8")
    title = next(line for line in text.splitlines() if line.startswith("title: "))
    hostile = json.dumps(f"Sample {FAKE} {RLO}")  # a YAML double-quoted scalar
    (folder / "sample-pack-1.yaml").write_text(text.replace(title, f"title: {hostile}"),
                                               encoding="utf-8")
    for argv in (["rules", "list", "--rules-path", str(folder)],
                 ["rules", "show", str(folder / "sample-pack-1.yaml")],
                 ["rules", "show", str(folder / "sample-pack-1.yaml"), "--resolved"],
                 ["rules", "validate", str(folder / "sample-pack-1.yaml")],
                 ["rules", "diff", str(pack), str(folder / "sample-pack-1.yaml")]):
        code = main(argv)
        out, err = capsys.readouterr()
        assert code == 0, err
        _no_raw(out)
        _no_raw(err)


def test_import_writes_yaml_that_reads_back_whatever_the_file_name(tmp_path, capsys):
    # U+2028 is a line break to a YAML reader (YAML 1.2 §5.4): in a comment it would end it
    source = ROOT / "fixtures" / "demo" / "fernhollow-civic-centre.xml"
    named = tmp_path / f"civic\u2028centre {RLO}.xml"
    shutil.copy(source, named)
    target = tmp_path / "s.yaml"
    assert main(["import", str(named), "-o", str(target)]) == 0
    err = capsys.readouterr().err
    _no_raw(err)
    text = target.read_text(encoding="utf-8")
    _no_raw(text)
    doc = parse_yaml(text, str(target), ScheduleError)
    assert doc.data["project"]["name"]
    assert main(["check", str(target), "--exit-zero"]) == 0
    capsys.readouterr()
