"""docs/rule-packs.md runs: its commands print what it shows, its YAML is the packs' own.

The walk-through is the project's documentation of the worked example (style.md habit: examples
that run). Output lines may elide a part with "…" (absolute paths differ between checkouts).
"""

from __future__ import annotations

import re

import pytest
import yaml

from airgate.cli import main
from airgate.api import packtests
from airgate.readers import layering
from airgate.readers.rulepack import builtin_rules_dir

from conftest import ROOT

DOC = (ROOT / "docs" / "rule-packs.md").read_text(encoding="utf-8")
BLOCKS = re.findall(r"```(\w+)\n(.*?)```", DOC, re.S)


def _pairs():
    out = []
    for (lang, body), (next_lang, shown) in zip(BLOCKS, BLOCKS[1:]):
        if lang == "sh" and next_lang == "text" and body.strip().startswith("airgate "):
            out.append((body.strip(), shown))
    return out


def _holds(shown: str, actual: str) -> None:
    lines = actual.splitlines()
    for line in shown.splitlines():
        if not line.strip():
            continue
        parts = [p for p in line.split("…") if p]
        assert any(all(p in a for p in parts) and _in_order(a, parts) for a in lines), line


def _in_order(text: str, parts: list[str]) -> bool:
    at = 0
    for p in parts:
        at = text.find(p, at)
        if at < 0:
            return False
        at += len(p)
    return True


PAIRS = _pairs()


def test_the_walk_through_has_commands_with_output():
    assert len(PAIRS) >= 5


@pytest.mark.parametrize(("command", "shown"), PAIRS, ids=[c for c, _ in PAIRS])
def test_each_command_prints_what_the_page_shows(command, shown, capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    code = main(command.split()[1:])
    assert code in (0, 1)
    _holds(shown, capsys.readouterr().out)


def test_the_error_example_is_what_airgate_says(capsys, monkeypatch):
    monkeypatch.chdir(ROOT)
    shown = next(b for lang, b in BLOCKS if lang == "text" and b.startswith("fixtures/bad/"))
    path = shown.split(":", 1)[0]
    assert main(["rules", "show", path]) == 2
    _holds(shown, capsys.readouterr().err)


def _contains(big, small) -> bool:
    if isinstance(small, dict):
        return isinstance(big, dict) and all(k in big and _contains(big[k], v)
                                             for k, v in small.items())
    if isinstance(small, list):
        return isinstance(big, list) and all(any(_contains(b, s) for b in big) for s in small)
    return big == small


def _pack(name: str) -> dict:
    return yaml.safe_load((builtin_rules_dir() / f"{name}.yaml").read_text(encoding="utf-8"))


YAML = [yaml.safe_load(body) for lang, body in BLOCKS if lang == "yaml"]


@pytest.mark.parametrize("fragment", [y for y in YAML if "test" not in y],
                         ids=lambda y: next(iter(y)))
def test_yaml_excerpts_are_the_packs_own(fragment):
    candidates = []
    states = [ROOT / "docs" / "examples" / "tarrow-packs" / f"imc-{edition}-tarrow.yaml"
              for edition in (2018, 2021)]
    for data in [_pack("ashrae-62.1-2019-quillby-bay"), _pack("en-16798-1-2019"),
                 *(yaml.safe_load(state.read_text(encoding="utf-8")) for state in states)]:
        amend = data.get("amend", {})
        candidates += [data, amend, *amend.values(), *data.get("requirements", []),
                       *data.get("occupancy", {}).get("categories", [])]
    assert any(_contains(c, fragment) for c in candidates), fragment


def test_the_case_example_runs(tmp_path):
    case = next(y for y in YAML if "test" in y)
    path = tmp_path / "ashrae-62.1-2019-quillby-bay" / "example.yaml"
    path.parent.mkdir()
    path.write_text(yaml.safe_dump(case, sort_keys=False), encoding="utf-8")
    result = packtests.run_case(path, None, layering.search_roots())
    assert result.failures == [] and result.expectations == 2
