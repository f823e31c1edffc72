"""YAML read straight from libyaml's events (airgate.readers.document_yaml) against the
composer's reading (airgate.readers.document: PyYAML's pure-Python safe loader, the reference).

Outside reference: PyYAML's own pure-Python loader. Where the fast reading reads a text it must
give the reference's data, positions and number texts; where it gives way, ``parse_yaml`` must
say exactly what the reference says (same message, line and column). Hostile documents (deep
nesting, alias bombs, huge flow collections) must still be refused by the limits of
docs/limits.md before they are held (common practice for untrusted input).
"""

from __future__ import annotations

import random

import yaml
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from airgate.errors import AirgateError, ScheduleError
from airgate.readers import document as docmod
from airgate.readers import document_yaml as fast
from airgate.readers import limits

from conftest import DEMO, ROOT, examples
from fuzzing import damage

pytestmark = pytest.mark.skipif(docmod._CParser is None,
                                reason="PyYAML without libyaml: the composer reads alone")

FILES = sorted(p for top in ("fixtures", "rules", "tests") for p in (ROOT / top).rglob("*.y*ml"))


def _message(exc: AirgateError) -> str:
    """A message up to its first line break: a value of an unknown tag is refused with PyYAML's
    own words, which quote the text below only where PyYAML's Python scanner read it (as
    before this reading: the composer over libyaml's events reports it)."""
    return exc.message.split("\n")[0]


def _reference(text: str):
    """The reference reading's outcome: data (as its repr: NaN is not equal to itself, and
    1, 1.0 and True must not pass for each other), positions and texts, or the refusal.

    The reference is the reading before the events were read straight: the composer over
    libyaml's events (which takes a few texts PyYAML's Python scanner refuses, e.g. ``0?`` in a
    flow mapping), and PyYAML's Python loader where that composer meets a syntax error or the
    text holds a tab."""
    loaders = docmod._LOADERS if "\t" not in text else (docmod._Loader,)
    for loader in loaders:
        try:
            doc = docmod._parse_with(loader, text, "f.yaml", ScheduleError)
        except docmod._SyntaxSeen as seen:
            if loader is not docmod._Loader:
                continue
            return ("failed", _message(seen.error), seen.error.line, seen.error.column)
        except AirgateError as exc:
            return ("failed", _message(exc), exc.line, exc.column)
        return ("read", repr(doc.data), doc.positions, doc.texts)


def _public(text: str):
    try:
        doc = docmod.parse_yaml(text, "f.yaml", ScheduleError)
    except AirgateError as exc:
        return ("failed", _message(exc), exc.line, exc.column)
    return ("read", repr(doc.data), doc.positions, doc.texts)


def _fast(text: str):
    got = docmod._read_events(text)
    return None if got is None else ("read", repr(got[0]), got[1], got[2])


def _agree(text: str) -> bool:
    """The fast reading gives the reference's result or gives way; parse_yaml gives the
    reference's result either way. True when the fast reading read the text."""
    ref = _reference(text)
    assert _public(text) == ref
    got = _fast(text)
    if got is not None:
        assert got == ref
    return got is not None


def test_every_shipped_yaml_file_reads_the_same_and_most_are_read_fast():
    read = tabbed = 0
    for path in FILES:
        text = path.read_bytes().decode("utf-8-sig", errors="replace")
        if "\t" in text:  # the reference loader alone reads text with a tab (parse_yaml)
            tabbed += 1
            continue
        read += _agree(text)
    assert len(FILES) > 100 and read >= 0.8 * (len(FILES) - tabbed)


def test_the_demo_is_read_fast():
    text = DEMO.read_text(encoding="utf-8")
    assert _agree(text)


# --- generated documents -----------------------------------------------------------------------

#: plain texts each resolver must tell apart (YAML 1.2 core schema, yaml.org/spec/1.2.2 §10.3):
#: numbers, booleans and nulls in every written form, and look-alikes that stay text
_LOOKALIKES = ["0", "-0", "+12", "030", "0o17", "0x1F", "0o8", "0xG", "1e5", "1E-3", "-1.5e+3",
               ".5", "5.", "+.inf", "-.Inf", ".INF", ".nan", ".NaN", "nan", "inf", "1_000",
               "12:30", "2024-03-01", "true", "False", "TRUE", "yes", "no", "on", "off", "~",
               "null", "Null", "NULL", "", "3530 ft2", "-", "1" * 4001, "-" + "9" * 4001,
               "0x" + "f" * 30, "1e400", "-1e400", "<<", "=", "a]b", "x{y}", "é", "a b"]
_chars = st.characters(blacklist_categories=("Cs",), max_codepoint=0xFFFF,
                       blacklist_characters="\r\x85\u2028\u2029\ufeff\t")
_scalars = (st.none() | st.booleans() | st.integers(-10**20, 10**20)
            | st.floats(allow_nan=False) | st.text(_chars, max_size=8)
            | st.sampled_from(_LOOKALIKES))
_keys = st.text(_chars, max_size=6) | st.sampled_from(_LOOKALIKES)
_values = st.recursive(_scalars, lambda inner: st.lists(inner, max_size=4)
                       | st.dictionaries(_keys, inner, max_size=4), max_leaves=30)


def _dump(value, flow, indent, width) -> str:
    return yaml.safe_dump({"schedule": 1, "data": value}, default_flow_style=flow,
                          indent=indent, width=width, allow_unicode=True, sort_keys=False)


@settings(max_examples=examples(2), suppress_health_check=[HealthCheck.too_slow])
@given(value=_values, flow=st.sampled_from([False, True, None]), indent=st.integers(2, 5),
       width=st.sampled_from([20, 80, 10**6]))
def test_generated_documents_read_the_same(value, flow, indent, width):
    # Block and flow layouts, folded long lines, quoted and plain look-alikes.
    _agree(_dump(value, flow, indent, width))


_plain = st.sampled_from(_LOOKALIKES[:-2]) | st.from_regex(r"[a-z][a-z0-9 -]{0,6}[a-z0-9]",
                                                          fullmatch=True)


@st.composite
def _written(draw, depth=0) -> str:
    """YAML as people write it: block mappings and sequences (compact or not), flow
    collections inside them, plain and quoted scalars, comments and blank lines."""
    pad = " " * (2 * depth)
    lines = []
    for _ in range(draw(st.integers(1, 4))):
        key = draw(st.sampled_from(["a", "b", "c", "'a'", '"b c"', "1", "true", "~", "<<",
                                    "d"]))
        form = draw(st.sampled_from(["plain", "quoted", "flow", "block", "seq", "empty",
                                     "comment"]))
        if form == "plain":
            lines.append(f"{pad}{key}: {draw(_plain)}")
        elif form == "quoted":
            lines.append(f"{pad}{key}: '{draw(_plain)}'")
        elif form == "flow":
            items = draw(st.lists(_plain.filter(lambda s: s and s[0] not in "-<" and
                                                all(c not in s for c in ",[]{}")),
                                  max_size=4))
            inner = ", ".join(items)
            lines.append(f"{pad}{key}: {draw(st.sampled_from(['[' + inner + ']', '{' + inner + '}']))}")
        elif form == "block" and depth < 3:
            lines.append(f"{pad}{key}:")
            lines.append(draw(_written(depth + 1)))
        elif form == "seq" and depth < 3:
            lines.append(f"{pad}{key}:")
            for _ in range(draw(st.integers(1, 3))):
                lines.append(f"{pad}- {draw(_plain)}")
        elif form == "comment":
            lines.append(f"{pad}# note: [{key}]")
            lines.append("")
        else:
            lines.append(f"{pad}{key}:")
    return "\n".join(lines)


@settings(max_examples=examples(2), suppress_health_check=[HealthCheck.too_slow])
@given(text=_written())
def test_written_documents_read_the_same(text):
    # repeated keys, merge keys, keys and values of every resolved type, empty values
    _agree("schedule: 1\n" + text + "\n")


@settings(max_examples=examples(2), suppress_health_check=[HealthCheck.too_slow])
@given(value=_values, flow=st.sampled_from([False, True]), nodes=st.integers(1, 60),
       depth=st.integers(0, 6))
def test_limits_refuse_generated_documents_as_the_composer_does(value, flow, nodes, depth):
    # The value and depth limits, lowered: the same refusal, message, line and column.
    text = _dump(value, flow, 2, 80)
    saved = limits.MAX_NODES, limits.MAX_DEPTH
    limits.MAX_NODES, limits.MAX_DEPTH = nodes, depth
    try:
        _agree(text)
    finally:
        limits.MAX_NODES, limits.MAX_DEPTH = saved


@pytest.mark.parametrize("source", [DEMO, ROOT / "rules" / "en-16798-1-2019.yaml"],
                         ids=lambda p: p.name)
@settings(max_examples=examples(),
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_damaged_files_read_the_same(source, data):
    broken = damage(data.draw, source.read_bytes(),
                    [b":", b"-", b"[", b"{", b"]", b'"', b" ", b"\n", b"&a", b"*a", b"<<", b"#",
                     b"|", b"'", b"!!str ", b"? ", b"---\n", b"%YAML 1.1\n"])
    _agree(broken.decode("utf-8", errors="replace"))


# --- hostile documents: refused as before, and never held first ---------------------------------

_HEAD = "schedule: 1\nnotes: "


@pytest.mark.parametrize("text", [
    _HEAD + "[" * 100_000 + "]" * 100_000 + "\n",              # deep flow nesting
    _HEAD + "{a: " * 5_000 + "1" + "}" * 5_000 + "\n",         # deep flow mappings
    "".join(" " * i + "a:\n" for i in range(300)) + " " * 300 + "b\n",  # deep block nesting
    _HEAD + "\n  " + "- " * 500 + "x\n",                      # compact nested lists
], ids=["flow-lists", "flow-maps", "block-maps", "compact-lists"])
def test_deep_nesting_is_refused_at_the_same_place(text):
    # The depth limit (docs/limits.md, common practice): the fast reading gives way at the
    # limit and the composer refuses the text where it always did.
    assert _fast(text) is None
    ref = _reference(text)
    assert ref[0] == "failed" and "the depth limit stops it here" in ref[1]
    assert _public(text) == ref


def test_an_alias_bomb_is_refused_before_it_is_expanded(monkeypatch):
    # Aliases repeat the anchored node where they are used (YAML 1.1 spec, anchors and
    # aliases): nine levels of ten make 10^9 values. The fast reading gives way where the
    # alias budget runs out, having repeated no more than the budget; the composer's budget
    # refuses it at the alias where it runs out.
    text = (ROOT / "fixtures" / "bad" / "alias-bomb.yaml").read_text(encoding="utf-8")
    repeated = []  # the texts of the scalars and keys repeated (each is counted in bytes)
    monkeypatch.setattr(fast, "utf8_len", lambda t: repeated.append(t) or len(t))
    assert _fast(text) is None
    monkeypatch.undo()
    assert 0 < len(repeated) <= 2 * (limits.MAX_ALIAS_VALUES + 1)  # a key per value at most
    ref = _reference(text)
    assert ref[0] == "failed" and "aliases expand to more than" in ref[1]
    assert _public(text) == ref


def test_a_huge_flow_collection_is_refused_at_the_same_value(monkeypatch):
    # The value limit (docs/limits.md): the 1,001st value, in a flow list on one line.
    monkeypatch.setattr(limits, "MAX_NODES", 1000)
    text = _HEAD + "[" + "0," * 5000 + "0]\n"
    assert _fast(text) is None
    ref = _reference(text)
    assert ref[0] == "failed" and "more than 1000 values; the node limit stops it" in ref[1]
    assert _public(text) == ref


class _Endless:
    """A parser whose document never ends: a list of ever more values, or ever deeper lists."""

    def __init__(self, deeper: bool) -> None:
        self.deeper = deeper
        self.given = 0
        mark = yaml.Mark("f", 0, 0, 0, None, None)
        self.head = [yaml.StreamStartEvent(mark, mark), yaml.DocumentStartEvent(mark, mark),
                     yaml.SequenceStartEvent(None, None, True, mark, mark)]
        self.mark = mark

    def get_event(self):
        self.given += 1
        if self.head:
            return self.head.pop(0)
        if self.deeper:
            return yaml.SequenceStartEvent(None, None, True, self.mark, self.mark)
        return yaml.ScalarEvent(None, None, (True, False), "0", self.mark, self.mark)


@pytest.mark.parametrize("deeper", [False, True], ids=["long", "deep"])
def test_an_endless_document_is_given_up_at_the_limit(deeper, monkeypatch):
    # Counting as the values arrive bounds what is held: the reading stops one value past the
    # value limit (or one level past the depth limit), however long the stream (common practice).
    monkeypatch.setattr(limits, "MAX_NODES", 500)
    parser = _Endless(deeper)
    assert fast.read_events(parser, docmod._FastLoader.yaml_implicit_resolvers, 4000) is None
    most = (min(limits.MAX_DEPTH, fast.COMPOSER_SAFE_DEPTH) + 2 if deeper
            else limits.MAX_NODES + 1)
    assert parser.given == 2 + most


def test_repeated_keys_tags_and_merges_give_way_to_the_composer():
    # Each is read (or refused) by the composer, whose messages name the first occurrence.
    for text, what in [("a: 1\nb: 2\na: 3\n", "duplicate key 'a' (first given on line 1)"),
                       ("a: !!str 1\n", None),
                       ("a: {b: 1}\nc: {<<: {b: 2}, d: 3}\n", None), ("? [a]\n: 1\n", "key"),
                       ("a: 1\n---\nb: 2\n", "expected a single document"), ("", "empty"),
                       ("a: !!python/name:os.system x\n", "cannot read value")]:
        assert _fast(text) is None, text
        ref = _reference(text)
        assert _public(text) == ref
        assert (ref[0] == "read") == (what is None) and (what is None or what in ref[1]), ref


def test_numbers_read_as_the_safe_constructor_reads_them():
    # PyYAML's safe constructor as the outside reference for every resolved form.
    loader = docmod._Loader("")
    for text in ["0", "-0", "+7", "030", "0o17", "0x1f", "-12", "1" * 4001, "-" + "2" * 4001]:
        node = yaml.ScalarNode("tag:yaml.org,2002:int", text)
        want = loader.construct_yaml_int(node)
        assert repr(fast.int_of(text, docmod.MAX_DIGITS)) == repr(want)
    for text in ["1.5", "-0.0", "1e5", "+.5", "5.", "-.inf", ".Inf", "+.INF", ".nan", "1e400"]:
        node = yaml.ScalarNode("tag:yaml.org,2002:float", text)
        assert repr(fast.float_of(text)) == repr(loader.construct_yaml_float(node))


# --- anchors and aliases: read as the composer reads them ---------------------------------------

_ANCHORED = [
    ("a: &x 1\nb: *x\n", True),
    ("a: &x [1, 2, {c: 3}]\nb: *x\nc: [*x, *x]\n", True),
    ("base: &z\n  area: 30 m2\n  name: &n Room\nzones:\n- *z\n- {id: 1, name: *n}\n- *z\n", True),
    ("a: &o {b: &i [1, 2], c: *i}\nd: *o\ne: *i\n", True),  # an alias inside an anchor
    ("a: &x\nb: *x\n", True),  # an anchored null
    ("a: &x '1'\nb: *x\nc: &y \"0101\"\nd: *y\n", True),  # quoted: text, no texts entry
    ("- &a 1.5\n- *a\n- &b .nan\n- *b\n- &c 1e400\n- *c\n", True),
    ("a: &x 1\n*x : 2\n", False),  # an alias as a key
    ("&k a: 1\nb: 2\n", False),  # an anchored key
    ("a: &x [1, *x]\n", False),  # an alias inside the value it names
    ("a: *nowhere\n", False),  # undefined: the composer's message
    ("a: &x 1\nb: &x 2\nc: *x\n", False),  # an anchor given twice
    ("a: &x {b: 1}\nc: {<<: *x, d: 3}\n", False),  # a merge
    ("a: &x {b: 1, b: 2}\nc: *x\n", False),  # a repeated key
]


@pytest.mark.parametrize("text,fast_reads", _ANCHORED)
def test_anchors_and_aliases_are_read_as_the_composer_reads_them(text, fast_reads):
    # The composer over libyaml's events is the reference (the reading before aliases were
    # read from the events): an alias repeats the anchored value, at the anchor's position.
    assert _agree(text) == fast_reads


@pytest.mark.parametrize("seed", range(6))
def test_shared_values_dumped_with_anchors_read_the_same(seed):
    # PyYAML's emitter writes a value reached twice once, with an anchor, and aliases it after
    # (its own reading of anchors and aliases is the outside reference, through _agree).
    rng = random.Random(seed)
    shared = [[rng.choice(_LOOKALIKES) for _ in range(3)], {"k": rng.choice(_LOOKALIKES)},
              rng.choice(_LOOKALIKES)]
    read = 0
    for _ in range(40):
        doc = {f"v{i}": rng.choice(shared + [[rng.choice(shared), {"in": rng.choice(shared)}]])
               for i in range(rng.randint(1, 6))}
        text = yaml.dump(doc, Dumper=yaml.SafeDumper, sort_keys=False,
                         default_flow_style=rng.choice([False, True, None]))
        read += _agree(text)
    assert read > 20


def test_aliases_spend_the_budget_the_composer_spends(monkeypatch):
    # The alias budget (docs/limits.md) is shared by the YAML texts of one file: reading the
    # aliases from the events spends of it what the composer's builder spends, and a text
    # that would pass it is refused where the composer refuses it.
    text = "a: &x {b: [1, 2], cc: dd}\nb: *x\nc: [*x, *x]\nd: &s some text\ne: *s\n"
    with limits.shared_alias_budget() as budget:
        assert docmod._read_events(text) is not None
        by_events = (budget.values, budget.bytes)
    with limits.shared_alias_budget() as budget:
        docmod._parse_with(docmod._LOADERS[0], text, "f.yaml", ScheduleError)
        by_composer = (budget.values, budget.bytes)
    # counted by hand: values 3 × (x, b, 1, 2, dd) + s; bytes 3 × (b, cc, 1, 2, dd) + s
    assert by_events == by_composer == (16, 30)
    for values, bytes_ in [(15, 30), (16, 29), (16, 30)]:
        monkeypatch.setattr(limits, "MAX_ALIAS_VALUES", values)
        monkeypatch.setattr(limits, "MAX_ALIAS_BYTES", bytes_)
        ref = _reference(text)
        assert _public(text) == ref
        assert (ref[0] == "read") == ((values, bytes_) == by_composer), ref
        assert (docmod._read_events(text) is None) == (ref[0] == "failed")
