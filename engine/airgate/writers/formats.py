"""The report formats of ``airgate check`` and how a run of several schedules is written in each.

text and markdown write each schedule's report in turn and close with a summary of the run; json
writes a report object for one schedule and a batch wrapper around them for several; junit,
sarif and html write one document for the whole run (docs/report-format.md).
"""

from __future__ import annotations

from airgate.evaluation.batch import Batch
from airgate.writers import html, json_report, junit, markdown, output, sarif, shared, text
from airgate.writers.output import Body
from airgate.writers.text import clean

FORMATS = ("text", "json", "junit", "sarif", "markdown", "html")
#: the usual file extension of each format (docs and the pre-commit example)
EXTENSIONS = {"text": ".txt", "json": ".json", "junit": ".xml", "sarif": ".sarif",
              "markdown": ".md", "html": ".html"}


def stream(name: str, batch: Batch, series_step: int = 0) -> Body:
    """The whole run in format ``name`` (one of :data:`FORMATS`): text, or for JSON its pieces
    (a large portfolio's indented JSON is then written without ever being one string)."""
    if name == "text":
        return _text(batch)
    if name == "json":
        if batch.single:
            return json_report.chunks(batch.reports[0], series_step)
        return json_report.batch_chunks(batch, series_step)
    if name == "junit":
        return junit.render(batch)
    if name == "sarif":
        return sarif.render(batch)
    if name == "markdown":
        return markdown.render(batch)
    if name == "html":
        return html.render(batch)
    raise ValueError(f"unknown format {name!r}")


def render(name: str, batch: Batch, series_step: int = 0) -> str:
    """:func:`stream` as one string."""
    return output.joined(stream(name, batch, series_step))


def _text(batch: Batch) -> str:
    if batch.single:
        return text.render(batch.reports[0])
    n = len(batch.reports)
    parts = []
    for i, r in enumerate(batch.reports, 1):
        parts.append(f"━━ schedule {i} of {n}: {clean(r.schedule_file)} ━━\n\n" + text.render(r))
    return "\n".join(parts) + "\n" + _text_summary(batch)


def _text_summary(batch: Batch) -> str:
    failing = sum(r.verdict == "fail" for r in batch.reports)
    out = [f"Run summary — {len(batch.reports)} schedules, {failing} fail"]
    width = max(len(clean(r.schedule_file)) for r in batch.reports)
    for r in batch.reports:
        c = r.counts()
        out.append(f"  {r.verdict.upper():<5} {clean(r.schedule_file):<{width}}  "
                   f"{c['fail']} fail · {c['warning']} warning · {c['info']} info · "
                   f"{r.waived_count()} waived"
                   + (f" · {r.declared_count()} declared limits missed"
                      if r.declared_count() else ""))
    if batch.waivers:
        out += ["", "Waivers of the waivers file"]
        out += [f"  {shared.STATE_LABEL[s.state]:<10}{clean(shared.status_line(s))}"
                for s in batch.waivers]
    c = batch.counts()
    out += ["", f"Result: {batch.verdict.upper()} — {failing} of {len(batch.reports)} schedules "
                f"fail; {c['fail']} failing, {c['warning']} warning, {c['info']} info, "
                f"{c['waived']} waived findings"
                + (f"; {c['declared']} declared limits missed (not a verdict)"
                   if c["declared"] else "") + ".", "", "Cautions"]
    out += [f"  - {x}" for x in batch.cautions()[:1]]
    return "\n".join(out) + "\n"
