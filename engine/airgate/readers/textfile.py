"""Reading a file's bytes and text: the size limit, symbolic-link loops, the text encoding.

Every reader starts here. A file is read whole within the size limit (docs/limits.md); text
must be UTF-8 (a byte-order mark is allowed). A UTF-16 or UTF-32 file is named as such, not as
binary, so the message says how to fix it.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path

from airgate.errors import AirgateError
from airgate.readers import limits as L  # the limits (docs/limits.md), read when used
from airgate.readers.limits import read_at_most, size_text


def _line_column(raw: bytes, offset: int) -> tuple[int, int]:
    """1-based line and column of byte ``offset`` (the column counts bytes)."""
    line = raw[:offset].count(b"\n") + 1
    return line, offset - (raw.rfind(b"\n", 0, offset) + 1) + 1


def followable(path: Path | str, error_cls: type[AirgateError]) -> Path:
    """``path`` with its symbolic links followed, or an error naming it (a loop of links)."""
    try:
        return Path(path).resolve()
    except (OSError, RuntimeError):  # RuntimeError: Python before 3.13 on a symlink loop
        raise error_cls("the path cannot be followed (a loop of symbolic links?)",
                        file=str(path), hint="give the path of the file itself") from None


def read_bytes(path: Path, error_cls: type[AirgateError]) -> bytes:
    """Read a file within the size limit, or raise an error naming it (any reader's first step).

    A regular file larger than the limit is refused before it is read; anything else (a pipe,
    a device such as /dev/zero, standard input) is read only up to one byte past the limit."""
    name = str(path)
    try:
        with open(path, "rb") as handle:
            info = os.fstat(handle.fileno())
            if stat.S_ISDIR(info.st_mode):
                raise IsADirectoryError
            if stat.S_ISREG(info.st_mode) and info.st_size > L.MAX_BYTES:
                raise _too_large(name, error_cls)
            raw = read_at_most(handle, L.MAX_BYTES + 1)
    except FileNotFoundError:
        raise error_cls("file not found", file=name) from None
    except IsADirectoryError:
        raise error_cls("is a directory, expected a file", file=name) from None
    except OSError as exc:
        raise error_cls(f"cannot read file: {exc.strerror or exc}", file=name) from None
    if len(raw) > L.MAX_BYTES:
        raise _too_large(name, error_cls)
    return raw


def _too_large(name: str, error_cls: type[AirgateError]) -> AirgateError:
    return error_cls(f"file is larger than the {size_text(L.MAX_BYTES)} limit", file=name,
                     hint="split the file, or raise AIRGATE_MAX_BYTES (docs/limits.md)")


_BOMS = ((b"\x00\x00\xfe\xff", "UTF-32"), (b"\xff\xfe\x00\x00", "UTF-32"),
         (b"\xfe\xff", "UTF-16"), (b"\xff\xfe", "UTF-16"))


def _wide_encoding(raw: bytes) -> str | None:
    """"UTF-16" or "UTF-32" when ``raw`` is text in one of them (by its byte-order mark, or by
    the zero bytes of ASCII text without one), else None."""
    for bom, name in _BOMS:
        if raw.startswith(bom):
            return name
    head = raw[:64]
    if len(head) >= 8 and head[1::2].count(0) == len(head[1::2]) and 0 not in head[0::2]:
        return "UTF-16"  # little-endian ASCII: every second byte zero
    if len(head) >= 8 and head[0::2].count(0) == len(head[0::2]) and 0 not in head[1::2]:
        return "UTF-16"
    for zeros in (slice(1, 4), slice(0, 3)):  # little-endian, big-endian ASCII
        if len(head) >= 8 and all(head[i:i + 4][zeros] == b"\0\0\0" for i in (0, 4)):
            return "UTF-32"
    return None


def read_text(path: Path, error_cls: type[AirgateError]) -> str:
    """Read a UTF-8 file (a byte-order mark is allowed) or raise an error naming it."""
    name = str(path)
    raw = read_bytes(path, error_cls)
    wide = _wide_encoding(raw)
    if wide is not None:
        raise error_cls(f"file is {wide} text, expected UTF-8", file=name, line=1, column=1,
                        hint=f"save the file as UTF-8 (it was saved as {wide})")
    if b"\x00" in raw:
        line, column = _line_column(raw, raw.index(b"\x00"))
        raise error_cls("file is binary (contains NUL bytes), expected YAML or JSON text",
                        file=name, line=line, column=column,
                        hint="give the schedule or rule pack as a text file")
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line, column = _line_column(raw, exc.start)
        raise error_cls(
            f"file is not UTF-8 text (byte 0x{raw[exc.start]:02x} at offset {exc.start})",
            file=name, line=line, column=column, hint="save the file as UTF-8",
        ) from None
