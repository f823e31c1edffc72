"""The report formats of ``airgate check``: the one registry, and how a run of several
schedules is written in each.

text and markdown write each schedule's report in turn and close with a summary of the run; json
writes a report object for one schedule and a batch wrapper around them for several; junit,
sarif and html write one document for the whole run, and pdf the html document printed
(docs/report-format.md).

:data:`FORMATS` is where ``--format`` takes its names (and its help) from. A new format is a
writer module plus one :class:`ReportFormat` entry here. The writers are imported when a report
is written, so reading this registry (building the command line) stays cheap.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

from airgate.errors import UsageError

if TYPE_CHECKING:
    from airgate.evaluation.batch import Batch
    from airgate.evaluation.compare import Comparison
    from airgate.writers.output import Body


@dataclass(frozen=True)
class ReportFormat:
    """One report format: its ``--format`` name, usual file extension and writer."""

    name: str
    extension: str  #: the usual file extension (docs and the pre-commit example)
    #: ``(batch, series_step) → body``: the whole run, as text or pieces of text
    write: Callable[[Batch, int], Body]
    #: bytes, not text: written to a file only (``--format NAME:FILE``)
    binary: bool = False
    #: the format carries every zone's calculation trails on request (``check --trails``):
    #: its writer then takes ``trails=`` as a keyword
    trails: bool = False
    #: the format draws each zone's design-day series (charts): the evaluation keeps them,
    #: which the other formats do not need (``--series-step`` asks for them in JSON)
    series: bool = False


def _whole_run(module: str) -> Callable[[Batch, int], Body]:
    """A writer that writes one document for the whole run: its ``chunks(batch)`` (pieces
    made while they are written) where it has one, else its ``render(batch)``."""
    def write(batch: Batch, series_step: int = 0) -> Body:
        writer = importlib.import_module(f"airgate.writers.{module}")
        return writer.chunks(batch) if hasattr(writer, "chunks") else writer.render(batch)
    return write


def _json(batch: Batch, series_step: int = 0, trails: bool = False) -> Body:
    """A report object for one schedule, a batch wrapper for several, written piece by piece
    (a large portfolio's indented JSON is never one string)."""
    from airgate.writers import json_report

    if batch.single:
        return json_report.chunks(batch.reports[0], series_step, json_report.gate(batch),
                                  trails=trails)
    return json_report.batch_chunks(batch, series_step, trails=trails)


def _text(batch: Batch, series_step: int = 0) -> str:
    from airgate.writers import shared, text
    from airgate.writers.text import clean

    if batch.single:
        return text.render(batch.reports[0], gate=shared.gate_line(batch))
    n = len(batch.reports)
    parts = []
    for i, r in enumerate(batch.reports, 1):
        parts.append(f"━━ schedule {i} of {n}: {clean(r.schedule_file)} ━━\n\n" + text.render(r))
    return "\n".join(parts) + "\n" + _text_summary(batch)


def _text_summary(batch: Batch) -> str:
    from airgate.formatting import count
    from airgate.writers import shared
    from airgate.writers.text import clean

    failing = sum(r.verdict == "fail" for r in batch.reports)
    out = [f"Run summary — {len(batch.reports)} schedules, {failing} fail"]
    width = max(len(clean(r.schedule_file)) for r in batch.reports)
    for r in batch.reports:
        c = r.counts()
        out.append(f"  {r.verdict.upper():<5} {clean(r.schedule_file):<{width}}  "
                   f"{c['fail']} fail · {count(c['warning'], 'warning')} · {c['info']} info · "
                   f"{r.waived_count()} waived"
                   + (f" · {count(r.declared_count(), 'declared limit')} missed"
                      if r.declared_count() else ""))
    if batch.waivers:
        out += ["", "Waivers of the waivers file"]
        out += [f"  {shared.STATE_LABEL[s.state]:<10}{clean(shared.status_line(s))}"
                for s in batch.waivers]
    c = batch.counts()
    out += ["", f"Result: {batch.verdict.upper()} — {failing} of {len(batch.reports)} schedules "
                f"fail; {c['fail']} failing, {c['warning']} warning, {c['info']} info, "
                f"{c['waived']} waived findings"
                + (f"; {count(c['declared'], 'declared limit')} missed (not a verdict)"
                   if c["declared"] else "") + "."]
    gate = shared.gate_line(batch)
    out += ([gate] if gate else []) + ["", "Cautions"]
    out += [f"  - {x}" for x in batch.cautions()[:1]]
    return "\n".join(out) + "\n"


#: the report formats by ``--format`` name; the first is the default
FORMATS: dict[str, ReportFormat] = {f.name: f for f in (
    ReportFormat("text", ".txt", _text),
    ReportFormat("json", ".json", _json, trails=True),
    ReportFormat("junit", ".xml", _whole_run("junit")),
    ReportFormat("sarif", ".sarif", _whole_run("sarif")),
    ReportFormat("markdown", ".md", _whole_run("markdown")),
    ReportFormat("html", ".html", _whole_run("html"), series=True),
    ReportFormat("pdf", ".pdf", _whole_run("pdf"), binary=True, series=True),
)}
#: the usual file extension of each format
EXTENSIONS = {name: f.extension for name, f in FORMATS.items()}


@dataclass(frozen=True)
class CompareFormat:
    """One format of ``airgate compare``: its ``--format`` name, extension and writer."""

    name: str
    extension: str
    #: ``(comparison, batch of NEW) → body``; the batch gives the gate's outcome
    write: Callable[[Comparison, Batch], Body]


def _compare(module: str, function: str) -> Callable[[Comparison, Batch], Body]:
    def write(cmp: Comparison, batch: Batch) -> Body:
        return getattr(importlib.import_module(f"airgate.writers.{module}"), function)(cmp, batch)
    return write


#: the formats of ``airgate compare`` by ``--format`` name; the first is the default
COMPARE_FORMATS: dict[str, CompareFormat] = {f.name: f for f in (
    CompareFormat("text", ".txt", _compare("compare", "text")),
    CompareFormat("json", ".json", _compare("compare", "json_text")),
    CompareFormat("markdown", ".md", _compare("compare", "markdown")),
    CompareFormat("html", ".html", _compare("compare_html", "render")),
)}


def compare_stream(name: str, cmp: Comparison, batch: Batch) -> Body:
    """A comparison in format ``name`` (a key of :data:`COMPARE_FORMATS`)."""
    fmt = COMPARE_FORMATS.get(name)
    if fmt is None:
        raise UsageError(f"unknown comparison format '{name}'", allowed=list(COMPARE_FORMATS),
                         field=("--format",))
    return fmt.write(cmp, batch)


def stream(name: str, batch: Batch, series_step: int = 0, trails: bool = False) -> Body:
    """The whole run in format ``name`` (a key of :data:`FORMATS`): text, or its pieces;
    ``trails``: every zone's calculation trails, in a format that carries them on request."""
    fmt = FORMATS.get(name)
    if fmt is None:
        raise UsageError(f"unknown report format '{name}'", allowed=list(FORMATS),
                         field=("--format",))
    if (fmt.series or series_step) and not all(r.series for r in batch.reports):
        raise ValueError(f"the {name} report draws the design-day series, and a report of "
                         "this run was evaluated with series=False; evaluate it with "
                         "series=True")
    if fmt.trails:
        return fmt.write(batch, series_step, trails=trails)
    return fmt.write(batch, series_step)


def render(name: str, batch: Batch, series_step: int = 0, trails: bool = False) -> str:
    """:func:`stream` as one string."""
    from airgate.writers import output

    return output.joined(stream(name, batch, series_step, trails))
