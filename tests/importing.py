"""Helpers for the import tests: optional packages, the demo in every format, comparisons."""

from __future__ import annotations

import importlib
import json
import os
import re
import sys
from pathlib import Path

import pytest

from conftest import ROOT

sys.path.insert(0, str(ROOT / "fixtures"))

DEMO_DIR = ROOT / "fixtures" / "demo"
DEMO_YAML = DEMO_DIR / "fernhollow-civic-centre.yaml"
DEMO_CSV = DEMO_DIR / "fernhollow-civic-centre.zones.csv"
DEMO_GBXML = DEMO_DIR / "fernhollow-civic-centre.xml"


def need(module: str):
    """Import an optional package; skip when it is missing, unless CI is set (then fail)."""
    try:
        return importlib.import_module(module)
    except ImportError:
        if os.environ.get("CI"):
            raise
        pytest.skip(f"{module} is not installed (pip install '.[test]' installs it; CI must)")


def gbxml_xsd() -> Path:
    """The published gbXML 6.01 schema, as shipped in the xgbxml package (files only)."""
    need("xmlschema")
    spec = importlib.util.find_spec("xgbxml")
    if spec is None or not spec.submodule_search_locations:
        if os.environ.get("CI"):
            raise AssertionError("xgbxml (which ships the gbXML XSD) is not installed")
        pytest.skip("xgbxml, which ships the published gbXML XSD, is not installed")
    return Path(spec.submodule_search_locations[0]) / "schemas" / "GreenBuildingXML_Ver6.01.xsd"


_AT = re.compile(r"^.+:\d+(:\d+)?$")


def comparable(report, ignore_volume_origin: bool = False) -> dict:
    """The JSON report without what names the input file: locations, sources, notes.

    Findings are sorted by rule, subject and design condition (their order follows file
    positions, and a format may hold one condition's value before the other's).
    """
    from airgate.writers import json_report

    def strip(node):
        if isinstance(node, dict):
            out = {k: strip(v) for k, v in node.items()
                   if k not in ("location", "file", "notes")}
            if ignore_volume_origin and out.get("symbol") == "V":
                out.pop("origin", None), out.pop("note", None)
            return out
        if isinstance(node, list):
            return [strip(v) for v in node]
        if isinstance(node, str) and _AT.match(node):
            return "<position>"
        return node

    data = strip(json.loads(json_report.render(report)))
    data["findings"] = sorted(data["findings"], key=lambda f: (f["rule"], f["subject"],
                                                                  f.get("condition") or ""))
    return data


def findings(report) -> list[tuple]:
    """What a reviewer acts on: rule, severity, subject, message, required and provided."""
    def amount(a):
        return None if a is None else (round(a.value, 9), a.kind)
    return sorted((f.rule, f.severity, f.subject, f.message, amount(f.required),
                   amount(f.provided)) for f in report.findings)


def demo_xlsx(folder: Path) -> Path:
    need("openpyxl")
    from make_demo_imports import demo_data, write_xlsx

    return write_xlsx(demo_data(), folder / "fernhollow-civic-centre.xlsx")


def demo_ifc(folder: Path) -> Path:
    need("ifcopenshell")
    from make_demo_imports import demo_data, write_ifc

    return write_ifc(demo_data(), folder / "fernhollow-civic-centre.ifc")
