"""``airgate plot`` writes a readable, deterministic picture (matplotlib, optional extra).

Expected values: the PNG signature (ISO/IEC 15948) and the project's own contract (README,
docs/dilution.md): same input → byte-identical SVG; bad usage exits 2 with nothing written."""

from __future__ import annotations

import pytest

pytest.importorskip("matplotlib")

from airgate.cli import main  # noqa: E402

from conftest import DEMO  # noqa: E402


def test_png_of_a_zone(tmp_path, capsys):
    out = tmp_path / "zone.png"
    assert main(["plot", str(DEMO), "--zone", "203", "-o", str(out)]) == 0
    data = out.read_bytes()
    # the 8-byte signature every PNG file starts with (PNG specification, ISO/IEC 15948 §5.2)
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20_000


def test_svg_of_a_system(tmp_path, capsys):
    # (byte-identical pictures across runs and environments: tests/test_determinism.py)
    a = tmp_path / "a.svg"
    assert main(["plot", str(DEMO), "--system", "AHU-3", "-o", str(a)]) == 0
    text = a.read_text(encoding="utf-8")
    assert "<svg" in text and "CO2" in text


def test_unknown_extension_and_missing_series(tmp_path, capsys):
    assert main(["plot", str(DEMO), "--zone", "203", "-o", str(tmp_path / "x.gif")]) == 2
    assert "png" in capsys.readouterr().err
    import yaml

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    for z in data["systems"][1]["zones"]:
        for key in ("height", "volume"):  # no volume: no CO2 analysis to draw
            z.pop(key, None)
    path = tmp_path / "novolume.yaml"
    path.write_text(yaml.safe_dump(data), encoding="utf-8")
    assert main(["plot", str(path), "--system", "DOAS-1", "-o", str(tmp_path / "y.png")]) == 2
    assert "give the zone a height or volume" in capsys.readouterr().err
    assert not (tmp_path / "y.png").exists()


@pytest.mark.parametrize("name", [r"$\foo{x}$", "$" + "x^{" * 300 + "1" + "}" * 300 + "$",
                                  "_hidden", "cost $5 and $6", "\x1b[2J\u202eroom"],
                         ids=["unknown-command", "deep-nesting", "underscore", "dollars",
                              "controls"])
@pytest.mark.filterwarnings("error")  # a long name must not break the layout (no matplotlib warning)
def test_zone_names_are_drawn_literally(name, tmp_path, capsys):
    # matplotlib reads $…$ as mathtext (matplotlib docs, "Writing mathematical expressions"):
    # an unknown command is an error and deep nesting exhausts its parser. A name is drawn as
    # written instead; the contract is exit 0 and the name's text in the picture.
    import yaml

    data = yaml.safe_load(DEMO.read_text(encoding="utf-8"))
    zone = data["systems"][2]["zones"][0]
    zone["name"] = name
    data["project"]["name"] = name
    path = tmp_path / "named.yaml"
    path.write_text(yaml.safe_dump(data), encoding="utf-8")
    out = tmp_path / "named.svg"
    code = main(["plot", str(path), "--zone", str(zone["id"]), "-o", str(out)])
    err = capsys.readouterr().err
    assert code == 0, err
    svg = out.read_text(encoding="utf-8")
    assert "\x1b" not in svg and "\u202e" not in svg
    if name.startswith("cost"):
        assert "cost $5 and $6" in svg  # matplotlib writes each text beside its glyphs
