"""``airgate plot``: CO2 over the design day with the limit line and the occupancy profile.

matplotlib is an optional extra (``pip install "airgate[plot]"``); without it the command says
how to install it. ``--format``, or else the file extension, picks the format (PNG or SVG).
Output is deterministic: no timestamps or random ids in the file (SVG hash salt fixed, PNG
metadata cleared).
"""

from __future__ import annotations

import io
import textwrap
from pathlib import Path
from typing import TYPE_CHECKING

from airgate.errors import UsageError
from airgate.escaping import terminal

if TYPE_CHECKING:  # the command line reads FORMATS without loading the engine
    from airgate.evaluation.report import Report, SystemResult, ZoneResult

FORMATS = {".png": "png", ".svg": "svg"}


#: Longest name drawn in a title or legend entry; a longer one is cut with an ellipsis so the
#: picture keeps its layout (the report holds the full name).
NAME_CHARS = 60


def text(value: object, limit: int | None = None) -> str:
    """Input text as matplotlib must draw it: literally, cut to ``limit`` characters (with
    ``…``) when one is given. A ``$`` would start mathtext
    (``$\\foo{x}$`` is an error, deep ``^{}`` nesting exhausts the parser), so every ``$`` is
    escaped; control and bidirectional characters are shown as escapes (``\\x1b``); a label
    starting with ``_``, which matplotlib leaves out of a legend, gets a leading space."""
    out = terminal(value)
    if limit is not None and len(out) > limit:
        out = out[:limit - 1] + "…"
    out = out.replace("$", r"\$")
    return " " + out if out.startswith("_") else out


def _pyplot():
    try:
        import matplotlib

        matplotlib.use("Agg")
        matplotlib.rcParams["svg.hashsalt"] = "airgate"
        import matplotlib.pyplot as plt
    except ImportError:
        raise UsageError("plotting needs matplotlib",
                         hint='pip install "airgate[plot]" (or pip install matplotlib)') from None
    return plt


def _zones(report: Report, system: SystemResult, zones: list[ZoneResult]) -> list[ZoneResult]:
    usable = [z for z in zones if z.series is not None]
    if not usable:
        usable = [z for z in zones if z.rise is not None]  # no profile: the rise
    if not usable:
        which = zones[0].id if len(zones) == 1 else system.id
        raise UsageError(f"no design-day CO2 series for {which}: give the zone a height or "
                         "volume and an occupancy profile")
    return usable


def _series(z: ZoneResult):
    return z.series if z.series is not None else z.rise


def plot(report: Report, system: SystemResult, zones: list[ZoneResult], output: str,
         fmt: str | None = None) -> None:
    """Draw CO2 against time of day for ``zones``, with limit and occupancy, to ``output``
    in picture format ``fmt`` (one of the values of :data:`FORMATS`; default: from the file's
    extension)."""
    from airgate.writers.output import write_atomic

    suffix = Path(output).suffix.lower()
    if fmt is None and suffix not in FORMATS:
        raise UsageError(f"cannot tell the picture format from '{output}'",
                         allowed=sorted(FORMATS), hint="name the file .png or .svg, or give "
                                                        "--format")
    fmt = fmt or FORMATS[suffix]
    zones = _zones(report, system, zones)
    plt = _pyplot()
    fig, (ax, occ) = plt.subplots(2, 1, figsize=(9, 6), sharex=True,
                                  gridspec_kw={"height_ratios": [3, 1]})
    for z in zones:
        label = text(f"{z.id} {z.name or ''}".strip(), NAME_CHARS)
        series = _series(z)
        ax.plot(series.times, series.ppm, label=label, linewidth=1.6)
        occ.step(series.times, series.occupancy, where="post", linewidth=1.2, label=label)
    first = zones[0].dilution
    ax.axhline(first.value("C_out"), color="0.5", linestyle=":", linewidth=1,
               label=f"outdoor {first.value('C_out'):.0f} ppm")
    if "C_limit" in first:
        ax.axhline(first.value("C_limit"), color="tab:red", linestyle="--", linewidth=1.2,
                   label=f"limit {first.value('C_limit'):.0f} ppm")
    ax.set_ylabel("CO2 [ppm]")
    what = ("the design day" if zones[0].series is not None else
            f"a day: {text(_series(zones[0]).profile, NAME_CHARS)}")
    title = (f"{text(report.project_name, NAME_CHARS)} — {text(system.id, NAME_CHARS)}: "
             f"CO2 from occupants over {what} (well-mixed)")
    ax.set_title(textwrap.fill(title, 110), fontsize=10)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=8, loc="upper left")
    occ.set_ylabel("occupancy [× Pz]")
    occ.set_xlabel("time of day [h]")
    occ.set_xlim(0, 24)
    occ.set_xticks(range(0, 25, 3))
    occ.grid(True, alpha=0.3)
    fig.text(0.01, 0.005, "Aid to review only: the adopted code and the licensed professional "
             "of record govern; results depend on the inputs given.", fontsize=7, color="0.4")
    fig.tight_layout(rect=(0, 0.02, 1, 1))
    metadata = {"Software": None} if fmt == "png" else {"Date": None}
    picture = io.BytesIO()
    try:
        fig.savefig(picture, format=fmt, dpi=120, metadata=metadata)
    finally:
        plt.close(fig)
    write_atomic(output, picture.getvalue())
