"""``--format pdf:FILE``: the HTML report printed to PDF by headless Chromium.

The PDF is the HTML report (:mod:`airgate.writers.html`) as its print stylesheet lays it out: no
navigation, each system on a new page, every calculation trail open, markers that read in black
and white. Chromium is an outside program (Debian's ``chromium`` package, or the executable
``AIRGATE_CHROMIUM`` names); without it the format is a usage error (exit 2) that says so, and
nothing is written.

Same input, same bytes: Chromium runs with the time zone, language and a fresh profile fixed, and
the two dates it stamps in the document information (creation and modification, the clock time
of the run) are replaced by one fixed date of the same length, so no offset in the file moves.
The PDF is printed untagged (``--disable-pdf-tagging``): Chromium names the tagged structure's
elements after the page's DOM node numbers, whose order differs from run to run, so a tagged
print of the same page is not the same file twice.
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
         "--disable-component-update", "--no-pdf-header-footer", "--disable-pdf-tagging",
         "--lang=en-US")
#: a PDF date of the document information (``D:YYYYMMDDHHmmSS``), and the fixed one put in its place
_DATE = re.compile(rb"\(D:\d{14}")
_FIXED = b"(D:20000101000000"


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
        return fixed_dates(out.read_bytes())


def render(batch) -> bytes:
    """The whole run as one PDF: the HTML report, printed."""
    from airgate.writers import html

    return print_html(html.render(batch))
