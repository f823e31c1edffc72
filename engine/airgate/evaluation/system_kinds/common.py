"""A system kind: how the engine evaluates one kind of air system, and what it asks of it."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import Any

from airgate.errors import AirgateError


def _no_inputs(loaded: Any, pack: Any, i: int) -> list[AirgateError]:
    return []


def _no_zone_air(system: Any, zone: Any) -> tuple[float, str] | None:
    return None


def _no_checks(*args: Any) -> Iterator[tuple]:
    return iter(())


@dataclass(frozen=True)
class SystemKind:
    """One kind of air system (``systems[].kind`` of a schedule).

    ``evaluate(system, ctxs, zones, result, pack, emitter, where, locate)`` adds the system's
    trail (at least ``Vot`` and ``Vot_design``) and its findings; the zones are evaluated before.
    """

    name: str
    evaluate: Callable[..., None]
    #: input errors found before anything is evaluated: ``(loaded, pack, i) → [errors]``
    check_inputs: Callable[[Any, Any, int], list[AirgateError]] = _no_inputs
    #: optional schedule fields the kind uses (a stated field it does not use gets a note)
    system_fields: frozenset[str] = frozenset()
    zone_fields: frozenset[str] = frozenset()
    #: the zones share recirculated air: CO2 and contaminants are solved for them together
    coupled: bool = False
    #: outdoor air the schedule gives a zone itself, with what it is: ``(system, zone) →
    #: (airflow [L/s], note)`` or None (the zone gets a share of the system's intake)
    zone_outdoor_air: Callable[[Any, Any], tuple[float, str] | None] = _no_zone_air
    #: coverage (which checks applied, passes included) beyond the checks of every kind:
    #: ``(system, result)`` and ``(system, zone_result, result, pack)`` → (rule, field path,
    #: required, provided)
    system_checks: Callable[..., Iterator[tuple]] = _no_checks
    zone_checks: Callable[..., Iterator[tuple]] = _no_checks
    summary: str = ""
    #: the kind has a scheduled mechanical intake (``Vot``, ``Vot_design`` in its trail, CO2 and
    #: contaminant balances on it); False: no intake, no balance (natural ventilation)
    intake: bool = True
    #: supplies air to its zones: False for an exhaust fan, whose zones are only exhausted (no
    #: category, Ez, intake, dilution or requirements)
    supplies: bool = True
    #: the system field its findings point at when they concern the system as a whole
    located_field: str = "outdoor_air"
