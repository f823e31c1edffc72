"""The fast YAML reading (libyaml's scanner and parser under PyYAML's Python composer) against
the reference reading (PyYAML's pure-Python safe loader), airgate.readers.document.

Outside reference: PyYAML's own pure-Python loader. For every YAML file the project ships
(demo, broken-input corpus, rule packs and their tests) and for damaged copies of the demo and
of two rule packs, the two readings must give the same data, the same positions and the same
source texts, or the fast one must give way (a syntax error it meets is read again by the
reference loader, whose message is the one reported).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from airgate.errors import AirgateError, ScheduleError
from airgate.readers import document as docmod

from conftest import DEMO, ROOT, examples
from fuzzing import damage

pytestmark = pytest.mark.skipif(len(docmod._LOADERS) < 2,
                                reason="PyYAML without libyaml: one loader only")

FILES = sorted(p for top in ("fixtures", "rules") for p in (ROOT / top).rglob("*.y*ml"))


def _outcome(read, text):
    try:
        doc = read(text)
    except docmod._SyntaxSeen as seen:
        return ("failed", seen.error.message, seen.error.line, seen.error.column)
    except AirgateError as exc:
        return ("failed", exc.message, exc.line, exc.column)
    return ("read", doc.data, doc.positions, doc.texts)


def _same(text):
    """parse_yaml (fast reading where it can) gives exactly what the reference reading gives,
    and where the fast loader reads a text at all it reads it as the reference does."""
    ref = _outcome(lambda t: docmod._parse_with(docmod._Loader, t, "f.yaml", ScheduleError), text)
    public = _outcome(lambda t: docmod.parse_yaml(t, "f.yaml", ScheduleError), text)
    assert public == ref
    fast = _outcome(lambda t: docmod._parse_with(docmod._LOADERS[0], t, "f.yaml",
                                                 ScheduleError), text)
    if fast[0] == "read" and "\t" not in text:
        assert fast == ref


def test_every_shipped_yaml_file_reads_the_same():
    assert len(FILES) > 100
    for path in FILES:
        text = path.read_bytes().decode("utf-8-sig", errors="replace")
        _same(text)


DAMAGED = [Path(DEMO), ROOT / "rules" / "ashrae-62.1-2019-quillby-bay.yaml",
           ROOT / "rules" / "en-16798-1-2019.yaml"]  # a schedule; packs with anchors, tables


@pytest.mark.parametrize("source", DAMAGED, ids=lambda p: p.name)
@settings(max_examples=examples(),
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_damaged_files_read_the_same(source, data):
    raw = source.read_bytes()
    broken = damage(data.draw, raw, [b":", b"-", b"[", b"{", b'"', b"\t", b" ", b"\n", b"&a",
                                     b"*a", b"<<", b"#", b"|", b"'"])
    _same(broken.decode("utf-8", errors="replace"))


def test_syntax_errors_and_tabs_are_reported_as_the_reference_reads_them():
    # An unclosed flow mapping, and a tab after a colon that libyaml would take as a space
    # but PyYAML's loader refuses: both come out as the reference loader's error.
    for text in ("schedule: 1\nproject: {name: x\n", "schedule: 1\nproject: {name:\tx}\n"):
        with pytest.raises(ScheduleError) as got:
            docmod.parse_yaml(text, "f.yaml", ScheduleError)
        ref = _outcome(lambda t: docmod._parse_with(docmod._Loader, t, "f.yaml",
                                                    ScheduleError), text)
        assert ref[0] == "failed" and got.value.message == ref[1]
        assert (got.value.line, got.value.column) == ref[2:]
