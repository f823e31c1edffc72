"""The file formats a schedule is read from: the one registry, by file suffix.

=====================  ==========================================================
suffix                 reader
=====================  ==========================================================
``.yaml .yml .json``   :mod:`airgate.readers.schedule` (and any suffix not listed)
``.csv``               :mod:`airgate.readers.tabular` (a set of CSV tables)
``.xlsx``              :mod:`airgate.readers.tabular` (a workbook)
``.xml .gbxml``        :mod:`airgate.readers.gbxml`
``.ifc``               :mod:`airgate.readers.ifc` (optional extra ``[ifc]``)
=====================  ==========================================================

A new format is a reader module (``read(path) → LoadedSchedule``, usually through
:class:`airgate.readers.sources.Builder`) plus one :class:`Importer` entry here. Each reader is
imported when a file of its format is read, so this registry is cheap to consult and an optional
extra is needed only by those who read that format. A suffix no importer lists is read as YAML
or JSON (:data:`DEFAULT`), whose reader says what it found; the suffixes in :data:`REFUSED` are
formats airgate does not read, refused with what to do instead.
"""

from __future__ import annotations

import importlib
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any


@dataclass(frozen=True)
class Importer:
    """One input format: the suffixes it claims and the reader function that reads it."""

    name: str
    suffixes: tuple[str, ...]
    module: str  #: a module of :mod:`airgate.readers`
    function: str  #: its function ``(path) → LoadedSchedule``
    what: str  #: what such a file holds, for messages and docs

    def read(self, path: Path) -> Any:
        reader = getattr(importlib.import_module(f"airgate.readers.{self.module}"), self.function)
        return reader(path)


IMPORTERS: dict[str, Importer] = {i.name: i for i in (
    Importer("schedule", (".yaml", ".yml", ".json"), "schedule", "read_schedule",
             "a schedule in YAML or JSON (docs/schedule-format.md)"),
    Importer("csv", (".csv",), "tabular", "read_csv_set", "a set of CSV tables (STEM.zones.csv …)"),
    Importer("xlsx", (".xlsx",), "tabular", "read_xlsx", "an Excel workbook"),
    Importer("gbxml", (".xml", ".gbxml"), "gbxml", "read", "a gbXML model"),
    Importer("ifc", (".ifc",), "ifc", "read", "an IFC model (optional extra [ifc])"),
)}
#: the importer of a file whose suffix no importer lists
DEFAULT = IMPORTERS["schedule"]
#: suffix → importer
BY_SUFFIX: dict[str, Importer] = {s: i for i in IMPORTERS.values() for s in i.suffixes}

#: Suffixes of formats airgate cannot read, and what to do instead.
REFUSED = {
    ".xls": "save the workbook as .xlsx (Excel Workbook)",
    ".xlsm": "save the workbook as .xlsx; airgate does not read macro-enabled workbooks",
    ".ods": "save the spreadsheet as .xlsx or as CSV tables",
    ".ifczip": "unzip it to an .ifc file",
    ".ifcxml": "save the model as .ifc (STEP physical file)",
}


def importer_for(path: str | Path) -> Importer:
    """The importer of ``path`` by its suffix (:data:`DEFAULT` for a suffix none lists)."""
    return BY_SUFFIX.get(Path(path).suffix.lower(), DEFAULT)


#: how airgate's own JSON reports begin (writers.json_report: the version key, then the generator)
_REPORT_HEAD = re.compile(rb'\A\s*\{\s*"(?:report|batch)_version"\s*:\s*\d+\s*,\s*'
                          rb'"generator"\s*:\s*"airgate ')


def is_report(path: str | Path) -> bool:
    """Whether a file is one of airgate's own JSON reports, not a schedule (``check FOLDER``
    skips them; ``compare`` reads one back as a round kept as its report)."""
    path = Path(path)
    if path.suffix.lower() != ".json":
        return False
    try:
        with open(path, "rb") as f:
            return bool(_REPORT_HEAD.match(f.read(512)))
    except OSError:
        return False  # read (and refused, located) as a schedule
