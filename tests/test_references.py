"""Citations name documents of the bibliography (docs/references.md), never a private note.

The demo's reports are the check: every citation a report carries (the JSON's ``source`` fields)
must name a document listed in docs/references.md, and no file the project ships may point at
notes outside the repository.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
REFERENCES = ROOT / "docs" / "references.md"
#: a citation of a note kept outside the repository
PRIVATE = re.compile(r"domain\.md|reference-values\.md|\.\./shared")
#: a location in a schedule (file:line:column), not a citation
LOCATION = re.compile(r"^[\w./-]+\.(yaml|yml|json|csv|xml|ifc|xlsx)(\[[^\]]*\])?(:\d+){0,2}$")


def _entries() -> list[list[str]]:
    """The tokens naming each document of the bibliography (its ``###`` heading)."""
    out = []
    for heading in re.findall(r"^### (.+)$", REFERENCES.read_text(encoding="utf-8"), re.M):
        tokens = []
        for tok in re.findall(r"[^\s&:]+", heading):
            m = re.fullmatch(r"(.+)-(\d{4})", tok)
            tokens += [m.group(1), m.group(2)] if m and not tok[0].isalpha() else [tok]
        out.append(tokens)
    return out


def _names_a_document(citation: str, entries: list[list[str]]) -> bool:
    return any(all(tok in citation for tok in tokens) for tokens in entries)


def _sources(obj, out: set[str]) -> set[str]:
    if isinstance(obj, dict):
        for key, value in obj.items():
            if key in ("source", "citation") and isinstance(value, str):
                out.add(value)
            else:
                _sources(value, out)
    elif isinstance(obj, list):
        for value in obj:
            _sources(value, out)
    return out


def test_bibliography_lists_the_documents_cited_across_the_project():
    entries = _entries()
    names = [" ".join(t) for t in entries]
    for wanted in (["ANSI/ASHRAE", "62.1", "2019"], ["ANSI/ASHRAE", "62.2", "2019"],
                   ["EN", "16798-1", "2019"], ["Persily", "de", "Jonge", "2017"], ["CDC", "2003"],
                   ["ANSI/ASHRAE", "52.2", "2017"], ["Nazaroff", "Alvarez-Cohen", "2001"]):
        assert wanted in entries, f"{wanted} missing from docs/references.md ({names})"


def test_demo_report_cites_only_documents_of_the_bibliography():
    # the report with every zone's trail: the most citations it can carry
    report = json.loads((ROOT / "fixtures/demo/expected/report-trails.json")
                        .read_text(encoding="utf-8"))
    citations = {c for c in _sources(report, set()) if not LOCATION.match(c)}
    assert citations, "the demo report carries citations"
    entries = _entries()
    unknown = sorted(c for c in citations if not _names_a_document(c, entries))
    assert not unknown, f"citations naming no document of docs/references.md: {unknown}"


@pytest.mark.parametrize("folder", ["fixtures/demo/expected", "rules", "docs", "bench",
                                    "engine/airgate/evaluation", "engine/airgate/readers",
                                    "engine/airgate/writers", "README.md", "DEVELOPERS.md"])
def test_no_citation_of_notes_outside_the_repository(folder):
    top = ROOT / folder
    files = [top] if top.is_file() else sorted(p for p in top.rglob("*") if p.is_file())
    hits = [f"{p.relative_to(ROOT)}:{n}" for p in files
            for n, line in enumerate(p.read_text(encoding="utf-8", errors="replace").splitlines(), 1)
            if PRIVATE.search(line)]
    assert not hits, hits
