"""Numbers outside the range airgate reads are input errors where they are written, in any field.

The contract (docs/limits.md "Range of numbers"; README "Exit codes"): a number whose magnitude
is above 1e15 or below 1e-15 (zero aside), as written or in internal units, is refused with exit
2 and its position — never an internal error (exit 3), an overflow deep in the evaluation or a
numpy warning. Python refuses to turn text of more than 4,300 digits into a whole number
(docs.python.org, "Integer string conversion length limitation"), so such a number must be caught
before it is converted. The expected values are that contract, not the code.
"""

from __future__ import annotations

import warnings

import pytest
import yaml

from airgate import units
from airgate.cli import main

from conftest import DEMO

HUGE = "9" * 5000
DEMO_DATA = yaml.safe_load(DEMO.read_text(encoding="utf-8"))


def _leaves(node, path=()):
    """Field paths of every number and every quantity text ('850 cfm') in the demo."""
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _leaves(v, path + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _leaves(v, path + (i,))
    elif isinstance(node, (int, float)) and not isinstance(node, bool):
        yield path
    elif isinstance(node, str) and node[:1].isdigit() and " " in node and ":" not in node:
        yield path


def _shown(path) -> str:
    out = ""
    for p in path:
        out += f"[{p}]" if isinstance(p, int) else ("." if out else "") + str(p)
    return out


def _with(path, placeholder: str):
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    node = data
    for p in path[:-1]:
        node = node[p]
    node[path[-1]] = placeholder
    return data


LEAVES = [p for p in _leaves(DEMO_DATA) if p[0] not in ("waivers",)]


def test_the_demo_has_numbers_in_many_places():
    assert len(LEAVES) >= 30
    assert {p[0] for p in LEAVES} >= {"schedule", "systems", "profiles", "contaminants"}


@pytest.mark.parametrize("path", LEAVES, ids=_shown)
def test_a_5000_digit_number_in_any_field_is_located(path, tmp_path, capsys):
    text = yaml.safe_dump(_with(path, "HUGE-NUMBER-HERE"), sort_keys=False)
    target = tmp_path / "s.yaml"
    target.write_text(text.replace("HUGE-NUMBER-HERE", HUGE), encoding="utf-8")
    code = main(["check", str(target), "-o", str(tmp_path / "r.txt")])
    err = capsys.readouterr().err
    assert code == 2, err
    assert "Traceback" not in err and "internal error" not in err
    assert f"{target}:" in err and f": {_shown(path)}: " in err, err
    assert "a number of 5000 digits is out of the range airgate reads" in err
    assert len(err) < 2000 and not (tmp_path / "r.txt").exists()


@pytest.mark.parametrize("value", ["1.7e308", "1e300", "-1e16", "1e-300"])
@pytest.mark.parametrize("path", [p for p in LEAVES if p[-1] in ("outdoor_air", "area",
                                                                 "occupants", "height")][:6],
                         ids=_shown)
def test_numbers_beyond_the_range_are_located(path, value, tmp_path, capsys):
    target = tmp_path / "s.yaml"
    text = yaml.safe_dump(_with(path, "NUMBER-HERE"), sort_keys=False)
    target.write_text(text.replace("NUMBER-HERE", value), encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no numpy overflow warning either
        code = main(["check", str(target)])
    err = capsys.readouterr().err
    assert code == 2, err
    assert f": {_shown(path)}: " in err and "out of the range airgate reads" in err, err


@pytest.mark.parametrize(("text", "kind"), [
    ("1e300 ft3", "volume"), ("1e-300 ft3", "volume"), ("1e16 L/s", "airflow"),
    # within the range as written, beyond it in internal units (1 ft3 = 0.0283 m3, exact)
    ("1e-14 ft3", "volume"), ("5e14 m3/s", "airflow"),
])
def test_quantities_are_held_to_the_range_in_internal_units(text, kind):
    with pytest.raises(units.QuantityError, match="out of the range airgate reads"):
        units.parse(text, kind, units.IP)


def test_the_range_ends_are_read():
    # 1e15 and 1e-15 internal units are inside the range; zero is always allowed
    assert units.parse("1e15 L/s", "airflow", units.SI) == pytest.approx(1e15)
    assert units.parse("1e-15 L/s", "airflow", units.SI) == pytest.approx(1e-15)
    assert units.parse(0, "airflow", units.IP) == 0


def test_a_tiny_volume_within_the_range_evaluates_without_warnings(tmp_path, capsys):
    # 1e-12 ft3 is absurd but inside the range: the mass balance must not overflow on it
    data = _with(("systems", 0, "zones", 0, "height"), "1e-9 ft")
    target = tmp_path / "s.yaml"
    target.write_text(yaml.safe_dump(data, sort_keys=False), encoding="utf-8")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        code = main(["check", str(target), "--format", "json"])
    err = capsys.readouterr().err
    assert code in (0, 1), err
