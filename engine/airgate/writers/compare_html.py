"""``airgate compare --format html``: the comparison of two revisions as one self-contained page
(the report's stylesheet; Jinja2 with autoescaping, as :mod:`airgate.writers.html`). It formats
what :mod:`airgate.evaluation.compare` worked out; it computes nothing."""

from __future__ import annotations

from airgate import __version__
from airgate.evaluation.compare import Comparison
from airgate.writers import compare as words
from airgate.writers.html import environment, review_view


def _mark(old: str | None, new: str | None) -> str:
    """The row class: a verdict that now fails reads as a failure, one that now passes as a pass."""
    return {"fail": "fail", "pass": "pass"}.get(new or "", "") if old != new else ""


def render(cmp: Comparison, batch) -> str:
    u = cmp.new.units
    tables = [
        {"id": "verdicts", "title": "Verdicts that changed", "head": ["subject", "old", "new"],
         "rows": [{"mark": _mark(c.old, c.new),
                   "cells": [c.subject, words.verdict_word(c.old), words.verdict_word(c.new)]}
                  for c in cmp.verdicts]},
        {"id": "inputs", "title": "Inputs that changed",
         "head": ["subject", "field", "old", "new", "where (old → new)"],
         "rows": [{"mark": "", "cells": [c.subject, words.field_name(c), words.cut(c.old),
                                         words.cut(c.new),
                                         f"{words.at(c.old_at)} → {words.at(c.new_at)}"]}
                  for c in cmp.inputs]},
        {"id": "values", "title": f"Values that moved by more than {words.tolerance_text(cmp)}",
         "head": ["subject", "value", "old", "new", "change"],
         "rows": [{"mark": "", "cells": [c.subject, c.symbol, *words.value_cells(c, u)]}
                  for c in cmp.values]},
        {"id": "resolved", "title": "Findings resolved",
         "head": ["severity", "rule", "subject", "message"],
         "rows": [{"mark": "pass", "cells": [f.severity, f.rule, f.subject, f.message]}
                  for f in cmp.resolved]},
        {"id": "new", "title": "New findings", "head": ["severity", "rule", "subject", "message"],
         "rows": [{"mark": f.severity if f.severity == "fail" else "",
                   "cells": [f.severity, f.rule, f.subject, f.message]} for f in cmp.added]},
    ]
    side = (lambda r: {"file": r.schedule_file, "rules": r.pack.id, "verdict": r.verdict,
                       "word": words.verdict_word(r.verdict)})
    return environment().get_template("compare.html.j2").render(
        version=__version__, title=f"airgate compare — {cmp.new.project_name}",
        project=cmp.new.project_name, old=side(cmp.old), new=side(cmp.new),
        result=words.result_line(cmp, batch), tables=tables, review=review_view(cmp.review),
        cautions=words.cautions(cmp))
