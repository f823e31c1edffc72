"""How the engine evaluates each requirement kind: one module per kind, registered here.

The kinds a pack may write, with their parameters, are
:data:`airgate.models.requirements.KINDS`; this registry gives each the code that evaluates it
(``evaluate``, and ``adjust`` for kinds that change the calculation). The two hold the same
names (``tests/test_registries.py``); a kind missing here is an internal error, never another
kind's evaluation. Modifying kinds adjust a zone in the order registered here (an Ez cap first,
so that ``larger-of`` compares figures at the capped Ez).
"""

from __future__ import annotations

from airgate.evaluation.requirement_kinds import (
    air_class_limit,
    clean_airflow,
    density_limit,
    ez_cap,
    formula,
    larger_of,
    minimum_filter,
)
from airgate.evaluation.requirement_kinds.common import Behaviour

EVALUATORS: dict[str, Behaviour] = {
    "ez-cap": ez_cap.BEHAVIOUR,
    "larger-of": larger_of.BEHAVIOUR,
    "density-limit": density_limit.BEHAVIOUR,
    "air-class-limit": air_class_limit.BEHAVIOUR,
    "minimum-filter": minimum_filter.BEHAVIOUR,
    "clean-airflow": clean_airflow.BEHAVIOUR,
    "formula": formula.BEHAVIOUR,
}
