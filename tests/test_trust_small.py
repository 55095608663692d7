"""Small trust points: a UTF-8 byte-order mark, the Defpoints layer, render formats."""

from __future__ import annotations

from pathlib import Path

import ezdxf

from kinematics.files.dxf_import import guess_role, import_dxf
from kinematics.files.jsonio import read_json

BOM = b"\xef\xbb\xbf"  # Source: the Unicode standard (UTF-8 encoding of U+FEFF)


def test_json_with_utf8_bom_is_read(tmp_path: Path) -> None:
    p = tmp_path / "bom.json"
    p.write_bytes(BOM + b'{"a": [1, 2], "b": "x"}')
    # Source: the Unicode standard (EF BB BF is a byte-order mark, not content)
    assert read_json(p) == {"a": [1, 2], "b": "x"}


def test_bom_project_loads_like_the_plain_one(tmp_path: Path) -> None:
    from kinematics.files.project import load_project

    src = Path("sample_floorplans/demo.swathe.json")
    plain = load_project(src)
    floor = src.parent / "clinic.floor.json"
    (tmp_path / floor.name).write_bytes(BOM + floor.read_bytes())
    copy = tmp_path / src.name
    copy.write_bytes(BOM + src.read_bytes())
    with_bom = load_project(copy)
    assert with_bom.chassis == plain.chassis
    assert [r.name for r in with_bom.routes] == [r.name for r in plain.routes]


def test_defpoints_layer_is_ignored_by_default(tmp_path: Path) -> None:
    # Source: common practice (CAD programs keep dimension construction points on the
    # never-printed Defpoints layer; it holds no building geometry)
    assert guess_role("Defpoints") == "ignore"
    assert guess_role("DEFPOINTS") == "ignore"
    assert guess_role("defpoints-old") == "walls"
    doc = ezdxf.new(units=6)
    doc.layers.add("WALLS")
    msp = doc.modelspace()
    msp.add_line((0, 0), (10, 0), dxfattribs={"layer": "WALLS"})
    msp.add_line((0, 5), (10, 5), dxfattribs={"layer": "Defpoints"})
    p = tmp_path / "plan.dxf"
    doc.saveas(p)
    fp = import_dxf(p)
    assert len(fp.walls) == 1
    ys = {round(y, 6) for w in fp.walls for _, y in w.points}
    assert 5.0 not in ys


def test_layer_dialog_defaults_defpoints_to_ignore(qtbot) -> None:
    from app.main_window import DxfImportDialog

    dlg = DxfImportDialog(Path("plan.dxf"), ["A-WALL", "Defpoints", "DOORS"])
    qtbot.addWidget(dlg)
    # Source: common practice (Defpoints holds no building geometry)
    assert dlg.combos["Defpoints"].currentText() == "ignore"
    assert dlg.combos["A-WALL"].currentText() == "walls"
    assert "Defpoints" not in sum(dlg.options()["layers"].values(), [])


def test_drive_names_take_the_right_article() -> None:
    from kinematics.files.project import a_drive

    # Source: common practice (English article before a vowel sound; Ackermann is a name)
    assert a_drive("ackermann") == "an Ackermann"
    assert a_drive("differential") == "a differential"
    assert a_drive("mecanum") == "a mecanum"


def test_missing_ackermann_dimension_message(tmp_path: Path) -> None:
    import json

    import pytest

    from kinematics.errors import ValidationError
    from kinematics.files.project import load_project

    src = Path("sample_floorplans/demo.swathe.json")
    d = json.loads(src.read_text())
    d["floorplan"] = str((src.parent / d["floorplan"]).resolve())
    d["chassis"]["drive"] = "ackermann"
    d["chassis"].pop("wheelbase_m", None)
    p = tmp_path / "car.swathe.json"
    p.write_text(json.dumps(d))
    with pytest.raises(ValidationError) as e:
        load_project(p)
    # Source: common practice (English article before a vowel sound)
    assert "an Ackermann chassis needs" in str(e.value)
    assert "a ackermann" not in str(e.value)


def test_footprint_in_millimetres_gets_a_metre_hint(tmp_path: Path) -> None:
    import json

    import pytest

    from kinematics.errors import ValidationError
    from kinematics.files.project import load_project

    src = Path("sample_floorplans/demo.swathe.json")
    d = json.loads(src.read_text())
    d["floorplan"] = str((src.parent / d["floorplan"]).resolve())
    d["chassis"]["footprint"] = [[-350, -300], [650, -300], [650, 300], [-350, 300]]
    p = tmp_path / "mm.swathe.json"
    p.write_text(json.dumps(d))
    with pytest.raises(ValidationError) as e:
        load_project(p)
    # Source: common practice (drawings are dimensioned in mm; 1 m = 1000 mm, SI)
    assert "sizes are in metres; did you mean -0.35?" in str(e.value)
    assert e.value.place == "chassis.footprint[0][0]"
    # one large value among metre-sized ones is not the millimetre slip: no hint
    d["chassis"]["footprint"] = [[-0.3, -0.3], [650, -0.3], [0.6, 0.3], [-0.3, 0.3]]
    p.write_text(json.dumps(d))
    with pytest.raises(ValidationError) as e:
        load_project(p)
    assert "did you mean" not in str(e.value)


def test_render_writes_jpeg_or_refuses_other_suffixes(tmp_path: Path, capsys) -> None:
    from app.cli import main

    src = "sample_floorplans/demo.swathe.json"
    jpg = tmp_path / "out.jpg"
    assert main(["render", src, "-o", str(jpg), "--width", "400", "--height", "300"]) == 0
    # Source: the JPEG standard (ITU-T T.81: SOI marker FF D8 followed by a marker FF)
    assert jpg.read_bytes()[:3] == b"\xff\xd8\xff"
    png = tmp_path / "OUT.PNG"
    assert main(["render", src, "-o", str(png), "--width", "400", "--height", "300"]) == 0
    # Source: the PNG specification (the 8-byte signature)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    capsys.readouterr()
    gif = tmp_path / "out.gif"
    assert main(["render", src, "-o", str(gif), "--width", "400", "--height", "300"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and ".gif" in err[0] and "Traceback" not in err[0]
    assert not gif.exists()
