"""Write output files atomically: a report appears whole or not at all."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from airgate.errors import UsageError


def write_atomic(path: str | Path, text: str) -> None:
    """Write ``text`` (UTF-8) to ``path`` through a temporary file in the same folder."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise UsageError(f"cannot write {path}: folder {folder} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
        os.replace(tmp, path)
    except OSError as exc:
        Path(tmp).unlink(missing_ok=True)
        raise UsageError(f"cannot write {path}: {exc.strerror}") from None
