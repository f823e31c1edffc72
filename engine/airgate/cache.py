"""A cache on disk of what airgate builds from its own files: validated rule-pack documents and
data tables, kept from one run to the next so that a check does not read and validate the same
packs again (most of a small check's start-up).

An entry is kept under the user's cache folder (``$XDG_CACHE_HOME/airgate``, else
``~/.cache/airgate``; ``AIRGATE_CACHE_DIR`` names another, ``AIRGATE_NO_CACHE=1`` turns the
cache off) and names every file it was built from with the SHA-256 of its bytes: it is used
only while each of them still holds the same bytes, and while the extra condition it was saved
with still holds (e.g. a base pack is still found in the same file). Only what was read without
error is kept; a file that fails is read and reported as ever. The cache is a speed-up and
nothing else: any problem with it (a folder that cannot be written, an entry written by another
version or half written, one not owned by this user) reads the files as if it were empty.
"""

from __future__ import annotations

import hashlib
import os
import pickle
import tempfile
from collections.abc import Callable, Sequence
from functools import lru_cache
from pathlib import Path
from typing import Any, TypeVar

from airgate import __version__

T = TypeVar("T")

#: bumped when what an entry holds changes shape (a new field of a cached class)
FORMAT = 1


def folder() -> Path | None:
    """Where entries live, or None when the cache is off."""
    if os.environ.get("AIRGATE_NO_CACHE"):
        return None
    named = os.environ.get("AIRGATE_CACHE_DIR")
    if named:
        return Path(named)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    if not os.path.isabs(base):
        return None
    return Path(base) / "airgate"


def digest(path: str | Path) -> str | None:
    """SHA-256 of a file's bytes, or None when it cannot be read."""
    try:
        with open(path, "rb") as f:
            return hashlib.sha256(f.read()).hexdigest()
    except OSError:
        return None


#: the code that builds what is cached: the readers, the models and the modules below them
_BUILDERS = ("readers", "models", "procedures")


@lru_cache(maxsize=1)
def _code() -> str:
    """A stamp of the code that builds the entries (each module's name, size and time of
    change): an entry built by other code is not used, even under the same version number."""
    root = Path(__file__).resolve().parent
    stamps = []
    for where in (root, *(root / name for name in _BUILDERS)):
        try:
            entries = sorted(os.scandir(where), key=lambda e: e.name)
        except OSError:
            continue
        for e in entries:
            if e.name.endswith(".py"):
                st = e.stat()
                stamps.append(f"{where.name}/{e.name}:{st.st_size}:{st.st_mtime_ns}")
    return hashlib.sha256("\n".join(stamps).encode()).hexdigest()


def _stamp() -> str:
    return f"{__version__}:{FORMAT}:{_code()}"


def _entry(kind: str, key: Sequence[str]) -> Path | None:
    """The file of ``(kind, key)``: one per pack or table, rewritten when its files or airgate's
    code change (the entry says which code wrote it), so the folder does not grow."""
    where = folder()
    if where is None:
        return None
    name = hashlib.sha256("\0".join((kind, *key)).encode()).hexdigest()
    return where / f"{kind}-{name[:40]}.pickle"


def _trusted(path: Path) -> bool:
    """An entry this user wrote and no one else can change (pickle runs what it reads)."""
    try:
        st = path.stat()
    except OSError:
        return False
    uid = os.getuid() if hasattr(os, "getuid") else None
    return (uid is None or st.st_uid == uid) and not st.st_mode & 0o022


def get(kind: str, key: Sequence[str], still: Callable[[Any], bool] | None = None) -> Any:
    """The value kept for ``(kind, key)`` if every file it names holds the same bytes and
    ``still(value)`` holds; else None."""
    entry = _entry(kind, key)
    if entry is None or not _trusted(entry):
        return None
    try:
        with open(entry, "rb") as f:
            stamp, files, value = pickle.load(f)
    except Exception:  # noqa: BLE001 - half written, another version's classes: not a hit
        return None
    if stamp != _stamp():
        return None
    if any(digest(file) != sha for file, sha in files):
        return None
    try:
        if still is not None and not still(value):
            return None
    except Exception:  # noqa: BLE001 - a condition that cannot be checked is not met
        return None
    return value


def put(kind: str, key: Sequence[str], files: Sequence[str | Path], value: Any) -> None:
    """Keep ``value`` for ``(kind, key)``, built from ``files`` (their bytes now)."""
    entry = _entry(kind, key)
    if entry is None:
        return
    hashes = [(str(f), digest(f)) for f in files]
    if any(sha is None for _, sha in hashes):
        return
    try:
        entry.parent.mkdir(mode=0o700, parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=".tmp-", dir=entry.parent)
        try:
            with os.fdopen(fd, "wb") as f:
                pickle.dump((_stamp(), hashes, value), f, protocol=pickle.HIGHEST_PROTOCOL)
            os.replace(tmp, entry)  # whole or not at all, also with other processes at work
        except BaseException:
            os.unlink(tmp)
            raise
    except Exception:  # noqa: BLE001 - a cache that cannot be written is only slower
        return


def cached(kind: str, key: Sequence[str], build: Callable[[], tuple[T, Sequence[str | Path]]],
           still: Callable[[T], bool] | None = None) -> T:
    """The kept value of ``(kind, key)``, else ``build()`` → (value, files it read), kept."""
    hit = get(kind, key, still)
    if hit is not None:
        return hit
    value, files = build()
    put(kind, key, files, value)
    return value
