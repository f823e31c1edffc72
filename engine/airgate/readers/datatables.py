"""Physical data tables under ``rules/data/`` (e.g. occupant CO2 generation), schema-validated."""

from __future__ import annotations

import json
from dataclasses import dataclass
from functools import lru_cache

import jsonschema

from airgate.errors import RulePackError
from airgate.readers.document import load
from airgate.readers.rulepack import builtin_rules_dir


@dataclass(frozen=True)
class DataRow:
    id: str
    label: str
    value: float | None  #: in the table's units (single-valued tables)
    provenance: str
    notes: str = ""
    values: dict[str, float] | None = None  #: several values per row (e.g. by size range)


@dataclass(frozen=True)
class DataTable:
    id: str
    title: str
    units: str
    citation: str
    default: str
    rows: dict[str, DataRow]

    def cite(self, row_id: str) -> str:
        row = self.rows[row_id]
        return f"{self.citation}, '{row.label}' ({row.provenance})"


@lru_cache(maxsize=8)
def data_table(table_id: str) -> DataTable:
    """Load ``rules/data/<table_id>.yaml`` and validate it against the data-table schema."""
    root = builtin_rules_dir()
    doc = load(root / "data" / f"{table_id}.yaml", RulePackError)
    schema = json.loads((root / "schema" / "data-table.schema.json").read_text(encoding="utf-8"))
    error = jsonschema.exceptions.best_match(
        jsonschema.Draft202012Validator(schema).iter_errors(doc.data))
    if error is not None:
        raise doc.error(RulePackError, error.message, tuple(error.absolute_path))
    data = doc.data
    rows = {str(r["id"]): DataRow(str(r["id"]), r["label"],
                                  float(r["value"]) if "value" in r else None, r["provenance"],
                                  r.get("notes", ""), r.get("values")) for r in data["rows"]}
    if data["default"] not in rows:
        raise doc.error(RulePackError, f"default row '{data['default']}' is not in the table",
                        ("default",), allowed=sorted(rows))
    src = data["source"]
    return DataTable(id=data["id"], title=data["title"], units=data["units"],
                     citation=f"{src['document']} ({src['edition']})", default=data["default"],
                     rows=rows)
