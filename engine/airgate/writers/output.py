"""Write output files atomically: a report appears whole or not at all."""

from __future__ import annotations

import io
import json
import os
import tempfile
from pathlib import Path

from airgate.errors import UsageError


def json_text(data: object) -> str:
    """``json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False)`` plus a newline, byte
    for byte, without holding the encoder's millions of small chunks in a list at once (an
    indented dump of a large portfolio would otherwise need several times its own size)."""
    buf = io.StringIO()
    buf.writelines(json.JSONEncoder(indent=2, ensure_ascii=False, allow_nan=False)
                   .iterencode(data))
    buf.write("\n")
    return buf.getvalue()


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
