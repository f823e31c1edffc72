"""The schedule reader's shortcuts, each held to the full check it stands in for.

Reference: the code as it was before these shortcuts (common practice: an optimisation is held
to the plain computation it replaces). ``readers.schedule._survey`` lets the reader leave out
a check in the usual case where it finds nothing (numbers in text fields, repeated ids, values
per condition); the JSON and YAML readers say whether every number is within the range
airgate reads, seen as each number is read, so the schedule reader need not walk the data for
them; quantity fields keep the values of the texts they have read, and an id or a count that
is plain text or a plain number passes at once. Every test reads the same
documents both ways (every check forced to run in full, and the shortcuts) and asks for the
same model, or the same messages at the same lines and columns. Documents are damaged copies
of bench/synthetic.py portfolios and of the demo (invented data).
"""

from __future__ import annotations

import copy
import json
import random
import sys

import pytest
import yaml

from conftest import ROOT

sys.path.insert(0, str(ROOT / "bench"))

import synthetic  # noqa: E402

from airgate import units  # noqa: E402
from airgate.errors import AirgateError, ScheduleError  # noqa: E402
from airgate.models.quantities import Q  # noqa: E402
from airgate.readers import document, document_json  # noqa: E402
from airgate.readers import schedule as reader  # noqa: E402

#: values put where a schedule has others: numbers in text fields, mappings per condition,
#: numbers at and beyond the limits of the range read (docs/limits.md), ids and counts at the
#: edges of what passes at once (length, space around, '/', whole numbers beyond 2**53)
VALUES = [0, 1, -1, 101, 1.5, 3.0, 1e15, 1e-15, 1e16, -1e16, 1e-16, 1e300, True, False, None,
          -0.0, 2**53 + 1, 2**60, "", " ", "a/b", " a/b ", " x", "0101", "x" * 201, "y" * 200,
          "\x1cid", "id\u00a0", "\u2028", {"c1": 5}, {"cool": "10 ft"},
          {"supply": "ceiling"}, {"cool": 3, "heat": 4}, [1, 2], ["x"], [], {}, "12 ft",
          "-5 cfm", "0 ft2", "5 CFM", "5 people", "abc", 12345678901234567890123]
ZONE_KEYS = ["id", "name", "space", "area", "occupants", "height", "air_distribution", "ez",
             "ez_basis", "primary_airflow", "ep", "er", "notes", "project", "systems",
             "zones", "volume", "bedrooms"]
SYSTEM_KEYS = ["id", "name", "kind", "outdoor_air", "conditions", "population",
               "supply_airflow", "notes", "project", "systems", "zones", "procedure"]


def _damaged(rng: random.Random, doc: dict) -> dict:
    out = copy.deepcopy(doc)
    for _ in range(rng.randint(1, 3)):
        system = rng.choice(out["systems"])
        r = rng.random()
        if r < 0.45:
            rng.choice(system["zones"])[rng.choice(ZONE_KEYS)] = copy.deepcopy(rng.choice(VALUES))
        elif r < 0.65:
            system[rng.choice(SYSTEM_KEYS)] = copy.deepcopy(rng.choice(VALUES))
            if not isinstance(system.get("zones"), list):
                return out
        elif r < 0.75:
            system["conditions"] = rng.choice([["cool", "heat"], ["c1"], ["cooling"]])
            zone = rng.choice(system["zones"])
            zone["occupants"] = rng.choice([{"cool": 4, "heat": 5}, {"c1": 2}, 7])
        elif r < 0.85:
            out[rng.choice(["rules", "zones", "project", "name"])] = copy.deepcopy(
                rng.choice(VALUES + [["a", "b"], ["a", 1]]))
            if not isinstance(out.get("project"), dict):
                return out
        else:  # an id given twice
            other = rng.choice(rng.choice(out["systems"])["zones"])
            rng.choice(system["zones"])["id"] = other["id"]
        if rng.random() < 0.2:
            out["project"][rng.choice(["name", "owner", "notes", "project"])] = copy.deepcopy(
                rng.choice(VALUES))
    return out


def _documents(count: int, seed: int) -> list[tuple[str, str]]:
    rng = random.Random(seed)
    bases = [synthetic.vav_portfolio(12, per_system=4, heights=True),
             synthetic.demo_portfolio(17)]
    out = [(json.dumps(b, indent=1), ".json") for b in bases]
    for _ in range(count):
        doc = _damaged(rng, rng.choice(bases))
        if rng.random() < 0.5:
            out.append((json.dumps(doc, indent=1), ".json"))
        else:
            out.append((yaml.safe_dump(doc, sort_keys=False), ".yaml"))
    return out


def _outcome(text: str, suffix: str, tmp_path) -> tuple:
    path = tmp_path / f"s{suffix}"
    path.write_text(text, encoding="utf-8")
    try:
        loaded = reader.read_schedule(path)
    except AirgateError as exc:
        errors = getattr(exc, "errors", None) or [exc]
        return ("refused", [(e.message, e.line, e.column, e.field, e.hint,
                             getattr(e, "allowed", None)) for e in errors])
    return ("read", loaded.model.model_dump(), sorted(loaded.model.model_fields_set))


def _unflagged(path, error_cls):
    """The document read, without the readers' word on its numbers' range."""
    doc = document.load(path, error_cls)
    doc.in_range = None
    return doc


def test_the_shortcuts_read_every_document_as_the_full_checks_do(tmp_path, monkeypatch):
    """Damaged documents (numbers in text fields, repeated ids, values per condition, numbers
    beyond the range, unusual shapes): the same model or the same located messages."""
    refused = read = 0
    for text, suffix in _documents(250, seed=7):
        fast = _outcome(text, suffix, tmp_path)
        with monkeypatch.context() as m:
            m.setattr(reader, "_survey", lambda data: reader._Survey())
            m.setattr(reader, "load", _unflagged)
            full = _outcome(text, suffix, tmp_path)
        assert fast == full
        refused += fast[0] == "refused"
        read += fast[0] == "read"
    assert refused > 100 and read > 20  # both kinds of outcome were compared


def test_the_survey_leaves_out_only_checks_with_nothing_to_find():
    """On a plain portfolio nothing is left to the full checks; each kind of damage turns on
    the check that finds it (common practice: each flag is seen to change)."""
    doc = synthetic.vav_portfolio(20, per_system=5)
    assert reader._survey(doc) == reader._Survey(written=False, duplicates=False,
                                                 by_condition=False)
    numbered = copy.deepcopy(doc)
    numbered["systems"][1]["zones"][2]["name"] = 204
    assert reader._survey(numbered).written
    twice = copy.deepcopy(doc)
    twice["systems"][3]["zones"][0]["id"] = twice["systems"][0]["zones"][4]["id"]
    assert reader._survey(twice).duplicates and not reader._survey(twice).written
    per_condition = copy.deepcopy(doc)
    per_condition["systems"][2]["zones"][1]["primary_airflow"] = {"cool": "300 cfm"}
    assert reader._survey(per_condition).by_condition
    system_per_condition = copy.deepcopy(doc)
    system_per_condition["systems"][0]["outdoor_air"] = {"cool": "900 cfm"}
    assert reader._survey(system_per_condition).by_condition
    stated = copy.deepcopy(doc)  # a stated distribution is a mapping too: looked at in full
    stated["systems"][0]["zones"][0]["air_distribution"] = {"supply": "ceiling"}
    assert reader._survey(stated).by_condition and not reader._survey(stated).written


@pytest.mark.parametrize("number", ["0", "1e-15", "1e15", "-1e15", "2.5", "1000000000000000",
                                    "1e16", "-1e16", "1e-16", "1e999", "10000000000000001",
                                    "-10000000000000001",
                                    pytest.param("1" * 5000, id="5000-digits")])
@pytest.mark.parametrize("suffix", [".json", ".yaml"])
def test_the_readers_say_whether_every_number_is_in_range(number, suffix):
    """The flag each reader sets as it reads numbers is what a walk of the data finds
    (``_all_in_range``, the reference); beyond a whole number's digit limit or a float's
    range the value is infinite, out of range."""
    text = ('{"a": [1, {"b": %s, "c": "x"}], "d": 7, "e": true}' % number)
    doc = (document_json.parse_json(text, "f.json", ScheduleError) if suffix == ".json"
           else document.parse_yaml(text, "f.yaml", ScheduleError))
    assert doc.in_range is not None
    assert doc.in_range == reader._all_in_range(doc.data)


def test_a_yaml_number_repeated_beyond_the_kept_texts_is_looked_at():
    """Distinct texts beyond those kept are resolved (and looked at) one by one."""
    lines = [f"v{i}: {i}" for i in range(5000)] + ["last: 1e16"]
    doc = document.parse_yaml("\n".join(lines), "f.yaml", ScheduleError)
    assert doc.in_range is False and reader._all_in_range(doc.data) is False


@pytest.mark.parametrize("suffix", [".json", ".yaml"])
@pytest.mark.parametrize("text", ["3", "true", "0", "null", '"x"', "[1, 2]"])
def test_a_document_that_is_not_a_mapping_is_refused_alike(text, suffix, tmp_path):
    """A JSON file holding a single value is refused with the message YAML gives (JSON's
    reading counted the values of a number as if it held some, an internal error)."""
    path = tmp_path / f"s{suffix}"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(ScheduleError) as caught:
        reader.read_schedule(path)
    assert caught.value.message.startswith("a schedule is a mapping with keys schedule")
    assert (caught.value.line, caught.value.column) == (1, 1)


def test_a_quantity_read_again_gives_the_value_read_first():
    """The values a quantity field keeps per text or number are those units.parse gives (the
    reference), in each unit system, the sign of zero too; a value that cannot be read is
    refused each time, a boolean although it equals 1 or 0."""
    from pydantic import TypeAdapter, ValidationError

    area = TypeAdapter(Q("area", "Area. [ft² or m²]", positive=True))
    for system in (units.IP, units.SI):
        for text in ("3530 ft2", "3530 ft2", "12", "12", "40 m2"):
            got = area.validate_python(text, context={"units": system})
            assert got == units.parse(text, "area", system)
        for _ in range(2):
            with pytest.raises(ValidationError, match="must be greater than zero"):
                area.validate_python("0 ft2", context={"units": system})
            with pytest.raises(ValidationError, match="unknown unit"):
                area.validate_python("3 blorps", context={"units": system})
    assert area.validate_python("10 ft2", context=None) == units.parse("10 ft2", "area", "IP")
    flow = TypeAdapter(Q("airflow", "Airflow. [cfm or L/s]"))
    for system in (units.IP, units.SI):
        for number in (850, 850.0, 850, 2**49 + 1, 2**49, 0.5, 0.0, -0.0, 0, 1e15, 10**15):
            got = flow.validate_python(number, context={"units": system})
            assert repr(got) == repr(units.parse(number, "airflow", system))  # -0.0 kept
        for value in (True, False, -1, float("nan"), 1e16):
            for _ in range(2):  # refused each time, never taken for an equal number kept
                with pytest.raises(ValidationError):
                    flow.validate_python(value, context={"units": system})


#: every character Python or the validator's regular expressions may take for a space
SPACES = [chr(c) for c in range(0x3001) if chr(c).isspace()] + ["\u180e", "\u200b", "\ufeff"]


def test_an_id_or_a_count_passing_at_once_is_what_the_full_validation_gives():
    """``Id`` and ``People`` pass a plain value at once; the reference is each type without
    that shortcut (its definition before), given the same values: the same result, or the
    same errors (type, message, location, input)."""
    from typing import Annotated

    from pydantic import BeforeValidator, Field, ValidationError

    from airgate.models import schedule as models

    reference_id = Annotated[str, BeforeValidator(models._id),
                             Field(min_length=1, max_length=200, pattern=models._ID_PATTERN)]
    reference_people = Annotated[float, BeforeValidator(models._finite_count),
                                 Field(ge=0, allow_inf_nan=False)]

    class Reference(models._Model):
        id: reference_id | None = None
        people: reference_people | None = None

    class Shortcut(models._Model):
        id: models.Id | None = None
        people: models.People | None = None

    ids = ["", "a", "x" * 200, "x" * 201, "a/b", "/a", "AHU-1", "0101", 204, 2.5, True, None,
           "é" * 200, "é" * 201, ["a"], {"a": 1}]
    ids += [f"{s}a" for s in SPACES] + [f"a{s}" for s in SPACES] + [f"a{s}b" for s in SPACES]
    ids += [s for s in SPACES] + [f"{s}a/b" for s in SPACES]
    counts = [0, 5, -1, 2**53, 2**53 + 1, 2**64, 10**400, 0.0, -0.0, 1.5, -1.5, 1e308,
              float("inf"), float("-inf"), float("nan"), "5", "5 people", "-2", True, None, [1]]

    def outcome(model, **values):
        try:
            return ("read", model(**values).model_dump())
        except ValidationError as exc:
            return ("refused", exc.errors(include_url=False))

    compared = 0
    for value in ids:
        got, want = outcome(Shortcut, id=value), outcome(Reference, id=value)
        assert repr(got) == repr(want), repr(value)  # repr: an error's exception is not equal
        compared += 1
    for value in counts:
        got, want = outcome(Shortcut, people=value), outcome(Reference, people=value)
        assert repr(got) == repr(want), repr(value)  # repr: NaN is not equal to itself
        compared += 1
    assert compared == len(ids) + len(counts)
