"""``airgate.sweep``: a grid of intakes × zone primary airflows of one system (docs/api.md).

The grid is checked two ways: against the multiple-zone equations of ANSI/ASHRAE 62.1-2019
(Section 6.2.5, Normative Appendix A) written out here by hand, with the Table 6-1 rates of
office space (5 cfm/person, 0.06 cfm/ft²; the pack's values, entered from memory) and Ez = 1.0
(Table 6-4, ceiling supply of cool air); and, as a property, cell by cell against the full
evaluation of the schedule with that intake and those airflows written into it.
"""

from __future__ import annotations

import copy

import numpy as np
import pytest
import yaml

import airgate
from airgate.evaluation.sweep import Sweep

from conftest import DEMO, schedule

#: the checks a variant decides (airgate.evaluation.sweep)
DECIDED = {"system-intake", "zone-primary-airflow", "ventilation-efficiency-positive",
           "simplified-vav-minimum"}


def _two_offices(method: str = "detailed", **system) -> dict:
    zone = {"space": "office-space", "air_distribution": "ceiling-supply-cool"}
    return schedule([{
        "id": "AHU-1", "kind": "multiple-zone", "outdoor_air": "300 cfm",
        "ventilation_efficiency": method, **system,
        "zones": [{"id": "A", "area": "1000 ft2", "occupants": 10, "primary_airflow": "400 cfm",
                   **zone},
                  {"id": "B", "area": "2000 ft2", "occupants": 10, "primary_airflow": "900 cfm",
                   **zone}]}])


def _write(tmp_path, doc: dict, name: str = "s.yaml"):
    path = tmp_path / name
    path.write_text(yaml.safe_dump(doc, sort_keys=False), encoding="utf-8")
    return path


def test_grid_follows_the_multiple_zone_equations(tmp_path):
    oa = np.array([250.0, 280.0, 320.0])
    vpz_a = np.array([150.0, 200.0, 400.0, 800.0])
    got = airgate.sweep(_write(tmp_path, _two_offices()), system="AHU-1", outdoor_air=oa,
                        primary_airflow={"A": vpz_a})
    # 62.1-2019 Eq. 6-1, 6-2: Vbz = Rp·Pz + Ra·Az, Voz = Vbz / Ez (Ez = 1)
    voz_a, voz_b = 5 * 10 + 0.06 * 1000, 5 * 10 + 0.06 * 2000  # 110, 170 cfm
    vou = 5 * 20 + 0.06 * 3000  # D = 1: 280 cfm (Section 6.2.5.1)
    vps = vpz_a + 900.0  # ΣVpz: no supply airflow stated
    xs = vou / vps  # Appendix A: Xs = Vou / Vps
    evz_a = 1 + xs - voz_a / vpz_a  # Evz = 1 + Xs − Zpz, Zpz = Voz / Vpz
    evz_b = 1 + xs - voz_b / 900.0
    ev = np.minimum(evz_a, evz_b)
    vot = vou / ev  # Section 6.2.5.4: Vot = Vou / Ev
    assert got.vot.shape == got.passes.shape == (3, 4)
    np.testing.assert_allclose(got.vot, np.broadcast_to(vot, (3, 4)), rtol=1e-12)
    np.testing.assert_allclose(got.ev[0], ev, rtol=1e-12)
    # Vpz = 150 cfm is above Voz = 110, so only the intake decides here
    np.testing.assert_array_equal(got.passes, oa[:, None] >= vot[None, :] * (1 - 1e-9))
    assert got.units == "IP" and got.report.verdict in ("pass", "fail")
    np.testing.assert_array_equal(got.primary_airflow["A"], vpz_a)


def test_a_zone_below_its_outdoor_air_fails_every_intake(tmp_path):
    got = airgate.sweep(_write(tmp_path, _two_offices()), system="AHU-1",
                        outdoor_air=[10000.0], primary_airflow={"A": [100.0, 110.0]})
    # Voz of zone A is 110 cfm (5·10 + 0.06·1000): 100 cfm of primary air is short of it
    assert got.passes.tolist() == [[False, True]]


def _engine(tmp_path, doc: dict, system: str, oa: float, vpz: dict[str, float], n: int,
            condition: str | None = None):
    """Vot and whether the decided checks pass, from a full evaluation of the variant (at
    ``condition`` of a system that lists design conditions)."""
    d = copy.deepcopy(doc)
    s = next(s for s in d["systems"] if s["id"] == system)
    s["outdoor_air"] = f"{oa} cfm"
    for z in s["zones"]:
        if z["id"] in vpz:
            if isinstance(z.get("primary_airflow"), dict):
                z["primary_airflow"][condition] = f"{vpz[z['id']]} cfm"
            else:
                z["primary_airflow"] = f"{vpz[z['id']]} cfm"
    report = airgate.check(_write(tmp_path, d, f"v{n}.yaml"))
    result = next(r for r in report.systems if r.id == system)
    trail = (next(c for c in result.conditions if c.id == condition).trail if condition
             else result.trail)
    failed = any(f.system == system and f.rule in DECIDED and f.severity == "fail"
                 and f.condition in (None, condition) for f in report.findings)
    return trail.value("Vot"), not failed


@pytest.mark.parametrize("case", ["demo", "simplified-vav", "secondary"])
def test_every_cell_is_the_evaluation_of_that_variant(tmp_path, case):
    from airgate import units

    if case == "demo":
        doc, system = yaml.safe_load(DEMO.read_text(encoding="utf-8")), "AHU-3"
        zones = {"203": [200.0, 300.0, 520.0], "208": [250.0, 300.0, 400.0]}
        oa = [1800.0, 2000.0, 2300.0, 2600.0, 3000.0]
    elif case == "simplified-vav":
        doc, system = _two_offices("simplified", variable_air_volume=True), "AHU-1"
        zones, oa = {"A": [60.0, 150.0, 500.0]}, [250.0, 300.0, 400.0]
    else:
        doc, system = _two_offices(), "AHU-1"
        doc["systems"][0]["zones"][1].update(ep=0.6, er=0.5)
        zones, oa = {"A": [120.0, 200.0], "B": [300.0, 900.0]}, [300.0, 350.0, 500.0]
    got = airgate.sweep(_write(tmp_path, doc, "base.yaml"), system=system, outdoor_air=oa,
                        primary_airflow=zones)
    assert got.condition == ("heating" if case == "demo" else None)  # the governing one
    n = 0
    for i, intake in enumerate(oa):
        for j in range(len(next(iter(zones.values())))):
            n += 1
            vot, passes = _engine(tmp_path, doc, system, intake,
                                  {k: v[j] for k, v in zones.items()}, n, got.condition)
            assert got.vot[i, j] == pytest.approx(units.to_display(vot, "airflow", "IP"),
                                                  rel=1e-12)
            assert bool(got.passes[i, j]) is passes, (intake, j)
    assert got.passes.any() and not got.passes.all()


def test_a_single_zone_system_sweeps_its_intake(tmp_path):
    from airgate import units

    doc = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    got = airgate.sweep(_write(tmp_path, doc), system="RTU-1", outdoor_air=[500.0, 950.0])
    assert isinstance(got, Sweep) and got.vot.shape == (2, 1)
    rtu = next(r for r in got.report.systems if r.id == "RTU-1")
    assert got.passes[:, 0].tolist() == [500.0 >= got.vot[0, 0], 950.0 >= got.vot[1, 0]]
    # the required intake of a single-zone system is its Voz (62.1-2019 Section 6.2.3), in cfm
    assert got.vot[:, 0].tolist() == [units.to_display(rtu.trail.value("Voz"), "airflow", "IP")] * 2


def test_a_named_design_condition_is_swept(tmp_path):
    from airgate import units

    doc = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    got = airgate.sweep(_write(tmp_path, doc), system="AHU-3", outdoor_air=[1900.0],
                        primary_airflow={"203": [600.0]}, condition="cooling")
    vot, passes = _engine(tmp_path, doc, "AHU-3", 1900.0, {"203": 600.0}, 1, "cooling")
    assert got.condition == "cooling" and bool(got.passes[0, 0]) is passes
    assert got.vot[0, 0] == pytest.approx(units.to_display(vot, "airflow", "IP"), rel=1e-12)


@pytest.mark.parametrize("kw, message", [
    ({"system": "AHU-9", "outdoor_air": [1.0]}, "no system 'AHU-9'"),
    ({"system": "AHU-3", "outdoor_air": [1.0], "primary_airflow": {"999": [1.0]}},
     "serves no zone 999"),
    ({"system": "AHU-3", "outdoor_air": [1.0],
      "primary_airflow": {"203": [1.0, 2.0], "204": [1.0]}}, "same length"),
    ({"system": "AHU-3", "outdoor_air": [[1.0]]}, "one-dimensional"),
    ({"system": "AHU-3", "outdoor_air": [-1.0]}, "0 or more"),
    ({"system": "RTU-1", "outdoor_air": [1.0], "primary_airflow": {"101": [1.0]}},
     "no zone primary airflows"),
    ({"system": "AHU-3", "outdoor_air": [1.0], "condition": "summer"},
     "no design condition 'summer'"),
    ({"system": "RTU-1", "outdoor_air": [1.0], "condition": "heating"},
     "lists no design conditions"),
])
def test_bad_arguments_are_named(kw, message):
    loaded = airgate.load_schedule(DEMO)
    with pytest.raises(ValueError, match=message):
        airgate.sweep(loaded, **kw)
