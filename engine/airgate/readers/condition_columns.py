"""Design conditions in import headers and field names: ``Primary airflow @heating [cfm]`` in a
CSV or XLSX header, ``airgate.primary_airflow@heating: 950 cfm`` in a gbXML description, an
``Airgate_*`` property named ``primary_airflow@heating`` in an IFC model.

Only the fields a system or zone may give per design condition (``SYSTEM_CONDITION_FIELDS``,
``ZONE_CONDITION_FIELDS`` of the schedule model) take a condition; a plain value applies to every
condition. The columns themselves and how a cell becomes a value are in :mod:`.fields`.
"""

from __future__ import annotations

from pydantic import BaseModel

from airgate.readers.fields import (
    UNIT_TEXT,
    CellError,
    Column,
    column_for,
    find_column,
    header_unit,
    header_unit_text,
    split_header,
)

#: the mark between a field and a design condition in a header or an annotation
#: (``Primary airflow @heating``, ``airgate.primary_airflow@heating: 950 cfm``)
CONDITION_MARK = "@"


def split_condition(name: str) -> tuple[str, str | None]:
    """A column or field name and the design condition it names: ``Primary airflow @heating``
    → ``('Primary airflow', 'heating')``, ``Area`` → ``('Area', None)``."""
    base, mark, condition = name.partition(CONDITION_MARK)
    if not mark:
        return name, None
    base, condition = base.strip(), condition.strip()
    if not base or not condition:
        raise CellError(f"{name.strip()!r} does not name a field and a design condition",
                        hint="write the field, @ and the condition id, e.g. "
                             "'Primary airflow @heating'")
    return base, condition


def _condition_fields() -> dict[str, tuple[str, ...]]:
    from airgate.models.schedule import SYSTEM_CONDITION_FIELDS, ZONE_CONDITION_FIELDS

    return {"system": SYSTEM_CONDITION_FIELDS, "zone": ZONE_CONDITION_FIELDS}


#: level → the fields a system or zone may give per design condition
CONDITION_FIELDS = _condition_fields()
#: table → the level of its rows, for the tables whose fields may be given per condition
TABLE_LEVELS = {"systems": "system", "zones": "zone"}


def per_condition(col: Column, level: str | None) -> None:
    """CellError unless ``col``'s field may be given per design condition at ``level``."""
    fields = CONDITION_FIELDS.get(level or "", ())
    if col.field in fields:
        return
    where = {"system": "a system", "zone": "a zone"}.get(level or "")
    raise CellError(f"'{col.header}' cannot be given per design condition" + (
        f"; the fields of {where} that can: {', '.join(fields)}" if where else
        "; only fields of systems and zones can"),
        hint="remove '@…' from the name: a plain value applies to every condition")


def header_label(column: Column, system: str, condition: str | None = None) -> str:
    """The header airgate writes for ``column`` (at ``condition``): ``Primary airflow @heating
    [cfm]``."""
    unit = header_unit_text(column, system)
    name = column.header if condition is None else f"{column.header} {CONDITION_MARK}{condition}"
    return f"{name} [{unit}]" if unit else name


def match_header(text: str, columns: tuple[Column, ...], model: type[BaseModel] | None = None,
                 skip: tuple[str, ...] = (), level: str | None = None
                 ) -> tuple[Column, str | None, str | None]:
    """The column a header names, the unit in its brackets and the design condition after
    ``@`` (``Primary airflow @heating [cfm]``); CellError when unknown, or when the column's
    field cannot be given per condition at ``level`` (``system``, ``zone``)."""
    name, unit_text = split_header(text)
    name, condition = split_condition(name)
    col = find_column(name, columns, model, skip)
    if condition is not None:
        per_condition(col, level)
    try:
        unit = header_unit(col, unit_text)
    except CellError as exc:
        fields = CONDITION_FIELDS.get(level or "", ())
        if condition is None and col.field in fields and unit_text is not None:
            exc.hint = (f"{exc.hint}; a value per design condition is written "
                        f"'{col.header} @{unit_text.strip()}'" + (
                            f" (with its unit: '{col.header} @{unit_text.strip()} "
                            f"[{UNIT_TEXT[col.unit][0]}]')" if col.kind == "quantity" else ""))
        raise
    return col, unit, condition


def column_at(name: str, level: str) -> tuple[Column, str | None]:
    """The column and design condition of an annotation or property named ``FIELD`` or
    ``FIELD@CONDITION`` at ``level``; CellError when unknown or not per condition."""
    field, condition = split_condition(name)
    col = column_for(field, level)
    if condition is not None:
        per_condition(col, level)
    return col, condition
