"""The state layer walked through in docs/rule-packs.md validates, its cases pass, and the diff
shown there is what `rules diff` prints.

The page's files are its code blocks preceded by `<!-- file: PATH -->`; they are written to a
folder as a consultant would keep them, then run through the CLI. The example's values are
invented (the State of Tarrow is fictional); the expected outcomes are the hand computations in
the cases' comments (e.g. 15 × 30 + 0.12 × 900 = 558 cfm).
"""

from __future__ import annotations

import re
from pathlib import Path

from airgate.cli import main

DOC = Path(__file__).resolve().parents[1] / "docs" / "rule-packs.md"
BLOCK = re.compile(r"<!-- (file|output): ([^>]+?) -->\n```[a-z]*\n(.*?)```", re.S)


def _blocks() -> list[tuple[str, str, str]]:
    return BLOCK.findall(DOC.read_text(encoding="utf-8"))


def _write(tmp_path: Path) -> Path:
    for kind, name, text in _blocks():
        if kind == "file":
            path = tmp_path / name
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_text(text, encoding="utf-8")
    return tmp_path / "tarrow-packs"


def test_the_page_holds_the_pack_and_a_case_per_amendment():
    names = [name for kind, name, _ in _blocks() if kind == "file"]
    assert "tarrow-packs/imc-2018-tarrow.yaml" in names
    assert len([n for n in names if "/tests/imc-2018-tarrow/" in n]) == 3


def test_the_state_layer_validates_and_its_cases_pass(tmp_path, capsys):
    folder = _write(tmp_path)
    assert main(["rules", "validate", "imc-2018-tarrow", "--rules-path", str(folder)]) == 0
    assert main(["rules", "test", str(folder)]) == 0
    out = capsys.readouterr().out
    assert "Result: PASS — 1 pack, 3 cases, 5 expectations; 0 failed" in out


def test_the_diff_shown_is_the_diff_printed(tmp_path, capsys):
    folder = _write(tmp_path)
    assert main(["rules", "diff", "imc-2018", "imc-2018-tarrow", "--rules-path", str(folder)]) == 0
    printed = capsys.readouterr().out
    shown = [text for kind, name, text in _blocks() if kind == "output"]
    assert len(shown) == 1
    assert shown[0] in printed
