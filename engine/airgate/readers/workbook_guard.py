"""Check an XLSX workbook's parts before openpyxl reads them.

A workbook is a ZIP archive of XML parts, and its small size on disk says little about the
work of reading it: the parts may unpack to gigabytes, a sheet may declare a size of
``A1:XFD1048576`` and have every row padded to it, and one cell may hold a string of a
gigabyte that openpyxl would hold whole. So before openpyxl opens the file:

- the parts together must unpack to at most :data:`~airgate.readers.limits.MAX_UNPACKED_BYTES`
  (the sizes the archive declares; Python's zipfile stops a part that unpacks to more);
- the sheets and the shared strings are streamed through expat (a document type declaration
  is refused, so no entity can expand): no cell text may pass :data:`MAX_CELL_TEXT`
  characters, and no cell with content may lie beyond the row and column limits;
- the declared dimension of a sheet is not trusted: each sheet is read only up to the last row
  and column that hold content (:class:`Extent`), found by the same scan.

Every refusal is a :class:`~airgate.errors.ScheduleError` naming the workbook and, where it
applies, the sheet and cell.
"""

from __future__ import annotations

import posixpath
import re
import xml.parsers.expat as expat
import zipfile
from dataclasses import dataclass
from pathlib import Path

from airgate.errors import ScheduleError
from airgate.readers import limits

#: characters one cell may hold: the limit of spreadsheet programs (Microsoft Support, "Excel
#: specifications and limits": "Total number of characters that a cell can contain: 32,767
#: characters"; docs/references.md)
MAX_CELL_TEXT = 32_767

_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_REF = re.compile(r"^\$?([A-Za-z]{1,3})\$?([0-9]{1,7})$")
_TEXT = frozenset({"v", "t", "f"})  # value, (rich or inline) text, formula
_CHUNK = 1 << 20


@dataclass
class Extent:
    """The last row and column of a sheet that hold content (0, 0: an empty sheet)."""

    rows: int = 0
    columns: int = 0


class _Stop(Exception):
    """A scan found a problem: message, cell reference, row and column."""

    def __init__(self, message: str, ref: str = "", row: int | None = None,
                 column: int | None = None, hint: str | None = None) -> None:
        super().__init__(message)
        self.message, self.ref, self.row, self.column, self.hint = message, ref, row, column, hint


def column_number(letters: str) -> int:
    """A → 1, Z → 26, AA → 27, XFD → 16384."""
    n = 0
    for ch in letters.upper():
        n = n * 26 + ord(ch) - 64
    return n


def check(path: Path, name: str, max_rows: int, max_columns: int) -> dict[str, Extent]:
    """Check the workbook at ``path`` (``name`` as the user gave it); the extent of each sheet
    by title. A file that is not a ZIP archive is left to openpyxl to report."""
    try:
        book = zipfile.ZipFile(path)
    except (zipfile.BadZipFile, OSError, ValueError):
        return {}
    with book:
        infos = book.infolist()
        unpacked = sum(i.file_size for i in infos)
        if unpacked > limits.MAX_UNPACKED_BYTES:
            raise ScheduleError(
                f"the workbook's parts unpack to {unpacked:,} bytes, more than the "
                f"{limits.size_text(limits.MAX_UNPACKED_BYTES)} limit", file=name,
                hint="save the workbook without unused sheets, pictures or formatting, or "
                     "raise AIRGATE_MAX_UNPACKED_BYTES (docs/limits.md)")
        titles = _sheet_titles(book)
        extents: dict[str, Extent] = {}
        for info in infos:
            part = info.filename
            if part == "xl/sharedStrings.xml":
                _scan(book, info, name, shared=True, max_rows=max_rows,
                      max_columns=max_columns)
            elif part.startswith("xl/worksheets/") and part.endswith(".xml"):
                title = titles.get(part, part)
                extents[title] = _scan(book, info, f"{name}[{title}]", shared=False,
                                       max_rows=max_rows, max_columns=max_columns)
    return extents


def _sheet_titles(book: zipfile.ZipFile) -> dict[str, str]:
    """Sheet part name → sheet title, from xl/workbook.xml and its relationships."""
    ids: dict[str, str] = {}
    targets: dict[str, str] = {}

    def sheet(tag: str, attrs: dict[str, str]) -> None:
        if tag == f"{_MAIN} sheet" and f"{_REL} id" in attrs:
            ids[attrs[f"{_REL} id"]] = attrs.get("name", "")

    def relation(tag: str, attrs: dict[str, str]) -> None:
        if tag.endswith("Relationship") and "Id" in attrs and "Target" in attrs:
            target = attrs["Target"]
            targets[attrs["Id"]] = (target.lstrip("/") if target.startswith("/")
                                    else posixpath.normpath(posixpath.join("xl", target)))

    for part, handler in (("xl/workbook.xml", sheet), ("xl/_rels/workbook.xml.rels", relation)):
        try:
            info = book.getinfo(part)
        except KeyError:
            return {}
        parser = _parser(start=handler)
        try:
            _feed(book, info, parser)
        except (_Stop, expat.ExpatError, zipfile.BadZipFile, OSError, EOFError):
            return {}
    return {targets[rid]: title for rid, title in ids.items() if rid in targets}


def _parser(start=None, end=None, text=None) -> expat.XMLParserType:
    parser = expat.ParserCreate(namespace_separator=" ")

    def refuse(*_args) -> None:
        # where in the part's XML (a sheet's rows and columns do not apply before its cells)
        raise _Stop("the workbook declares a document type (DTD), which no workbook needs "
                    f"(line {parser.CurrentLineNumber}, column {parser.CurrentColumnNumber + 1} "
                    "of the part's XML)", hint="save the file again from the spreadsheet as .xlsx")

    parser.StartDoctypeDeclHandler = refuse
    parser.EntityDeclHandler = refuse
    parser.ExternalEntityRefHandler = refuse
    parser.StartElementHandler = start
    parser.EndElementHandler = end
    parser.CharacterDataHandler = text
    return parser


def _feed(book: zipfile.ZipFile, info: zipfile.ZipInfo, parser: expat.XMLParserType) -> None:
    with book.open(info) as raw:
        while True:
            chunk = raw.read(_CHUNK)
            parser.Parse(chunk, not chunk)
            if not chunk:
                return


def _scan(book: zipfile.ZipFile, info: zipfile.ZipInfo, file: str, *, shared: bool,
          max_rows: int, max_columns: int) -> Extent:
    """Stream one sheet (or the shared strings) and check every cell; the sheet's extent."""
    extent = Extent()
    state = {"row": 0, "col": 0, "ref": "", "text": 0, "in": False, "content": False, "si": 0}

    def start(tag: str, attrs: dict[str, str]) -> None:
        local = tag.rpartition(" ")[2]
        if local == "row":
            state["row"] = int(attrs["r"]) if attrs.get("r", "").isdigit() else state["row"] + 1
            state["col"] = 0
        elif local == "c":
            m = _REF.match(attrs.get("r", ""))
            if m:
                state["col"], state["row"] = column_number(m[1]), int(m[2])
            else:
                state["col"] += 1
            state["ref"] = m[0] if m else ""
            state["content"] = False
            state["text"] = 0  # the runs of one cell count together
        elif local == "si":
            state["si"] += 1
            state["text"] = 0
        if local in _TEXT:
            state["in"] = True

    def text(data: str) -> None:
        if not state["in"]:
            return
        state["text"] += len(data)
        if data:
            state["content"] = True
        if state["text"] > MAX_CELL_TEXT:
            where = (f"shared string {state['si']}" if shared
                     else f"cell {state['ref'] or state['col']}")
            raise _Stop(f"{where} holds more than {MAX_CELL_TEXT:,} characters, the most a "
                        "cell can hold", state["ref"], None if shared else state["row"],
                        None if shared else state["col"],
                        hint="a schedule's cells are short: remove the long text")

    def end(tag: str) -> None:
        local = tag.rpartition(" ")[2]
        if local in _TEXT:
            state["in"] = False
        elif local == "c" and state["content"]:
            row, col = state["row"], state["col"]
            if row > max_rows or col > max_columns:
                what = (f"more than {max_rows} rows" if row > max_rows
                        else f"more than {max_columns} columns")
                raise _Stop(f"{what}: cell {state['ref']} holds a value beyond the limit",
                            state["ref"], row, col, hint="split the table, or remove the "
                                                         "values far from the others")
            extent.rows = max(extent.rows, row)
            extent.columns = max(extent.columns, col)

    parser = _parser(start, end, text)
    try:
        _feed(book, info, parser)
    except _Stop as stop:
        raise ScheduleError(stop.message, file=file, line=stop.row, column=stop.column,
                            hint=stop.hint) from None
    except (expat.ExpatError, zipfile.BadZipFile, OSError, EOFError) as exc:
        raise ScheduleError(f"not a readable .xlsx workbook ({type(exc).__name__}: {exc})",
                            file=file, hint="save the file from the spreadsheet as .xlsx"
                            ) from None
    return extent
