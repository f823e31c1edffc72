"""The system kinds the engine evaluates: one module per kind, registered here.

A schedule's ``systems[].kind`` must be one of these names (the schedule model holds the same
list, :data:`airgate.models.schedule.SYSTEM_KINDS`; ``tests/test_registries.py`` keeps them
equal). The engine looks the kind up here for everything that depends on it — the procedure, the
input checks, the fields it uses, how outdoor air reaches a zone, whether zones are coupled — and
never compares a kind's name itself.
"""

from __future__ import annotations

from airgate.evaluation.system_kinds import (
    exhaust,
    multiple_zone,
    natural,
    outdoor_air,
    single_zone,
)
from airgate.evaluation.system_kinds.common import SystemKind

SYSTEM_KINDS: dict[str, SystemKind] = {
    single_zone.KIND.name: single_zone.KIND,
    outdoor_air.KIND.name: outdoor_air.KIND,
    multiple_zone.KIND.name: multiple_zone.KIND,
    natural.KIND.name: natural.KIND,
    exhaust.KIND.name: exhaust.KIND,
}


def kind_of(system) -> SystemKind:
    """The registered kind of ``system``; a name the registry lacks is a bug, not a fall-through
    (the schedule model admits only registered names)."""
    found = SYSTEM_KINDS.get(system.kind)
    if found is None:
        raise LookupError(f"system kind '{system.kind}' has no evaluation registered in "
                          "airgate.evaluation.system_kinds")
    return found
