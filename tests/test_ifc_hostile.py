"""A damaged IFC model never gets a traceback: every reference of a small valid model is
replaced, one at a time, by something IFC does not allow there.

The contract (README "Exit codes"; docs/importing.md): exit 0, 1 or 2 — never 3 — and an input
error names the file and a line. ``fixtures/edge/small-model.ifc`` is an invented one-room model
(ISO 16739 IFC4 entities, written by hand); what replaces a reference is another entity of a
different type, a list, a value, an empty attribute or a number.
"""

from __future__ import annotations

import re

import pytest

from airgate.cli import main

from conftest import ROOT
from importing import need

MODEL = ROOT / "fixtures" / "edge" / "small-model.ifc"
TEXT = MODEL.read_text(encoding="utf-8")
#: every reference (not the definitions '#12=') in the DATA section
REFS = [m.span() for m in re.finditer(r"#\d+(?!\d|\s*=)", TEXT)]
SUBSTITUTES = ["#1", "#14", "#5", "#11", "(#1)", "IFCLABEL('x')", "$", "12.5"]


@pytest.fixture(scope="module", autouse=True)
def _ifc():
    need("ifcopenshell")


def test_the_model_is_valid(capsys):
    assert main(["check", str(MODEL)]) == 0, capsys.readouterr().err
    assert len(REFS) >= 20


@pytest.mark.parametrize("span", REFS, ids=[TEXT[a:b] + f"@{a}" for a, b in REFS])
def test_a_replaced_reference_is_never_an_internal_error(span, tmp_path, capsys):
    a, b = span
    for substitute in SUBSTITUTES:
        path = tmp_path / "damaged.ifc"
        path.write_text(TEXT[:a] + substitute + TEXT[b:], encoding="utf-8")
        code = main(["check", str(path)])
        err = capsys.readouterr().err
        assert code in (0, 1, 2), err
        assert "Traceback" not in err and "internal error" not in err, err
        if code == 2:
            assert re.search(re.escape(str(path)) + r":\d+", err), err


@pytest.mark.parametrize(("old", "new", "where", "text"), [
    ("(#21,#22)", "(#21,#22,#99)", ":26:75:", "entity #19 refers to #99, which the file does not"),
    ("#14=IFCQUANTITYAREA('NetFloorArea',$,$,90.,$);", "#14=IFCQUANTITYAREA('NetFloorArea',$",
     ":21:1:", "statement #14 does not end before the next one (a missing ')' or ';')"),
    ("#14=IFCQUANTITYAREA", "#13=IFCQUANTITYAREA", ":21:1:", "entity #13 is defined twice"),
    ("'Office'", "'Office", ":18:", "a text that is never closed"),
    ("#23=", "#23 ", ":30:", "'=' expected after #23"),
])
def test_structure_errors_are_located(old, new, where, text, tmp_path, capsys):
    path = tmp_path / "broken.ifc"
    assert old in TEXT
    path.write_text(TEXT.replace(old, new, 1), encoding="utf-8")
    code = main(["check", str(path)])
    err = capsys.readouterr().err
    assert code == 2
    assert f"{path}{where}" in err and text in err, err
