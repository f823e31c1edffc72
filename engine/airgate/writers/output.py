"""Write output files atomically: a report appears whole or not at all, and the reports of one
run appear together or not at all."""

from __future__ import annotations

import io
import json
import os
import tempfile
from collections.abc import Iterable, Iterator, Sequence
from pathlib import Path
from typing import Union

from airgate.errors import UsageError


#: A rendered output: text, its pieces in order (written without joining them), or bytes.
Body = Union[str, bytes, Iterable[str]]


def json_chunks(data: object) -> Iterator[str]:
    """The pieces of ``json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False)`` and a
    final newline: the indented form, byte for byte, produced piece by piece."""
    yield from json.JSONEncoder(indent=2, ensure_ascii=False, allow_nan=False).iterencode(data)
    yield "\n"


def json_text(data: object) -> str:
    """:func:`json_chunks` as one string."""
    return joined(json_chunks(data))


def pieces(body: str | Iterable[str]) -> Iterable[str]:
    """A text body as pieces to write in order."""
    return (body,) if isinstance(body, str) else body


def joined(body: str | Iterable[str]) -> str:
    """A text body as one string; pieces are gathered without holding them in a list at once
    (an indented JSON dump of a large portfolio has millions of small pieces, which as a list
    would need several times the size of the text)."""
    if isinstance(body, str):
        return body
    buf = io.StringIO()
    buf.writelines(body)
    return buf.getvalue()


def write_atomic(path: str | Path, text: Body) -> None:
    """Write ``text`` (UTF-8; bytes as they are) to ``path`` through a temporary file in the
    same folder."""
    write_all_atomic([(path, text)])


def write_all_atomic(items: Sequence[tuple[str | Path, Body]]) -> None:
    """Write several files as a set: each body goes to a temporary file beside its target,
    and only when every one is complete are they moved into place (os.replace, atomic per
    file). If any fails — a full disk, a missing folder, an error while a body is produced —
    every temporary file is removed and no target is touched."""
    temps: list[tuple[str, Path]] = []
    path = Path()
    try:
        for target, body in items:
            path = Path(target)
            folder = path.parent if str(path.parent) else Path(".")
            if not folder.is_dir():
                raise UsageError(f"cannot write {path}: folder {folder} does not exist")
            fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
            temps.append((tmp, path))
            if isinstance(body, bytes):
                with os.fdopen(fd, "wb") as raw:
                    raw.write(body)
                continue
            with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
                handle.writelines(pieces(body))
        for tmp, path in temps:
            os.replace(tmp, path)
    except OSError as exc:
        _remove(temps)
        raise UsageError(f"cannot write {path}: {exc.strerror}") from None
    except BaseException:
        _remove(temps)
        raise


def _remove(temps: list[tuple[str, Path]]) -> None:
    for tmp, _ in temps:
        Path(tmp).unlink(missing_ok=True)
