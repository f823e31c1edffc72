"""The procedures read like a reference library: every public function documents its
parameters with units, its result, its references and an example, and the examples run.

Checks of the documentation contract of DEVELOPERS.md ("docstrings cite equation and source
with units in brackets"; numpydoc sections); the examples' expected values are the published
examples or hand calculations the docstrings name, not output of the code under test.
"""

from __future__ import annotations

import doctest
import importlib
import inspect
import pkgutil
import re
from pathlib import Path

import pytest

import airgate.procedures as procedures

MODULES = sorted(m.name for m in pkgutil.iter_modules(procedures.__path__))
ROOT = Path(__file__).resolve().parents[1]


def _public_functions(module):
    for name in getattr(module, "__all__", []):
        obj = getattr(module, name)
        if inspect.isfunction(obj) and obj.__module__ == module.__name__:
            yield name, obj


@pytest.mark.parametrize("name", MODULES)
def test_examples_run(name):
    module = importlib.import_module(f"airgate.procedures.{name}")
    result = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE, verbose=False)
    assert result.failed == 0


@pytest.mark.parametrize("name", MODULES)
def test_every_public_function_has_the_numpydoc_sections(name):
    module = importlib.import_module(f"airgate.procedures.{name}")
    for fname, fn in _public_functions(module):
        doc = inspect.getdoc(fn) or ""
        for section in ("Parameters", "Returns", "References", "Examples"):
            assert re.search(rf"^{section}\n-+$", doc, re.M), f"{name}.{fname}: no {section}"
        params = doc.split("Parameters\n", 1)[1].split("Returns\n", 1)[0]
        assert "[" in params, f"{name}.{fname}: parameters without units in brackets"
        assert ">>>" in doc.split("Examples\n", 1)[1], f"{name}.{fname}: example without a doctest"


def test_procedures_cite_only_published_documents():
    # docs/references.md: no citation of notes kept outside the repository.
    pattern = re.compile(r"domain\.md|reference-values|\.\./shared|style\.md")
    files = sorted((ROOT / "engine" / "airgate" / "procedures").glob("*.py"))
    hits = [f"{p.name}:{n}" for p in files
            for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1)
            if pattern.search(line)]
    assert not hits, hits


def test_every_module_is_under_600_lines():
    # DEVELOPERS.md: one module per topic, none in engine/ over 600 lines.
    for p in (ROOT / "engine" / "airgate" / "procedures").glob("*.py"):
        assert len(p.read_text(encoding="utf-8").splitlines()) <= 600, p.name
