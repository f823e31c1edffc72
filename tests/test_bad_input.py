"""The bad-input contract (README, exit codes): bad input never gets a traceback.

It gets a message naming the file, line (and column) and field, saying what is wrong and how to
fix it, exit code 2, and nothing written — neither the ``-o`` file nor anything on stdout.

The corpus is ``fixtures/bad/``: every schedule there is broken in one way, named for it, and
states what the message must contain in its leading comment (JSON files in a ``.expect`` sidecar):

``# expect-field: PATH``  the field path shown (``-`` when the problem has no field)
``# expect-at: LINE[:COLUMN]``  where the message points (in ``expect-file`` if given)
``# expect-text: TEXT``  text the message must contain (repeatable)
``# expect-file: PATH``  the file the message names, relative to ``fixtures/bad/`` (default:
the schedule itself; a rule pack under ``packs/`` for the broken-pack cases)

The expected values are the project's own contract (README "Exit codes", this docstring) and,
for positions, where the fixture itself writes the offending value (common practice: 1-based
lines and columns, as compilers report them). ``fixtures/edge/`` holds files that look odd but
are valid and must not be refused.
"""

from __future__ import annotations

import json
import re
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from airgate import units
from airgate.cli import main
from airgate.errors import EXIT_INPUT, ScheduleError
from airgate.readers import document
from airgate.readers.schedule import read_schedule

from conftest import DEMO, ROOT, examples

BAD = ROOT / "fixtures" / "bad"
EDGE = ROOT / "fixtures" / "edge"


@dataclass
class Case:
    """One broken file of the corpus and what its message must say."""

    path: Path
    field: str | None
    line: int
    column: int | None
    texts: list[str] = field(default_factory=list)
    file: Path | None = None

    @property
    def named(self) -> Path:
        """The file the message must name."""
        return self.file or self.path


def _header(path: Path) -> list[str]:
    """The leading comment lines of a fixture (bytes decoded leniently: some are not UTF-8)."""
    source = path.with_name(path.name + ".expect") if path.suffix == ".json" else path
    out = []
    for line in source.read_bytes().decode("latin-1").splitlines():
        if not line.startswith("#"):
            break
        out.append(line)
    return out


def _case(path: Path) -> Case:
    values: dict[str, list[str]] = {}
    for line in _header(path):
        m = re.match(r"#\s*expect-(field|at|text|file):\s?(.*)$", line)
        if m:
            values.setdefault(m.group(1), []).append(m.group(2).strip())
    assert "field" in values and "at" in values, f"{path.name}: header lacks expect-field/-at"
    line, _, column = values["at"][0].partition(":")
    field_path = values["field"][0]
    return Case(
        path=path,
        field=None if field_path == "-" else field_path,
        line=int(line),
        column=int(column) if column else None,
        texts=values.get("text", []),
        file=BAD / values["file"][0] if "file" in values else None,
    )


CORPUS = sorted(p for p in BAD.iterdir() if p.suffix in (".yaml", ".json"))
CASES = [_case(p) for p in CORPUS]
PACKS = sorted((BAD / "packs").glob("*.yaml"))


def _run(capsys, argv: list[str]) -> tuple[int, str, str]:
    code = main(argv)
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def _assert_clean_failure(err: str) -> None:
    assert "Traceback" not in err
    assert "internal error" not in err


def test_corpus_is_large_and_each_case_is_described():
    # The contract asks for at least 30 broken schedules, YAML and JSON, and a few broken packs.
    assert len(CASES) >= 30
    assert sum(c.path.suffix == ".json" for c in CASES) >= 3
    assert len(PACKS) >= 4
    for case in CASES:
        assert case.texts, f"{case.path.name}: no expect-text"
    assert len({c.path.stem for c in CASES}) == len(CASES)


@pytest.mark.parametrize("case", CASES, ids=[c.path.name for c in CASES])
def test_bad_schedule_is_refused_with_a_located_message(case: Case, capsys):
    code, out, err = _run(capsys, ["check", str(case.path)])
    assert code == EXIT_INPUT == 2
    assert out == ""  # no half report on stdout
    _assert_clean_failure(err)
    where = f"{case.named}:{case.line}:" + (f"{case.column}:" if case.column else "")
    assert where in err, f"expected {where!r} in:\n{err}"
    if case.field is not None:
        assert f": {case.field}" in err, f"expected field {case.field!r} in:\n{err}"
    for text in case.texts:
        assert text in err, f"expected {text!r} in:\n{err}"


@pytest.mark.parametrize("case", CASES, ids=[c.path.name for c in CASES])
@pytest.mark.parametrize("fmt", ["text", "json"])
def test_bad_schedule_writes_no_output_file(case: Case, fmt: str, tmp_path, capsys):
    target = tmp_path / f"report.{fmt}"
    code, out, err = _run(capsys, ["check", str(case.path), "--format", fmt, "-o", str(target)])
    assert code == 2
    assert not target.exists()
    assert list(tmp_path.iterdir()) == []  # no temporary file left behind either
    assert out == ""
    _assert_clean_failure(err)
    assert str(case.named) in err


def test_existing_output_file_is_left_untouched(tmp_path, capsys):
    target = tmp_path / "report.txt"
    target.write_text("previous report\n", encoding="utf-8")
    code, _, _ = _run(capsys, ["check", str(BAD / "negative-area.yaml"), "-o", str(target)])
    assert code == 2
    assert target.read_text(encoding="utf-8") == "previous report\n"


@pytest.mark.parametrize("name", ["alias-bomb.yaml", "recursive-alias.yaml",
                                  "deep-nesting.yaml", "json-deep-nesting.json"])
def test_hostile_documents_stop_at_a_limit(name: str, capsys):
    # Not timed: the contract is that a limit, not exhaustion, ends the read.
    code, _, err = _run(capsys, ["check", str(BAD / name)])
    assert code == 2
    assert re.search(r"the (node|depth) limit stops it here", err)


@pytest.mark.parametrize(("name", "suggestion"), [
    ("unknown-space-type.yaml", "did you mean 'office-space'"),
    ("unknown-ez-row.yaml", "did you mean 'ceiling-supply-cool'"),
    ("unknown-field.yaml", "did you mean 'area'?"),
    ("unknown-stated-field.yaml", "did you mean 'return'?"),
    ("bad-system-kind.yaml", "did you mean 'multiple-zone'?"),
    ("unknown-rule-pack.yaml", "did you mean ashrae-62.1-2019"),
    ("pack-unknown-check.yaml", "did you mean 'system-intake'?"),
])
def test_misspelt_names_get_the_nearest_valid_one(name: str, suggestion: str, capsys):
    code, _, err = _run(capsys, ["check", str(BAD / name)])
    assert code == 2
    assert suggestion in err


@pytest.mark.parametrize(("name", "fix"), [
    ("tab-indent.yaml", "fix: indent with spaces"),
    ("truncated.yaml", "fix: the file ends too early"),
    ("json-trailing-comma.json", "fix: JSON allows no comma before a closing } or ]"),
    ("duplicate-key.yaml", "fix: give each key once"),
    ("non-utf8.yaml", "fix: save the file as UTF-8"),
    ("missing-units.yaml", "fix: add units: IP or units: SI under project"),
    ("air-distribution-number.yaml", "fix: to state the zone's Ez directly, write ez: 0.8"),
    ("missing-primary-airflow-detailed.yaml", "fix: add primary_airflow"),
])
def test_messages_say_how_to_fix_it(name: str, fix: str, capsys):
    code, _, err = _run(capsys, ["check", str(BAD / name)])
    assert code == 2
    assert fix in err


@pytest.mark.parametrize("pack", PACKS, ids=[p.name for p in PACKS])
def test_broken_pack_is_refused_by_rules_show(pack: Path, capsys):
    code, out, err = _run(capsys, ["rules", "show", str(pack)])
    assert code == 2
    assert out == ""
    _assert_clean_failure(err)
    assert re.search(re.escape(str(pack)) + r":\d+:\d+: rule pack error: ", err)


@pytest.mark.parametrize("pack", PACKS, ids=[p.name for p in PACKS])
def test_broken_pack_given_with_rules_option_is_refused(pack: Path, tmp_path, capsys):
    target = tmp_path / "report.txt"
    code, out, err = _run(capsys, ["check", str(DEMO), "--rules", str(pack), "-o", str(target)])
    assert code == 2
    assert not target.exists() and out == ""
    _assert_clean_failure(err)
    assert f"{pack}:" in err


def test_every_broken_pack_has_a_schedule_case():
    named = {c.file for c in CASES if c.file is not None}
    assert set(PACKS) <= named


def test_unknown_pack_given_with_rules_option_names_the_option(capsys):
    code, _, err = _run(capsys, ["check", str(DEMO), "--rules", "ashrae-62.1-2091"])
    assert code == 2
    assert "--rules: unknown rule pack 'ashrae-62.1-2091'" in err


def test_explain_refuses_a_bad_schedule_the_same_way(capsys):
    code, out, err = _run(capsys, ["explain", str(BAD / "zero-area.yaml"), "--zone", "101"])
    assert code == 2 and out == ""
    assert f"{BAD / 'zero-area.yaml'}:15:15: " in err
    assert "systems[0].zones[0].area: must be greater than zero" in err


def test_zero_byte_file_is_empty(tmp_path, capsys):
    path = tmp_path / "zero.yaml"
    path.write_bytes(b"")
    code, _, err = _run(capsys, ["check", str(path)])
    assert code == 2
    assert f"{path}:1:1: schedule error: document is empty" in err


def test_missing_file_and_folder(tmp_path, capsys):
    code, _, err = _run(capsys, ["check", str(tmp_path / "absent.yaml")])
    assert code == 2 and f"{tmp_path / 'absent.yaml'}: schedule error: file not found" in err
    # a folder is checked schedule by schedule (batch); one without schedules is a usage error
    code, _, err = _run(capsys, ["check", str(tmp_path)])
    assert code == 2 and f"folder {tmp_path} holds no schedule" in err


def test_node_limit_applies_while_composing(tmp_path, capsys, monkeypatch):
    # A large document is refused before it is held whole in memory: the composer counts too.
    from airgate.readers import limits

    monkeypatch.setattr(limits, "MAX_NODES", 50)
    path = tmp_path / "big.yaml"
    path.write_text("schedule: 1\nnotes: [" + ", ".join(["x"] * 100) + "]\n", encoding="utf-8")
    code, _, err = _run(capsys, ["check", str(path)])
    assert code == 2
    assert "document has more than 50 values; the node limit stops it here" in err
    assert f"{path}:2:" in err and ": notes" in err


# --- files that look odd but are valid ---------------------------------------------------------

EDGE_FILES = sorted(p for p in EDGE.iterdir() if p.suffix in (".yaml", ".json"))


@pytest.mark.parametrize("path", EDGE_FILES, ids=[p.name for p in EDGE_FILES])
def test_valid_edge_files_are_accepted(path: Path, tmp_path, capsys):
    target = tmp_path / "report.json"
    code, _, err = _run(capsys, ["check", str(path), "--format", "json", "-o", str(target)])
    assert code == 0, err
    assert json.loads(target.read_text(encoding="utf-8"))["verdict"] == "pass"


def test_bom_files_read_like_plain_ones():
    # A UTF-8 byte-order mark is allowed (common practice for files saved on Windows).
    assert (EDGE / "bom.yaml").read_bytes().startswith(b"\xef\xbb\xbf")
    assert (EDGE / "bom.json").read_bytes().startswith(b"\xef\xbb\xbf")
    for name in ("bom.yaml", "bom.json"):
        model = read_schedule(EDGE / name).model
        assert model.systems[0].zones[0].id == "101"


def test_plain_scalars_are_read_as_written():
    # YAML 1.2 core schema (yaml.org/spec/1.2.2 §10.3): no yes/no booleans, no base-60 or
    # leading-zero octal integers, exponents without a dot are numbers. Ids keep their text.
    model = read_schedule(EDGE / "as-written-scalars.yaml").model
    system, zone = model.systems[0], model.systems[0].zones[0]
    assert system.id == "12:30"
    assert zone.id == "0101"
    assert zone.occupants == 30
    assert units.to_display(system.outdoor_air, "airflow", "IP") == pytest.approx(1000)
    assert system.variable_air_volume is False
    assert model.project.notes == "2024-03-01"


def test_merge_keys_let_own_keys_override():
    # YAML merge keys (yaml.org/type/merge.html): the mapping's own keys override merged ones.
    zones = read_schedule(EDGE / "anchors.yaml").model.systems[0].zones
    assert [z.id for z in zones] == ["101", "102", "103"]
    areas = [units.to_display(z.area, "area", "IP") for z in zones]
    assert areas == pytest.approx([1000, 1000, 1200])


def test_a_merged_mapping_reached_again_through_an_alias_is_not_a_duplicate():
    # The same merge rule when the mapping holding the merge is itself reused by an alias.
    text = "base: &base {a: 1, b: 5}\ntmpl: &tmpl {<<: *base, a: 2}\nuse: *tmpl\n"
    doc = document.parse_yaml(text, "merge.yaml", ScheduleError)
    assert doc.data["use"] == {"a": 2, "b": 5} == doc.data["tmpl"]
    assert doc.positions[("use", "a")] == (2, 28)


def test_tab_indented_json_still_gets_positions(capsys):
    # JSON allows tabs as whitespace (RFC 8259 §2); positions are found all the same.
    case = _case(BAD / "json-tab-indented-wrong-type.json")
    code, _, err = _run(capsys, ["check", str(case.path)])
    assert code == 2
    assert f"{case.path}:{case.line}:{case.column}: " in err


# --- mutated demo schedules: whatever the damage, a clean exit -------------------------------

from fuzzing import damage  # noqa: E402

DEMO_TEXT = DEMO.read_text(encoding="utf-8")


@st.composite
def damaged_demo(draw) -> bytes:
    """The demo schedule with one kind of damage: a cut, a deleted line or a replaced byte."""
    return damage(draw, DEMO_TEXT.encode("utf-8"),
                  [b"\t", b":", b"-", b"{", b"[", b"'", b'"', b"&", b"*", b"#", b"0", b" ",
                   b"\n", b"\xff", b"\x00", b"x"])


@settings(max_examples=examples(0.8),
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(data=damaged_demo())
def test_damaged_demo_never_gets_a_traceback(data: bytes, capsys):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "damaged.yaml"
        path.write_bytes(data)
        target = Path(folder) / "report.txt"
        code = main(["check", str(path), "-o", str(target)])
        err = capsys.readouterr().err
        assert code in (0, 1, 2), err
        _assert_clean_failure(err)
        if code == 2:
            assert not target.exists()
            assert re.match(re.escape(str(path)) + r":\d+(:\d+)?: schedule error: ", err), err


def test_limits_are_configurable_by_environment(tmp_path):
    # docs/limits.md: AIRGATE_MAX_NODES lowers the value limit for one run.
    import subprocess
    import sys

    from conftest import DEMO, ROOT

    env = {**__import__("os").environ, "AIRGATE_MAX_NODES": "50"}
    run = subprocess.run([sys.executable, "-m", "airgate", "check", str(DEMO)], cwd=ROOT,
                         env=env, capture_output=True, text=True)
    assert run.returncode == 2
    assert "more than 50 values" in run.stderr and "Traceback" not in run.stderr


def test_value_limit_follows_the_file_size_limit(tmp_path):
    # docs/limits.md: by default one value per 16 bytes of the file-size limit; text denser
    # than that (a list of '0,' is 2 bytes a value) is stopped within the size limit.
    import subprocess
    import sys

    from conftest import ROOT, subprocess_env

    path = tmp_path / "dense.yaml"
    path.write_text("schedule: 1\nnotes: [" + ",".join(["0"] * 300) + "]\n", encoding="utf-8")
    env = subprocess_env(AIRGATE_MAX_BYTES=str(16 * 100))  # so 100 values
    env.pop("AIRGATE_MAX_NODES", None)
    run = subprocess.run([sys.executable, "-m", "airgate", "check", str(path)], cwd=ROOT,
                         env=env, capture_output=True, text=True)
    assert path.stat().st_size < 16 * 100
    assert run.returncode == 2
    assert "more than 100 values" in run.stderr and "Traceback" not in run.stderr


def test_file_size_limit_is_an_input_error(tmp_path):
    # docs/limits.md: a file over AIRGATE_MAX_BYTES is refused before it is parsed.
    import os
    import subprocess
    import sys

    from conftest import DEMO, ROOT

    env = {**os.environ, "AIRGATE_MAX_BYTES": "1000"}
    run = subprocess.run([sys.executable, "-m", "airgate", "check", str(DEMO)], cwd=ROOT,
                         env=env, capture_output=True, text=True)
    assert run.returncode == 2 and "larger than" in run.stderr and "Traceback" not in run.stderr


@pytest.mark.skipif(not Path("/dev/zero").exists(), reason="no /dev/zero on this system")
def test_a_stream_is_read_only_up_to_the_size_limit(tmp_path, capsys, monkeypatch):
    # docs/limits.md: a device or pipe has no size to ask, so the limit applies while reading
    # (/dev/zero never ends: without it the read would run until memory is gone).
    import os
    import threading

    from airgate.readers import limits

    monkeypatch.setattr(limits, "MAX_BYTES", 1000)
    code, out, err = _run(capsys, ["check", "/dev/zero"])
    assert code == 2 and out == ""
    assert "/dev/zero: schedule error: file is larger than the 1000 bytes limit" in err
    fifo = tmp_path / "schedule.yaml"
    os.mkfifo(fifo)

    def feed():
        try:
            with open(fifo, "wb") as w:
                w.write(b"notes: " + b"x" * 5000 + b"\n")
        except BrokenPipeError:
            pass  # the reader stopped at its limit

    writer = threading.Thread(target=feed)
    writer.start()
    code, out, err = _run(capsys, ["check", str(fifo)])
    writer.join(30)
    assert code == 2 and "file is larger than the 1000 bytes limit" in err


def test_the_alias_budget_is_shared_by_the_texts_of_one_file(monkeypatch):
    # docs/limits.md: the cells of one table file (or the description lines of one gbXML
    # file) share one alias budget; each text alone stays under it.
    from airgate.readers import limits

    monkeypatch.setattr(limits, "MAX_ALIAS_VALUES", 25)
    text = "[&a [x, x, x, x], [*a, *a, *a]]"  # 3 aliases of 5 values: 15 values each
    assert document.parse_yaml(text, "<cell>", ScheduleError).data[1][2] == ["x"] * 4
    assert document.parse_yaml(text, "<cell>", ScheduleError)  # a fresh budget each time
    with limits.shared_alias_budget() as budget:
        document.parse_yaml(text, "<cell>", ScheduleError)
        assert budget.values == 15
        with pytest.raises(ScheduleError, match="aliases expand to more than 25 values"):
            document.parse_yaml(text, "<cell>", ScheduleError)
    monkeypatch.setattr(limits, "MAX_ALIAS_BYTES", 50)
    long = "[&n " + "y" * 20 + ", *n, *n]"  # 40 bytes through aliases: under 50
    assert document.parse_yaml(long, "<cell>", ScheduleError).data[2] == "y" * 20
    longer = long[:-1] + ", *n]"
    with pytest.raises(ScheduleError, match="more than 50 bytes of text") as err:
        document.parse_yaml(longer, "<cell>", ScheduleError)
    # located at the alias that passes it (1-based column of the last '*n')
    assert (err.value.line, err.value.column) == (1, longer.rindex("*n") + 1)


def test_alias_byte_limit_is_configurable_by_environment(tmp_path):
    # docs/limits.md: AIRGATE_MAX_ALIAS_BYTES sets the byte limit for one run
    import os
    import subprocess
    import sys

    from conftest import subprocess_env

    path = tmp_path / "s.yaml"
    path.write_text("schedule: 1\nproject: {name: &n " + "z" * 300 + ", notes: [*n, *n]}\n",
                    encoding="utf-8")
    run = subprocess.run([sys.executable, "-m", "airgate", "check", str(path)],
                         env=subprocess_env(AIRGATE_MAX_ALIAS_BYTES="500"), capture_output=True,
                         text=True)
    assert run.returncode == 2 and "more than 500 bytes of text" in run.stderr
    assert f"{path}:2:" in run.stderr and "Traceback" not in run.stderr
    assert os.path.getsize(path) < 500  # the file itself is small


def test_a_long_name_aliased_on_thousands_of_zones_is_refused(tmp_path, capsys):
    # docs/limits.md, alias text: a 1 MB name anchored once and aliased on 2,000 zones is
    # 1.2 MB of schedule but 2 GB of report; the byte budget stops it at the alias that
    # passes 10 MiB (the 11th alias: 11 MB)
    name = "N" * 1_000_000
    lines = ["schedule: 1", "project: {name: Alias test (invented), units: IP}",
             "rules: ashrae-62.1-2019", "systems:", "  - id: S", "    kind: outdoor-air",
             "    outdoor_air: 100000 cfm", "    zones:"]
    for i in range(2000):
        named = f"&big {name}" if i == 0 else "*big"
        lines.append(f"      - {{id: z{i}, name: {named}, space: office-space, area: 100 ft2, "
                     "air_distribution: ceiling-supply-cool}")
    path = tmp_path / "aliased.yaml"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    target = tmp_path / "report.json"
    code, out, err = _run(capsys, ["check", str(path), "--format", f"json:{target}"])
    assert code == 2 and out == "" and not target.exists()
    column = lines[19].index("*big") + 1
    assert f"{path}:20:{column}: schedule error: systems[0].zones[11].name: aliases expand to " \
           "more than 10 MiB of text" in err
