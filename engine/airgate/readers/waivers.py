"""Read a separate waivers file (``check --waivers FILE``): YAML or JSON with a ``waivers:`` list.

The entries are those a schedule's own ``waivers:`` holds (:class:`~airgate.models.waivers.Waiver`).
Every problem is located (file, line, column, field path), as for schedules
(:mod:`airgate.readers.entries`).
"""

from __future__ import annotations

from pathlib import Path

from airgate.errors import AirgateError
from airgate.models.waivers import Waiver, WaiversFile
from airgate.readers.entries import EntryFile, LoadedEntries, read_entries, read_entries_partly

WAIVERS = EntryFile(key="waivers", model=WaiversFile, entry=Waiver, what="a waivers file",
                    plural="waivers", first="rule",
                    entry_hint="a waiver gives rule, subject, reason, approved_by and, "
                               "optionally, expires (YYYY-MM-DD)")


class LoadedWaivers(LoadedEntries):
    """Waivers read from a file, with the document they came from (for locations)."""

    @property
    def waivers(self) -> list[Waiver]:
        return self.entries


def _waivers(loaded: LoadedEntries | None) -> LoadedWaivers | None:
    return None if loaded is None else LoadedWaivers(loaded.entries, loaded.doc)


def read_waivers(path: str | Path) -> LoadedWaivers:
    """Load and validate a waivers file; raise every problem found at once."""
    return _waivers(read_entries(WAIVERS, path))


def read_waivers_partly(path: str | Path) -> tuple[LoadedWaivers | None, list[int],
                                                     list[AirgateError]]:
    """A waivers file's well-formed entries, their positions in its list, and every
    structural problem (:func:`airgate.readers.entries.read_entries_partly`)."""
    loaded, where, errors = read_entries_partly(WAIVERS, path)
    return _waivers(loaded), where, errors
