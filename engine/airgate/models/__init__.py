"""Validated, typed models: the schedule a user wrote and the rule pack it is checked against.

Every numeric field holds a plain float in airgate's internal units (see :mod:`airgate.units`).
"""
