"""The mass-balance procedures called with their airflows in m³/h.

The procedures take airflow in L/s (airgate.units); the scenarios of tests/test_dilution.py and
tests/test_coupled.py are written in m³/h, the unit room air is usually counted in, and their
outside references (scipy, hand derivations) work in m³/h and hours. ``in_m3h(module)`` wraps a
procedures module so that airflow and generation arguments are given in m³/h (C·m³/h) and the
airflow results come back in m³/h; the factor is pint's (an independent unit library), not the
engine's.
"""

from __future__ import annotations

import inspect

import numpy as np
import pint

#: L/s per m³/h, from pint
LS_PER_M3H = float(pint.UnitRegistry().Quantity(1.0, "m**3/hour").to("L/s").magnitude)

#: arguments that are airflows or generations (C·airflow)
FLOW_ARGUMENTS = {"outdoor_airflow", "recirc_airflow", "cadr", "generation",
                  "generation_per_piece", "primary_airflow", "outdoor_intake", "zone_exhaust"}
#: functions whose result is an airflow (or a dict of airflows)
FLOW_RESULTS = {"loss_breakdown", "equivalent_clean_airflow"}


def _to_m3h(value):
    if isinstance(value, dict):
        return {k: _to_m3h(v) for k, v in value.items()}
    a = np.asarray(value) / LS_PER_M3H
    return float(a) if a.ndim == 0 else a


class in_m3h:  # noqa: N801 - reads as a function at the call site
    def __init__(self, module):
        self._module = module

    def __getattr__(self, name):
        obj = getattr(self._module, name)
        if not inspect.isfunction(obj):
            return obj
        signature = inspect.signature(obj)

        def call(*args, **kwargs):
            bound = signature.bind(*args, **kwargs)
            for arg in bound.arguments:
                if arg in FLOW_ARGUMENTS:
                    bound.arguments[arg] = np.asarray(bound.arguments[arg], dtype=float) * LS_PER_M3H
            result = obj(*bound.args, **bound.kwargs)
            return _to_m3h(result) if name in FLOW_RESULTS else result

        return call
