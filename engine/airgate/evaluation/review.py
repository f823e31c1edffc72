"""The reviewer's record against an evaluation: what each comment's finding has become.

A comment names a finding as findings name themselves (check id and subject). Against a report,
its finding is the report's finding of that rule on that subject, or none: the check passes or
does not apply. A comment that is not closed and whose finding is no longer reported is flagged
for closing; in a comparison (``airgate compare --review``) also the comments whose finding the new
round resolved (:func:`against`). Nothing here reads a file or the clock.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from airgate.errors import AirgateError
from airgate.evaluation.findings import Finding, Location
from airgate.models.review import Comment

CLOSED = "closed"


@dataclass(frozen=True)
class CommentEntry:
    """A comment and where it is written."""

    comment: Comment
    location: Location  #: the entry
    rule_location: Location  #: its ``rule`` field
    field: tuple  #: the entry's field path in its document

    # the names :func:`airgate.evaluation.waivers.rule_errors` reads
    @property
    def rule(self) -> str:
        return self.comment.rule

    origin = "reviewer's record"


@dataclass(frozen=True)
class CommentStatus:
    """One comment against one evaluation."""

    entry: CommentEntry
    #: the finding of the comment's rule on its subject now (None: none is reported)
    finding: Finding | None
    #: the comment's finding was reported in the round before and is not now (compare only)
    resolved: bool = False

    @property
    def to_close(self) -> bool:
        """Not closed, and its finding is no longer reported: the reviewer can close it."""
        return self.entry.comment.status != CLOSED and self.finding is None

    @property
    def state(self) -> str:
        """One phrase for people: what the finding is now, and whether to close the comment."""
        c = self.entry.comment
        if self.finding is not None:
            f = self.finding
            now = f"{f.severity} finding reported" + (" (waived)" if f.waived else "")
            return now if c.status != CLOSED else f"{now}, though the comment is closed"
        now = "resolved in this round" if self.resolved else "no finding reported"
        return f"{now}: ready to close" if self.to_close else now


def from_file(loaded, where: Sequence[int] | None = None) -> list[CommentEntry]:
    """The comments of a record read by :func:`airgate.readers.review.read_review`; ``where``:
    their positions in the file's list, when only some of its entries were read."""
    file, locate = loaded.doc.file, loaded.doc.locate
    out = []
    for i, c in zip(range(len(loaded.entries)) if where is None else where, loaded.entries):
        path = ("comments", i)
        out.append(CommentEntry(comment=c, location=Location(file, *locate(path)),
                                rule_location=Location(file, *locate(path + ("rule",))),
                                field=path))
    return out


def rule_errors(entries: Iterable[CommentEntry], known: Iterable[str]) -> list[AirgateError]:
    """A comment naming a check id the engine does not know is a typo: an input error."""
    from airgate.evaluation.waivers import rule_errors as unknown_rules

    return unknown_rules(entries, known)


def statuses(findings: Sequence[Finding], entries: Sequence[CommentEntry],
             resolved: Sequence[Finding] = ()) -> list[CommentStatus]:
    """Each comment against ``findings`` (a report's), in the record's order; ``resolved``: the
    findings a comparison lists as resolved (the round before had them)."""
    now = {(f.rule, f.subject): f for f in reversed(findings)}  # the first of each, in order
    gone = {(f.rule, f.subject) for f in resolved}
    out = []
    for e in entries:
        key = (e.comment.rule, e.comment.subject)
        out.append(CommentStatus(e, now.get(key), resolved=key in gone and key not in now))
    return out
