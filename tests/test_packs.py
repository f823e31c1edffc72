"""Built-in rule packs: schema-valid, complete, with provenance on every table value."""

from __future__ import annotations

import json

import jsonschema
import pytest
import yaml

from airgate.evaluation.checks import KNOWN_CHECKS
from airgate.readers import options
from airgate.readers.rulepack import (
    builtin_pack_ids,
    builtin_rules_dir,
    load_document,
    load_pack,
    pack_schema,
)

PACKS = builtin_pack_ids()
PROVENANCE = ("published", "from memory", "derived", "invented")


def _load(pack_id: str):
    """The built pack; one with options is built under each combination of them."""
    declared = options.declared(load_document(pack_id).data)
    combos = options.combinations(declared) if declared else [{}]
    return [load_pack(pack_id, options=combo) for combo in combos]
GROUPS = {"educational-facilities", "office-buildings", "food-and-beverage-service", "general",
          "public-assembly-spaces", "retail", "hotels-motels-resorts-dormitories",
          "sports-and-entertainment", "miscellaneous-spaces"}


def test_builtin_packs_are_found():
    # The installed wheel carries the packs (or the checkout's rules/ in development).
    assert {"ashrae-62.1-2019", "ashrae-62.1-2019-si"} <= set(PACKS)
    assert (builtin_rules_dir() / "schema" / "rule-pack.schema.json").is_file()


def test_schema_is_valid_draft_2020_12():
    jsonschema.Draft202012Validator.check_schema(pack_schema())


@pytest.mark.parametrize("pack_id", PACKS)
def test_pack_validates_and_is_named_for_its_id(pack_id):
    path = builtin_rules_dir() / f"{pack_id}.yaml"
    data = yaml.safe_load(path.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(pack_schema()).validate(data)
    for pack in _load(pack_id):
        assert pack.id == pack_id
        assert set(pack.checks) <= set(KNOWN_CHECKS)
        assert pack.cautions, "every pack carries cautions"


@pytest.mark.parametrize("pack_id", PACKS)
def test_every_table_value_has_source_and_provenance(pack_id):
    for pack in _load(pack_id):
        tables = (pack.categories.values(), pack.configurations.values(), pack.methods.values(),
                  pack.requirements.values())
        for table in tables:
            for row in table:
                assert row.provenance in PROVENANCE
                assert row.source.document and row.source.edition
                assert row.source.table or row.source.section
        for eq in pack.equations.values():
            assert eq.provenance in PROVENANCE and eq.source.section


@pytest.mark.parametrize("pack_id", [p for p in PACKS if p.startswith("ashrae-62.1-")])
def test_occupancy_table_breadth(pack_id):
    # The core issue asks for at least 40 rows across these groups.
    pack = load_pack(pack_id)
    assert len(pack.categories) >= 40
    assert GROUPS <= {c.group for c in pack.categories.values()}


def test_ip_and_si_packs_have_the_same_rows():
    ip, si = load_pack("ashrae-62.1-2019"), load_pack("ashrae-62.1-2019-si")
    assert list(ip.categories) == list(si.categories)
    assert list(ip.configurations) == list(si.configurations)
    for key in ip.categories:
        a, b = ip.categories[key], si.categories[key]
        assert (a.air_class, a.group, a.label) == (b.air_class, b.group, b.label)
        # separately rounded SI values stay near the exact conversion (common practice:
        # 5 cfm/person -> 2.5 L/s, exact 2.36; 7.5 -> 3.8, exact 3.54)
        assert b.rp == pytest.approx(a.rp, rel=0.08, abs=1e-9)
        assert b.ra == pytest.approx(a.ra, rel=0.02, abs=1e-9)
    for key in ip.configurations:
        assert ip.configurations[key].ez == si.configurations[key].ez


def test_ez_table_values(tmp_path):
    # ANSI/ASHRAE 62.1-2019 Table 6-4 (Ez). Only the two warm-air jet rows were compared with a
    # public copy (the 2007 edition's Table 6-2 as quoted in a public forum thread: Ez 1.0 where
    # the 150 fpm jet reaches within 4.5 ft of the floor, 0.8 for lower velocity): their values
    # are checked; every other row is from memory and must say so rather than be checked against
    # the same recalled list.
    rows = load_pack("ashrae-62.1-2019").configurations
    assert rows["ceiling-supply-warm-ceiling-return-jet"].ez == 1.0
    assert rows["ceiling-supply-warm-ceiling-return-no-jet"].ez == 0.8
    published = {k for k, r in rows.items() if r.provenance == "published"}
    assert published == {"ceiling-supply-warm-ceiling-return-jet",
                         "ceiling-supply-warm-ceiling-return-no-jet"}
    assert all(r.provenance == "from memory" for k, r in rows.items() if k not in published)


def test_published_schema_command_matches_file(capsys):
    from airgate.cli import main

    assert main(["schema", "rules"]) == 0
    assert json.loads(capsys.readouterr().out) == pack_schema()
