"""The cache on disk of validated pack documents and data tables (airgate.cache): a kept entry
gives what reading the files gives, and is used only while every file it was built from holds
the same bytes. A structural property of the program (common practice: a cache is invisible
but for speed), not a calculation: no external source applies.
"""

from __future__ import annotations

import pickle
from pathlib import Path

import pytest

from airgate import cache
from airgate.errors import RulePackError
from airgate.readers import datatables, layering, rulepack

from test_layering import BASE, CHILD, write


@pytest.fixture
def store(tmp_path, monkeypatch) -> Path:
    """A fresh cache folder of the test's own, and no document kept in memory."""
    folder = tmp_path / "cache"
    monkeypatch.setenv("AIRGATE_CACHE_DIR", str(folder))
    monkeypatch.delenv("AIRGATE_NO_CACHE", raising=False)
    monkeypatch.setattr(rulepack, "_DOCS", {})
    monkeypatch.setattr(rulepack, "_PACKS", {})
    return folder


def _fresh(monkeypatch) -> None:
    """Forget the documents kept in memory, as a new process would."""
    monkeypatch.setattr(rulepack, "_DOCS", {})
    monkeypatch.setattr(rulepack, "_PACKS", {})


def _no_reading(monkeypatch) -> None:
    def refuse(*args, **kwargs):
        raise AssertionError("read from the files, not from the cache")

    monkeypatch.setattr(layering, "read", refuse)


def _same(a, b) -> None:
    assert a.data == b.data and a.files == b.files and a.lineage == b.lineage
    for path in [("occupancy", "categories", 0, "Rp"), ("checks", 0, "severity"), ("id",)]:
        assert a.origin(path) == b.origin(path)


def test_a_kept_pack_is_the_pack_read(store, tmp_path, monkeypatch):
    packs = tmp_path / "packs"
    write(packs, "base-1", BASE)
    write(packs, "child-1", CHILD)
    read = rulepack.load_document("child-1", search=[packs])
    assert list(store.glob("pack-*.pickle"))
    _fresh(monkeypatch)
    _no_reading(monkeypatch)
    kept = rulepack.load_document("child-1", search=[packs])
    _same(kept, read)
    assert rulepack.load_pack("child-1", search=[packs]).categories["office-space"].printed[
        "Rp"] == 7


def test_a_changed_file_is_read_again(store, tmp_path, monkeypatch):
    packs = tmp_path / "packs"
    write(packs, "base-1", BASE)
    write(packs, "child-1", CHILD)
    rulepack.load_document("child-1", search=[packs])
    _fresh(monkeypatch)
    write(packs, "base-1", BASE.replace("Ra: 0.06", "Ra: 0.08"))  # the base, not the file named
    pack = rulepack.load_pack("child-1", search=[packs])
    assert pack.categories["office-space"].printed["Ra"] == 0.08


def test_a_base_found_elsewhere_now_is_read_again(store, tmp_path, monkeypatch):
    first, second = tmp_path / "first", tmp_path / "second"
    first.mkdir()
    write(second, "base-1", BASE)
    write(second, "child-1", CHILD)
    rulepack.load_document("child-1", search=[first, second])
    _fresh(monkeypatch)
    write(first, "base-1", BASE.replace("Ra: 0.06", "Ra: 0.09"))  # now found first
    pack = rulepack.load_pack("child-1", search=[first, second])
    assert pack.categories["office-space"].printed["Ra"] == 0.09


def test_a_pack_that_fails_is_not_kept_and_fails_alike(store, tmp_path, monkeypatch):
    packs = tmp_path / "packs"
    write(packs, "base-1", BASE.replace("units: IP", "units: XY"))
    errors = []
    for _ in range(2):
        _fresh(monkeypatch)
        with pytest.raises(RulePackError) as err:
            rulepack.load_document("base-1", search=[packs])
        errors.append(err.value.render())
    assert errors[0] == errors[1] and "units" in errors[0]
    assert not list(store.glob("pack-*.pickle"))


def test_an_entry_others_could_change_is_not_used(store, tmp_path, monkeypatch):
    packs = tmp_path / "packs"
    write(packs, "base-1", BASE)
    rulepack.load_document("base-1", search=[packs])
    (entry,) = store.glob("pack-*.pickle")
    entry.chmod(0o666)
    _fresh(monkeypatch)
    assert cache.get("pack", ("x",)) is None
    calls = []
    real = layering.read
    monkeypatch.setattr(layering, "read", lambda *a, **k: calls.append(1) or real(*a, **k))
    rulepack.load_document("base-1", search=[packs])
    assert calls == [1]


def test_a_broken_or_foreign_entry_is_not_used(store, tmp_path, monkeypatch):
    packs = tmp_path / "packs"
    write(packs, "base-1", BASE)
    first = rulepack.load_document("base-1", search=[packs])
    (entry,) = store.glob("pack-*.pickle")
    for content in (entry.read_bytes()[:100], pickle.dumps(("other code", [], None))):
        entry.write_bytes(content)
        _fresh(monkeypatch)
        _same(rulepack.load_document("base-1", search=[packs]), first)


def test_a_cache_folder_that_is_a_file_only_costs_time(store, tmp_path, monkeypatch):
    # nothing can be written beneath a file, whoever runs the test
    store.write_text("not a folder", encoding="utf-8")
    packs = tmp_path / "packs"
    write(packs, "base-1", BASE)
    assert rulepack.load_pack("base-1", search=[packs]).id == "base-1"
    assert store.read_text(encoding="utf-8") == "not a folder"


def test_the_cache_can_be_turned_off(store, tmp_path, monkeypatch):
    monkeypatch.setenv("AIRGATE_NO_CACHE", "1")
    packs = tmp_path / "packs"
    write(packs, "base-1", BASE)
    assert rulepack.load_pack("base-1", search=[packs]).id == "base-1"
    assert not store.exists()


def test_a_kept_data_table_is_the_table_read(store, monkeypatch):
    datatables.data_table.cache_clear()
    try:
        read = datatables.data_table("occupant-co2-generation")
        datatables.data_table.cache_clear()
        monkeypatch.setattr(datatables, "_read", lambda *a: pytest.fail("read again"))
        assert datatables.data_table("occupant-co2-generation") == read
    finally:
        datatables.data_table.cache_clear()
