"""Shared helpers: build small schedules in a temporary folder and evaluate them."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, settings

from airgate import check

# Hypothesis profiles: few examples on a developer's machine, more under CI (.ci/run sets
# CI=true); HYPOTHESIS_PROFILE=ci runs the CI amount locally. No deadline: the machines are
# small and shared, and speed is measured in bench/, never asserted in tests.
settings.register_profile("dev", max_examples=20, deadline=None,
                          suppress_health_check=[HealthCheck.too_slow])
settings.register_profile("ci", max_examples=100, deadline=None, print_blob=True,
                          suppress_health_check=[HealthCheck.too_slow])
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE")
                      or ("ci" if os.environ.get("CI") else "dev"))


# The suite keeps its own cache of packs and tables (airgate.cache), away from the user's, and
# removes it when it ends; subprocesses inherit it.
if not os.environ.get("AIRGATE_CACHE_DIR"):
    import atexit
    import shutil
    import tempfile

    os.environ["AIRGATE_CACHE_DIR"] = tempfile.mkdtemp(prefix="airgate-test-cache-")
    atexit.register(shutil.rmtree, os.environ["AIRGATE_CACHE_DIR"], True)


def examples(weight: float = 1.0) -> int:
    """A test's number of examples: ``weight`` times the profile's (at least 5), for tests whose
    examples are much cheaper or dearer than the usual."""
    return max(5, round(settings.default.max_examples * weight))


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


#: the report formats a schedule's findings are checked in, one subprocess each
CLI_FORMATS = ("text", "json", "markdown", "html", "junit", "sarif")


def check_every_format(path: Path, cwd: Path, returncode: int = 1):
    """Run ``airgate check PATH --format F`` for every format of :data:`CLI_FORMATS`; assert
    the exit status and yield ``(format, stdout)``."""
    import subprocess
    import sys

    env = subprocess_env()
    for fmt in CLI_FORMATS:
        out = subprocess.run([sys.executable, "-m", "airgate", "check", str(path), "--format",
                              fmt], capture_output=True, text=True, env=env, cwd=cwd)
        assert out.returncode == returncode, out.stderr
        yield fmt, out.stdout


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
