"""DXF import: units, layers, closed/open outlines, arcs, block transforms, doors, errors.

Every drawing is written by the test with ezdxf itself, so the expected geometry is what was
drawn; block transforms are recomposed here with numpy from the DXF definition of INSERT.
"""

from __future__ import annotations

import math
from pathlib import Path

import ezdxf
import numpy as np
import pytest
import shapely
from ezdxf.math import bulge_to_arc
from shapely.geometry import LineString, Point, Polygon

from kinematics.errors import FileReadError, SwatheInputError, ValidationError
from kinematics.files.curves import chord_count
from kinematics.files.dxf_import import SAGITTA_M, dxf_layers, guess_role, import_dxf
from kinematics.files.floorplan import solids
from kinematics.files.loader import load_floorplan


def _doc(units: int = 4, layers: tuple[str, ...] = ("WALLS", "FIXTURES", "DOORS")):
    doc = ezdxf.new(units=units)
    for name in layers:
        doc.layers.add(name)
    return doc


def _save(doc, tmp_path: Path, name: str = "plan.dxf") -> Path:
    p = tmp_path / name
    doc.saveas(p)
    return p


def _rot(deg: float) -> np.ndarray:
    r = math.radians(deg)
    return np.array([[math.cos(r), -math.sin(r)], [math.sin(r), math.cos(r)]])


# -- units ------------------------------------------------------------------------------------
# Source: AutoCAD INSUNITS system variable reference (0 unspecified, 1 inches, 2 feet,
# 4 millimetres, 5 centimetres, 6 metres); inch = 0.0254 m and foot = 0.3048 m exactly
# (international yard and pound agreement, 1959). Unitless is read as metres (our choice).
@pytest.mark.parametrize("code, metres", [(0, 1.0), (1, 0.0254), (2, 0.3048), (4, 0.001),
                                          (5, 0.01), (6, 1.0)])
def test_insunits_scale_geometry_to_metres(tmp_path, code, metres):
    doc = _doc(units=code)
    doc.modelspace().add_lwpolyline([(0, 0), (3000, 0), (3000, 2000)],
                                    dxfattribs={"layer": "WALLS"})
    fp = import_dxf(_save(doc, tmp_path))
    assert len(fp.walls) == 1
    np.testing.assert_allclose(fp.walls[0].points,
                               [(0, 0), (3000 * metres, 0), (3000 * metres, 2000 * metres)],
                               rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("units, metres", [("mm", 0.001), ("cm", 0.01), ("m", 1.0),
                                           ("in", 0.0254), ("ft", 0.3048)])
def test_units_argument_overrides_the_header(tmp_path, units, metres):
    doc = _doc(units=6)  # header says metres; the override wins
    doc.modelspace().add_line((0, 0), (100, 0), dxfattribs={"layer": "WALLS"})
    fp = import_dxf(_save(doc, tmp_path), units=units)
    assert fp.walls[0].points[1][0] == pytest.approx(100 * metres, rel=1e-12)


def test_unknown_units_argument_is_a_validation_error(tmp_path):
    doc = _doc()
    doc.modelspace().add_line((0, 0), (100, 0), dxfattribs={"layer": "WALLS"})
    with pytest.raises(ValidationError, match="units"):
        import_dxf(_save(doc, tmp_path), units="furlong")


# -- layers and roles -------------------------------------------------------------------------
def test_guessed_roles_from_layer_names():
    # Our documented rule: door words first, then obstacle words, everything else walls.
    assert guess_role("A-DOOR-OPEN") == "doors"
    assert guess_role("Pallet Racking") == "obstacles"
    assert guess_role("FIXTURES") == "obstacles"
    assert guess_role("furniture") == "obstacles"
    assert guess_role("OBSTACLES") == "obstacles"
    assert guess_role("A-WALL") == "walls"
    assert guess_role("0") == "walls"


def test_explicit_layers_pick_roles_and_skip_the_rest(tmp_path):
    doc = _doc(layers=("PARTITION", "KIT", "OPENINGS", "NOTES"))
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (5000, 0)], dxfattribs={"layer": "PARTITION"})
    msp.add_lwpolyline([(1000, 1000), (2000, 1000), (2000, 1500), (1000, 1500)], close=True,
                       dxfattribs={"layer": "KIT"})
    msp.add_line((2000, 0), (2900, 0), dxfattribs={"layer": "OPENINGS"})
    msp.add_line((0, 3000), (9000, 3000), dxfattribs={"layer": "NOTES"})
    fp = import_dxf(_save(doc, tmp_path), layers={"walls": ["partition"], "obstacles": ["KIT"],
                                                  "doors": ["Openings"]})
    assert [w.points for w in fp.walls] == [((0.0, 0.0), (5.0, 0.0))]
    assert len(fp.obstacles) == 1
    # Source: shapely Polygon.area of the drawn 1.0 m x 0.5 m rectangle.
    assert Polygon(fp.obstacles[0].points).area == pytest.approx(0.5, rel=1e-12)
    assert len(fp.doors) == 1 and fp.doors[0].width_m == pytest.approx(0.9, rel=1e-12)


def test_layer_not_in_the_drawing_is_named(tmp_path):
    doc = _doc()
    doc.modelspace().add_line((0, 0), (100, 0), dxfattribs={"layer": "WALLS"})
    with pytest.raises(ValidationError) as err:
        import_dxf(_save(doc, tmp_path), layers={"walls": ["WALLZ"]})
    assert "WALLZ" in err.value.message and "WALLS" in err.value.message


@pytest.mark.parametrize("offset_mm", [2.0e9, 1.0e300])
def test_drawing_far_from_the_origin_is_refused_with_the_entity(tmp_path, offset_mm):
    # Common practice: a floor plan drawn in site coordinates (2000 km off here) or broken
    # (1e300) must be moved near the origin; once 1e300 walls silently vanished from the
    # check. Units 4 (millimetres): ezdxf documentation of $INSUNITS.
    doc = _doc()
    line = doc.modelspace().add_line((offset_mm, 0), (offset_mm + 5000, 0),
                                     dxfattribs={"layer": "WALLS"})
    with pytest.raises(FileReadError) as err:
        import_dxf(_save(doc, tmp_path))
    assert line.dxf.handle in err.value.place and "1000 km" in err.value.message
    doc2 = _doc()
    doc2.modelspace().add_line((9.0e8, 0), (9.0e8 + 5000, 0), dxfattribs={"layer": "WALLS"})
    assert import_dxf(_save(doc2, tmp_path, "near.dxf")).walls  # 900 km off still reads


def test_no_geometry_on_the_chosen_layers_is_an_error(tmp_path):
    doc = _doc()
    doc.modelspace().add_line((0, 0), (100, 0), dxfattribs={"layer": "WALLS"})
    with pytest.raises(ValidationError, match="no walls"):
        import_dxf(_save(doc, tmp_path), layers={"doors": ["FIXTURES"]})


def test_unrecognised_layers_default_to_walls(tmp_path):
    doc = _doc(layers=("MISC",))
    doc.modelspace().add_line((0, 0), (1000, 0), dxfattribs={"layer": "MISC"})
    fp = import_dxf(_save(doc, tmp_path), wall_thickness_m=0.2)
    assert len(fp.walls) == 1 and fp.walls[0].thickness_m == 0.2
    assert fp.extra["dxf_import"]["layers"]["walls"] == ["MISC"]


def test_dxf_layers_lists_the_layer_table(tmp_path):
    doc = _doc(layers=("WALLS", "doors", "Fixtures"))
    doc.modelspace().add_line((0, 0), (1, 0), dxfattribs={"layer": "UNDECLARED"})
    names = dxf_layers(_save(doc, tmp_path))
    assert {"WALLS", "doors", "Fixtures", "UNDECLARED", "0"} <= set(names)
    assert names == sorted(names, key=lambda n: (n.lower(), n))


# -- closed and open outlines -----------------------------------------------------------------
def test_closed_outline_on_wall_layer_is_solid_open_is_wall(tmp_path):
    doc = _doc()
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (4000, 0), (4000, 3000), (0, 3000)], close=True,
                       dxfattribs={"layer": "WALLS"})
    # Not flagged closed, but the last point is the first: still a closed outline.
    msp.add_lwpolyline([(5000, 0), (6000, 0), (6000, 1000), (5000, 0)],
                       dxfattribs={"layer": "WALLS"})
    msp.add_lwpolyline([(0, 5000), (4000, 5000), (4000, 8000)], dxfattribs={"layer": "WALLS"})
    fp = import_dxf(_save(doc, tmp_path), wall_thickness_m=0.15)
    assert len(fp.obstacles) == 2 and len(fp.walls) == 1
    assert Polygon(fp.obstacles[0].points).area == pytest.approx(12.0, rel=1e-12)
    assert Polygon(fp.obstacles[1].points).area == pytest.approx(0.5, rel=1e-12)
    wall = fp.walls[0]
    assert not wall.closed and wall.thickness_m == 0.15
    # Source: plane geometry of a mitred strip: centreline length 7 m times 0.15 m (the outer
    # corner square the mitre adds equals the inner one it loses), measured by shapely.
    poly = [s for s in solids(fp) if s.kind == "wall"][0].geometry
    assert poly.area == pytest.approx(7.0 * 0.15, rel=1e-9)


def test_circle_is_a_solid_within_the_sagitta(tmp_path):
    doc = _doc()
    doc.modelspace().add_circle((2000, 1000), 300, dxfattribs={"layer": "FIXTURES"})
    fp = import_dxf(_save(doc, tmp_path))
    (ob,) = fp.obstacles
    poly = Polygon(ob.points)
    # Source: shapely Point.buffer (a fine reference circle) and hausdorff_distance; the
    # polygon circumscribes the circle (flattened outward), so it holds the circle and its
    # vertices lie within one sagitta outside it (circle geometry: r / cos(dtheta / 2)).
    ref = Point(2.0, 1.0).buffer(0.3, quad_segs=1024)
    assert poly.buffer(1e-9).contains(ref)
    assert shapely.hausdorff_distance(poly.exterior, ref.exterior) <= SAGITTA_M + 1e-6
    dist = np.hypot(np.array(ob.points)[:, 0] - 2.0, np.array(ob.points)[:, 1] - 1.0)
    assert np.all(dist >= 0.3) and np.all(dist <= 0.3 + SAGITTA_M + 1e-12)
    # Every edge is tangent to the circle: its midpoint lies on it.
    pts = np.array(ob.points + ob.points[:1])
    mid = 0.5 * (pts[1:] + pts[:-1])
    np.testing.assert_allclose(np.hypot(mid[:, 0] - 2.0, mid[:, 1] - 1.0), 0.3, atol=1e-9)


def test_chord_count_meets_the_sagitta_formula():
    # Source: circle geometry, sagitta s = r (1 - cos(theta / 2)) for a chord spanning theta.
    for r in (0.05, 0.3, 1.0, 12.0):
        for sweep in (0.3, math.pi / 2, math.pi, 2 * math.pi):
            n = chord_count(r, sweep, 0.005)
            assert r * (1 - math.cos(sweep / n / 2)) <= 0.005 + 1e-15
            if n > 1:  # and one fewer chord would not do
                assert r * (1 - math.cos(sweep / (n - 1) / 2)) > 0.005


@pytest.mark.parametrize("bulge", [1.0, -1.0, 0.4142135623730951, -0.2, 2.5])
def test_bulge_arc_matches_ezdxf_bulge_to_arc(tmp_path, bulge):
    doc = _doc(units=6)
    doc.modelspace().add_lwpolyline([(0, 0, bulge), (2, 0, 0)], format="xyb",
                                    dxfattribs={"layer": "WALLS"})
    fp = import_dxf(_save(doc, tmp_path))
    pts = np.array(fp.walls[0].points)
    # Source: ezdxf.math.bulge_to_arc gives the centre and radius of the bulge arc.
    centre, _a0, _a1, radius = bulge_to_arc((0, 0), (2, 0), bulge)
    dist = np.hypot(pts[:, 0] - centre.x, pts[:, 1] - centre.y)
    np.testing.assert_allclose(dist, radius, atol=1e-9)
    assert tuple(pts[0]) == (0.0, 0.0) and tuple(pts[-1]) == (2.0, 0.0)
    # Sagitta of every chord at most 5 mm.
    mids = (pts[1:] + pts[:-1]) / 2
    sag = radius - np.hypot(mids[:, 0] - centre.x, mids[:, 1] - centre.y)
    assert sag.max() <= SAGITTA_M + 1e-12
    # The included angle is 4 atan(bulge), counter-clockwise when positive (DXF reference,
    # LWPOLYLINE code 42): the arc bulges to the right of the chord for a positive bulge.
    side = np.sign(bulge) * -1
    assert np.all(np.sign(pts[1:-1, 1]) == side)
    # n equal chords of an arc sweeping theta total n * 2 r sin(theta / 2n) (chord formula).
    theta, n = 4 * abs(math.atan(bulge)), len(pts) - 1
    assert LineString(pts).length == pytest.approx(n * 2 * radius * math.sin(theta / 2 / n),
                                                   rel=1e-9)


def test_arc_entity_and_polyline_entities(tmp_path):
    doc = _doc(units=6)
    msp = doc.modelspace()
    msp.add_arc((0, 0), 2.0, 0, 90, dxfattribs={"layer": "WALLS"})
    msp.add_polyline2d([(10, 0), (12, 0), (12, 2)], dxfattribs={"layer": "WALLS"})
    msp.add_polyline3d([(20, 0, 1), (22, 0, 1), (22, 2, 0)], dxfattribs={"layer": "WALLS"})
    fp = import_dxf(_save(doc, tmp_path))
    arc, p2d, p3d = fp.walls
    assert arc.points[0] == pytest.approx((2.0, 0.0)) and arc.points[-1] == pytest.approx(
        (0.0, 2.0), abs=1e-12)
    assert p2d.points == ((10.0, 0.0), (12.0, 0.0), (12.0, 2.0))
    assert p3d.points == ((20.0, 0.0), (22.0, 0.0), (22.0, 2.0))


def test_mirrored_extrusion_flips_x(tmp_path):
    doc = _doc(units=6)
    doc.modelspace().add_arc((1.0, 0.0), 0.5, 0, 180,
                             dxfattribs={"layer": "WALLS", "extrusion": (0, 0, -1)})
    fp = import_dxf(_save(doc, tmp_path))
    pts = np.array(fp.walls[0].points)
    # Source: DXF reference, arbitrary axis algorithm: for extrusion (0, 0, -1) the OCS x axis
    # is world -x, so the OCS centre (1, 0) is the world point (-1, 0).
    np.testing.assert_allclose(np.hypot(pts[:, 0] + 1.0, pts[:, 1]), 0.5, atol=1e-9)


# -- blocks -----------------------------------------------------------------------------------
RACK = [(0, 0), (2700, 0), (2700, 1100), (0, 1100)]


def test_insert_with_rotation_and_scale(tmp_path):
    doc = _doc()
    blk = doc.blocks.new("RACK", base_point=(100, 50))
    blk.add_lwpolyline(RACK, close=True, dxfattribs={"layer": "FIXTURES"})
    doc.modelspace().add_blockref("RACK", (10000, 5000), dxfattribs={
        "layer": "FIXTURES", "rotation": 30, "xscale": 2.0, "yscale": 0.5})
    fp = import_dxf(_save(doc, tmp_path))
    got = np.array(fp.obstacles[0].points)
    # Source: DXF reference, INSERT group codes 10 (insertion point), 41/42 (x/y scale),
    # 50 (rotation): a block point p maps to insert + R(rotation) S (p - base point).
    local = np.array(RACK, float) - (100, 50)
    want = (local * (2.0, 0.5)) @ _rot(30).T + (10000, 5000)
    np.testing.assert_allclose(got, want * 0.001, atol=1e-9)


def test_nested_inserts_compose_and_layer_zero_inherits(tmp_path):
    doc = _doc()
    inner = doc.blocks.new("RACK")
    inner.add_lwpolyline(RACK, close=True, dxfattribs={"layer": "0"})
    outer = doc.blocks.new("ROW")
    outer.add_blockref("RACK", (1000, 0), dxfattribs={"rotation": 90})
    outer.add_blockref("RACK", (1000, 4000), dxfattribs={"rotation": 90})
    doc.modelspace().add_blockref("ROW", (20000, 0), dxfattribs={
        "layer": "FIXTURES", "rotation": 10, "xscale": 2.0, "yscale": 1.0})
    doc.modelspace().add_line((0, 0), (1, 0), dxfattribs={"layer": "WALLS"})
    fp = import_dxf(_save(doc, tmp_path), layers={"obstacles": ["FIXTURES"],
                                                  "walls": ["WALLS"]})
    assert len(fp.obstacles) == 2
    assert all(o.label == "FIXTURES" for o in fp.obstacles)  # layer 0 took the INSERT's
    for ob, offset in zip(fp.obstacles, [(1000, 0), (1000, 4000)]):
        # Inner block into ROW, then ROW into model space: compose the two INSERT maps.
        in_row = np.array(RACK, float) @ _rot(90).T + offset
        want = (in_row * (2.0, 1.0)) @ _rot(10).T + (20000, 0)
        np.testing.assert_allclose(np.array(ob.points), want * 0.001, atol=1e-9)


def test_circle_in_non_uniformly_scaled_block_becomes_an_ellipse(tmp_path):
    doc = _doc(units=6)
    blk = doc.blocks.new("PILLAR")
    blk.add_circle((0, 0), 1.0, dxfattribs={"layer": "FIXTURES"})
    doc.modelspace().add_blockref("PILLAR", (5, 5), dxfattribs={"layer": "FIXTURES",
                                                                "xscale": 0.6, "yscale": 0.3})
    fp = import_dxf(_save(doc, tmp_path))
    pts = np.array(fp.obstacles[0].points) - (5, 5)
    # Source: an affine image of the unit circle under diag(0.6, 0.3) is the ellipse
    # (x / 0.6)**2 + (y / 0.3)**2 = 1; the circumscribed polygon's image circumscribes it:
    # vertices on or outside it, the polygon holding it, within one sagitta.
    assert np.all((pts[:, 0] / 0.6) ** 2 + (pts[:, 1] / 0.3) ** 2 >= 1.0 - 1e-12)
    ref = shapely.affinity.scale(Point(0, 0).buffer(1.0, quad_segs=1024), 0.6, 0.3,
                                 origin=(0, 0))
    assert Polygon(pts).buffer(1e-9).contains(ref)
    assert shapely.hausdorff_distance(Polygon(pts).exterior, ref.exterior) <= SAGITTA_M + 1e-6


def test_minsert_rows_and_columns(tmp_path):
    doc = _doc()
    blk = doc.blocks.new("BAY")
    blk.add_lwpolyline(RACK, close=True)
    ins = doc.modelspace().add_blockref("BAY", (0, 0), dxfattribs={"layer": "FIXTURES"})
    ins.grid(size=(2, 3), spacing=(5000, 3000))  # 2 rows, 3 columns
    fp = import_dxf(_save(doc, tmp_path))
    assert len(fp.obstacles) == 6
    lows = sorted((min(p[0] for p in o.points), min(p[1] for p in o.points))
                  for o in fp.obstacles)
    # Source: DXF reference, INSERT codes 70/71 (column/row count) and 44/45 (column/row
    # spacing): columns step along the block x axis, rows along y.
    np.testing.assert_allclose(lows, [(x, y) for x in (0.0, 3.0, 6.0) for y in (0.0, 5.0)],
                               atol=1e-12)


# -- doors ------------------------------------------------------------------------------------
def test_door_lines_with_and_without_labels(tmp_path):
    doc = _doc()
    msp = doc.modelspace()
    msp.add_line((3000, 0), (3815, 0), dxfattribs={"layer": "DOORS"})
    msp.add_text("D-204", dxfattribs={"layer": "DOORS", "insert": (3300, 250)})
    msp.add_line((8000, 0), (8000, 1100), dxfattribs={"layer": "DOORS"})
    msp.add_arc((3000, 0), 815, 0, 90, dxfattribs={"layer": "DOORS"})  # a swing: skipped
    msp.add_line((0, 0), (10000, 0), dxfattribs={"layer": "WALLS"})
    fp = import_dxf(_save(doc, tmp_path))
    assert [d.label for d in fp.doors] == ["D-204", "door 2"]
    assert fp.doors[0].width_m == pytest.approx(0.815, rel=1e-12)
    assert fp.doors[1].a == (8.0, 0.0) and fp.doors[1].b == (8.0, 1.1)


def test_load_floorplan_dispatches_dxf(tmp_path):
    doc = _doc()
    doc.modelspace().add_line((0, 0), (1000, 0), dxfattribs={"layer": "WALLS"})
    p = _save(doc, tmp_path, "level2.DXF")
    fp = load_floorplan(p, units="cm")
    assert fp.walls[0].points[1] == (10.0, 0.0)
    assert fp.source == str(p)


# -- errors -----------------------------------------------------------------------------------
def test_missing_file(tmp_path):
    with pytest.raises(FileReadError) as err:
        import_dxf(tmp_path / "nope.dxf")
    assert "nope.dxf" in err.value.message and "not found" in err.value.message


@pytest.mark.parametrize("content", [b"", b"hello, this is not a drawing\n",
                                     bytes(range(256)) * 8,
                                     b"  0\nSECTION\n  2\nENTITIES\n  0\nLINE\n  8\n"])
def test_not_a_dxf_file(tmp_path, content):
    p = tmp_path / "bad.dxf"
    p.write_bytes(content)
    with pytest.raises(FileReadError) as err:
        import_dxf(p)
    assert str(p) in err.value.message


def test_truncated_file_is_refused(tmp_path):
    doc = _doc()
    for i in range(50):
        doc.modelspace().add_line((0, i * 100), (1000, i * 100), dxfattribs={"layer": "WALLS"})
    p = _save(doc, tmp_path)
    data = p.read_bytes()
    p.write_bytes(data[: int(len(data) * 0.9)])
    with pytest.raises(FileReadError, match="ends early"):
        import_dxf(p)


def test_bad_group_code_names_the_line(tmp_path):
    doc = _doc()
    doc.modelspace().add_line((0, 0), (1000, 0), dxfattribs={"layer": "WALLS"})
    p = _save(doc, tmp_path)
    text = p.read_text()
    i = text.index("\nLINE\n")
    # Replace the group code before LINE by something that is not a number.
    j = text.rindex("\n", 0, i)
    bad = text[:j] + "\nxx" + text[i:]
    p.write_text(bad)
    with pytest.raises(SwatheInputError) as err:
        import_dxf(p)
    want_line = bad[: j + 1].count("\n") + 1
    assert f"line {want_line}" in err.value.message
