"""Read a reviewer's record (``--review FILE``): YAML or JSON with a ``comments:`` list
(:class:`~airgate.models.review.Comment`), every problem located as for waivers files
(:mod:`airgate.readers.entries`)."""

from __future__ import annotations

from pathlib import Path

from airgate.errors import AirgateError
from airgate.models.review import STATUSES, Comment, ReviewFile
from airgate.readers.entries import EntryFile, LoadedEntries, read_entries_partly

REVIEW = EntryFile(key="comments", model=ReviewFile, entry=Comment, what="a reviewer's record",
                   plural="comments", first="subject",
                   entry_hint="a comment gives subject, rule, comment, reviewer and date "
                              "(YYYY-MM-DD) and, optionally, id, response and status ("
                              + ", ".join(STATUSES) + ")")


def read_review(path: str | Path) -> tuple[LoadedEntries | None, list[int], list[AirgateError]]:
    """A record's well-formed comments, their positions in its list, and every structural
    problem, so that unknown check ids (known only with the rule pack) are reported with them."""
    return read_entries_partly(REVIEW, path)
