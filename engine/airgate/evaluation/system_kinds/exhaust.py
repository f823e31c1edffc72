"""``exhaust``: an exhaust fan (or exhaust system) and the zones it exhausts.

Its zones are not supplied by it: each states the exhaust row that applies and the airflow
scheduled from it (ANSI/ASHRAE 62.1-2019 Section 6.5), checked zone by zone (``zone-exhaust``).
The fan's scheduled airflow, where given, must carry what its zones are scheduled to exhaust:
``V_fan ≥ ΣVe_design`` [L/s] (check ``exhaust-fan-airflow``).
"""

from __future__ import annotations

from collections.abc import Iterator

from airgate.errors import AirgateError
from airgate.evaluation.checks import Emitter
from airgate.evaluation.findings import Amount, Location
from airgate.evaluation.report import SystemResult, ZoneResult
from airgate.evaluation.system_kinds.common import SystemKind
from airgate.models.rules import RulePack
from airgate.models.schedule import System

#: schedule fields that describe supply air: a zone or system of an exhaust fan has none
SUPPLY_ZONE_FIELDS = ("space", "occupants", "bedrooms", "air_distribution", "ez", "ez_basis",
                      "primary_airflow", "ep", "er", "outdoor_air", "profile", "activity",
                      "co2_generation")
SUPPLY_SYSTEM_FIELDS = ("outdoor_air", "supply_airflow", "population", "ventilation_efficiency",
                        "filter", "recirculates", "conditions")


def exhaust_fan(system: System, ctxs: list, zones: list[ZoneResult], result: SystemResult,
                pack: RulePack, emitter: Emitter, where: Location, locate=None) -> None:
    """The sums over the fan's zones and the fan airflow check.

    ``ΣVe`` [L/s]: the zones' minimum exhaust; ``ΣVe_design`` [L/s]: what the zones are
    scheduled to exhaust; ``V_fan`` [L/s]: the fan's scheduled airflow, ≥ ΣVe_design.
    """
    trail = result.trail
    # the sum draws on the rows of every zone: it cites the table, each zone's Ve its row
    cite = "; ".join(dict.fromkeys(pack.exhaust[z.exhaust].source.cite() for z in zones))
    trail.add("ΣVe", sum(z.trail.value("Ve") for z in zones), "airflow",
              note="sum of the zones' minimum exhaust airflows", source=cite)
    total = trail.add("ΣVe_design", sum(z.trail.value("Ve_design") for z in zones), "airflow",
                      note="sum of the zones' scheduled exhaust airflows")
    if system.airflow is None:
        return
    fan = trail.add("V_fan", system.airflow, "airflow", origin="schedule", source=where,
                    note="the fan's scheduled airflow")
    emitter.compare("exhaust-fan-airflow", system.id, "exhaust fan airflow against the "
                    "exhaust its zones schedule (ΣVe_design)", total, fan, "airflow", where,
                    system=system.id, advice="raise the fan's airflow or rebalance its zones")


def check_inputs(loaded, pack, i: int) -> list[AirgateError]:
    """Fields that describe supply air are refused on an exhaust fan and its zones (a zone an
    air system supplies belongs under that system, where it may carry ``exhaust`` too)."""
    system = loaded.model.systems[i]
    errors = []
    for name in SUPPLY_SYSTEM_FIELDS:
        if getattr(system, name) is not None:
            errors.append(loaded.error(
                f"'{name}' describes supply air; exhaust fan '{system.id}' only exhausts",
                ("systems", i, name), hint=f"remove {name}, or describe the supply under the "
                                           "air system that supplies these zones"))
    for j, zone in enumerate(system.zones):
        stated = [n for n in SUPPLY_ZONE_FIELDS if getattr(zone, n) is not None]
        stated += ["air_cleaners"] if zone.air_cleaners else []
        for name in stated:
            errors.append(loaded.error(
                f"'{name}' describes supply air; zone '{zone.id}' is only exhausted by exhaust "
                f"fan '{system.id}'", ("systems", i, "zones", j, name),
                hint="put a supplied zone under its air system (it may carry exhaust there), "
                     "or remove the field"))
    return errors


def _fan_checks(system: System, result: SystemResult) -> Iterator[tuple]:
    t = result.trail
    if "V_fan" in t:
        yield ("exhaust-fan-airflow", ("airflow",), Amount(t.value("ΣVe_design"), "airflow"),
               Amount(t.value("V_fan"), "airflow"))


KIND = SystemKind(
    name="exhaust", evaluate=exhaust_fan, check_inputs=check_inputs,
    system_fields=frozenset({"airflow"}), system_checks=_fan_checks, supplies=False, intake=False,
    located_field="airflow",
    summary="an exhaust fan: each zone's exhaust against its row, the fan against its zones")
