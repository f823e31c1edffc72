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
from airgate.readers import document_json as jsonmod

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


# --- JSON: positions from one scan of the tokens, against a YAML composition of the text -------

JSON_FILES = sorted(p for top in ("fixtures", "rules", "tests")
                    for p in (ROOT / top).rglob("*.json"))


def _composed(text):
    doc = jsonmod._json_positions(text, "f.json", ScheduleError)
    return doc.positions, doc.texts


def test_every_shipped_json_file_is_located_as_yaml_composes_it():
    import json

    checked = 0
    for path in JSON_FILES:
        text = path.read_bytes().decode("utf-8-sig", errors="replace")
        try:
            data = json.loads(text, object_pairs_hook=jsonmod._json_pairs,
                              parse_constant=jsonmod._Constant)
            expected = _composed(text)
        except (ValueError, AirgateError):
            continue  # not JSON, or JSON the YAML composer refuses: composed as before
        if jsonmod._walk_json(data) is not None or jsonmod._OTHER_BREAKS.search(text):
            continue  # a problem to report, or another line break: composed as before
        assert jsonmod._scan_json_positions(text) == expected, path
        checked += 1
    assert checked >= 3


# Characters of the Basic Multilingual Plane: an escaped character beyond it ("\ud800\udc00")
# is composed by YAML as two surrogates, by JSON (and the scan) as the one character it is.
_chars = st.characters(blacklist_categories=("Cs",), max_codepoint=0xFFFF,
                       blacklist_characters="\r\x85\u2028\u2029\ufeff")
_scalars = (st.none() | st.booleans() | st.integers(-10**6, 10**6)
            | st.floats(allow_nan=False, allow_infinity=False) | st.text(_chars, max_size=8))
_values = st.recursive(_scalars, lambda inner: st.lists(inner, max_size=4)
                       | st.dictionaries(st.text(_chars, max_size=6), inner, max_size=4),
                       max_leaves=25)


@settings(max_examples=examples(2), suppress_health_check=[HealthCheck.too_slow])
@given(value=_values, indent=st.sampled_from([None, 0, 1, 2, "\t"]),
       ascii_only=st.booleans(), separators=st.sampled_from([None, (",", ":"), (" , ", " : ")]))
def test_json_positions_and_texts_are_those_of_a_yaml_composition(value, indent, ascii_only,
                                                                   separators):
    import json

    text = json.dumps({"schedule": 1, "data": value}, indent=indent, ensure_ascii=ascii_only,
                      separators=separators)
    try:
        expected = _composed(text)
    except AirgateError:
        return  # text YAML does not compose (a key over 1024 characters): composed as before
    assert jsonmod._scan_json_positions(text) == expected


def _eager(text: str):
    """What parse_json gave before positions were found lazily: every value walked, the
    positions found at once."""
    import json

    data = json.loads(text, object_pairs_hook=jsonmod._json_pairs,
                      parse_constant=jsonmod._Constant, parse_int=jsonmod._json_int)
    return data, jsonmod._walk_json(data)


@settings(max_examples=examples(2), suppress_health_check=[HealthCheck.too_slow])
@given(value=_values, indent=st.sampled_from([None, 2]), nodes=st.integers(1, 40),
       depth=st.integers(0, 6))
def test_json_read_lazily_is_json_read_at_once(value, indent, nodes, depth):
    # The fast reading (C decoder, values counted without paths, positions found when first
    # asked for) gives the data, positions, texts and refusals of the walk value by value.
    import json

    from airgate.readers import limits

    text = json.dumps({"schedule": 1, "data": value}, indent=indent)
    saved = limits.MAX_NODES, limits.MAX_DEPTH
    limits.MAX_NODES, limits.MAX_DEPTH = nodes, depth
    try:
        data, problem = _eager(text)
        try:
            doc = jsonmod.parse_json(text, "f.json", ScheduleError)
        except AirgateError as exc:
            assert problem is not None and problem[0] in ("nodes", "depth")
            assert "limit stops it" in exc.message
            return
    finally:
        limits.MAX_NODES, limits.MAX_DEPTH = saved
    assert problem is None
    assert doc.data == data
    assert isinstance(doc.positions, docmod.Lazy) and not dict.__len__(doc.positions)
    expected = jsonmod._scan_json_positions(text)
    assert doc.positions == expected[0] and doc.texts == expected[1]
    assert doc.locate(("data",)) == expected[0][("data",)]


def test_a_duplicate_key_or_constant_in_json_is_located_as_before():
    # the C decoder's reading flags them; the walk value by value then says where
    for text, message, line in (('{\n  "a": 1,\n  "b": {"c": 1,\n   "c": 2}\n}', "duplicate key 'c'", 4),
                                ('{\n  "a": [1,\n  NaN]\n}', "NaN is not a number", 3)):
        with pytest.raises(AirgateError) as err:
            jsonmod.parse_json(text, "f.json", ScheduleError)
        assert message in err.value.message and err.value.line == line
