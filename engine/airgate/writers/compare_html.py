"""``airgate compare --format html``: the comparison of two revisions as one self-contained page
(the report's stylesheet; Jinja2 with autoescaping, as :mod:`airgate.writers.html`). It formats
what :mod:`airgate.evaluation.compare` worked out; it computes nothing."""

from __future__ import annotations

from airgate import __version__, units
from airgate.evaluation.compare import Comparison
from airgate.writers import compare as words
from airgate.writers.html import environment, review_view


def render(cmp: Comparison, batch) -> str:
    tables = [{"id": t.id, "title": t.title, "head": t.head,
               "rows": [{"mark": m, "cells": r} for r, m in zip(t.rows, t.marks)]}
              for t in words.sections(cmp)]
    side = (lambda r: {"file": r.schedule_file, "rules": r.pack.id, "verdict": r.verdict,
                       "word": words.verdict_word(r.verdict)})
    return environment().get_template("compare.html.j2").render(
        version=__version__, title=f"airgate compare — {cmp.new.project_name}",
        project=cmp.new.project_name, old=side(cmp.old), new=side(cmp.new),
        result=words.result_line(cmp, batch), tables=tables, review=review_view(cmp.review),
        cautions=words.cautions(cmp), paper="letter" if cmp.new.units == units.IP else "A4")
