"""One registry per extension point, and an unknown name is a located error, never a fall-through.

Structural tests of the engine (DEVELOPERS.md, "Extension points"); no external source applies.
"""

from __future__ import annotations

import json
import re
import textwrap

from airgate.cli import main
from airgate.evaluation.requirement_kinds import EVALUATORS
from airgate.models.requirements import KINDS

from conftest import ROOT, schedule

SCHEMA = json.loads((ROOT / "rules" / "schema" / "rule-pack.schema.json").read_text("utf-8"))


# --- requirement kinds --------------------------------------------------------------------------

def test_requirement_kinds_one_vocabulary():
    """The pack schema, the model's kinds and the evaluation's kinds are the same names."""
    assert list(EVALUATORS) and set(EVALUATORS) == set(KINDS)
    assert set(SCHEMA["$defs"]["requirement"]["properties"]["kind"]["enum"]) == set(KINDS)
    for name, spec in KINDS.items():
        assert spec.name == name and spec.subject in ("zone", "system", "")
        assert (EVALUATORS[name].adjust is not None) == spec.modifies, name


def _amending_pack(tmp_path, kind: str, extra: str = "") -> str:
    pack = tmp_path / "amended.yaml"
    pack.write_text(textwrap.dedent(f"""\
        pack: 1
        id: amended
        extends: ashrae-62.1-2019
        title: "Test amendment (invented)"
        document: "Test code (invented)"
        edition: "2025"
        provenance: invented
        amend:
          requirements:
            add:
              - id: new-rule
                kind: {kind}
                severity: fail
                message: "a requirement of a kind the engine does not have"
                source: {{section: "1.1"}}
                provenance: invented
        """) + extra, encoding="utf-8")
    return str(pack)


def _demo_like(tmp_path) -> str:
    import yaml

    path = tmp_path / "building.yaml"
    path.write_text(yaml.safe_dump(schedule([{
        "id": "RTU-1", "kind": "single-zone", "outdoor_air": 200,
        "zones": [{"id": "101", "space": "office-space", "area": 1000, "occupants": 5,
                   "air_distribution": "ceiling-supply-cool"}]}]), sort_keys=False),
        encoding="utf-8")
    return str(path)


def test_an_unknown_requirement_kind_is_a_located_pack_error(tmp_path, capsys):
    pack = _amending_pack(tmp_path, "exhaust-rate")
    code = main(["check", _demo_like(tmp_path), "--rules", pack])
    out, err = capsys.readouterr()
    assert code == 2 and out == ""
    assert "Traceback" not in err
    # file:line:col of the kind (line 12 of the pack, column 15), what is wrong, what is allowed
    assert re.match(re.escape(pack) + r":12:15: rule pack error: ", err), err
    assert "exhaust-rate" in err
    assert all(name in err for name in KINDS)


def test_a_known_kind_in_the_same_place_loads(tmp_path, capsys):
    """The same pack with a real kind and its parameter runs: the error above is the kind's."""
    pack = _amending_pack(tmp_path, "density-limit", "        max_density: 1000\n")
    assert main(["check", _demo_like(tmp_path), "--rules", pack]) in (0, 1)
    assert "Traceback" not in capsys.readouterr().err


def test_the_reader_refuses_a_kind_it_does_not_know_even_when_the_schema_allows_it(
        tmp_path, capsys, monkeypatch):
    monkeypatch.delitem(KINDS, "density-limit")
    pack = _amending_pack(tmp_path, "density-limit", "        max_density: 1000\n")
    assert main(["check", _demo_like(tmp_path), "--rules", pack]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"{pack}:12:15: rule pack error: "), err
    assert "unknown requirement kind 'density-limit'" in err


def test_a_kind_without_its_evaluation_is_an_internal_error_not_another_kind(
        tmp_path, capsys, monkeypatch):
    monkeypatch.delitem(EVALUATORS, "density-limit")
    pack = _amending_pack(tmp_path, "density-limit", "        max_density: 1000\n")
    assert main(["check", _demo_like(tmp_path), "--rules", pack]) == 3
    assert "has no evaluation registered" in capsys.readouterr().err


def test_a_new_requirement_kind_is_its_entries_and_its_evaluation(tmp_path, monkeypatch):
    """DEVELOPERS.md's recipe, end to end: a kind in the schema, in KINDS and in EVALUATORS
    (here a cap on a zone's design occupants) is read from a pack and evaluated."""
    import copy

    from airgate import check
    from airgate.evaluation.findings import Amount
    from airgate.evaluation.requirement_kinds.common import Behaviour
    from airgate.models.requirements import RequirementKind
    from airgate.readers import packschema

    published = packschema.schema("rule-pack")
    patched = copy.deepcopy(published)
    requirement = patched["$defs"]["requirement"]
    requirement["properties"]["kind"]["enum"].append("max-occupants")
    requirement["properties"]["max_people"] = {"type": "number", "exclusiveMinimum": 0}
    original = packschema.schema
    monkeypatch.setattr(packschema, "schema",
                        lambda name="rule-pack": patched if name == "rule-pack" else original(name))

    def evaluate(run, req, t):
        pz, most = t.z.trail.value("Pz"), req.params["max_people"]
        if pz <= most:
            run.record(req, t.subject, "pass", t.emitter)
            return
        run.record(req, t.subject, "fail", t.emitter, run.finding(
            req, t.subject, f"{req.message}: {pz:g} people", t.where, system=t.system.id,
            zone=t.zone_id, required=Amount(most, "people"), provided=Amount(pz, "people")))

    monkeypatch.setitem(KINDS, "max-occupants",
                        RequirementKind("max-occupants", "zone", {"max_people": None}))
    monkeypatch.setitem(EVALUATORS, "max-occupants", Behaviour(evaluate=evaluate))
    pack = _amending_pack(tmp_path, "max-occupants", "        max_people: 3\n")
    report = check(_demo_like(tmp_path), pack)
    found = [f for f in report.findings if f.rule == "new-rule"]
    assert [(f.severity, f.subject, f.provided.value) for f in found] == [("fail", "RTU-1/101", 5)]
    assert [(o.rule, o.verdict) for o in report.requirements] == [("new-rule", "fail")]


# --- system kinds -------------------------------------------------------------------------------

def test_system_kinds_one_vocabulary():
    from airgate.evaluation.system_kinds import SYSTEM_KINDS
    from airgate.models.schedule import SYSTEM_KINDS as SCHEDULE_KINDS
    from airgate.models.schedule import System

    assert list(SYSTEM_KINDS) == list(SCHEDULE_KINDS)
    assert System.model_json_schema()["properties"]["kind"]["enum"] == list(SCHEDULE_KINDS)
    for name, kind in SYSTEM_KINDS.items():
        assert kind.name == name and callable(kind.evaluate)


def test_an_unknown_system_kind_is_a_located_schedule_error(tmp_path, capsys):
    import yaml

    from airgate.models.schedule import SYSTEM_KINDS as SCHEDULE_KINDS

    path = tmp_path / "building.yaml"
    data = yaml.safe_load(open(_demo_like(tmp_path), encoding="utf-8"))
    data["systems"][0]["kind"] = "exhaust-only"
    path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert re.match(re.escape(str(path)) + r":\d+:\d+: schedule error: systems\[0\]\.kind", err)
    assert all(name in err for name in SCHEDULE_KINDS)


def test_a_system_kind_without_its_evaluation_is_an_internal_error(tmp_path, capsys,
                                                                   monkeypatch):
    from airgate.evaluation.system_kinds import SYSTEM_KINDS

    monkeypatch.delitem(SYSTEM_KINDS, "single-zone")
    assert main(["check", _demo_like(tmp_path)]) == 3
    assert "has no evaluation registered" in capsys.readouterr().err


# --- report formats -----------------------------------------------------------------------------

def test_a_registered_format_is_a_format_of_check(capsys, monkeypatch):
    """Adding a format is one registry entry: --format accepts it and writes what it returns."""
    from airgate.writers import formats

    plain = formats.ReportFormat("verdicts", ".txt", lambda batch, step: "".join(
        f"{r.schedule_file}: {r.verdict}\n" for r in batch.reports))
    monkeypatch.setitem(formats.FORMATS, "verdicts", plain)
    monkeypatch.chdir(ROOT)
    demo = "fixtures/demo/fernhollow-civic-centre.yaml"
    assert main(["check", demo, "--format", "verdicts"]) == 1
    assert capsys.readouterr().out == f"{demo}: fail\n"


def test_an_unknown_format_is_a_usage_error_naming_the_registered_ones(capsys):
    from airgate.writers.formats import FORMATS

    assert main(["check", str(ROOT / "fixtures/demo/fernhollow-civic-centre.yaml"),
                 "--format", "docx"]) == 2
    err = capsys.readouterr().err
    assert "unknown report format 'docx'" in err and all(name in err for name in FORMATS)


def test_every_format_has_its_extension():
    from airgate.writers.formats import EXTENSIONS, FORMATS

    assert list(EXTENSIONS) == list(FORMATS)
    assert all(ext.startswith(".") for ext in EXTENSIONS.values())


# --- importers ----------------------------------------------------------------------------------

def test_every_suffix_has_one_importer_and_each_reader_exists():
    import ast

    from airgate.readers.importers import BY_SUFFIX, DEFAULT, IMPORTERS, REFUSED

    claimed = [s for i in IMPORTERS.values() for s in i.suffixes]
    assert len(claimed) == len(set(claimed)) == len(BY_SUFFIX)
    assert not set(claimed) & set(REFUSED)
    assert DEFAULT is IMPORTERS["schedule"]
    for importer in IMPORTERS.values():  # read from the source: the IFC reader is optional
        path = ROOT / "engine" / "airgate" / "readers" / f"{importer.module}.py"
        tree = ast.parse(path.read_text(encoding="utf-8"))
        assert importer.function in {n.name for n in tree.body if isinstance(n, ast.FunctionDef)}


def test_a_registered_importer_reads_its_suffix(tmp_path, monkeypatch):
    """Adding an importer is one registry entry: a file with its suffix goes to its reader."""
    from airgate import check
    from airgate.readers import importers

    seen = []
    yaml_reader = importers.IMPORTERS["schedule"]

    class Spy(importers.Importer):
        def read(self, path):
            seen.append(path.name)
            return yaml_reader.read(path)

    spy = Spy("sched", (".sched",), "schedule", "read_schedule", "a test format")
    monkeypatch.setitem(importers.BY_SUFFIX, ".sched", spy)
    path = tmp_path / "building.sched"
    path.write_text(open(_demo_like(tmp_path), encoding="utf-8").read(), encoding="utf-8")
    assert check(path).verdict in ("pass", "fail")
    assert seen == ["building.sched"]
