"""Schedule fields that the system kind does not use: said in the report, never silently dropped."""

from __future__ import annotations

from airgate.errors import format_path
from airgate.evaluation.system_kinds import SYSTEM_KINDS, kind_of
from airgate.models.schedule import Schedule, System, Zone


def _used(fields, model) -> list[str]:
    """The fields some kind uses, in the order the schedule model declares them."""
    used = set().union(*fields)
    return [name for name in model.model_fields if name in used]


def unused_fields(schedule: Schedule, locate) -> list[str]:
    """One note per stated field that the evaluation of its system kind ignores (the fields
    each kind uses: :data:`airgate.evaluation.system_kinds.SYSTEM_KINDS`)."""
    system_fields = _used((k.system_fields for k in SYSTEM_KINDS.values()), System)
    zone_fields = _used((k.zone_fields for k in SYSTEM_KINDS.values()), Zone)
    notes = []
    for i, system in enumerate(schedule.systems):
        kind = kind_of(system)
        for name in system_fields:
            if getattr(system, name) is not None and name not in kind.system_fields:
                notes.append(_note(("systems", i, name), system.kind, locate))
        for j, zone in enumerate(system.zones):
            for name in zone_fields:
                if getattr(zone, name) is not None and name not in kind.zone_fields:
                    notes.append(_note(("systems", i, "zones", j, name), system.kind, locate))
    return notes


def _note(path: tuple, kind: str, locate) -> str:
    return (f"{format_path(path)} ({locate(path)}) is not used for a {kind} system and was "
            "ignored")
