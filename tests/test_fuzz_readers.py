"""A bounded fuzz run of every reader (hypothesis): damaged inputs never crash (common practice).

Each case damages one demo file — a cut, a deleted line or a replaced byte — and runs
``airgate check`` on it: the result is a report (exit 0 or 1) or an input error (exit 2) with a
location, never a traceback or an internal error, and never a half-written output file.
"""

from __future__ import annotations

import shutil
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from airgate.cli import main

from conftest import DEMO, ROOT, examples
from fuzzing import damage

DEMO_DIR = DEMO.parent
GBXML = DEMO_DIR / "fernhollow-civic-centre.xml"
CSV_TABLES = sorted(DEMO_DIR.glob("fernhollow-civic-centre.*.csv"))
PACK = ROOT / "rules" / "ashrae-62.1-2019-quillby-bay.yaml"
BYTES = [b"\t", b",", b";", b":", b"<", b">", b"&", b'"', b"'", b"=", b"0", b"-", b"\n", b" ",
         b"\xff", b"\x00", b"x"]


def _check(path: Path, capsys, *extra: str) -> None:
    target = path.parent / "out.json"
    code = main(["check", str(path), "--format", "json", "-o", str(target), *extra])
    err = capsys.readouterr().err
    assert code in (0, 1, 2), err
    assert "Traceback" not in err and "internal error" not in err, err
    if code == 2:
        assert not target.exists()
        assert ":" in err.split("\n", 1)[0]  # the message starts with a location


SETTINGS = settings(max_examples=examples(),
                    suppress_health_check=[HealthCheck.function_scoped_fixture,
                                           HealthCheck.too_slow])


@SETTINGS
@given(data=st.data())
def test_damaged_gbxml(data, capsys):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "damaged.xml"
        path.write_bytes(damage(data.draw, GBXML.read_bytes(), BYTES))
        _check(path, capsys)


@SETTINGS
@given(data=st.data(), which=st.sampled_from(CSV_TABLES))
def test_damaged_csv_table(data, which, capsys):
    with tempfile.TemporaryDirectory() as folder:
        for table in CSV_TABLES:
            shutil.copy(table, Path(folder) / table.name)
        (Path(folder) / which.name).write_bytes(damage(data.draw, which.read_bytes(), BYTES))
        _check(Path(folder) / CSV_TABLES[0].name, capsys)


@SETTINGS
@given(data=st.data())
def test_damaged_rule_pack(data, capsys):
    # a layered pack (renamed so no built-in shadows it) damaged, found through --rules-path;
    # its base stays intact
    text = PACK.read_bytes().replace(b"id: ashrae-62.1-2019-quillby-bay", b"id: fuzz-city", 1)
    assert b"id: fuzz-city" in text
    with tempfile.TemporaryDirectory() as folder:
        (Path(folder) / "fuzz-city.yaml").write_bytes(damage(data.draw, text, BYTES))
        schedule = Path(folder) / "s.yaml"
        shutil.copy(DEMO, schedule)
        _check(schedule, capsys, "--rules", "fuzz-city", "--rules-path", folder)
