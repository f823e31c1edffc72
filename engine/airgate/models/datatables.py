"""Physical data tables (e.g. occupant CO2 generation, filter efficiency by MERV), as loaded.

The files live under ``rules/data/`` and are read and validated by
:mod:`airgate.readers.datatables`; the evaluation receives them as a :data:`Tables` mapping
(table id → :class:`DataTable`) and never reads a file itself.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass


@dataclass(frozen=True)
class DataRow:
    id: str
    label: str
    value: float | None  #: in the table's ``units`` (single-valued tables)
    provenance: str
    notes: str = ""
    values: dict[str, float] | None = None  #: several values per row (e.g. by size range)


@dataclass(frozen=True)
class DataTable:
    id: str
    title: str
    #: the unit of the values: for a table of a known kind (CO2 generation) the internal unit
    #: it was converted to when read (``L/s/person``), else as the file declares it
    units: str
    citation: str
    default: str
    rows: dict[str, DataRow]
    #: temperature at which the table's volume rates are given [°C]; None: not a volume rate
    reference_temperature: float | None = None

    def cite(self, row_id: str) -> str:
        row = self.rows[row_id]
        return f"{self.citation}, '{row.label}' ({row.provenance})"


#: table id → table; the evaluation looks tables up by id (e.g. ``"occupant-co2-generation"``)
Tables = Mapping[str, DataTable]
