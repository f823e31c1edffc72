"""A validated schedule together with where each of its fields was written (for located messages)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Protocol

from airgate.errors import AirgateError, Path_, ScheduleError
from airgate.models.schedule import Schedule


class Positions(Protocol):
    """Where each field of a document was written (:class:`airgate.readers.document.Document`)."""

    file: str

    def locate(self, path: Path_) -> tuple[int | None, int | None]: ...

    def error(self, cls: type[AirgateError], message: str, path: Path_,
              **kw: Any) -> AirgateError: ...


@dataclass
class LoadedSchedule:
    """A validated schedule together with the document it came from (for locations)."""

    model: Schedule
    doc: Positions
    #: every field is written in :attr:`file` (False: an import whose fields come from several
    #: files, :class:`airgate.readers.sources.ImportedSchedule`)
    one_file = True

    @property
    def file(self) -> str:
        return self.doc.file

    def locate(self, path: Path_) -> tuple[str, int | None, int | None]:
        line, column = self.doc.locate(path)
        return (self.doc.file, line, column)

    def error(self, message: str, path: Path_, **kw: Any) -> AirgateError:
        return self.doc.error(ScheduleError, message, path, **kw)
