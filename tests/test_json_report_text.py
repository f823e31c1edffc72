"""The streamed JSON report (zones written from per-shape templates, their values rounded a
batch at a time) is byte for byte the report as it was written before: the report's plain data
(``json_report.to_dict``) dumped by the standard library,
``json.dumps(…, indent=2, ensure_ascii=False, allow_nan=False)`` with a final newline and the
bidirectional controls escaped (``escaping.invisible``, as every JSON report is written).
Portfolios from ``bench/synthetic.py`` (invented data): the district of VAV systems with and
without heights, and the demo building repeated (contaminants, supplement packs, makeup air,
zones without a dilution analysis, design-day series)."""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

import airgate
from airgate.escaping import invisible
from airgate.evaluation.batch import gather
from airgate.writers import json_report, output
from airgate.writers.output import joined

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "bench"))

import synthetic  # noqa: E402

#: zone names that the template must escape as the standard library does (invented)
NAMES = ['Room "A" \\ west', "Salle é ✓ 100%", "line\nbreak\ttab", "\u202eeman desrever",
         "%s %r %%", None]


def _portfolio(kind: str) -> dict:
    if kind == "demo":
        return synthetic.demo_portfolio(40)
    doc = synthetic.vav_portfolio(130, per_system=50, heights=kind == "heights")
    zones = [z for s in doc["systems"] for z in s["zones"]]
    for i, z in enumerate(zones[:len(NAMES) * 3]):
        name = NAMES[i % len(NAMES)]
        if name is None:
            z.pop("name", None)
        else:
            z["name"] = name
    return doc


@pytest.fixture(scope="module", params=["plain", "heights", "demo"])
def report(request, tmp_path_factory):
    path = synthetic.write(_portfolio(request.param),
                           tmp_path_factory.mktemp("portfolio") / "schedule.json")
    loaded = airgate.load_schedule(str(path))
    return airgate.evaluate(loaded, airgate.load_pack(loaded.model.rules))


def _before(data: dict) -> str:
    """The report as the standard library writes its plain data."""
    return invisible(json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False)) + "\n"


@pytest.mark.parametrize("series_step", [0, 30])
def test_streamed_report_is_the_plain_data_dumped(report, series_step):
    text = joined(json_report.chunks(report, series_step))
    assert text == _before(json_report.to_dict(report, series_step))
    assert json_report.render(report, series_step) == text
    assert json.loads(text)["systems"][0]["zones"]  # a report with zones written


def test_the_fixtures_reach_every_part_of_a_zone(report):
    """What the comparison above covers: each portfolio's zones, and the demo's parts."""
    zones = [z for s in json_report.to_dict(report, 30)["systems"] for z in s["zones"]]
    assert len(zones) >= 40
    if report.systems[0].id.startswith("AHU"):  # the district (synthetic.vav_portfolio)
        names = {z["name"] for z in zones}
        assert set(NAMES) <= names
    else:  # the demo building repeated
        assert any(z["contaminants"] for z in zones)
        assert any("packs" in z for z in zones)
        assert any("makeup" in z for z in zones)
        assert any(z["dilution"] is None for z in zones)
        assert any(z["dilution"] and "series" in z["dilution"] for z in zones)


def test_small_batches_and_the_batch_wrapper(report, monkeypatch):
    """Zones made three at a time (batches that split systems), in a run of two schedules."""
    monkeypatch.setattr(output, "_BATCH", 3)
    batch = gather([report, report], [], "fail")
    text = joined(json_report.batch_chunks(batch, 30))
    assert text == _before(json_report._batch_dict(batch, 30))
    assert json_report.render_batch(batch, 30) == text


def test_zone_trails_are_written_as_before(report):
    """With every zone's trails (``--trails``) the zones are written from their dictionaries."""
    text = joined(json_report.chunks(report, 0, trails=True))
    assert text == _before(json_report.to_dict(report, 0, trails=True))


def test_a_zone_with_contaminants_named_otherwise_is_written_from_its_dictionary(report):
    """A contaminant keyed by something other than a plain string: the zone falls back to its
    dictionary, which the standard library writes with the key as text."""
    zone = next(z for s in report.systems for z in s.zones if not z.contaminants)
    trail = zone.trail
    zone.contaminants = {**zone.contaminants, 7: trail}
    try:
        text = joined(json_report.chunks(report, 0))
        assert text == _before(json_report.to_dict(report, 0))
        assert '"7": {' in text
    finally:
        zone.contaminants = {k: v for k, v in zone.contaminants.items() if k != 7}


@pytest.mark.parametrize("count", [0, 1, 64, 65, 130])
def test_a_lazy_list_with_its_own_encoder_is_the_list_dumped(count):
    """output.Lazy(items, encode): the items' texts come from ``encode`` a batch at a time,
    at the indentation of the list's items; the whole is the standard library's dump."""
    items = [{"n": i, "name": f"zone {i} é", "v": [i / 7, None]} for i in range(count)]
    batches = []

    def encode(batch, level):
        batches.append(len(batch))
        return [json.dumps(item, indent=2, ensure_ascii=False).replace("\n", "\n" + "  " * level)
                for item in batch]

    data = output.Streamed(head=1, zones=output.Lazy(iter(items), encode),
                           inner=output.Streamed(more=output.Lazy(iter(items[:3]), encode)))
    plain = {"head": 1, "zones": items, "inner": {"more": items[:3]}}
    assert joined(output.json_chunks(data)) == _before(plain)
    assert all(size <= output._BATCH for size in batches)
