"""The JSON finder's index (readers/document_json.py, ``_Index``) against the scan of every token.

Reference: ``_scan_json_positions``, the regular-expression scan of every token that gives the
position of each value (itself held to a YAML composition of the same text in
test_document_loaders.py); common practice: an optimisation is held to the plain computation
it replaces. The finder indexes the text's punctuation outside its strings with numpy (the
standard library's JSON escapes and the UTF-8 encoding decide what is inside a string and
which character an offset is), a piece of the text at a time; the pieces are made a few
characters long here so that every boundary case is met. Documents are generated (invented
data): strings full of brackets, commas, quotes, backslashes, escapes and characters beyond
ASCII, in keys and values, at any indentation.
"""

from __future__ import annotations

import json
import random

import pytest

from airgate.readers import document, document_json

#: texts that look like JSON punctuation, escapes and wide characters
NASTY = ['', ',', '{', '}', '[', ']', '"', '\\', '\\"', '"\\', '\\\\', '\\\\"', 'a,b]}',
         '{"k": [1, 2]}', 'ft²', 'm³ · h', 'é"', '\u2603', '\U0001F600', '\\u0041', 'x' * 30,
         '\t', '\u00e9\\', '"]', '\\n']


def _text(rng: random.Random) -> str:
    return "".join(rng.choice(NASTY) for _ in range(rng.randint(0, 4)))


def _value(rng: random.Random, depth: int):
    r = rng.random()
    if depth > 4 or r < 0.35:
        return rng.choice([_text(rng), 0, -1.5, 1e-7, 12345678901234567890, True, False, None])
    if r < 0.65:
        return [_value(rng, depth + 1) for _ in range(rng.randint(0, 4))]
    return {_text(rng) + str(i): _value(rng, depth + 1) for i in range(rng.randint(0, 4))}


def _paths(value, prefix=()):
    yield prefix
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _paths(item, prefix + (key,))
    elif isinstance(value, list):
        for i, item in enumerate(value):
            yield from _paths(item, prefix + (i,))


def _documents(count: int, seed: int):
    rng = random.Random(seed)
    for _ in range(count):
        value = _value(rng, 0)
        if not isinstance(value, (dict, list)):
            value = {"v": value}
        indent = rng.choice([None, 0, 1, 2, "\t", " \t"])
        text = json.dumps(value, indent=indent, ensure_ascii=rng.random() < 0.3)
        if rng.random() < 0.3:
            text = rng.choice(["", " ", "\n", "\t\n "]) + text + rng.choice(["", "\n", " \n"])
        yield text


@pytest.mark.parametrize("piece", [3, 7, 64, 1 << 22])
def test_the_finder_gives_the_position_of_every_value_as_the_scan(piece, monkeypatch):
    """Every value's line and column, and the nearest ancestor's for a path the text lacks,
    as the scan of every token gives them, whatever the text holds and wherever it is cut."""
    monkeypatch.setattr(document_json, "_PIECE", piece)
    checked = 0
    for text in _documents(120, seed=piece):
        data = json.loads(text)
        positions, _ = document_json._scan_json_positions(text)
        scanned = document.Document(file="s.json", data=data, positions=positions)
        finder = document_json._Finder(text)
        paths = list(_paths(data))
        assert set(paths) == set(positions)
        missing = ([p + ("nowhere",) for p in paths] + [p + (0, 1) for p in paths]
                   + [p + (99,) for p in paths] + [p + (-1,) for p in paths])
        for path in paths + missing:
            assert finder.locate(path) == scanned.locate(path), (text, path)
            checked += 1
    assert checked > 1000


def test_an_index_given_as_true_or_a_float_finds_what_it_found_before():
    """A path part equal to an index (True for 1, 1.0) finds that member, as the mapping of
    index → offset the finder kept before did; a text part in a list is not found."""
    text = '{"a": [10, [20, 21], 30]}'
    finder = document_json._Finder(text)
    positions, _ = document_json._scan_json_positions(text)
    assert finder.locate(("a", True)) == positions[("a", 1)]
    assert finder.locate(("a", 2.0)) == positions[("a", 2)]
    assert finder.locate(("a", True, False)) == positions[("a", 1, 0)]
    assert finder.locate(("a", "1")) == positions[("a",)]
    assert finder.locate(("a", 1.5)) == positions[("a",)]


def test_a_position_is_counted_in_characters_past_wide_ones():
    """Columns count characters, not UTF-8 bytes, after text beyond ASCII on the same line
    and on earlier lines (common practice: the position an editor shows)."""
    text = '{"n\u00e9": "\U0001F600\u2603", "z": [1,\n "\u00e9\u00e9", {"\u00e9": 2}]}'
    finder = document_json._Finder(text)
    assert finder.locate(("z",)) == (1, 19)  # counted by hand: 18 characters before "["
    assert finder.locate(("z", 1)) == (2, 2)
    assert finder.locate(("z", 2, "\u00e9")) == (2, 14)


@pytest.mark.parametrize("text,path", [
    ('{"a": "x\\"b", "c": {"b": 1}, "b": 2}', ("b",)),  # "b" inside a text and a nested mapping
    ('{"c": {"b": 1, "d": "\\"b\\": 3"}, "b": [2]}', ("b", 0)),
    ('{"a": 1, "\\u0062": 5}', ("b",)),  # a key written with an escape
    ('{"q\\"k": 1, "q": 2}', ('q"k',)),  # a key with a quote
    ('{"back\\\\": 1, "back": 2}', ("back\\",)),  # a key with a backslash
    ('{"a\\"x": 1, "a\\\\": 2}', ("a\\",)),  # '"a\"' written is where 'a"x' begins
    ('{"a": {"b": {"b": 7}}, "b": 8}', ("a", "b", "b")),
    ('{"a": 1}', ("b",)),  # not there: the mapping's own position
    ('{"a": 1}', (1,)),
])
def test_a_key_is_found_as_written_and_otherwise(text, path):
    """A key found where it is written as asked for (``"key"`` where a member of the mapping
    begins) is the scan's, and one written otherwise, or not there, is found by reading
    every key of the mapping (the scan of every token is the reference)."""
    positions, _ = document_json._scan_json_positions(text)
    scanned = document.Document(file="s.json", data=json.loads(text), positions=positions)
    finder = document_json._Finder(text)
    assert finder.locate(path) == scanned.locate(path)
    assert finder.locate(path) == scanned.locate(path)  # kept, and found again the same
