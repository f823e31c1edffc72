"""``--format pdf:FILE``: the HTML report printed to PDF by headless Chromium.

The PDF is the HTML report (:mod:`airgate.writers.html`) as its print stylesheet lays it out: no
navigation, each system on a new page, every calculation trail open, markers that read in black
and white. Chromium is an outside program (Debian's ``chromium`` package, or the executable
``AIRGATE_CHROMIUM`` names); without it the format is a usage error (exit 2) that says so, and
nothing is written.

Same input, same bytes: Chromium runs with the time zone, language and a fresh profile fixed, and
two things it stamps that vary from run to run are replaced by values of the same length, so no
offset in the file moves: the two dates of the document information (creation and modification,
the clock time of the run) by one fixed date, and the ids of the tagged structure elements
(``nodeNNNNNNNN``, the page's DOM node numbers, which shift with whatever else the browser built
first) by their rank, which keeps the order the structure's id tree is sorted in.
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import tempfile
from pathlib import Path

from airgate.errors import UsageError

#: the executable's names looked up on PATH, in order
NAMES = ("chromium", "chromium-browser", "google-chrome", "chrome")
#: the environment variable naming the executable
VARIABLE = "AIRGATE_CHROMIUM"
#: seconds Chromium may take to print one report
TIMEOUT = 300
FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-sync",
         "--disable-extensions", "--disable-background-networking",
         "--disable-component-update", "--no-pdf-header-footer", "--lang=en-US")
#: a PDF date of the document information (``D:YYYYMMDDHHmmSS``), and the fixed one put in its place
_DATE = re.compile(rb"\(D:\d{14}")
_FIXED = b"(D:20000101000000"
#: the id Chromium gives a tagged structure element (its DOM node's number)
_NODE = re.compile(rb"node(\d{8})")


def chromium() -> str:
    """The Chromium executable to print with; a usage error naming what to install when there is
    none."""
    named = os.environ.get(VARIABLE)
    if named:
        found = shutil.which(named)
        if found is None:
            raise UsageError(f"{VARIABLE}={named}: no such executable", field=("--format",),
                             hint=f"set {VARIABLE} to the path of a Chromium executable")
        return found
    for name in NAMES:
        found = shutil.which(name)
        if found is not None:
            return found
    raise UsageError("the pdf format prints the HTML report with headless Chromium, which was "
                     "not found", field=("--format",),
                     hint=f"install it (Debian: apt-get install chromium) or set {VARIABLE}; "
                          "or write --format html and print it from a browser")


def fixed_dates(pdf: bytes) -> bytes:
    """``pdf`` with the clock dates of its document information replaced by a fixed date."""
    return _DATE.sub(_FIXED, pdf)


def ranked_node_ids(pdf: bytes) -> bytes:
    """``pdf`` with each structure element id ``nodeNNNNNNNN`` replaced by its rank among them
    (``node00000000`` for the lowest): the same length, the same order, and the same bytes
    whatever numbers the browser's DOM happened to hand out."""
    numbers = sorted({int(n) for n in _NODE.findall(pdf)})
    rank = {n: i for i, n in enumerate(numbers)}
    return _NODE.sub(lambda m: b"node%08d" % rank[int(m.group(1))], pdf)


def print_html(html: str) -> bytes:
    """The PDF headless Chromium prints from the page ``html``."""
    exe = chromium()
    with tempfile.TemporaryDirectory(prefix="airgate-pdf-") as tmp:
        page, out, profile = Path(tmp, "report.html"), Path(tmp, "report.pdf"), Path(tmp, "p")
        page.write_text(html, encoding="utf-8")
        env = {k: v for k, v in os.environ.items() if not k.startswith(("LC_", "LANG"))}
        env.update(TZ="UTC", LANG="C.UTF-8", HOME=tmp)
        try:
            done = subprocess.run([exe, *FLAGS, f"--user-data-dir={profile}",
                                   f"--print-to-pdf={out}", page.as_uri()],
                                  env=env, capture_output=True, timeout=TIMEOUT,
                                  stdin=subprocess.DEVNULL)
        except subprocess.TimeoutExpired:
            raise UsageError(f"Chromium did not print the report within {TIMEOUT} s",
                             field=("--format",), hint="write --format html instead") from None
        except OSError as exc:
            raise UsageError(f"Chromium could not be started: {exc.strerror or exc}",
                             field=("--format",), hint=f"check {exe} or set {VARIABLE}") from None
        if not out.is_file() or not out.read_bytes().startswith(b"%PDF-"):
            detail = done.stderr.decode("utf-8", "replace").strip().splitlines()[-1:] or [""]
            raise UsageError(f"Chromium printed no PDF (exit status {done.returncode}) "
                             f"{detail[0][:200]}".rstrip(), field=("--format",),
                             hint="write --format html instead")
        return ranked_node_ids(fixed_dates(out.read_bytes()))


def render(batch) -> bytes:
    """The whole run as one PDF: the HTML report, printed."""
    from airgate.writers import html

    return print_html(html.render(batch))
