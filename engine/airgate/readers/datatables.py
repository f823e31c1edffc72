"""Physical data tables under ``rules/data/`` (e.g. occupant CO2 generation), schema-validated.

:data:`BUILTIN` is the :data:`~airgate.models.datatables.Tables` mapping the evaluation is given:
each table is read on first use and kept.
"""

from __future__ import annotations

import json
from collections.abc import Iterator, Mapping
from functools import lru_cache
from pathlib import Path

from airgate import units
from airgate.errors import RulePackError
from airgate import cache
from airgate.models.datatables import DataRow, DataTable
from airgate.readers.document import load
from airgate.readers.rulepack import builtin_rules_dir


@lru_cache(maxsize=8)
def data_table(table_id: str) -> DataTable:
    """Load ``rules/data/<table_id>.yaml`` and validate it against the data-table schema (kept
    in the cache of :mod:`airgate.cache` while neither file changes)."""
    root = builtin_rules_dir()
    files = [root / "data" / f"{table_id}.yaml", root / "schema" / "data-table.schema.json"]
    return cache.cached("table", [str(f) for f in files], lambda: (_read(*files), files))


def _read(path: Path, schema_path: Path) -> DataTable:
    import jsonschema  # imported on use: a table kept in the cache needs none

    table_id = path.stem
    doc = load(path, RulePackError)
    schema = json.loads(schema_path.read_text(encoding="utf-8"))
    error = jsonschema.exceptions.best_match(
        jsonschema.Draft202012Validator(schema).iter_errors(doc.data))
    if error is not None:
        raise doc.error(RulePackError, error.message, tuple(error.absolute_path))
    data = doc.data
    factor, unit = _conversion(doc, table_id, data["units"])
    rows = {str(r["id"]): DataRow(str(r["id"]), r["label"],
                                  float(r["value"]) * factor if "value" in r else None,
                                  r["provenance"], r.get("notes", ""), r.get("values"))
            for r in data["rows"]}
    if data["default"] not in rows:
        raise doc.error(RulePackError, f"default row '{data['default']}' is not in the table",
                        ("default",), allowed=sorted(rows))
    src = data["source"]
    return DataTable(id=data["id"], title=data["title"], units=unit,
                     citation=f"{src['document']} ({src['edition']})"
                     + (f", {src['table']}" if src.get("table") else ""),
                     default=data["default"], rows=rows,
                     reference_temperature=data.get("reference_temperature"))


#: table id → the quantity kind (airgate.units) its single values are: they are converted from
#: the table's declared ``units`` to that kind's internal unit when the table is read
KINDS = {"occupant-co2-generation": "gas_generation"}


def _conversion(doc, table_id: str, declared: str) -> tuple[float, str]:
    """(factor, unit): values × factor are in ``unit`` — the internal unit of the table's kind,
    or the declared units as they are for a table without a kind. A declared unit of another
    dimension (a CO2 generation in L/s, not per person) is a located error."""
    kind = KINDS.get(table_id)
    if kind is None:
        return 1.0, declared
    try:
        factor = units.parse(f"1 {declared}", kind, units.SI)
    except units.QuantityError as exc:
        raise doc.error(RulePackError, f"the units '{declared}' do not fit table {table_id}: "
                        f"{exc}", ("units",),
                        hint=f"declare units of {units.KINDS[kind].si_label}, e.g. "
                        f"{units.KINDS[kind].si}") from None
    return factor, units.KINDS[kind].internal


@lru_cache(maxsize=1)
def _table_ids() -> tuple[str, ...]:
    """The ids of the built-in tables (the stems of ``rules/data/*.yaml``), sorted."""
    return tuple(sorted(p.stem for p in (builtin_rules_dir() / "data").glob("*.yaml")))


class _Builtin(Mapping[str, DataTable]):
    """The built-in tables by id, each loaded (and validated) when first looked up."""

    def __getitem__(self, table_id: str) -> DataTable:
        if table_id not in _table_ids():  # looked up once per zone: no file system call each
            raise KeyError(table_id)
        return data_table(table_id)

    def __iter__(self) -> Iterator[str]:
        return iter(_table_ids())

    def __len__(self) -> int:
        return sum(1 for _ in self)


BUILTIN: Mapping[str, DataTable] = _Builtin()
