"""Read a schedule kept as tables: a set of CSV files or the sheets of an XLSX workbook.

Four tables, each with one header row (the format is in ``docs/importing.md``):

- ``Project``: one row (Project, Units, Rules, Owner, Location, …);
- ``Systems``: one row per air system;
- ``Zones``: one row per room, naming its system in the ``System`` column;
- ``Profiles`` (optional): one row per occupied time range of a day.

A workbook holds them as sheets of those names; CSV files are named ``STEM.project.csv``,
``STEM.systems.csv``, ``STEM.zones.csv`` and ``STEM.profiles.csv`` and any one of them may be
given. Headers may carry a unit in brackets (``Area [ft2]``), which applies to the bare numbers in
that column. Formulas are never evaluated: a number field holding a formula is an error, a text
field keeps the formula's text. Every row that cannot be read is an error naming the file (for a
workbook ``building.xlsx[Zones]``), row and column (with the cell, e.g. ``E4``); nothing is
skipped silently.
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from airgate.errors import ScheduleError, nearest
from airgate.readers import condition_columns as C
from airgate.readers import fields as F
from airgate.readers import limits, workbook_guard
from airgate.readers.document import read_text
from airgate.readers.sources import Builder, ImportedSchedule, Origin

#: Top-level lists of the schedule besides systems (contaminants, waivers): a table each.
LIST_TABLES = F.list_tables()
TABLES = ("project", "systems", "zones", "profiles", *LIST_TABLES)
_REQUIRED = ("project", "systems", "zones")
#: Sheets the template writes for reference; they are not read.
REFERENCE_SHEETS = ("lists",)
#: A hostile or runaway table stops here.
MAX_ROWS = 100_000
MAX_COLUMNS = 200

#: table → (documented columns, model whose other fields are columns by name, names not taken)
_COLUMNS = {"project": (F.PROJECT_COLUMNS, F.LEVELS["project"][1], ()),
            "systems": (F.SYSTEM_COLUMNS, F.LEVELS["system"][1], ("zones",)),
            "zones": (F.ZONE_COLUMNS, F.LEVELS["zone"][1], ()),
            "profiles": (F.PROFILE_COLUMNS, None, ()),
            **{name: ((), model, ()) for name, model in LIST_TABLES.items()}}


def column_letter(n: int) -> str:
    """1 → A, 27 → AA (spreadsheet column names)."""
    out = ""
    while n:
        n, r = divmod(n - 1, 26)
        out = chr(65 + r) + out
    return out


@dataclass
class Cell:
    value: Any
    row: int          # spreadsheet row (CSV: record number, header = 1)
    column: int
    line: int         # line in the file (CSV: physical line; XLSX: the row)
    formula: bool = False


@dataclass
class Table:
    """One table as read: its cells by row, and how to name its places."""

    name: str                 # "zones"
    file: str                 # Location.file: "b.xlsx[Zones]" or "b.zones.csv"
    source: str               # provenance prefix: "b.xlsx[Zones]" or "b.zones.csv" (file name)
    rows: list[list[Cell]]    # non-empty rows, the header first

    def origin(self, cell: Cell, header: str | None = None) -> Origin:
        ref = f"cell {column_letter(cell.column)}{cell.row}"
        ref += f", column '{header}'" if header else ""
        return Origin(self.file, cell.line, cell.column, ref,
                      f"{self.source}!{column_letter(cell.column)}{cell.row}")

    def row_origin(self, row: list[Cell]) -> Origin:
        first = row[0]
        return Origin(self.file, first.line, first.column, f"row {first.row}",
                      f"{self.source} row {first.row}")


def _empty(value: Any) -> bool:
    return value is None or (isinstance(value, str) and not value.strip())


# --- reading the files -------------------------------------------------------------------------


def _csv_table(path: Path, name: str) -> Table:
    text = read_text(path, ScheduleError)
    first = text.split("\n", 1)[0]
    delimiter = ";" if first.count(";") > first.count(",") else ","
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    rows: list[list[Cell]] = []
    record = 0
    line = 1
    try:
        for values in reader:
            record += 1
            if record > MAX_ROWS:
                raise ScheduleError(f"more than {MAX_ROWS} rows; the row limit stops it here",
                                    file=str(path), line=line, hint="split the table")
            if len(values) > MAX_COLUMNS:
                raise ScheduleError(f"more than {MAX_COLUMNS} columns", file=str(path),
                                    line=line, hint="remove unused columns")
            cells = [Cell(_unescape(v), record, c, line) for c, v in enumerate(values, start=1)]
            if any(not _empty(c.value) for c in cells):
                rows.append(cells)
            line = reader.line_num + 1
    except csv.Error as exc:
        raise ScheduleError(f"not readable as CSV: {exc}", file=str(path), line=reader.line_num,
                            hint="save the table as CSV (comma- or semicolon-separated, UTF-8)"
                            ) from None
    return Table(name, str(path), path.name, rows)


def _unescape(text: str) -> str:
    """Undo the ``'`` that writers put before text a spreadsheet would take for a formula."""
    return text[1:] if text[:1] == "'" and text[1:2] in F.FORMULA_START and text[1:2] else text


def csv_paths(path: Path) -> tuple[str, dict[str, Path]]:
    """The stem and the table files of a CSV set named like ``path``."""
    parts = path.name.rsplit(".", 2)
    if len(parts) != 3 or parts[1].lower() not in TABLES:
        raise ScheduleError(
            "a CSV schedule is a set of tables named STEM.project.csv, STEM.systems.csv, "
            "STEM.zones.csv (and optionally STEM.profiles.csv)", file=str(path),
            hint=f"rename the file, e.g. {parts[0]}.zones.csv")
    stem = parts[0]
    return stem, {t: path.with_name(f"{stem}.{t}.csv") for t in TABLES}


def read_csv_set(path: str | Path) -> ImportedSchedule:
    """Read the CSV tables of one schedule; ``path`` is any of them."""
    path = Path(path)
    stem, paths = csv_paths(path)
    tables: dict[str, Table] = {}
    for name, p in paths.items():
        if p.is_file():
            tables[name] = _csv_table(p, name)
        elif name in _REQUIRED:
            raise ScheduleError(f"the {name} table {p.name} is missing beside {path.name}",
                                file=str(p), hint=f"a CSV schedule has {stem}.project.csv, "
                                f"{stem}.systems.csv and {stem}.zones.csv in one folder")
    return _read(tables, str(path), path.name)


def read_xlsx(path: str | Path) -> ImportedSchedule:
    """Read the sheets of an XLSX workbook (formulas are never evaluated)."""
    path = Path(path)
    name = str(path)
    try:
        import openpyxl
    except ImportError:
        raise ScheduleError("reading .xlsx needs the optional openpyxl package", file=name,
                            hint="pip install 'airgate[xlsx]'") from None
    if not path.is_file():
        raise ScheduleError("file not found" if not path.exists() else
                            "is a directory, expected a file" if path.is_dir() else
                            "is not a regular file; a workbook is read from a file on disk",
                            file=name)
    if path.stat().st_size > limits.MAX_BYTES:
        raise ScheduleError(f"file is larger than the {limits.size_text(limits.MAX_BYTES)} "
                            "limit", file=name,
                            hint="split the file, or raise AIRGATE_MAX_BYTES (docs/limits.md)")
    extents = workbook_guard.check(path, name, MAX_ROWS, MAX_COLUMNS)  # sheets, by title
    _no_dtd(path, name)  # the other XML parts, at the line and column
    try:
        book = openpyxl.load_workbook(path, read_only=True, data_only=False, keep_links=False)
    except Exception as exc:  # zip, XML or format problems all mean "not a workbook"
        raise ScheduleError(f"not a readable .xlsx workbook ({type(exc).__name__}: {exc})",
                            file=name, hint="save the file from the spreadsheet as .xlsx"
                            ) from None
    tables: dict[str, Table] = {}
    notes: list[str] = []
    try:
        for title in book.sheetnames:
            key = title.strip().lower()
            if key in REFERENCE_SHEETS:
                continue
            if key not in TABLES:
                notes.append(f"{name}[{title}]: sheet not read (airgate reads the sheets "
                             f"{', '.join(t.capitalize() for t in TABLES)})")
                continue
            if key in tables:
                raise ScheduleError(f"two sheets are named {title!r}", file=f"{name}[{title}]",
                                    hint="give each table one sheet")
            tables[key] = _sheet_table(book[title], key, f"{name}[{title}]",
                                       f"{path.name}[{title}]", extents.get(title))
    except ScheduleError:
        raise
    except Exception as exc:
        raise ScheduleError(f"not a readable .xlsx workbook ({type(exc).__name__}: {exc})",
                            file=name, hint="save the file from the spreadsheet as .xlsx"
                            ) from None
    finally:
        book.close()
    for key in _REQUIRED:
        if key not in tables:
            raise ScheduleError(f"the workbook has no {key.capitalize()} sheet", file=name,
                                allowed=[t.capitalize() for t in TABLES],
                                hint="airgate template --format xlsx writes one to start from")
    loaded = _read(tables, name, path.name)
    loaded.notes[:0] = notes
    return loaded


#: bytes of each XML part of a workbook searched for a document type declaration (it can only
#: stand in the prolog, before the first element)
_PROLOG = 64 * 1024
_DTD = re.compile(rb"<!(DOCTYPE|ENTITY)", re.IGNORECASE)


def _no_dtd(path: Path, name: str) -> None:
    """Refuse a workbook whose XML parts declare a DTD or entities (the gbXML rule), at the
    part, line and column where the declaration stands."""
    import zipfile

    try:
        with zipfile.ZipFile(path) as z:
            for info in z.infolist():
                if not info.filename.lower().endswith((".xml", ".rels", ".vml")):
                    continue
                with z.open(info) as part:
                    head = part.read(_PROLOG)
                m = _DTD.search(head)
                if m is not None:
                    line = head.count(b"\n", 0, m.start()) + 1
                    column = m.start() - (head.rfind(b"\n", 0, m.start()) + 1) + 1
                    raise ScheduleError(
                        f"the workbook part declares a DTD or an entity (<!{m[1].decode()} …>); "
                        "airgate reads no DTDs, so no entities can be expanded",
                        file=f"{name}[{info.filename}]", line=line, column=column,
                        hint="save the workbook again from the spreadsheet as .xlsx")
    except (zipfile.BadZipFile, OSError, RuntimeError, NotImplementedError):
        return  # not a readable zip: openpyxl says so next


def _sheet_table(sheet, key: str, file: str, source: str,
                 extent: workbook_guard.Extent | None) -> Table:
    """The sheet's cells, read up to the last row and column holding content (the sheet's
    declared dimension is not trusted; without a scanned extent, up to the limits)."""
    rows: list[list[Cell]] = []
    if extent is None:
        extent = workbook_guard.Extent(MAX_ROWS + 1, MAX_COLUMNS + 1)
    if not extent.rows:
        return Table(key, file, source, rows)
    cells = sheet.iter_rows(min_row=1, min_col=1, max_row=extent.rows, max_col=extent.columns)
    for r, row in enumerate(cells, start=1):
        if r > MAX_ROWS:
            raise ScheduleError(f"more than {MAX_ROWS} rows; the row limit stops it here",
                                file=file, line=r, hint="split the table")
        cells = []
        for c, cell in enumerate(row, start=1):
            value = cell.value
            if _empty(value):
                continue
            if c > MAX_COLUMNS:
                raise ScheduleError(f"more than {MAX_COLUMNS} columns", file=file, line=r,
                                    column=c, hint="remove unused columns")
            formula = cell.data_type == "f"
            if formula and not isinstance(value, str):
                value = getattr(value, "text", None) or str(value)  # array formula
            cells.append(Cell(value, r, c, r, formula))
        if cells:
            rows.append(cells)
    return Table(key, file, source, rows)


# --- from tables to schedule data --------------------------------------------------------------


@dataclass
class _Row:
    number: int                           # spreadsheet row number
    origin: Origin                        # the row
    values: dict[str, tuple[Any, Origin]]
    blanks: dict[str, Origin]             # columns present but empty in this row
    bad: bool = False                     # a cell of the row could not be read


def _rows(table: Table, b: Builder, room_table: bool = False) -> list[_Row]:
    """Match the header, convert every cell; a cell that cannot be read is an error."""
    if not table.rows:
        b.error(Origin(table.file, None, None, "empty table", table.source),
                f"the {table.name} table is empty", hint="write the header row first")
        return []
    columns, model, skip = _COLUMNS[table.name]
    header, *body = table.rows
    #: column number → (column, header unit, header, key: the field, with ``@condition``)
    cols: dict[int, tuple[F.Column, str | None, str, str]] = {}
    seen: dict[str, Cell] = {}
    before = len(b.errors)
    for cell in header:
        where = table.origin(cell)
        if not isinstance(cell.value, str):
            b.error(where, f"a header must be text, got {cell.value!r}",
                    hint="the first row of each table names its columns")
            continue
        try:
            col, unit, condition = C.match_header(cell.value, columns, model, skip,
                                                  C.TABLE_LEVELS.get(table.name))
        except F.CellError as exc:
            b.error(where, exc.message, hint=exc.hint)
            try:  # a known column with a bad unit: its cells are lost, not "missing"
                name = C.split_condition(F.header_name(cell.value))[0]
                b.quiet.add(F.find_column(name, columns, model, skip).field)
            except F.CellError:
                pass
            continue
        key = col.field if condition is None else f"{col.field}{C.CONDITION_MARK}{condition}"
        if key in seen:
            b.error(where, f"column '{F.header_name(cell.value).strip()}' is given twice (first "
                    f"in column {column_letter(seen[key].column)})", hint="keep one of them")
            continue
        seen[key] = cell
        cols[cell.column] = (col, unit, cell.value.strip(), key)
    header_bad = len(b.errors) > before  # a column could not be read: every room misses it
    out = []
    for row in body:
        r = _Row(row[0].row, table.row_origin(row), {}, {})
        if room_table:
            b.room((table.name, row[0].row))
            if header_bad:
                b.rejected.add((table.name, row[0].row))
        for cell in row:
            if cell.column not in cols:
                if not any(h.column == cell.column for h in header):
                    b.error(table.origin(cell), "this column has values but no header",
                            hint="name the column in the header row, or clear the cell",
                            room=(table.name, row[0].row) if room_table else None)
                continue
            col, unit, label, key = cols[cell.column]
            where = table.origin(cell, label)
            if cell.formula and col.kind not in ("text",):
                b.error(where, f"the cell holds a formula ({cell.value}); airgate never "
                        "evaluates formulas", hint="replace it by its value (copy, then paste "
                        "values only)", room=(table.name, row[0].row) if room_table else None)
                r.bad = True
                continue
            try:
                value = F.convert(col, cell.value, unit)
            except F.CellError as exc:
                b.error(where, exc.message, hint=exc.hint,
                        room=(table.name, row[0].row) if room_table else None)
                r.bad = True
                continue
            if value is not None:
                r.values[key] = (value, where)
        for number, (col, _, label, key) in cols.items():
            if key not in r.values:
                r.blanks[key] = table.origin(Cell(None, row[0].row, number, row[0].line), label)
        out.append(r)  # a cell that could not be read is reported; the row stays
    return out


def _read(tables: dict[str, Table], file: str, source: str) -> ImportedSchedule:
    b = Builder(file=file, source=source)
    _project(tables["project"], b)
    if "profiles" in tables:
        _profiles(tables["profiles"], b)
    for name in LIST_TABLES:
        if name in tables:
            _list_table(tables[name], name, b)
    systems = _systems(tables["systems"], b)
    _zones(tables["zones"], systems, b)
    return b.finish()


def _list_table(table: Table, name: str, b: Builder) -> None:
    b.data[name] = []
    for i, row in enumerate(_rows(table, b)):
        b.origins[(name, i)] = row.origin
        b.data[name].append({})
        _put_row(b, (name, i), row)


def _put_row(b: Builder, base: tuple, row: _Row, skip: tuple[str, ...] = ()) -> None:
    """Put a row's values under ``base``; a dotted field (filter.merv) fills a nested mapping,
    a field at a design condition (``primary_airflow@heating``) one value of its mapping."""
    for name, (value, where) in row.values.items():
        field, _, condition = name.partition(C.CONDITION_MARK)
        if condition:
            b.put_condition(base + (field,), condition, value, where)
        elif name not in skip:
            b.put(base + tuple(name.split(".")), value, where)
    for name, where in row.blanks.items():
        field, _, condition = name.partition(C.CONDITION_MARK)
        if condition:
            b.put_condition(base + (field,), condition, None, where)
        elif name not in skip:
            b.at(base + tuple(name.split(".")), where)


def _project(table: Table, b: Builder) -> None:
    rows = _rows(table, b)
    if not rows:
        if table.rows:
            b.error(table.row_origin(table.rows[0]), "the project table has no row under its "
                    "header", hint="give the project's name, units and rules in row 2")
        return
    if len(rows) > 1:
        b.error(rows[1].origin, "the project table has one row (under its header); this is a "
                "second", hint="keep one project row")
    row = rows[0]
    b.origins[("project",)] = row.origin
    b.data["project"] = {}
    if "rules" in row.values:
        value, where = row.values.pop("rules")
        b.put(("rules",), value, where)
    else:
        b.at(("rules",), row.blanks.pop("rules", row.origin))
    _put_row(b, ("project",), row)


def _systems(table: Table, b: Builder) -> dict[str, tuple[int, _Row]]:
    """System id → (index, row); a row with an unreadable cell rejects its rooms."""
    out: dict[str, tuple[int, _Row]] = {}
    b.data["systems"] = []
    rows = _rows(table, b)
    if not rows and table.rows:
        b.error(table.row_origin(table.rows[0]), "the systems table has no row under its header",
                field=("systems",), hint="give one row per air system")
    for row in rows:
        if "id" not in row.values:
            b.error(row.blanks.get("id", row.origin), "the system has no id",
                    hint="fill the System column")
            continue
        sid = str(row.values["id"][0]).strip()
        if sid in out:
            first = out[sid][1].origin.ref
            b.error(row.values["id"][1], f"duplicate system id '{sid}' (first in {first})",
                    hint="give every system its own id")
            continue
        i = len(out)
        out[sid] = (i, row)
        b.origins[("systems", i)] = row.origin
        _put_row(b, ("systems", i), row)
    return out


def _zones(table: Table, systems: dict[str, tuple[int, _Row]], b: Builder) -> None:
    counts = {sid: 0 for sid in systems}
    seen: dict[str, Origin] = {}
    for row in _rows(table, b, room_table=True):
        key = ("zones", row.number)
        if "system" not in row.values:
            b.error(row.blanks.get("system", row.origin), "the zone names no system",
                    hint="fill the System column with the id of a system of the Systems table",
                    allowed=list(systems), room=key)
            continue
        sid, where = row.values["system"]
        sid = str(sid).strip()
        if sid not in systems:
            close = nearest(sid, systems)
            b.error(where, f"no system '{sid}' in the Systems table"
                    + (f"; did you mean '{close[0]}'?" if close else ""), allowed=list(systems),
                    hint="add the system to the Systems table or correct the id", room=key)
            continue
        zid = row.values.get("id", (None,))[0]
        if zid is not None:
            zid = str(zid).strip()
            if zid in seen:
                b.error(row.values["id"][1], f"duplicate zone id '{zid}' (first in "
                        f"{seen[zid].ref.split(',')[0]})", hint="zone ids are unique across the "
                        "schedule; rename one of them", room=key)
                continue
            seen[zid] = row.values["id"][1]
        if systems[sid][1].bad:
            b.rejected.add(key)  # its system's row could not be read
        i = systems[sid][0]
        j = counts[sid]
        counts[sid] += 1
        base = ("systems", i, "zones", j)
        b.origins[base] = row.origin
        b.place(key, base)
        _put_row(b, base, row, skip=("system",))
    for sid, (i, row) in systems.items():
        if not counts[sid]:
            b.error(row.values["id"][1], f"system '{sid}' serves no zone: no row of the Zones "
                    "table names it", hint="add its zones to the Zones table (System column), "
                    "or remove the system")


def _profiles(table: Table, b: Builder) -> None:
    days = ("weekday", "weekend")
    b.data["profiles"] = {}
    for row in _rows(table, b):
        if row.bad:
            continue  # its cell error is reported; a half-read range would only add noise
        name = row.values.get("profile", (None,))[0]
        day = row.values.get("day", (None,))[0]
        if name is None or day is None:
            missing = "profile" if name is None else "day"
            b.error(row.blanks.get(missing, row.origin), f"the row names no {missing}",
                    hint="fill Profile and Day (weekday or weekend)")
            continue
        name = str(name)
        day_where = row.values["day"][1]
        if str(day).strip().lower() not in days:
            close = nearest(str(day).lower(), days)
            b.error(day_where, f"day {day!r} is not weekday or weekend"
                    + (f"; did you mean '{close[0]}'?" if close else ""), allowed=list(days))
            continue
        day = str(day).strip().lower()
        path = ("profiles", name, day)
        if ("profiles", name) not in b.origins:
            b.origins[("profiles", name)] = row.values["profile"][1]
        first = path not in b.origins
        if first:
            b.put(path, {}, day_where)
        got = {k: row.values[k] for k in ("from", "to", "fraction") if k in row.values}
        if not got:
            continue  # a day named with no range: unoccupied all day
        if len(got) < 3:
            missing = [k for k in ("from", "to", "fraction") if k not in got]
            b.error(row.blanks.get(missing[0], row.origin), f"the time range lacks {missing[0]}",
                    hint="give From, To and Fraction (or none of them for an unoccupied day)")
            continue
        span = f"{got['from'][0]}-{got['to'][0]}"
        node = b.data["profiles"][name][day]
        if span in node:
            b.error(got["from"][1], f"the range {span} of {name} {day} is given twice",
                    hint="give each time range once")
            continue
        b.put(path + (span,), got["fraction"][0], got["from"][1])
