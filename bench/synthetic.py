"""Synthetic portfolios for the benchmarks (invented data; not a test, not shipped).

Two generators, shared by every benchmark in this folder:

- ``demo_portfolio(n)``: the invented demo building (fixtures/demo/fernhollow-civic-centre.yaml:
  17 zones on 4 systems, with occupancy profiles, an aerosol contaminant, a filter, an air
  cleaner and an exhaust fan) repeated with renamed systems and zones until it holds at least ``n`` zones. One zone
  of each copy fails on purpose, so every copy of its multiple-zone system fails.
- ``vav_portfolio(n)``: a district of multiple-zone VAV air handlers, ``per_system`` zones each
  (50 by default), the zones drawn from a few office and school space types with invented areas,
  occupants and minimum primary airflows from a seeded generator; about one system in forty is
  short of outdoor air. Without heights (no dilution analysis) unless ``heights=True``.

``write(doc, path)`` writes a schedule as JSON (``.json``) or YAML (``.yaml``, with PyYAML's C
emitter when it has one).
"""

from __future__ import annotations

import copy
import json
import random
from pathlib import Path

import yaml

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo" / "fernhollow-civic-centre.yaml"

#: (space type of ashrae-62.1-2019, share of zones, area range ft², default occupant density
#: per 1000 ft² used to invent a population) — invented mixes, for benchmarking only
SPACES = (
    ("office-space", 0.45, (150, 4000), 5),
    ("conference-meeting", 0.12, (150, 900), 50),
    ("classrooms-age-9-plus", 0.15, (600, 1100), 35),
    ("corridors", 0.10, (300, 2500), 0),
    ("reception-areas", 0.06, (200, 900), 30),
    ("office-breakrooms", 0.06, (150, 600), 50),
    ("occupiable-storage-rooms-for-dry-materials", 0.06, (100, 800), 2),
)


def demo_portfolio(n_zones: int) -> dict:
    """The demo schedule repeated until it has at least n_zones zones (ids made unique)."""
    doc = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    base, systems, count, copy_no = doc["systems"], [], 0, 0
    while count < n_zones:
        for system in base:
            s = copy.deepcopy(system)
            s["id"] = f"{system['id']}-{copy_no}"
            for zone in s["zones"]:
                zone["id"] = f"{zone['id']}-{copy_no}"
                makeup = (zone.get("exhaust") or {}).get("makeup")
                if isinstance(makeup, dict):  # transferred from a zone of the same copy
                    makeup["transfer_from"] = f"{makeup['transfer_from']}-{copy_no}"
            count += len(s["zones"])
            systems.append(s)
        copy_no += 1
    doc["systems"] = systems
    doc["project"]["name"] = f"Quillby Bay civic portfolio, {count} zones (invented)"
    return doc


def _zone(rng: random.Random, sid: str, k: int, heights: bool) -> dict:
    r = rng.random()
    for space, share, (lo, hi), density in SPACES:
        r -= share
        if r <= 0:
            break
    area = rng.randrange(lo, hi, 10)
    zone = {"id": f"{sid}-{k:02d}", "space": space, "area": f"{area} ft2"}
    if density and rng.random() < 0.7:
        zone["occupants"] = max(1, round(area * density / 1000 * rng.uniform(0.6, 1.1)))
    if heights:
        zone["height"] = f"{rng.choice((9, 9, 10, 12))} ft"
    zone["air_distribution"] = "ceiling-supply-cool"
    # minimum primary airflow: 0.4–1.2 cfm/ft², at least 100 cfm (invented)
    zone["primary_airflow"] = f"{max(100, round(area * rng.uniform(0.4, 1.2), -1)):g} cfm"
    return zone


def vav_portfolio(n_zones: int, per_system: int = 50, heights: bool = False,
                  seed: int = 18) -> dict:
    """A portfolio of multiple-zone VAV systems of ``per_system`` zones, at least n_zones zones."""
    rng = random.Random(seed)
    systems = []
    for s in range(-(-n_zones // per_system)):
        sid = f"AHU-{s + 1:05d}"
        zones = [_zone(rng, sid, k + 1, heights) for k in range(per_system)]
        area = sum(float(z["area"].split()[0]) for z in zones)
        # intake sized at about 0.17 cfm/ft² (invented): most systems pass, a few fall short
        oa = round(area * (0.12 if s % 40 == 39 else rng.uniform(0.16, 0.22)), -1)
        systems.append({"id": sid, "name": f"Air handler {s + 1} (invented)",
                        "kind": "multiple-zone", "outdoor_air": f"{oa:g} cfm",
                        "ventilation_efficiency": "detailed", "zones": zones})
    return {"schedule": 1,
            "project": {"name": f"Quillby Bay school district, {n_zones} zones (invented)",
                        "owner": "Quillby Bay Unified (fictional)",
                        "location": "Quillby Bay (fictional jurisdiction)", "units": "IP"},
            "rules": "ashrae-62.1-2019", "systems": systems}


def write(doc: dict, path: Path) -> Path:
    """Write ``doc`` as JSON or YAML, by the suffix of ``path``; return the path."""
    path = Path(path)
    if path.suffix == ".json":
        path.write_text(json.dumps(doc, indent=1), encoding="utf-8")
    else:
        dumper = getattr(yaml, "CSafeDumper", yaml.SafeDumper)
        path.write_text(yaml.dump(doc, Dumper=dumper, sort_keys=False), encoding="utf-8")
    return path


def count_zones(doc: dict) -> int:
    """The number of zones of a schedule document."""
    return sum(len(s["zones"]) for s in doc["systems"])
