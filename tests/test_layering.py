"""Layered rule packs: extends by id on the search path, explicit amendments, merged documents.

The expected behaviour is the project's own contract (docs/rule-pack-format.md, "Layered packs";
the issue's rules: an extends value is an id, never a path; redefining an id without saying so is
an error; cycles are errors; errors name the file and line that wrote the value). Values in the
small packs below are invented.
"""

from __future__ import annotations

import os
from pathlib import Path

import jsonschema
import pytest
import yaml

from airgate.cli import main
from airgate.errors import RulePackError
from airgate.readers import layering
from airgate.readers.rulepack import builtin_rules_dir, load_document, load_pack, pack_schema

BASE = """\
pack: 1
id: base-1
title: "Base pack for the layering tests (invented values)"
document: Base document (invented)
edition: "1"
units: IP
provenance: invented
verify: true
cautions: ["Base caution (invented pack)."]
occupancy:
  source: {table: "Table 1"}
  provenance: invented
  units: {Rp: cfm/person, Ra: cfm/ft2, density: people/1000 ft2}
  categories:
    - {id: office-space, label: Office space, group: offices, Rp: 5, Ra: 0.06, density: 5, air_class: 1}
    - {id: storage, label: Storage, group: offices, Rp: 0, Ra: 0.12, density: null, air_class: 2}
air_distribution:
  source: {table: "Table 2"}
  provenance: invented
  units: {temperature_difference: delta_degF, jet_velocity: fpm, throw_velocity: fpm}
  default: ceiling-supply-cool
  configurations:
    - {id: ceiling-supply-cool, label: Ceiling supply of cool air, ez: 1.0, when: {supply: ceiling, mode: cooling}}
    - {id: floor-supply-warm, label: Floor supply of warm air, ez: 0.7, when: {supply: floor, mode: heating}}
ventilation_efficiency:
  default: detailed
  methods:
    detailed: {source: {section: "Section 3"}, provenance: invented}
checks:
  - {id: system-intake, severity: fail, title: Intake at least Vot, source: {section: "Section 4"}}
"""

CHILD = """\
pack: 1
id: child-1
extends: base-1
title: "Child pack (invented amendments)"
document: Child amendments (invented)
edition: "2"
jurisdiction: Fictional town
effective: "2030-01-01"
cautions: ["Child caution (invented pack)."]
amend:
  occupancy:
    change:
      - {id: office-space, set: {Rp: 7}, source: {section: "Amendment 1"}, provenance: invented, reason: "more air"}
    add:
      - {id: workshop, label: Workshop, group: offices, Rp: 10, Ra: 0.18, density: 20, air_class: 2, source: {section: "Amendment 2"}, provenance: invented}
    retire:
      - {id: storage, reason: "no storage rooms in the fictional town"}
  checks:
    change:
      - {id: system-intake, set: {severity: warning}, source: {section: "Amendment 3"}, provenance: invented}
"""


def write(folder: Path, name: str, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{name}.yaml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture
def packs(tmp_path: Path) -> Path:
    folder = tmp_path / "packs"
    write(folder, "base-1", BASE)
    write(folder, "child-1", CHILD)
    return folder


def _error(capsys, argv) -> str:
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    return err


def test_extends_by_id_on_the_rules_path(packs):
    pack = load_pack("child-1", search=[packs])
    assert pack.lineage == ("child-1", "base-1") and pack.extends == "base-1"
    assert pack.categories["office-space"].printed["Rp"] == 7  # changed
    assert pack.categories["office-space"].printed["Ra"] == 0.06  # inherited
    assert list(pack.categories) == ["office-space", "workshop"]  # retired gone, added last
    assert pack.retired["occupancy"]["storage"].reason == "no storage rooms in the fictional town"
    assert pack.checks["system-intake"].severity == "warning"
    assert pack.jurisdiction == "Fictional town" and pack.effective == "2030-01-01"
    assert pack.cautions == ("Base caution (invented pack).", "Child caution (invented pack).")


def test_without_the_folder_the_id_is_unknown(packs):
    with pytest.raises(RulePackError, match="unknown rule pack 'child-1'"):
        load_pack("child-1")


def test_environment_variable_joins_the_search_path(packs, tmp_path, monkeypatch):
    other = tmp_path / "empty"
    other.mkdir()
    monkeypatch.setenv(layering.ENV_VAR, os.pathsep.join([str(other), str(packs)]))
    assert load_pack("child-1").id == "child-1"
    roots = layering.search_roots()
    assert [r.label for r in roots] == ["built-in", layering.ENV_VAR, layering.ENV_VAR]
    monkeypatch.setenv(layering.ENV_VAR, str(tmp_path / "absent"))
    with pytest.raises(Exception, match="is not a folder"):
        layering.search_roots()


def test_search_order_built_in_first_then_rules_path_then_environment(tmp_path, monkeypatch):
    # A folder's pack named like a built-in one is shadowed: the built-in pack is found first.
    first, second = tmp_path / "first", tmp_path / "second"
    write(first, "ashrae-62.1-2019", BASE.replace("id: base-1", "id: ashrae-62.1-2019"))
    write(first, "base-1", BASE)
    write(second, "base-1", BASE.replace("Rp: 5,", "Rp: 6,"))
    monkeypatch.setenv(layering.ENV_VAR, str(second))
    doc = load_document("ashrae-62.1-2019", search=[first])
    assert Path(doc.file).parent == builtin_rules_dir()
    assert load_pack("base-1", search=[first]).categories["office-space"].printed["Rp"] == 5
    rows = layering.packs_on_path(layering.search_roots([first]))
    shadowed = {(p[0], p[2].label) for p in rows if p[3]}
    assert ("ashrae-62.1-2019", "--rules-path") in shadowed
    assert ("base-1", layering.ENV_VAR) in shadowed


def test_extends_is_an_id_never_a_path(packs, capsys):
    path = write(packs, "escape", CHILD.replace("extends: base-1", "extends: ../base-1")
                 .replace("id: child-1", "id: escape"))
    err = _error(capsys, ["rules", "show", str(path), "--rules-path", str(packs)])
    assert f"{path}:3:10: rule pack error: extends: '../base-1' does not match" in err


def test_a_link_leading_outside_the_root_is_refused(tmp_path):
    outside = write(tmp_path / "outside", "base-1", BASE)
    root = tmp_path / "root"
    root.mkdir()
    (root / "base-1.yaml").symlink_to(outside)
    with pytest.raises(RulePackError, match="leads outside its folder"):
        layering.find("base-1", layering.search_roots([root]))


def test_origins_name_the_pack_and_line_that_wrote_each_value(packs):
    doc = load_document("child-1", search=[packs])
    child, base = str(packs / "child-1.yaml"), str(packs / "base-1.yaml")
    rp = doc.origin(("occupancy", "categories", 0, "Rp"))
    assert (rp.pack, rp.file, rp.line) == ("child-1", child, 13)
    ra = doc.origin(("occupancy", "categories", 0, "Ra"))
    assert (ra.pack, ra.file, ra.line) == ("base-1", base, 15)
    added = doc.origin(("occupancy", "categories", 1, "density"))
    assert (added.pack, added.line) == ("child-1", 15)
    assert doc.origin(("title",)).pack == "child-1"
    assert doc.origin(("units",)).pack == "base-1"
    assert doc.origin(("cautions", 1)).pack == "child-1"


def test_inherited_entries_keep_citing_the_base_document(packs):
    # the child changes document and edition; the base's rows and checks must not follow
    pack = load_pack("child-1", search=[packs])
    assert pack.occupancy_source.cite() == "Base document (invented), 1 edition, Table 1"
    assert pack.categories["office-space"].cite("Ra").startswith("Base document (invented), 1")
    assert pack.categories["office-space"].cite("Rp").startswith(
        "Child amendments (invented), 2 edition, Amendment 1 (invented), amending Base document")
    assert pack.categories["workshop"].source.cite() == "Child amendments (invented), 2 edition, Amendment 2"
    assert pack.checks["system-intake"].source.cite() == "Child amendments (invented), 2 edition, Amendment 3"
    assert pack.methods["detailed"].source.cite() == "Base document (invented), 1 edition, Section 3"


@pytest.mark.parametrize(("edit", "line", "text"), [
    ("add-existing", 15, "occupancy category 'office-space' is already defined by rule pack base-1"),
    ("change-unknown", 13, "no occupancy category 'ofice-space' in rule pack base-1 to change"),
    ("retire-unknown", 17, "no occupancy category 'strage' in rule pack base-1 to retire"),
    ("change-and-retire", 13, "'office-space' is amended twice in this pack (first on line 17)"),
    ("rename", 13, "an entry keeps its id"),
])
def test_amendments_must_say_what_they_do(packs, capsys, edit, line, text):
    body = {
        "add-existing": CHILD.replace("id: workshop,", "id: office-space,"),
        "change-unknown": CHILD.replace("{id: office-space, set", "{id: ofice-space, set"),
        "retire-unknown": CHILD.replace("{id: storage, reason", "{id: strage, reason"),
        "change-and-retire": CHILD.replace("{id: storage, reason", "{id: office-space, reason"),
        "rename": CHILD.replace("set: {Rp: 7}", "set: {id: office, Rp: 7}"),
    }[edit]
    path = write(packs, "child-1", body)
    err = _error(capsys, ["rules", "show", "child-1", "--rules-path", str(packs)])
    assert f"{path}:{line}:" in err and text in err


def test_redefinition_error_points_at_the_existing_entry(packs, capsys):
    write(packs, "child-1", CHILD.replace("id: workshop,", "id: office-space,"))
    err = _error(capsys, ["rules", "show", "child-1", "--rules-path", str(packs)])
    assert f"({packs / 'base-1.yaml'}:15)" in err
    assert "fix: to amend it use amend.occupancy.change" in err


def test_cycles_are_errors(tmp_path, capsys):
    folder = tmp_path / "cycle"
    write(folder, "cycle-a", "pack: 1\nid: cycle-a\nextends: cycle-b\ntitle: A (invented)\n")
    write(folder, "cycle-b", "pack: 1\nid: cycle-b\nextends: cycle-a\ntitle: B (invented)\n")
    write(folder, "cycle-self", "pack: 1\nid: cycle-self\nextends: cycle-self\ntitle: S\n")
    err = _error(capsys, ["rules", "show", "cycle-a", "--rules-path", str(folder)])
    assert f"{folder / 'cycle-b.yaml'}:3:10: rule pack error: extends: extends makes a cycle: " \
           "cycle-a → cycle-b → cycle-a" in err
    err = _error(capsys, ["rules", "show", "cycle-self", "--rules-path", str(folder)])
    assert "cycle-self → cycle-self" in err


def test_a_three_level_chain_and_re_adding_a_retired_entry(packs):
    write(packs, "grandchild-1", """\
pack: 1
id: grandchild-1
extends: child-1
title: "Grandchild (invented)"
amend:
  occupancy:
    add:
      - {id: storage, label: Storage, group: offices, Rp: 0, Ra: 0.1, density: null, air_class: 2, source: {section: "G1"}, provenance: invented}
    change:
      - {id: office-space, set: {Ra: 0.08}, source: {section: "G2"}, provenance: invented}
""")
    pack = load_pack("grandchild-1", search=[packs])
    assert pack.lineage == ("grandchild-1", "child-1", "base-1")
    office = pack.categories["office-space"].printed
    assert (office["Rp"], office["Ra"]) == (7, 0.08)  # one amendment from each layer
    assert "storage" in pack.categories and "storage" not in pack.retired.get("occupancy", {})
    assert pack.where(("occupancy", "categories", 0, "Rp"))[0] == str(packs / "child-1.yaml")
    assert pack.where(("occupancy", "categories", 0, "Ra"))[0] == str(packs / "grandchild-1.yaml")
    assert pack.where(("occupancy", "categories", 0, "label"))[0] == str(packs / "base-1.yaml")


def test_errors_on_the_merged_pack_name_the_amending_file(packs, capsys):
    path = write(packs, "child-1", CHILD.replace("set: {Rp: 7}", "set: {Rp: -7}"))
    err = _error(capsys, ["rules", "show", "child-1", "--rules-path", str(packs)])
    assert f"{path}:13:" in err and "amend.occupancy.change[0].set.Rp: -7 is less than" in err
    path = write(packs, "child-1", CHILD.replace("set: {severity: warning}", "set: {severity: loud}"))
    err = _error(capsys, ["rules", "show", "child-1", "--rules-path", str(packs)])
    assert f"{path}:20:" in err and "amend.checks.change[0].set.severity" in err


def test_an_unknown_check_added_by_the_child_is_located_in_the_child(packs, capsys):
    path = write(packs, "child-1", CHILD + """\
    add:
      - {id: sytem-intake-2, severity: fail, title: Typo, source: {section: "A4"}}
""")
    err = _error(capsys, ["rules", "show", "child-1", "--rules-path", str(packs)])
    assert f"{path}:22:14: rule pack error: amend.checks.add[0].id: unknown check 'sytem-intake-2'" in err


@pytest.mark.parametrize(("text", "field", "message"), [
    ("units: SI\n", "units", "units SI differ from those of the base pack base-1"),
    ("verify: false\n", "verify", "holds values that must be verified"),
    ("occupancy: {}\n", "occupancy", "does not restate 'occupancy'"),
    ("equations: {}\n", "equations", "amend: {equations: {change: ...}}"),
    ("natural_ventilation: {}\n", "natural_ventilation", "it is inherited from the base unchanged"),
])
def test_what_an_extending_pack_may_not_say(packs, capsys, text, field, message):
    write(packs, "child-1", CHILD.replace("jurisdiction:", text + "jurisdiction:"))
    err = _error(capsys, ["rules", "show", "child-1", "--rules-path", str(packs)])
    assert f": rule pack error: {field}: " in err and message in err


def test_amend_needs_extends(packs, capsys):
    path = write(packs, "lonely", BASE.replace("id: base-1", "id: lonely")
                 + "amend: {checks: {retire: [{id: system-intake, reason: x}]}}\n")
    err = _error(capsys, ["rules", "show", str(path)])
    assert "amend: 'amend' needs 'extends: BASE-ID'" in err


def test_retiring_a_default_needs_a_new_default(packs, capsys):
    retire = CHILD + """\
  air_distribution:
    retire:
      - {id: ceiling-supply-cool, reason: "invented"}
"""
    path = write(packs, "child-1", retire)
    err = _error(capsys, ["rules", "show", "child-1", "--rules-path", str(packs)])
    assert f"{path}:23:" in err and "is the default of the air_distribution table" in err
    write(packs, "child-1", retire + "    default: floor-supply-warm\n")
    pack = load_pack("child-1", search=[packs])
    assert pack.default_configuration == "floor-supply-warm"
    assert list(pack.configurations) == ["floor-supply-warm"]


def test_methods_are_amended_by_name(packs):
    write(packs, "child-1", CHILD + """\
  ventilation_efficiency:
    default: table
    add:
      table:
        source: {section: "A5"}
        provenance: invented
        rows: [{max_zp: 0.5, ev: 0.7}]
        interpolate: false
        above_last: 0.5
""")
    pack = load_pack("child-1", search=[packs])
    assert pack.default_method == "table" and set(pack.methods) == {"detailed", "table"}


def test_layered_packs_satisfy_the_published_schema(packs):
    validator = jsonschema.Draft202012Validator(pack_schema())
    validator.validate(yaml.safe_load(CHILD))
    for name in ("ashrae-62.1-2019-quillby-bay", "ashrae-62.1-2019-ev-table"):
        validator.validate(yaml.safe_load((builtin_rules_dir() / f"{name}.yaml").read_text("utf-8")))
    restated = yaml.safe_load(CHILD)
    restated["checks"] = []
    assert not validator.is_valid(restated)  # a layered pack restates no table
    merged = load_document("child-1", search=[packs]).data
    validator.validate(merged)  # the merged document is a complete pack


def test_show_resolved_names_the_origin_of_every_value(packs, capsys):
    assert main(["rules", "show", "child-1", "--resolved", "--rules-path", str(packs)]) == 0
    out = capsys.readouterr().out
    lines = [ln for ln in out.splitlines() if not ln.startswith("#")]
    values = [ln for ln in lines if not ln.rstrip().endswith(":")]
    assert values and all("  # child-1" in ln or "  # base-1" in ln for ln in values)
    assert '      Rp: 7  # child-1:13 amends the base\'s value: Amendment 1 (invented)' in out
    assert '      Ra: 0.06  # base-1:15' in out
    assert yaml.safe_load(out) == load_document("child-1", search=[packs]).data


def test_show_resolved_json(packs, capsys):
    import json

    assert main(["rules", "show", "child-1", "--resolved", "--format", "json",
                 "--rules-path", str(packs)]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["lineage"] == ["child-1", "base-1"]
    by_path = {o["path"]: o for o in data["origins"]}
    assert by_path["occupancy.categories[0].Rp"]["pack"] == "child-1"
    assert by_path["occupancy.categories[0].label"]["pack"] == "base-1"
    assert data["retired"]["occupancy"][0]["id"] == "storage"


def test_a_changed_file_is_read_again(packs):
    assert load_pack("child-1", search=[packs]).categories["office-space"].printed["Rp"] == 7
    path = write(packs, "base-1", BASE.replace("Ra: 0.06,", "Ra: 0.07,"))
    os.utime(path, ns=(1, 1))  # a different stamp, whatever the clock's resolution
    assert load_pack("child-1", search=[packs]).categories["office-space"].printed["Ra"] == 0.07
