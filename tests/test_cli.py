"""Command-line behaviour: commands, exit codes, output files (README contract)."""

from __future__ import annotations

import argparse
import json
import re

import pytest
import yaml

from airgate.cli import main

from conftest import DEMO, ROOT, subprocess_env
from importing import need


def test_check_exit_codes(tmp_path, capsys):
    assert main(["check", str(DEMO)]) == 1
    assert main(["check", str(DEMO), "--exit-zero"]) == 0
    out = capsys.readouterr().out
    assert "licensed professional of record govern" in out  # safety caution in every report


def test_check_passing_schedule_exits_zero(tmp_path, capsys):
    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    data["systems"] = data["systems"][:2]  # the two passing systems
    path = tmp_path / "pass.yaml"
    path.write_text(yaml.safe_dump(data), encoding="utf-8")
    assert main(["check", str(path)]) == 0


def test_output_file_is_written(tmp_path, capsys):
    out = tmp_path / "report.json"
    assert main(["check", str(DEMO), "--format", "json", "-o", str(out)]) == 1
    assert json.loads(out.read_text(encoding="utf-8"))["report_version"] == 2
    assert capsys.readouterr().out == ""


def test_rules_override(tmp_path, capsys):
    # The SI pack on an IP schedule: converted, and the report says so.
    assert main(["check", str(DEMO), "--rules", "ashrae-62.1-2019-si"]) == 1
    assert "converted exactly" in capsys.readouterr().out


def test_rules_list_and_show(capsys):
    assert main(["rules", "list"]) == 0
    listing = capsys.readouterr().out
    assert "ashrae-62.1-2019 " in listing and "ashrae-62.1-2019-si" in listing
    assert main(["rules", "show", "ashrae-62.1-2019"]) == 0
    shown = capsys.readouterr().out
    assert "office-space" in shown and "ceiling-supply-cool" in shown


def test_schema_schedule_validates_the_demo(capsys):
    import jsonschema

    assert main(["schema", "schedule"]) == 0
    schema = json.loads(capsys.readouterr().out)
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.validate(yaml.safe_load(DEMO.read_text(encoding="utf-8")), schema)


def test_explain_zone_shows_equations_with_values(capsys):
    assert main(["explain", str(DEMO), "--zone", "203"]) == 0
    out = capsys.readouterr().out
    assert re.search(r"Vbz\s+= Rp·Pz \+ Ra·Az", out)
    assert re.search(r"= 5 × 30 \+ 0\.06 × 600", out)
    assert "Evz" in out and "Table 6-1" in out


def test_explain_unknown_zone_is_usage_error(capsys):
    assert main(["explain", str(DEMO), "--zone", "2O3"]) == 2
    err = capsys.readouterr().err
    assert "no zone '2O3'" in err and "203" in err


def test_python_dash_m(tmp_path):
    import subprocess
    import sys

    run = subprocess.run([sys.executable, "-m", "airgate", "rules", "list"], capture_output=True,
                         text=True, cwd=tmp_path, env=subprocess_env())
    assert run.returncode == 0 and "ashrae-62.1-2019" in run.stdout


def test_readme_example_schedule_evaluates(tmp_path, capsys):
    # README examples run (style.md habit): the schedule excerpt is a valid schedule.
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    block = next(b for b in re.findall(r"```yaml\n(.*?)```", readme, re.S) if "schedule: 1" in b)
    path = tmp_path / "readme.yaml"
    path.write_text(block, encoding="utf-8")
    assert main(["check", str(path)]) in (0, 1)
    assert "AHU-3" in capsys.readouterr().out


def test_reports_of_one_run_are_written_together_or_not_at_all(tmp_path, monkeypatch):
    # Atomic replacement of a set of files (common practice): every report of a run goes to a
    # temporary file first; when one fails while it is produced, no target is touched and no
    # temporary file is left.
    from airgate.writers import output

    old = tmp_path / "old.txt"
    old.write_text("previous report\n", encoding="utf-8")

    def failing():
        yield "{\n"
        raise RuntimeError("encoder broke")

    with pytest.raises(RuntimeError):
        output.write_all_atomic([(old, "new text\n"), (tmp_path / "new.json", failing())])
    assert old.read_text(encoding="utf-8") == "previous report\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["old.txt"]
    output.write_all_atomic([(old, "new text\n"), (tmp_path / "new.json", iter(["{}", "\n"])),
                             (tmp_path / "raw.bin", b"\x00\x01")])
    assert old.read_text(encoding="utf-8") == "new text\n"
    assert (tmp_path / "new.json").read_text(encoding="utf-8") == "{}\n"
    assert (tmp_path / "raw.bin").read_bytes() == b"\x00\x01"


def test_streamed_json_equals_the_standard_indented_dump():
    # Python's json module (json.dumps, indent=2) as the outside reference for the streamed
    # encoder used by the JSON, SARIF and pack writers: byte-identical text.
    from airgate.writers import output

    data = {"a": [1, 2.5, None, True], "b": {"ü": "Σ·²", "e": {}, "l": []}, "c": 1e-05}
    ref = json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    assert output.json_text(data) == ref
    assert "".join(output.json_chunks(data)) == ref


# --- the argument conventions (README, Commands) --------------------------------------------

def _parsers(parser=None, path=("airgate",)):
    """(command path, parser) for the root and every subcommand, depth first."""
    from airgate.cli import parser as build

    parser = parser or build()
    yield path, parser
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from _parsers(sub, (*path, name))


def _options(parser) -> dict[str, argparse.Action]:
    return {s: a for a in parser._actions for s in a.option_strings}


def test_every_command_and_argument_has_help():
    missing = []
    for path, parser in _parsers():
        for action in parser._actions:
            name = "/".join(action.option_strings) or action.dest
            if not action.help or action.help == argparse.SUPPRESS:
                missing.append(f"{' '.join(path)} {name}")
            if isinstance(action, argparse._SubParsersAction):
                helps = {a.dest: a.help for a in action._choices_actions}
                missing += [f"{' '.join(path)} {sub}" for sub in action.choices
                            if not helps.get(sub)]
    assert missing == []


# the commands that read rule packs for a schedule or a template: --rules and --rules-path
PACK_READERS = {("airgate", c) for c in ("check", "compare", "explain", "plot", "template")}


def test_format_output_and_rules_options_are_spelled_alike_everywhere():
    seen_format = []
    for path, parser in _parsers():
        options = _options(parser)
        if "-o" in options or "--output" in options:
            assert options["-o"] is options["--output"], path  # -o is always --output
        if "--format" in options:
            seen_format.append(path[1:])
            assert "-o" in options, f"{path}: --format without -o/--output"
        if path in PACK_READERS:
            assert {"--rules", "--rules-path"} <= set(options), path
        if len(path) == 3 and path[1] == "rules":
            assert "--rules-path" in options, path  # packs named by id are found on the path
        if "--rules" in options:
            assert "--rules-path" in options, path
    assert sorted(seen_format) == [("check",), ("compare",), ("plot",), ("rules", "diff"),
                                   ("rules", "show"), ("template",)]


@pytest.mark.parametrize("module, name, path, option", [
    ("airgate.writers.formats", "FORMATS", ("check",), "--format"),
    ("airgate.evaluation.gate", "FAIL_ON", ("check",), "--fail-on"),
    ("airgate.writers.formats", "COMPARE_FORMATS", ("compare",), "--format"),
    ("airgate.evaluation.gate", "FAIL_ON", ("compare",), "--fail-on"),
    ("airgate.commands.rules", "FORMATS", ("rules", "show"), "--format"),
    ("airgate.commands.rules", "DIFF_FORMATS", ("rules", "diff"), "--format"),
    ("airgate.commands.template", "FORMATS", ("template",), "--format"),
    ("airgate.units", "UNIT_SYSTEMS", ("template",), "--units"),
    ("airgate.commands.schema", "SCHEMAS", ("schema",), "which"),
])
def test_choices_in_help_come_from_where_the_list_lives(monkeypatch, module, name, path, option):
    # A name added to the list shows in help (and is accepted where argparse checks choices):
    # help text is derived from the list, never typed by hand.
    import importlib

    mod = importlib.import_module(module)
    monkeypatch.setattr(mod, name, (*getattr(mod, name), "zz-new"))
    parser = dict(_parsers())[("airgate", *path)]
    action = _options(parser).get(option) or next(a for a in parser._actions
                                                   if a.dest == option)
    assert "zz-new" in action.help
    for value in getattr(mod, name):
        assert value in action.help
    if action.choices is not None:
        assert list(action.choices) == list(getattr(mod, name))


def test_plot_formats_in_help_come_from_the_writer(monkeypatch):
    from airgate.writers import plot

    monkeypatch.setattr(plot, "FORMATS", {**plot.FORMATS, ".zz": "zz-new"})
    options = _options(dict(_parsers())[("airgate", "plot")])
    assert "zz-new" in options["--format"].help and ".zz" in options["-o"].help


def test_input_suffixes_in_help_come_from_the_importer_registry(monkeypatch):
    from airgate.readers import importers

    extra = importers.Importer("zz", (".zz",), "schedule", "read_schedule", "an invented format")
    monkeypatch.setattr(importers, "IMPORTERS", {**importers.IMPORTERS, "zz": extra})
    tree = dict(_parsers())
    for path, dest in ((("check",), "paths"), (("import",), "file"), (("explain",), "file"),
                       (("plot",), "file")):
        action = next(a for a in tree[("airgate", *path)]._actions if a.dest == dest)
        assert ".zz" in action.help and ".xlsx" in action.help, path
    assert "an invented format" in tree[("airgate", "import")].description
    commands = next(a for a in tree[("airgate",)]._actions
                    if isinstance(a, argparse._SubParsersAction))
    assert "zz" in next(a.help for a in commands._choices_actions if a.dest == "import")


def test_check_one_report_with_o_equals_the_named_file_form(tmp_path, capsys):
    # --format NAME -o FILE (one report) and --format NAME:FILE (repeatable) write the same file.
    a, b, c = tmp_path / "a.sarif", tmp_path / "b.sarif", tmp_path / "c.json"
    assert main(["check", str(DEMO), "--format", "sarif", "-o", str(a), "--exit-zero"]) == 0
    assert main(["check", str(DEMO), "--format", f"sarif:{b}", "--format", f"json:{c}",
                 "--exit-zero"]) == 0
    assert capsys.readouterr().out == ""
    assert a.read_bytes() == b.read_bytes() and b'"version": "2.1.0"' in a.read_bytes()
    assert json.loads(c.read_text(encoding="utf-8"))["report_version"] == 2


def test_check_named_files_and_one_o_file_together(tmp_path, capsys):
    md, txt = tmp_path / "r.md", tmp_path / "r.txt"
    assert main(["check", str(DEMO), "--format", f"markdown:{md}", "--format", "text",
                 "-o", str(txt)]) == 1
    assert capsys.readouterr().out == ""
    assert txt.read_text(encoding="utf-8").startswith("airgate ")  # the text report's title
    assert md.read_text(encoding="utf-8").startswith("### airgate: ")  # the markdown heading


@pytest.mark.parametrize("argv", [
    ["explain", str(DEMO), "--zone", "203"],
    ["rules", "show", "ashrae-62.1-2019"],
    ["rules", "show", "ashrae-62.1-2019-quillby-bay", "--resolved", "--format", "json"],
    ["rules", "diff", "ashrae-62.1-2019", "ashrae-62.1-2019-quillby-bay", "--format", "json"],
    ["schema", "rules"],
    ["import", str(DEMO)],
])
def test_o_writes_what_standard_output_shows(tmp_path, capsys, argv):
    assert main(argv) == 0
    shown = capsys.readouterr().out
    target = tmp_path / "out"
    assert main([*argv, "-o", str(target)]) == 0
    assert capsys.readouterr().out == "" and shown
    assert target.read_text(encoding="utf-8") == shown


def test_o_into_a_missing_folder_is_a_usage_error(tmp_path, capsys):
    target = tmp_path / "nope" / "out.txt"
    assert main(["schema", "rules", "-o", str(target)]) == 2
    err = capsys.readouterr().err
    assert "does not exist" in err and not target.parent.exists()


def test_template_takes_a_rules_path(tmp_path, capsys):
    openpyxl = need("openpyxl")
    folder = tmp_path / "packs"
    folder.mkdir()
    (folder / "town-3.yaml").write_text("""\
pack: 1
id: town-3
extends: ashrae-62.1-2019
title: "Invented town (fictional)"
document: Invented town code (fictional)
edition: "1"
amend:
  occupancy:
    add:
      - {id: zz-boathouse, label: Boathouse, group: miscellaneous-spaces, Rp: 5, Ra: 0.06,
         density: 10, air_class: 1, source: {section: "1"}, provenance: invented}
""", encoding="utf-8")
    out = tmp_path / "t.xlsx"
    assert main(["template", "-o", str(out), "--rules", "town-3"]) == 2
    assert "unknown rule pack 'town-3'" in capsys.readouterr().err and not out.exists()
    assert main(["template", "-o", str(out), "--rules", "town-3", "--rules-path",
                 str(folder)]) == 0
    book = openpyxl.load_workbook(out)
    listed = [r[0].value for r in book["Lists"].iter_rows(min_row=2) if r[0].value]
    assert "zz-boathouse" in listed and "office-space" in listed


def test_plot_format_option_overrides_the_extension(tmp_path, capsys):
    need("matplotlib")
    out = tmp_path / "chart.picture"
    assert main(["plot", str(DEMO), "--zone", "203", "--format", "svg", "-o", str(out)]) == 0
    assert out.read_text(encoding="utf-8").lstrip().startswith("<?xml")
    assert main(["plot", str(DEMO), "--zone", "203", "-o", str(tmp_path / "x.picture")]) == 2
    assert "--format" in capsys.readouterr().err


def _doc_commands():
    """(file, command line) for every ``airgate …`` shown in README, DEVELOPERS.md and docs/:
    inline code and the lines of shell blocks (continuations joined)."""
    files = [ROOT / "README.md", ROOT / "DEVELOPERS.md", *sorted((ROOT / "docs").glob("*.md"))]
    for path in files:
        text = path.read_text(encoding="utf-8")
        for line in re.findall(r"`((?:\.venv/bin/)?airgate [^`]+)`", text):
            yield path.name, line
        for block in _shell_blocks(text):
            for line in block.replace("\\\n", " ").splitlines():
                found = re.search(r"(?:^|&& |\$ )((?:\.venv/bin/)?airgate\s.*)", line.strip())
                if found:
                    yield path.name, found.group(1)


def _shell_blocks(text: str):
    """The bodies of fenced blocks marked sh, bash, console or unmarked."""
    body, lang = None, None
    for line in text.splitlines(keepends=True):
        if line.startswith("```"):
            if body is None:
                body, lang = [], line[3:].strip()
            else:
                if lang in ("", "sh", "bash", "console"):
                    yield "".join(body)
                body = None
        elif body is not None:
            body.append(line)


def test_every_option_the_docs_show_exists():
    tree = dict(_parsers())
    shown, wrong = 0, []
    for name, line in _doc_commands():
        words = line.replace("\\|", " ").split()[1:]
        path = ("airgate",)
        while words and (*path, words[0]) in tree:
            path, words = (*path, words[0]), words[1:]
        options = _options(tree[path])
        for word in words:
            opt = re.match(r"\[?(--?[a-z][a-z-]*)", word)
            if opt and opt.group(1) not in options:
                wrong.append(f"{name}: {line!r}: {' '.join(path)} has no {opt.group(1)}")
        shown += 1
    assert wrong == [] and shown > 30


def test_readme_lists_the_choices_the_commands_take():
    from airgate.commands import rules, schema, template
    from airgate.evaluation.batch import FAIL_ON
    from airgate.units import UNIT_SYSTEMS
    from airgate.writers import plot
    from airgate.writers.formats import COMPARE_FORMATS, FORMATS

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    rows = {m.group(1): m.group(0) for m in re.finditer(r"^\| `airgate (\w+)[^\n]*", readme, re.M)}
    assert {"check", "compare", "explain", "import", "plot", "rules", "schema"} <= set(rows)
    bar = "\\|"  # a | inside a Markdown table cell
    assert all(name in rows["check"] for name in FORMATS)
    assert "--fail-on " + bar.join(FAIL_ON) in rows["check"]
    assert "--format " + bar.join(COMPARE_FORMATS) in rows["compare"]
    assert "--format " + bar.join(template.FORMATS) in rows["import"]
    assert "--units " + bar.join(UNIT_SYSTEMS) in rows["import"]
    assert "--format " + bar.join(sorted(set(plot.FORMATS.values()))) in rows["plot"]
    assert "--format " + bar.join(rules.DIFF_FORMATS) in rows["rules"]
    assert all(f"`{name}`" in rows["schema"] or f"schema {name}`" in rows["schema"]
               for name in schema.SCHEMAS)
