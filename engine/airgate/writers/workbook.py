"""Write schedule tables: CSV sets and XLSX workbooks (templates, and schedules as tables).

The tables and columns are those :mod:`airgate.readers.tabular` reads (``docs/importing.md``).
Text that a spreadsheet would take for a formula (``=``, ``+``, ``-``, ``@`` first) is written
as text: stored as a string cell in a workbook, escaped with a leading ``'`` in a CSV file.
Files appear whole or not at all.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Any

from airgate.errors import UsageError
from airgate.readers import condition_columns as C
from airgate.readers import fields as F
from airgate.writers import output

_LISTS = F.list_tables()
SHEETS = {"project": "Project", "systems": "Systems", "zones": "Zones", "profiles": "Profiles",
          **{name: name.capitalize() for name in _LISTS}}
_COLUMNS = {"project": F.PROJECT_COLUMNS, "systems": F.SYSTEM_COLUMNS, "zones": F.ZONE_COLUMNS,
            "profiles": F.PROFILE_COLUMNS, **{name: () for name in _LISTS}}
_MODELS = {"project": F.LEVELS["project"][1], "systems": F.LEVELS["system"][1],
           "zones": F.LEVELS["zone"][1], **_LISTS}
#: Columns a template always shows first; the rest follow in the documented order.
_ALWAYS = {"project": ("name", "units", "rules"), "systems": ("id", "kind", "outdoor_air"),
           "zones": ("system", "id", "space", "area"),
           "profiles": ("profile", "day", "from", "to", "fraction")}
Tables = dict[str, list[list[Any]]]


def _cell(col: F.Column, value: Any, system: str) -> Any:
    """A schedule value as a table cell: a quantity in the header's unit becomes a number."""
    if value is None:
        return None
    if col.kind == "distribution" and not _nested(value):
        return F.format_distribution(value)
    if col.kind == "items" and not _nested(value):
        return F.format_items(value)
    if col.kind == "ids" and isinstance(value, list) and not _nested(value):
        return ", ".join(str(v) for v in value)
    if isinstance(value, (dict, list)):
        from airgate.writers.schedule_yaml import flow
        return flow(value)
    if col.kind == "quantity" and isinstance(value, str):
        number, _, unit = value.strip().partition(" ")
        if unit.strip() == F.header_unit_text(col, system):
            try:
                x = float(number)
            except ValueError:
                return value
            return int(x) if x.is_integer() else x
    return value


def _nested(value: Any) -> bool:
    """Whether a list or mapping holds values the one-line form cannot carry (nesting, ',', ';')."""
    items = value if isinstance(value, list) else [value]
    for item in items:
        for v in (item.values() if isinstance(item, dict) else [item]):
            if isinstance(v, (dict, list)) or any(ch in str(v) for ch in ",;="):
                return True
    return False


def _flat(record: dict[str, Any], key: str) -> dict[str, Any]:
    """Nested mappings that have dotted columns (filter → filter.merv) spread out."""
    dotted = {c.field.split(".")[0] for c in _COLUMNS[key] if "." in c.field}
    out = {}
    for name, value in record.items():
        if name in dotted and isinstance(value, dict) and all(
                f"{name}.{k}" in {c.field for c in _COLUMNS[key]} for k in value):
            out.update({f"{name}.{k}": v for k, v in value.items()})
        else:
            out[name] = value
    return out


def _table(key: str, records: list[dict[str, Any]], system: str, every: bool,
           conditions: tuple[str, ...] = ()) -> list[list[Any]]:
    records = [_flat(r, key) for r in records]
    documented = {c.field for c in _COLUMNS[key]}
    model = _MODELS.get(key)
    extra = [F.Column(name, name, "value") for name in
             ([info.alias or n for n, info in model.model_fields.items()] if model else [])
             if name not in documented and name != "zones"
             and (any(name in r for r in records) or (every and key in _LISTS))]
    cols = [c for c in _COLUMNS[key]
            if every or c.field in _ALWAYS.get(key, ()) or any(c.field in r for r in records)]
    cols += extra
    slots: list[tuple[F.Column, str | None]] = []  # a column at each condition given
    for c in cols:
        shown = _conditions_of(key, c.field, records, conditions)
        if not shown or every or c.field in _ALWAYS.get(key, ()) or any(
                c.field in r and not _by_condition(r[c.field]) for r in records):
            slots.append((c, None))
        slots += [(c, condition) for condition in shown]
    rows = [[C.header_label(c, system, condition) for c, condition in slots]]
    per_condition = set(C.CONDITION_FIELDS.get(C.TABLE_LEVELS.get(key, ""), ()))
    rows += [[_cell(c, _at(r.get(c.field), condition) if c.field in per_condition
                    else r.get(c.field), system) for c, condition in slots]
             for r in records]
    return rows


def _by_condition(value: Any) -> bool:
    """Whether a value is given per design condition (a stated distribution has ``supply``)."""
    return isinstance(value, dict) and "supply" not in value


def _at(value: Any, condition: str | None) -> Any:
    """A field's cell in its plain column (``condition`` None) or at one design condition."""
    if condition is None:
        return None if _by_condition(value) else value
    return value.get(condition) if _by_condition(value) else None


def _conditions_of(key: str, field: str, records: list[dict[str, Any]],
                   conditions: tuple[str, ...]) -> list[str]:
    """The design conditions at which ``field`` gets a column (``Primary airflow @heating``):
    those the records give it at, in order of appearance, after ``conditions``."""
    if field not in C.CONDITION_FIELDS.get(C.TABLE_LEVELS.get(key, ""), ()):
        return []
    given = (c for r in records if _by_condition(r.get(field)) for c in r[field])
    return list(dict.fromkeys((*conditions, *given)))


def schedule_tables(data: dict[str, Any], every: bool = False) -> Tables:
    """The four tables of a schedule given as plain data (what a YAML file holds)."""
    system = data["project"]["units"]
    project = dict(data["project"])
    if data.get("rules") is not None:
        project["rules"] = data["rules"]
    systems, zones, profiles = [], [], []
    for s in data["systems"]:
        systems.append({k: v for k, v in s.items() if k != "zones"})
        zones += [{"system": s["id"], **z} for z in s["zones"]]
    for name, profile in (data.get("profiles") or {}).items():
        for day in ("weekday", "weekend"):
            spec = profile.get(day)
            if spec is None:
                continue
            if isinstance(spec, list):
                spec = {f"{h:02d}:00-{h + 1:02d}:00": v for h, v in enumerate(spec) if v}
            if not spec:
                profiles.append({"profile": name, "day": day})
            for span, frac in spec.items():
                start, _, end = span.partition("-")
                profiles.append({"profile": name, "day": day, "from": start.strip(),
                                 "to": end.strip(), "fraction": frac})
    out = {"project": _table("project", [project], system, every),
           "systems": _table("systems", systems, system, every),
           "zones": _table("zones", zones, system, every)}
    if profiles or every:
        out["profiles"] = _table("profiles", profiles, system, every)
    for name in _LISTS:
        if data.get(name) or every:
            out[name] = _table(name, list(data.get(name) or []), system, every)
    return out


def template_tables(system: str, rules: str | None, conditions: tuple[str, ...] = ()) -> Tables:
    """Empty tables with every column, its unit, and the project row started; with
    ``conditions``, a column per condition for each field that may differ by condition."""
    project = {"units": system, **({"rules": rules} if rules else {})}
    return {"project": _table("project", [project], system, True),
            "systems": _table("systems", [], system, True, conditions),
            "zones": _table("zones", [], system, True, conditions),
            "profiles": _table("profiles", [], system, True),
            **{name: _table(name, [], system, True) for name in _LISTS}}


def csv_texts(tables: Tables, stem: str | Path) -> dict[Path, str]:
    """``STEM.<table>.csv`` → its text, for each table."""
    out = {}
    for key, rows in tables.items():
        buffer = io.StringIO(newline="")
        writer = csv.writer(buffer, lineterminator="\n")
        for row in rows:
            writer.writerow(["" if v is None else
                             F.neutralise(v) if isinstance(v, str) else
                             ("TRUE" if v else "FALSE") if isinstance(v, bool) else
                             F.number_text(v) if isinstance(v, (int, float)) else str(v)
                             for v in row])
        out[Path(f"{stem}.{key}.csv")] = buffer.getvalue()
    return out


def xlsx_bytes(tables: Tables, pack=None) -> bytes:
    """A workbook of ``tables``; with ``pack``, drop-downs of its space types and Ez rows."""
    try:
        import openpyxl
        from openpyxl.styles import Font
        from openpyxl.utils import get_column_letter
        from openpyxl.worksheet.datavalidation import DataValidation
    except ImportError:
        raise UsageError("writing .xlsx needs the optional openpyxl package",
                         hint="pip install 'airgate[xlsx]'") from None
    book = openpyxl.Workbook()
    book.remove(book.active)
    sheets = {}
    for key, rows in tables.items():
        ws = book.create_sheet(SHEETS[key])
        sheets[key] = ws
        for r, row in enumerate(rows, start=1):
            for c, value in enumerate(row, start=1):
                if value is None:
                    continue
                cell = ws.cell(row=r, column=c, value=value)
                if isinstance(value, str):
                    cell.data_type = "s"  # never a formula, whatever the text starts with
        for c, head in enumerate(rows[0], start=1):
            ws.cell(row=1, column=c).font = Font(bold=True)
            ws.column_dimensions[get_column_letter(c)].width = max(12, len(str(head)) + 4)
        ws.freeze_panes = "A2"

    def choose(key: str, field: str, formula: str, strict: bool = True) -> None:
        if key not in sheets:
            return
        for c, head in enumerate(tables[key][0], start=1):
            try:
                col, _, _ = C.match_header(str(head), _COLUMNS[key], _MODELS.get(key),
                                           level=C.TABLE_LEVELS.get(key))
            except F.CellError:
                continue
            if col.field == field:
                letter = get_column_letter(c)
                dv = DataValidation(type="list", formula1=formula, allow_blank=True,
                                    showErrorMessage=strict)
                dv.add(f"{letter}2:{letter}5000")
                sheets[key].add_data_validation(dv)

    choose("project", "units", '"IP,SI"')
    choose("systems", "kind", '"single-zone,outdoor-air,multiple-zone"')
    choose("systems", "variable_air_volume", '"TRUE,FALSE"')
    choose("systems", "recirculates", '"TRUE,FALSE"')
    choose("profiles", "day", '"weekday,weekend"')
    if pack is not None:
        lists = book.create_sheet("Lists")
        spaces = sorted(pack.categories.items())
        rows_ez = sorted(pack.configurations.items())
        for c, head in enumerate(("Space type", "Label", "Air distribution", "Label"), start=1):
            lists.cell(row=1, column=c, value=head).font = Font(bold=True)
        for r, (cid, cat) in enumerate(spaces, start=2):
            lists.cell(row=r, column=1, value=cid).data_type = "s"
            lists.cell(row=r, column=2, value=getattr(cat, "label", cid)).data_type = "s"
        for r, (rid, row) in enumerate(rows_ez, start=2):
            lists.cell(row=r, column=3, value=rid).data_type = "s"
            lists.cell(row=r, column=4, value=getattr(row, "label", rid)).data_type = "s"
        for c in range(1, 5):
            lists.column_dimensions[get_column_letter(c)].width = 40
        choose("zones", "space", f"=Lists!$A$2:$A${len(spaces) + 1}")
        # a stated configuration or a list of modes is typed: the drop-down only suggests rows
        choose("zones", "air_distribution", f"=Lists!$C$2:$C${len(rows_ez) + 1}", strict=False)
        choose("systems", "ventilation_efficiency", '"' + ",".join(sorted(pack.methods)) + '"')
    return _deterministic_xlsx(book)


#: the one timestamp a written workbook carries (document properties and ZIP entries): the
#: earliest date a ZIP entry can hold, so the same tables give the same bytes (no clock, no TZ)
_FIXED_TIME = (1980, 1, 1, 0, 0, 0)


def _deterministic_xlsx(book) -> bytes:
    """``book`` as .xlsx bytes with fixed times: openpyxl stamps the document properties with
    the clock and each ZIP entry with the local time."""
    import datetime as dt
    import zipfile

    from openpyxl.writer.excel import ExcelWriter

    book.properties.created = book.properties.modified = dt.datetime(*_FIXED_TIME)
    raw = io.BytesIO()
    with zipfile.ZipFile(raw, "w", zipfile.ZIP_DEFLATED) as archive:
        ExcelWriter(book, archive).save()  # as Workbook.save, less its "modified = now"
    out = io.BytesIO()
    with zipfile.ZipFile(io.BytesIO(raw.getvalue())) as src, \
            zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            dst.writestr(zipfile.ZipInfo(info.filename, date_time=_FIXED_TIME),
                         src.read(info.filename), compress_type=zipfile.ZIP_DEFLATED)
    return out.getvalue()


def write_files_atomic(files: dict[Path, bytes | str]) -> None:
    """Write every file whole, all of them or none (:func:`output.write_all_atomic`)."""
    output.write_all_atomic(list(files.items()))

