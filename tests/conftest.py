"""Shared helpers: build small schedules in a temporary folder and evaluate them."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
import yaml

from airgate import check

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo" / "fernhollow-civic-centre.yaml"

#: exact factor, 1 cfm = 0.3048³ m³ / 60 s (NIST SP 811; common practice)
CFM = 0.3048**3 * 1000 / 60
FT2 = 0.3048**2


def subprocess_env(**extra: str) -> dict[str, str]:
    """The environment for ``python -m airgate`` in a subprocess, from any working folder: the
    folder this ``airgate`` was imported from leads PYTHONPATH (a relative PYTHONPATH such as
    ``engine`` would not hold in another folder)."""
    import airgate

    here = str(Path(airgate.__file__).resolve().parents[1])
    path = os.pathsep.join([here, *filter(None, [os.environ.get("PYTHONPATH")])])
    return {**os.environ, "PYTHONPATH": path, **extra}


def schedule(systems: list[dict], units: str = "IP", rules: str = "ashrae-62.1-2019") -> dict:
    return {"schedule": 1, "project": {"name": "Test building (invented)", "units": units},
            "rules": rules, "systems": systems}


@pytest.fixture
def evaluate(tmp_path: Path):
    """Write a schedule dict to a file and evaluate it; returns the Report."""
    counter = {"n": 0}

    def run(data: dict, rules: str | None = None):
        counter["n"] += 1
        path = tmp_path / f"schedule-{counter['n']}.yaml"
        path.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
        return check(path, rules)

    return run
