"""Small trust points: a UTF-8 byte-order mark, the Defpoints layer, render formats."""

from __future__ import annotations

from pathlib import Path

import ezdxf
import pytest

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


def _invented_dxf(path: Path) -> None:
    """A small invented plan: a wall line, a round pillar, a door line and its label."""
    doc = ezdxf.new("R2010", units=6)  # metres
    for name in ("WALLS", "FIXTURES", "DOORS"):
        doc.layers.add(name)
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (8, 0), (8, 5)], dxfattribs={"layer": "WALLS"})
    msp.add_circle((3, 2.5), 0.15, dxfattribs={"layer": "FIXTURES"})
    msp.add_line((8, 1), (8, 2), dxfattribs={"layer": "DOORS"})
    msp.add_text("Kiln r\u00f6om", dxfattribs={"layer": "DOORS", "insert": (8.2, 1.5)})
    doc.saveas(path)


def test_dxf_with_utf8_bom_is_read_like_the_plain_file(tmp_path: Path) -> None:
    from kinematics.files.dxf_import import dxf_layers

    plain = tmp_path / "plain.dxf"
    _invented_dxf(plain)
    marked = tmp_path / "marked.dxf"
    marked.write_bytes(BOM + plain.read_bytes())
    a, b = import_dxf(plain), import_dxf(marked)
    # Source: the Unicode standard (EF BB BF is a byte-order mark, not content)
    assert b.walls == a.walls and b.obstacles == a.obstacles and b.doors == a.doors
    assert len(b.walls) == 1 and len(b.obstacles) == 1 and len(b.doors) == 1
    assert dxf_layers(marked) == dxf_layers(plain)


def test_dxf_with_bom_through_a_project_and_the_cli(tmp_path: Path, capsys) -> None:
    import json

    from app.cli import main

    plain = tmp_path / "plain.dxf"
    _invented_dxf(plain)
    (tmp_path / "plan.dxf").write_bytes(BOM + plain.read_bytes())
    proj = {"swathe_project": 1, "floorplan": "plan.dxf",
            "chassis": {"name": "t", "drive": "differential",
                        "footprint": [[-0.3, -0.3], [0.3, -0.3], [0.3, 0.3], [-0.3, 0.3]],
                        "margin_m": 0.05, "wheel_radius_m": 0.1, "track_m": 0.5},
            "routes": [{"name": "r", "waypoints": [[1, 1.5, 0], [6, 1.5]]}]}
    p = tmp_path / "p.swathe.json"
    p.write_bytes(BOM + json.dumps(proj).encode())
    assert main(["check", str(p), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    # The route runs beside the pillar (r = 0.15 at (3, 2.5)) on y = 1.5, so the body's left
    # side (y = 1.8) is 2.5 - 0.15 - 1.8 = 0.55 m from it and 1.5 m from the wall at y = 0
    # (less the wall's half thickness 0.05 and the body's 0.3: 1.15 m).
    # Source: textbook geometry (distance from a line to a circle)
    c = out["routes"][0]["min_clearance_m"]
    assert c == pytest.approx(0.55, abs=0.003)


def test_svg_with_utf8_bom_is_read(tmp_path: Path) -> None:
    from kinematics.files.svg_import import import_svg

    svg = (b'<?xml version="1.0" encoding="UTF-8"?>\n'
           b'<svg xmlns="http://www.w3.org/2000/svg" width="800" height="500">'
           b'<rect id="pillar" x="300" y="200" width="30" height="30"/>'
           b'<line class="wall" x1="0" y1="0" x2="800" y2="0" stroke-width="10"/>'
           b'</svg>')
    plain, marked = tmp_path / "plain.svg", tmp_path / "marked.svg"
    plain.write_bytes(svg)
    marked.write_bytes(BOM + svg)
    a, b = import_svg(plain, metres_per_unit=0.01), import_svg(marked, metres_per_unit=0.01)
    # Source: XML 1.0, appendix F (a UTF-8 byte-order mark may start the document)
    assert b.walls == a.walls and b.obstacles == a.obstacles
    assert len(b.walls) == 1 and len(b.obstacles) == 1


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


def test_a_clearance_exactly_at_the_margin_keeps_it() -> None:
    # A body set exactly `margin` from a wall face keeps the margin: the floating-point
    # distance (e.g. 0.04999999999999998 for 0.05) must not make it a "0 mm short"
    # violation; 2 um short is still short. Source: common practice (IEEE 754 rounding;
    # the stated slack MARGIN_SLACK_M is 1 um, far below the 2 mm check tolerance).
    from kinematics.check.clearance import ObstacleIndex, check_route
    from kinematics.check.sweep import MARGIN_SLACK_M
    from kinematics.files.floorplan import FloorPlan, Wall
    from kinematics.files.project import Chassis
    from kinematics.motion.segments import line

    assert MARGIN_SLACK_M == 1e-6
    seen_rounded = 0
    for hw in (0.3, 0.35, 0.21):
        for m in (0.05, 0.1, 0.03, 0.07):
            for y0 in (0.0, 0.1, 1.3, 10.1):
                for t in (0.1, 0.15, 0.2):
                    fp = ((-0.3, -hw), (0.6, -hw), (0.6, hw), (-0.3, hw))
                    for short in (0.0, 2e-6):
                        wy = y0 + hw + m - short + t / 2
                        plan = FloorPlan(walls=(Wall(((-5, wy), (25, wy)), t),))
                        c = check_route([line((0, y0, 0), 10.0)],
                                        Chassis(footprint=fp, margin_m=m),
                                        ObstacleIndex(plan))
                        if short == 0.0:
                            seen_rounded += c.min_clearance_m < m
                            assert c.clear, (hw, m, y0, t, c.min_clearance_m)
                        else:
                            assert not c.clear
                            assert c.violations[0].kind == "clearance"
    assert seen_rounded > 0  # the rounding this guards against does happen here


def test_planner_and_reports_spell_ackermann_as_a_name(tmp_path: Path, capsys) -> None:
    # Source: common practice (the Ackermann steering geometry is named after Rudolph
    # Ackermann, so the word takes a capital; the file key stays "ackermann").
    from kinematics.files.project import Chassis, Route, Waypoint, drive_word
    from kinematics.plan.planner import plan_route

    car = Chassis(drive="ackermann", wheelbase_m=0.8, track_m=0.5, max_steer_deg=30.0)
    plan = plan_route(Route("r", (Waypoint(0, 0, 0), Waypoint(5, 0)), turn_radius_m=0.3), car)
    msgs = [i.message for i in plan.issues if i.kind == "turn_radius"]
    assert msgs and all("the Ackermann chassis" in m for m in msgs)
    assert drive_word("differential") == "differential"
    import json

    from app.cli import main

    src = Path("sample_floorplans/demo.swathe.json")
    d = json.loads(src.read_text())
    d["floorplan"] = str((src.parent / d["floorplan"]).resolve())
    d["chassis"].update(drive="ackermann", wheelbase_m=0.8, max_steer_deg=30.0)
    p = tmp_path / "car.swathe.json"
    p.write_text(json.dumps(d))
    main(["plan", str(p)])
    out = capsys.readouterr().out
    assert "(Ackermann)" in out and "drive Ackermann" in out and "ackermann" not in out
