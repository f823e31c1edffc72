"""Write output files: a regular file appears whole or not at all, and the files of one run
appear together or not at all; anything else (standard output, a pipe, a device) is written in
place as a stream.

A **regular file** (or a new name) is written to a temporary file in the same folder and moved
into place with ``os.replace`` once every file of the run is complete. A symbolic link to a
regular file is followed: the file it points at is replaced and the link stays. The new file
gets the mode of the file it replaces, or for a new file the mode the umask leaves of 0666 (as
``open`` would give it), never the temporary file's 0600.

A **stream** — ``-`` (standard output), a character device such as ``/dev/null``, a FIFO, a
socket, or the path of an open file (``/dev/stdout``, ``/dev/fd/N``, anything under
``/proc/``) — is opened and written in place; it is never replaced, so writing to ``/dev/null`` leaves ``/dev/null`` as it
was. Streams are written after every regular file of the run is complete and before any is
moved into place, so a failing stream still leaves no regular file changed.

Every failure to write (a full disk or ``/dev/full``, a closed pipe, a folder without write
permission) is an :class:`~airgate.errors.OutputError` (exit 2) naming the path and the reason,
and no temporary file is left. SIGTERM or SIGINT while files are being written removes the
temporary files before the process ends (SIGTERM: :class:`Interrupted`, exit 143; SIGINT:
KeyboardInterrupt, exit 2).
"""

from __future__ import annotations

import errno
import io
import json
import os
import signal
import stat
import sys
import tempfile
import threading
from collections.abc import Callable, Iterable, Iterator, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import Union

from airgate.errors import OutputError
from airgate.escaping import invisible
from airgate.writers import json_encode

#: A rendered output: text, its pieces in order (written without joining them), or bytes.
Body = Union[str, bytes, Iterable[str]]

#: the name that means standard output
STDOUT = "-"
#: paths that name a process's open files (links to whatever they are open on): never
#: replaced, even when what they point at is a regular file
_OPEN_FILE_PATHS = ("/proc/", "/dev/fd/")
_OPEN_FILE_NAMES = ("/dev/stdin", "/dev/stdout", "/dev/stderr")
#: names of this process's standard output: written through it, at its offset (a file opened
#: for appending, ``>>``, is appended to, not overwritten from its start)
_STDOUT_NAMES = ("/dev/stdout", "/dev/fd/1", "/proc/self/fd/1")


class Interrupted(BaseException):
    """SIGTERM arrived while files were written; the temporary files are removed.
    A BaseException, like KeyboardInterrupt, so no ``except Exception`` swallows it."""

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum

    @property
    def exit_code(self) -> int:
        return 128 + self.signum


class Lazy:
    """A JSON list whose items are produced one at a time while it is written (by
    :func:`json_chunks`), so a list of 60,000 zones is never held whole.

    ``encode``, where given, writes the items itself: called with a list of up to
    :data:`_BATCH` items and the indentation level of the items, it returns each
    item's JSON text as ``json.dumps(item, indent=2, ensure_ascii=False)`` would write it there
    (lines after the first indented by that many steps of two spaces). The items are then
    whatever ``encode`` takes, not JSON data."""

    __slots__ = ("items", "encode")

    def __init__(self, items: Iterable[object],
                 encode: Callable[[list, int], list[str]] | None = None) -> None:
        self.items = items
        self.encode = encode


class Streamed(dict):
    """A JSON object written key by key, whose values may be :class:`Lazy` lists or other
    streamed objects. Any other value is encoded whole."""


_ENCODER = json.JSONEncoder(indent=2, ensure_ascii=False, allow_nan=False)


def json_chunks(data: object) -> Iterator[str]:
    """The pieces of ``json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False)`` and a
    final newline: the indented form, byte for byte, produced piece by piece — except that the
    bidirectional controls and line separators, which can only stand inside a JSON string, are
    written as their JSON escapes (``\\u202e``): the same data, shown visibly. :class:`Lazy`
    lists and :class:`Streamed` objects in ``data`` are produced while they are written: memory
    holds a few dozen items of a lazy list at a time (:data:`_BATCH`)."""
    if isinstance(data, (Lazy, Streamed)):
        yield from map(invisible, _streamed(data, 0))
    else:
        yield from map(invisible, _ENCODER.iterencode(data))
    yield "\n"


def _streamed(value: object, level: int) -> Iterator[str]:
    """``value`` indented as at ``level``, as json.dumps(indent=2) writes it there."""
    inner = "\n" + "  " * (level + 1)
    if isinstance(value, Streamed):
        if not value:
            yield "{}"
            return
        sep = "{"
        for key, item in value.items():
            yield sep + inner + json.dumps(key, ensure_ascii=False) + ": "
            sep = ","
            yield from _streamed(item, level + 1)
        yield "\n" + "  " * level + "}"
    elif isinstance(value, Lazy) and value.encode is not None:
        sep = "["
        joiner = "," + inner
        for batch in _runs(value.items, _BATCH):
            yield sep + inner + joiner.join(value.encode(batch, level + 1))
            sep = ","
        yield "[]" if sep == "[" else "\n" + "  " * level + "]"
    elif isinstance(value, Lazy):
        sep = "["
        for batch in _batches(value.items):
            if isinstance(batch, list):  # plain items: encoded together, without the brackets
                text = json_encode.dumps(batch, level)
                yield sep + text[1:-2 - 2 * level]
            else:
                yield sep + inner
                yield from _streamed(batch, level + 1)
            sep = ","
        yield "[]" if sep == "[" else "\n" + "  " * level + "]"
    else:
        yield json_encode.dumps(value, level)


#: how many plain items of a lazy list (or items of one with its own ``encode``) are made and
#: encoded at a time
_BATCH = 64


def _batches(items: Iterable[object]) -> Iterator[object]:
    """The items of a lazy list: runs of up to :data:`_BATCH` plain items as lists (one encoder
    call each), and each streamed item alone."""
    run: list[object] = []
    for item in items:
        if isinstance(item, (Lazy, Streamed)):
            if run:
                yield run
                run = []
            yield item
        else:
            run.append(item)
            if len(run) == _BATCH:
                yield run
                run = []
    if run:
        yield run


def _runs(items: Iterable[object], size: int) -> Iterator[list]:
    """``items`` in lists of up to ``size``."""
    run: list[object] = []
    for item in items:
        run.append(item)
        if len(run) == size:
            yield run
            run = []
    if run:
        yield run


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


def is_stream(target: str | Path) -> bool:
    """True when ``target`` is written in place rather than replaced: ``-``, anything that
    exists and is not a regular file (devices, FIFOs, sockets; links followed), and the paths
    of open files (/dev/stdout, /dev/stderr, /dev/fd/N, anything under /proc/)."""
    name = str(target)
    if name == STDOUT:
        return True
    absolute = os.path.abspath(name)
    if absolute.startswith(_OPEN_FILE_PATHS) or absolute in _OPEN_FILE_NAMES:
        return True
    try:
        mode = os.stat(name).st_mode
    except OSError:
        return False  # a new file (a missing folder is reported when it is written)
    return not stat.S_ISREG(mode) and not stat.S_ISDIR(mode)


def write_atomic(path: str | Path, text: Body) -> None:
    """Write one file (:func:`write_all`)."""
    write_all([(path, text)])


def write_all_atomic(items: Sequence[tuple[str | Path, Body]]) -> None:
    """The former name of :func:`write_all`."""
    write_all(items)


def write_all(items: Sequence[tuple[str | Path, Body]]) -> None:
    """Write several outputs as a set: each regular file's body goes to a temporary file beside
    its target; then the streams are written; only when everything is complete are the
    temporary files moved into place (os.replace, atomic per file). If anything fails — a full
    disk, a missing folder, an error while a body is produced, a signal — every temporary file
    is removed and no regular file is touched."""
    temps: list[tuple[str, Path]] = []
    streams = [(t, b) for t, b in items if is_stream(t)]
    regular = [(t, b) for t, b in items if not is_stream(t)]
    with _cleanup_on_signal():
        try:
            for target, body in regular:
                _write_temp(Path(target), body, temps)
            for target, body in streams:
                _write_stream(str(target), body)
            for tmp, final in temps:
                try:
                    os.replace(tmp, final)
                except OSError as exc:
                    raise write_error(final, exc) from None
            temps.clear()
        finally:
            _remove(temps)


def write_error(path: str | Path, exc: OSError) -> OutputError:
    """The error of a failed write to ``path`` (``-``: standard output), with a hint."""
    name = "standard output" if str(path) == STDOUT else str(path)
    reason = exc.strerror or str(exc)
    code = errno.errorcode.get(exc.errno or 0)
    hint = {
        errno.ENOSPC: "free space on the device, or write the report elsewhere",
        errno.EPIPE: "the program reading the output stopped before the end; let it read "
                     "everything, or write the report to a file",
        errno.EACCES: "write it to a folder you may write to",
        errno.EROFS: "write it to a folder on a writable file system",
        errno.ENOENT: "create the folder first, or give an existing one",
    }.get(exc.errno or 0)
    err = OutputError(f"cannot write {name}: {reason}" + (f" ({code})" if code else ""),
                      hint=hint)
    err.path = str(path)
    return err


def _write_temp(path: Path, body: Body, temps: list[tuple[str, Path]]) -> None:
    """The body written to a temporary file beside ``path`` (the file a link points at), with
    the final mode; (temporary name, final path) is added to ``temps`` as soon as it exists."""
    final = Path(os.path.realpath(path)) if path.is_symlink() else path
    folder = final.parent if str(final.parent) else Path(".")
    if not folder.is_dir():
        raise OutputError(f"cannot write {path}: folder {folder} does not exist",
                          hint="create the folder first, or give an existing one")
    if final.is_dir():
        raise OutputError(f"cannot write {path}: it is a folder")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{final.name}.", suffix=".tmp", dir=folder)
        temps.append((tmp, final))
        if hasattr(os, "fchmod"):  # POSIX; elsewhere the file keeps the mode it was made with
            os.fchmod(fd, _mode_for(final))
        with os.fdopen(fd, "wb") as raw:
            _write_body(raw, body)
    except OSError as exc:
        raise write_error(path, exc) from None


def _write_stream(name: str, body: Body) -> None:
    """Write in place: standard output, or the device, FIFO or special file ``name``."""
    try:
        if name == STDOUT or os.path.abspath(name) in _STDOUT_NAMES:
            if isinstance(body, bytes):
                sys.stdout.flush()
                sys.stdout.buffer.write(body)
            else:
                sys.stdout.writelines(pieces(body))
            sys.stdout.flush()
            return
        # no O_CREAT: a special path that does not exist is not made a regular file
        fd = os.open(name, os.O_WRONLY | getattr(os, "O_CLOEXEC", 0))
        with os.fdopen(fd, "wb") as raw:
            _write_body(raw, body)
    except OSError as exc:
        raise write_error(name, exc) from None


def _write_body(raw, body: Body) -> None:
    if isinstance(body, bytes):
        raw.write(body)
        return
    text = io.TextIOWrapper(raw, encoding="utf-8", newline="\n", write_through=False)
    try:
        text.writelines(pieces(body))
        text.flush()
    finally:
        text.detach()


def _mode_for(path: Path) -> int:
    """The mode of the file being replaced, else 0666 less the umask."""
    try:
        st = os.stat(path)
        if stat.S_ISREG(st.st_mode):
            return stat.S_IMODE(st.st_mode)
    except OSError:
        pass
    return 0o666 & ~_umask()


_UMASK_LOCK = threading.Lock()


def _umask() -> int:
    with _UMASK_LOCK:  # reading the umask means setting it: briefly, under a lock
        mask = os.umask(0o077)
        os.umask(mask)
    return mask


@contextmanager
def _cleanup_on_signal():
    """While files are written, SIGTERM raises :class:`Interrupted`, as SIGINT raises
    KeyboardInterrupt, so the caller's ``finally`` removes the temporary files; the previous
    handler comes back after. Only the main thread can set handlers; elsewhere nothing
    changes."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, _frame):
        raise Interrupted(signum)

    previous = {}
    for sig in (signal.SIGTERM,):  # SIGINT already raises KeyboardInterrupt
        old = signal.getsignal(sig)
        if old is signal.SIG_IGN or old is None:
            continue  # ignored by the caller, or a handler not set from Python: left alone
        previous[sig] = old
        signal.signal(sig, handler)
    try:
        yield
    finally:
        for sig, old in previous.items():
            signal.signal(sig, old)


def _remove(temps: list[tuple[str, Path]]) -> None:
    for tmp, _ in temps:
        try:
            Path(tmp).unlink(missing_ok=True)
        except OSError:
            pass
