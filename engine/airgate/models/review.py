"""The reviewer's record: a plan reviewer's comments on findings, and the designer's responses.

A record file (``--review FILE``, docs/review.md) holds ``comments:``, each on one finding as
findings name it (check id and subject), with the comment, the response, its status, who wrote it
and on which day. What each comment's finding has become is :mod:`airgate.evaluation.review`.
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from airgate.models.waivers import Subject, iso_date

#: a comment's status, as the reviewer sets it: open (awaiting a response), responded (the
#: designer answered; the reviewer has not closed it), closed
STATUSES = ("open", "responded", "closed")

Day = iso_date("The day the comment was written, YYYY-MM-DD. [–]")


class Comment(BaseModel):
    """One comment of the reviewer on the finding of ``rule`` on ``subject``."""

    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True)

    id: str | None = Field(None, min_length=1, description="The reviewer's reference, e.g. "
                                                           "'PR-0412'. [–]")
    subject: Subject
    rule: str = Field(min_length=1, description="Check id of the finding, e.g. "
                                                "'system-intake'. [–]")
    comment: str = Field(min_length=1, description="What the reviewer asks or notes. [–]")
    response: str | None = Field(None, min_length=1, description="The designer's response. [–]")
    status: Literal["open", "responded", "closed"] = Field(
        "open", description="open, responded or closed (default open). [–]")
    reviewer: str = Field(min_length=1, description="Who wrote the comment: name, role or "
                                                    "office. [–]")
    date: Day


class ReviewFile(BaseModel):
    """A reviewer's record: ``comments:``, a list of comments."""

    model_config = ConfigDict(extra="forbid", frozen=True)

    comments: list[Comment] = Field(description="The reviewer's comments. [–]")
