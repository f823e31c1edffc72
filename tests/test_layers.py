"""The package's layers only look down (DEVELOPERS.md, "The map").

``procedures`` ← ``models`` ← ``evaluation``; ``readers`` turn files into models and ``writers``
turn reports into files, at the edges; ``api`` and ``commands`` sit on top. Every import of every
module under ``engine/airgate`` is read from its syntax tree (function-level imports included)
and checked against the layers it may use. A structural rule of this project (common practice:
a layered architecture), not a calculation: no external source applies.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "engine" / "airgate"

#: modules every layer may use (no airgate imports of their own beyond each other)
BASE = {"errors", "escaping", "units", "formatting", "cache", "gcpause", "__init__"}
#: layer → the layers it may import (besides itself and BASE)
ALLOWED: dict[str, set[str]] = {
    "base": set(),
    "procedures": set(),
    "models": {"procedures"},
    "evaluation": {"procedures", "models"},
    "readers": {"procedures", "models"},
    "writers": {"procedures", "models", "evaluation", "readers", "api"},
    "api": {"procedures", "models", "evaluation", "readers", "writers"},
    "commands": {"procedures", "models", "evaluation", "readers", "writers", "api"},
    "cli": {"procedures", "models", "evaluation", "readers", "writers", "api", "commands"},
}


def _layer(dotted: str) -> str:
    """The layer of module ``airgate.x.y`` (x a subpackage or a top-level module)."""
    parts = dotted.split(".")
    top = parts[1] if len(parts) > 1 else "__init__"
    if top in BASE:
        return "base"
    if top in ("cli", "__main__"):
        return "cli"
    return top


def _package_names() -> dict[str, str]:
    """Names the package itself exports lazily (airgate/__init__.py), and their layers."""
    import airgate

    return {"__version__": "base",
            **{name: _layer(module) for name, module in airgate._LAZY.items()}}


PACKAGE_NAMES = _package_names()


def _imports(path: Path) -> list[tuple[int, str]]:
    """(line, layer) of every airgate import in ``path``."""
    out = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
        if isinstance(node, ast.Import):
            out += [(node.lineno, _layer(a.name)) for a in node.names
                    if a.name.split(".")[0] == "airgate"]
        elif isinstance(node, ast.ImportFrom):
            assert node.level == 0, f"{path}:{node.lineno}: relative import"
            module = node.module or ""
            if module == "airgate":
                for a in node.names:
                    layer = PACKAGE_NAMES.get(a.name) or _layer(f"airgate.{a.name}")
                    out.append((node.lineno, layer))
            elif module.split(".")[0] == "airgate":
                out.append((node.lineno, _layer(module)))
    return sorted(out)


def _modules() -> list[Path]:
    return sorted(PACKAGE.rglob("*.py"))


def test_every_module_is_in_a_known_layer():
    for path in _modules():
        dotted = ".".join(("airgate", *path.relative_to(PACKAGE).with_suffix("").parts))
        assert _layer(dotted) in ALLOWED, f"{path}: no layer for {dotted}"


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_imports_only_look_down(path):
    dotted = ".".join(("airgate", *path.relative_to(PACKAGE).with_suffix("").parts))
    own = _layer(dotted)
    allowed = ALLOWED[own] | {own, "base"}
    upward = [f"{path.relative_to(PACKAGE)}:{line}: {own} imports {layer}"
              for line, layer in _imports(path) if layer not in allowed]
    assert not upward, "\n".join(upward)


def test_the_checker_sees_an_upward_import(tmp_path):
    """The walk itself: a function-level import of a reader from the evaluation is found."""
    fake = tmp_path / "mod.py"
    fake.write_text("def f():\n    from airgate.readers import document\n"
                    "from airgate import check\n", encoding="utf-8")
    assert _imports(fake) == [(2, "readers"), (3, "api")]
