"""airgate: check building ventilation schedules against declarative rule packs.

The public API (``docs/api.md``)::

    import airgate
    report = airgate.check("building.yaml")          # read, load its pack, evaluate
    report.verdict                                   # "pass" | "fail"
    report.to_dict()                                 # the JSON report (contract version 2)

    schedule = airgate.load_schedule("building.yaml")
    pack = airgate.load_pack("ashrae-62.1-2019")
    report = airgate.evaluate(schedule, pack)

Bad input raises :class:`airgate.AirgateError` (file, line, column, field), as the command line
reports it. The names load lazily, so ``import airgate`` stays cheap.

Layers (each only looks down): ``procedures`` (pure math on SI floats/arrays) ← ``models``
(validated schedule and pack) ← ``evaluation`` (findings with calculation trails); ``readers``
turn files into models and ``writers`` turn reports into files, at the edges; ``api`` and
``commands`` on top. DEVELOPERS.md maps the modules.
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

#: public name → module it lives in (imported on first use)
_LAZY = {
    "load_schedule": "airgate.api.core",
    "load_pack": "airgate.api.core",
    "evaluate": "airgate.api.core",
    "check": "airgate.api.core",
    "sweep": "airgate.api.core",
    "load_waivers": "airgate.api.core",
    "load_review": "airgate.api.core",
    "Report": "airgate.api.core",
    "compare": "airgate.api.compare",
    "AirgateError": "airgate.errors",
    "ErrorGroup": "airgate.errors",
}

__all__ = ["__version__", *_LAZY]


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'airgate' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *_LAZY})
