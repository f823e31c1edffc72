"""The state layer walked through in docs/rule-packs.md is the one in docs/examples/tarrow-packs,
it validates and its cases pass.

The page shows each file in a code block preceded by `<!-- file: PATH -->`; each block must be
the file itself. The example's values are invented (the State of Tarrow is fictional); the
expected outcomes are the hand computations in the cases' comments (e.g. 15 × 30 + 0.12 × 900 =
558 cfm). tests/test_docs_rule_packs.py holds the page's commands to what they print.
"""

from __future__ import annotations

import re

from airgate.cli import main

from conftest import ROOT

DOC = ROOT / "docs" / "rule-packs.md"
FOLDER = ROOT / "docs" / "examples" / "tarrow-packs"
BLOCK = re.compile(r"<!-- file: ([^>]+?) -->\n```yaml\n(.*?)```", re.S)


def test_each_file_shown_is_the_example_file():
    shown = dict(BLOCK.findall(DOC.read_text(encoding="utf-8")))
    files = {str(p.relative_to(ROOT)): p.read_text(encoding="utf-8")
             for p in sorted(FOLDER.rglob("*.yaml"))}
    assert shown == files
    assert len([n for n in files if "/tests/imc-2018-tarrow/" in n]) == 3
    assert len([n for n in files if "/tests/imc-2021-tarrow/" in n]) == 2


def test_the_state_layer_validates_and_its_cases_pass(capsys):
    for pack_id in ("imc-2018-tarrow", "imc-2021-tarrow"):  # one layer per adopted edition
        assert main(["rules", "validate", pack_id, "--rules-path", str(FOLDER)]) == 0
    assert main(["rules", "test", str(FOLDER)]) == 0
    out = capsys.readouterr().out
    assert "Result: PASS — 2 packs, 5 cases, 9 expectations; 0 failed" in out


def test_the_state_layer_is_not_a_built_in_pack(capsys):
    # Only the fictional city ships in rules/; the state layer is an example beside the docs.
    assert main(["rules", "list"]) == 0
    out = capsys.readouterr().out
    assert "imc-2018-tarrow" not in out and "imc-2021-tarrow" not in out
