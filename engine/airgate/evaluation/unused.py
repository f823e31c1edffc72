"""Schedule fields that the system kind does not use: said in the report, never silently dropped."""

from __future__ import annotations

from airgate.errors import format_path
from airgate.models.schedule import Schedule

#: field → the system kinds that use it
_SYSTEM_FIELDS = {
    "population": {"multiple-zone"},
    "ventilation_efficiency": {"multiple-zone"},
    "supply_airflow": {"multiple-zone", "single-zone"},
}
_ZONE_FIELDS = {
    "primary_airflow": {"multiple-zone"},
    "ep": {"multiple-zone"},
    "er": {"multiple-zone"},
    "outdoor_air": {"outdoor-air"},
}


def unused_fields(schedule: Schedule, locate) -> list[str]:
    """One note per stated field that the evaluation of its system kind ignores."""
    notes = []
    for i, system in enumerate(schedule.systems):
        for name, kinds in _SYSTEM_FIELDS.items():
            if getattr(system, name) is not None and system.kind not in kinds:
                notes.append(_note(("systems", i, name), system.kind, locate))
        for j, zone in enumerate(system.zones):
            for name, kinds in _ZONE_FIELDS.items():
                if getattr(zone, name) is not None and system.kind not in kinds:
                    notes.append(_note(("systems", i, "zones", j, name), system.kind, locate))
    return notes


def _note(path: tuple, kind: str, locate) -> str:
    return (f"{format_path(path)} ({locate(path)}) is not used for a {kind} system and was "
            "ignored")
