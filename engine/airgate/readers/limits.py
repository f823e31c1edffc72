"""The input limits and budgets (docs/limits.md): what stops a hostile or runaway file from
exhausting memory, the stack or time before anything is evaluated.

Each limit has a default and an environment variable of the same name that changes it for one
run; a value that is not a positive whole number is ignored. Budgets are limits spent across
several texts of one file (the alias budget of a CSV file's cells).
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from dataclasses import dataclass

from airgate.errors import AirgateError, Path_


def _limit(name: str, default: int) -> int:
    """A limit from the environment (docs/limits.md), or its default; bad values are ignored."""
    try:
        value = int(os.environ.get(name, default))
    except ValueError:
        return default
    return value if value > 0 else default


#: Hard limits that keep a hostile document from exhausting memory or the stack; each can be
#: set by an environment variable of the same name with the AIRGATE_ prefix (docs/limits.md).
MAX_BYTES = _limit("AIRGATE_MAX_BYTES", 50 * 1024 * 1024)
#: Bytes of the file-size limit per value of the value limit: the value limit follows the
#: file-size limit (3,276,800 values at 50 MiB), so a schedule in ordinary layout (about 12 bytes
#: a value in YAML, 16 in indented JSON: a 100,000-zone schedule is 15–20 MB and 1.25 million
#: values; the demo building repeated to 60,000 zones is 19.4 MiB and 1.64 million) is read up to
#: the size limit in JSON and up to about 38 MiB in YAML, while text denser than that (a long
#: list of ``0,``) is stopped before it is held in memory (the densest text the defaults admit,
#: a flow list of 3.27 million numbers, peaked at 1.3 GB read as YAML, docs/limits.md)
BYTES_PER_NODE = 16
MAX_NODES = _limit("AIRGATE_MAX_NODES", MAX_BYTES // BYTES_PER_NODE)
MAX_DEPTH = _limit("AIRGATE_MAX_DEPTH", 64)
#: Values reached through aliases (a repeated anchor is expanded at each alias), and the text
#: they bring [bytes, UTF-8]; one budget for a whole file, however many YAML texts it holds.
MAX_ALIAS_VALUES = _limit("AIRGATE_MAX_ALIAS_VALUES", 100_000)
MAX_ALIAS_BYTES = _limit("AIRGATE_MAX_ALIAS_BYTES", 10 * 1024 * 1024)
#: Bytes the parts of one XLSX workbook may unpack to (readers/workbook_guard.py).
MAX_UNPACKED_BYTES = _limit("AIRGATE_MAX_UNPACKED_BYTES", 256 * 1024 * 1024)


def size_text(n: int) -> str:
    """``50 MiB`` for whole MiB, else ``1234 bytes`` (limits in messages)."""
    return f"{n // (1024 * 1024)} MiB" if n >= 1024 * 1024 else f"{n} bytes"


@dataclass
class AliasBudget:
    """What aliases have expanded so far: values and bytes of text (keys and scalars)."""

    values: int = 0
    bytes: int = 0

    def over(self) -> str | None:
        """``"aliases"`` or ``"alias bytes"`` once a limit is passed, else None."""
        if self.values > MAX_ALIAS_VALUES:
            return "aliases"
        if self.bytes > MAX_ALIAS_BYTES:
            return "alias bytes"
        return None


_BUDGET: ContextVar[AliasBudget | None] = ContextVar("airgate_alias_budget", default=None)


def current_budget() -> AliasBudget | None:
    """The budget shared by the texts being read (:func:`shared_alias_budget`), if any."""
    return _BUDGET.get()


@contextmanager
def shared_alias_budget() -> Iterator[AliasBudget]:
    """Every YAML text parsed inside shares one :class:`AliasBudget` (the cells of a table
    file, the description lines of a gbXML file), so many small texts cannot each spend a
    fresh one. Nested uses share the outermost budget."""
    budget = _BUDGET.get() or AliasBudget()
    token = _BUDGET.set(budget)
    try:
        yield budget
    finally:
        _BUDGET.reset(token)


def read_at_most(handle, limit: int) -> bytes:
    """At most ``limit`` bytes of ``handle``, read in pieces (a stream has no size to ask)."""
    parts: list[bytes] = []
    left = limit
    while left > 0:
        piece = handle.read(min(left, 1 << 20))
        if not piece:
            break
        parts.append(piece)
        left -= len(piece)
    return b"".join(parts)


def utf8_len(text: str) -> int:
    """Bytes of ``text`` in UTF-8 (ASCII text, the usual case, without encoding it)."""
    return len(text) if text.isascii() else len(text.encode("utf-8", "surrogatepass"))


#: How many levels of a field path a limit error shows (the rest is only counted).
_SHOWN_LEVELS = 8


def limit_error(error_cls: type[AirgateError], what: str, file: str, path: Path_,
                 line: int | None = None, column: int | None = None) -> AirgateError:
    """The error for a document that passes a hard limit, at ``path`` (shown shortened)."""
    where = f" ({len(path)} levels down)" if len(path) > _SHOWN_LEVELS else ""
    shown = path[:_SHOWN_LEVELS]
    if what == "nodes":
        return error_cls(
            f"document has more than {MAX_NODES} values; the node limit stops it here{where}",
            file=file, line=line, column=column, field=shown, hint="split the file")
    if what == "aliases":
        return error_cls(
            f"aliases expand to more than {MAX_ALIAS_VALUES} values (alias expansion?); the "
            f"node limit stops it here{where}", file=file, line=line, column=column, field=shown,
            hint="remove YAML aliases that expand to huge trees")
    if what == "alias bytes":
        return error_cls(
            f"aliases expand to more than {size_text(MAX_ALIAS_BYTES)} of text (alias "
            f"expansion?); the alias limit stops it here{where}", file=file, line=line,
            column=column, field=shown,
            hint="write long text once instead of repeating it through aliases, or raise "
                 "AIRGATE_MAX_ALIAS_BYTES (docs/limits.md)")
    return error_cls(
        f"nesting deeper than {MAX_DEPTH} levels; the depth limit stops it here{where}",
        file=file, line=line, column=column, field=shown,
        hint="a schedule or rule pack needs only a few levels; check for a runaway "
             "or self-referencing structure")
