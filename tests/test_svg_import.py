"""SVG import: y flip, path commands, curves within tolerance, transforms, roles, errors."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import shapely
from shapely.geometry import LineString, Point, Polygon

from kinematics.errors import FileReadError
from kinematics.files.loader import load_floorplan
from kinematics.files.svg_import import TOLERANCE_M, import_svg, parse_path, parse_transform

NS = 'xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink"'


def _svg(tmp_path: Path, body: str, attrs: str = 'viewBox="0 0 1000 500"',
         name: str = "plan.svg") -> Path:
    p = tmp_path / name
    p.write_text(f'<?xml version="1.0"?>\n<svg {NS} {attrs}>\n{body}\n</svg>\n',
                 encoding="utf-8")
    return p


# -- coordinates ------------------------------------------------------------------------------
# Source: SVG 1.1 section 7.3, the initial user coordinate system has y pointing down; Swathe's
# plan frame has y up (shared/contract.md), so y_plan = (viewBox bottom - y) * metres_per_unit.
def test_y_axis_is_flipped_against_the_viewbox_bottom(tmp_path):
    p = _svg(tmp_path, '<rect x="100" y="100" width="200" height="50"/>',
             'viewBox="-100 0 1000 500"')
    (ob,) = import_svg(p).obstacles
    xs, ys = zip(*ob.points)
    assert (min(xs), max(xs)) == pytest.approx((2.0, 4.0))
    assert (min(ys), max(ys)) == pytest.approx((3.5, 4.0))


def test_without_viewbox_the_height_is_the_bottom(tmp_path):
    p = _svg(tmp_path, '<line x1="0" y1="0" x2="0" y2="100"/>', 'height="500"')
    fp = import_svg(p, metres_per_unit=0.001)
    assert fp.walls[0].points == ((0.0, 0.5), (0.0, 0.4))


def test_without_viewbox_or_height_y_is_negated(tmp_path):
    p = _svg(tmp_path, '<line x1="0" y1="10" x2="20" y2="10"/>', "")
    assert import_svg(p, metres_per_unit=1.0).walls[0].points == ((0.0, -10.0), (20.0, -10.0))


# -- path data --------------------------------------------------------------------------------
@pytest.mark.parametrize("d", ["M10 10 L50 10 L50 40 L10 40 Z",
                               "m10 10 l40 0 l0 30 l-40 0 z",
                               "M10,10 H50 V40 H10 Z",
                               "m10,10h40v30h-40z",
                               "M10 10 50 10 50 40 10 40z",
                               "M1e1,1e1L5e1,10,50,4e1,10,40Z"])
def test_equivalent_path_spellings_give_one_polygon(d):
    # Source: SVG 1.1 section 8.3 (moveto with implicit lineto, relative commands, H/V, Z).
    ((pts, closed),) = parse_path(d, 0.01)
    assert closed
    np.testing.assert_allclose(pts, [(10, 10), (50, 10), (50, 40), (10, 40), (10, 10)])


def test_compact_numbers_and_subpaths():
    # Source: SVG 1.1 section 8.3.9 grammar: "1.5.5" is two numbers, "10-5" is two numbers.
    subs = parse_path("M0,0L10-5l1.5.5M100 100 l10 0", 0.01)
    assert len(subs) == 2
    np.testing.assert_allclose(subs[0][0], [(0, 0), (10, -5), (11.5, -4.5)])
    assert not subs[0][1] and not subs[1][1]
    np.testing.assert_allclose(subs[1][0], [(100, 100), (110, 100)])


def test_after_z_the_next_subpath_starts_at_the_start_point():
    subs = parse_path("M10 10 h10 v10 z l5 0", 0.01)
    np.testing.assert_allclose(subs[1][0], [(10, 10), (15, 10)])


def _bezier(ctrl: np.ndarray, t: np.ndarray) -> np.ndarray:
    # Source: Bernstein form of a Bezier curve (Farin, Curves and Surfaces for CAGD, ch. 4).
    n = len(ctrl) - 1
    out = np.zeros((len(t), 2))
    for i, c in enumerate(ctrl):
        out += math.comb(n, i) * ((1 - t) ** (n - i) * t ** i)[:, None] * c
    return out


@pytest.mark.parametrize("d, ctrl", [
    ("M0 0 C 0 300 400 300 400 0", [(0, 0), (0, 300), (400, 300), (400, 0)]),
    ("M0 0 c 100 -500 300 500 400 0", [(0, 0), (100, -500), (300, 500), (400, 0)]),
    ("M0 0 Q 200 400 400 0", [(0, 0), (200, 400), (400, 0)]),
    ("M10 20 q 190 380 390 -20", [(10, 20), (200, 400), (400, 0)]),
])
def test_bezier_flattening_stays_within_tolerance(d, ctrl, tmp_path):
    p = _svg(tmp_path, f'<path d="{d}"/>')
    fp = import_svg(p)  # 1 unit = 1 cm: tolerance 0.5 units
    got = np.array(fp.walls[0].points)
    ref = _bezier(np.array(ctrl, float), np.linspace(0, 1, 20001))
    ref_plan = np.column_stack([ref[:, 0] * 0.01, (500 - ref[:, 1]) * 0.01])
    # Source: shapely hausdorff_distance between the chords and a dense sampling of the curve.
    h = shapely.hausdorff_distance(LineString(got), LineString(ref_plan))
    assert h <= TOLERANCE_M + 1e-6
    assert len(got) < 400  # and not absurdly many chords


def test_smooth_curveto_reflects_the_control_point():
    # Source: SVG 1.1 section 8.3.6: S's first control point is the reflection of the previous
    # C's second control point about the current point.
    ((a, _),) = parse_path("M0 0 C 0 100 100 100 100 0 S 200 -100 200 0", 0.01)
    ((b, _),) = parse_path("M0 0 C 0 100 100 100 100 0 C 100 -100 200 -100 200 0", 0.01)
    np.testing.assert_allclose(a, b)


def test_smooth_quadratic_reflects_the_control_point():
    ((a, _),) = parse_path("M0 0 Q 50 100 100 0 T 200 0", 0.01)
    ((b, _),) = parse_path("M0 0 Q 50 100 100 0 Q 150 -100 200 0", 0.01)
    np.testing.assert_allclose(a, b)


@pytest.mark.parametrize("large, sweep, centre_y, turn", [
    (0, 1, 86.60254037844386, math.pi / 3), (1, 0, 86.60254037844386, 5 * math.pi / 3),
    (0, 0, -86.60254037844386, math.pi / 3), (1, 1, -86.60254037844386, 5 * math.pi / 3)])
def test_arc_flags_pick_the_right_circle(large, sweep, centre_y, turn):
    # Two circles of radius 100 pass through (0, 0) and (100, 0); their centres are at
    # (50, +-sqrt(100**2 - 50**2)) (circle geometry). Source: SVG 1.1 section 8.3.8: the
    # large-arc flag picks the 300 degree arc, the sweep flag the positive-angle direction.
    ((pts, _),) = parse_path(f"M0 0 A100 100 0 {large} {sweep} 100 0", 0.005)
    r = np.hypot(pts[:, 0] - 50, pts[:, 1] - centre_y)
    np.testing.assert_allclose(r, 100, atol=1e-9)
    n = len(pts) - 1
    assert LineString(pts).length == pytest.approx(n * 2 * 100 * math.sin(turn / 2 / n),
                                                   rel=1e-9)
    ang = np.unwrap(np.arctan2(pts[:, 1] - centre_y, pts[:, 0] - 50))
    assert np.sign(ang[-1] - ang[0]) == (1 if sweep else -1)


def test_arc_radii_too_small_are_scaled_up():
    # Source: SVG 1.1 appendix F.6.6: radii too small are scaled until the arc just fits, here
    # a half circle of radius 50 on the chord (0, 0)-(100, 0).
    ((pts, _),) = parse_path("M0 0 A10 10 0 0 1 100 0", 0.01)
    np.testing.assert_allclose(np.hypot(pts[:, 0] - 50, pts[:, 1]), 50, atol=1e-9)


def test_rotated_elliptical_arc_points_lie_on_the_ellipse():
    ((pts, _),) = parse_path("M 0 0 a 80 30 30 1 1 60 40", 0.01)
    # Recover the centre from the first, last and a middle point; simpler: check the
    # ellipse equation in the frame rotated by 30 degrees about a fitted centre.
    phi = math.radians(30)
    rot = np.array([[math.cos(phi), math.sin(phi)], [-math.sin(phi), math.cos(phi)]])
    local = pts @ rot.T  # into the ellipse's axes (translation still unknown)
    # Source: least squares on the axis-aligned ellipse equation (u-cu)^2/a^2+(v-cv)^2/b^2=1
    # with a = 80, b = 30: linear in cu, cv after expansion.
    u, v = local[:, 0], local[:, 1]
    a2, b2 = 80.0 ** 2, 30.0 ** 2
    A = np.column_stack([2 * u / a2, 2 * v / b2, -np.ones_like(u)])
    rhs = u ** 2 / a2 + v ** 2 / b2 - 1
    (cu, cv, k), *_ = np.linalg.lstsq(A, rhs, rcond=None)
    resid = (u - cu) ** 2 / a2 + (v - cv) ** 2 / b2 - 1
    np.testing.assert_allclose(resid, 0, atol=1e-9)


# -- transforms -------------------------------------------------------------------------------
def _m(a, b, c, d, e, f):
    return np.array([[a, c, e], [b, d, f], [0, 0, 1.0]])


def test_transform_list_composes_left_to_right():
    # Source: SVG 1.1 section 7.6: a transform list is equivalent to nested transforms in the
    # order given, i.e. the matrix product left to right acting on column vectors;
    # section 7.4 gives matrix(a b c d e f) = [[a c e], [b d f], [0 0 1]].
    r = math.radians(30)
    want = (_m(1, 0, 0, 1, 10, 20) @ _m(2, 0, 0, 3, 0, 0)
            @ _m(1, 0, 0, 1, 5, 5) @ _m(math.cos(r), math.sin(r), -math.sin(r),
                                         math.cos(r), 0, 0) @ _m(1, 0, 0, 1, -5, -5)
            @ _m(1, 2, 3, 4, 5, 6))
    got = parse_transform("translate(10,20) scale(2 3) rotate(30 5 5) matrix(1 2 3 4 5 6)")
    np.testing.assert_allclose(got, want, atol=1e-12)
    # Section 7.4: skewX(a) = [[1 tan(a) 0], [0 1 0]], skewY(a) = [[1 0 0], [tan(a) 1 0]].
    np.testing.assert_allclose(parse_transform("skewX(45)"), _m(1, 0, 1, 1, 0, 0), atol=1e-12)
    np.testing.assert_allclose(parse_transform("skewY(45)"), _m(1, 1, 0, 1, 0, 0), atol=1e-12)


def test_group_and_element_transforms_apply_to_points(tmp_path):
    body = ('<g transform="translate(500 100)"><g transform="rotate(90)">'
            '<line transform="scale(2)" x1="0" y1="0" x2="50" y2="0"/></g></g>')
    fp = import_svg(_svg(tmp_path, body), metres_per_unit=0.01)
    # (50, 0) scaled by 2 -> (100, 0), rotated 90 deg -> (0, 100), translated -> (500, 200);
    # then y flipped against the viewBox bottom 500.
    np.testing.assert_allclose(fp.walls[0].points, [(5.0, 4.0), (5.0, 3.0)], atol=1e-12)


def test_curves_keep_the_tolerance_under_scaling(tmp_path):
    body = '<g transform="scale(10)"><circle cx="20" cy="20" r="10"/></g>'
    fp = import_svg(_svg(tmp_path, body))
    poly = Polygon(fp.obstacles[0].points)
    ref = Point(2.0, 3.0).buffer(1.0, quad_segs=1024)  # centre (200, 200) -> (2, 3) m, r 1 m
    # Flattened outward: the outline holds the circle and lies within twice the tolerance.
    assert poly.buffer(1e-9).contains(ref)
    assert shapely.hausdorff_distance(poly.exterior, ref.exterior) <= 2 * TOLERANCE_M + 1e-6


# -- roles ------------------------------------------------------------------------------------
def test_roles_closed_open_door_and_wall(tmp_path):
    body = """
    <rect id="outer-wall" x="0" y="0" width="1000" height="500" stroke-width="20"/>
    <polygon id="rack" points="100,100 300,100 300,150 100,150"/>
    <circle id="pillar" cx="500" cy="250" r="20"/>
    <polyline points="600,0 600,200 800,200"/>
    <line id="D-101 door" x1="400" y1="500" x2="481.5" y2="500"/>
    <g class="doors"><path d="M 700 500 h 110"/><path d="M700 500 a110 110 0 0 1 110 -110"/></g>
    <g class="Walls" style="stroke-width: 15"><rect x="0" y="300" width="100" height="100"/></g>
    """
    fp = import_svg(_svg(tmp_path, body))
    assert sorted(o.label for o in fp.obstacles) == ["pillar", "rack"]
    walls = sorted(fp.walls, key=lambda w: w.thickness_m)
    assert [(w.closed, w.thickness_m) for w in walls] == [(False, 0.1), (True, 0.15),
                                                          (True, 0.2)]
    assert [d.label for d in fp.doors] == ["D-101 door", "door 2"]
    assert fp.doors[0].width_m == pytest.approx(0.815)
    assert fp.doors[1].width_m == pytest.approx(1.1)


def test_rounded_rect_and_use(tmp_path):
    body = """
    <defs><rect id="bay" width="100" height="40" rx="10"/></defs>
    <use href="#bay" x="100" y="100"/>
    <use xlink:href="#bay" x="300" y="100" transform="translate(0 100)"/>
    """
    fp = import_svg(_svg(tmp_path, body))
    assert len(fp.obstacles) == 2
    # Source: area of a rounded rectangle, w h - (4 - pi) r^2. The outline is flattened
    # outward: it holds the true shape, and grows it by at most twice the tolerance
    # (0.2 units at 1 mm per cm unit) along its perimeter 2 (w + h) - (8 - 2 pi) r, plus
    # the mitred corners. Measured by shapely.
    true = 100 * 40 - (4 - math.pi) * 10 ** 2
    perimeter = 2 * (100 + 40) - (8 - 2 * math.pi) * 10
    tol_units = TOLERANCE_M / 0.01
    for ob in fp.obstacles:
        area = Polygon(ob.points).area / 0.01 ** 2
        assert true <= area <= true + perimeter * 2 * tol_units + 1.0
    lows = sorted((min(x for x, _ in o.points), max(y for _, y in o.points))
                  for o in fp.obstacles)
    # Grown outward by the 1 mm tolerance.
    np.testing.assert_allclose(lows, [(1.0 - TOLERANCE_M, 4.0 + TOLERANCE_M),
                                      (3.0 - TOLERANCE_M, 3.0 + TOLERANCE_M)], atol=1e-9)


def test_hidden_and_defs_content_is_skipped(tmp_path):
    body = """
    <defs><rect width="10" height="10"/></defs>
    <rect width="10" height="10" style="display:none"/>
    <g visibility="hidden"><line x1="0" y1="0" x2="5" y2="5"/></g>
    <text x="0" y="0">Room 2</text>
    <line x1="0" y1="0" x2="100" y2="0"/>
    """
    fp = import_svg(_svg(tmp_path, body))
    assert len(fp.walls) == 1 and not fp.obstacles


def test_load_floorplan_dispatches_svg(tmp_path):
    p = _svg(tmp_path, "<title>Test level</title><line x1='0' y1='0' x2='100' y2='0'/>",
             name="plan.SVG")
    fp = load_floorplan(p, metres_per_unit=0.001)
    assert fp.name == "Test level"
    assert fp.walls[0].points == ((0.0, 0.5), (0.1, 0.5))


# -- errors -----------------------------------------------------------------------------------
BILLION_LAUGHS = """<?xml version="1.0"?>
<!DOCTYPE svg [
 <!ENTITY lol "lol">
 <!ENTITY lol1 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">
 <!ENTITY lol2 "&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;&lol1;">
 <!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">
 <!ENTITY lol4 "&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;&lol3;">
 <!ENTITY lol5 "&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;&lol4;">
 <!ENTITY lol6 "&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;&lol5;">
 <!ENTITY lol7 "&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;&lol6;">
 <!ENTITY lol8 "&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;&lol7;">
 <!ENTITY lol9 "&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;&lol8;">
]>
<svg xmlns="http://www.w3.org/2000/svg"><title>&lol9;</title></svg>
"""


def test_billion_laughs_is_refused(tmp_path):
    # Source: the "billion laughs" entity-expansion attack, as defended by defusedxml
    # (EntitiesForbidden).
    p = tmp_path / "laughs.svg"
    p.write_text(BILLION_LAUGHS)
    with pytest.raises(FileReadError) as err:
        import_svg(p)
    assert "laughs.svg" in err.value.message and "entities" in err.value.message


def test_external_entity_is_refused(tmp_path):
    p = tmp_path / "xxe.svg"
    p.write_text('<?xml version="1.0"?>\n<!DOCTYPE svg [<!ENTITY x SYSTEM "file:///etc/passwd">]>'
                 '\n<svg xmlns="http://www.w3.org/2000/svg"><title>&x;</title></svg>')
    with pytest.raises(FileReadError, match="refused"):
        import_svg(p)


def test_malformed_xml_names_line_and_column(tmp_path):
    p = tmp_path / "broken.svg"
    p.write_text('<svg xmlns="http://www.w3.org/2000/svg">\n  <line x1="0" y1="0"\n'
                 '  <rect/>\n</svg>\n')
    with pytest.raises(FileReadError) as err:
        import_svg(p)
    assert err.value.place.startswith("line 3, column ")


@pytest.mark.parametrize("body, where", [
    ('<path id="w1" d="M 0 0 L 10"/>', "w1"),
    ('<path d="M 0 0 X 10 10"/>', "<path>"),
    ('<path d="10 10 L 0 0"/>', "<path>"),
    ('<path d="M0 0 A 10 10 0 2 0 5 5"/>', "<path>"),
    ('<rect width="ten" height="10"/>', "<rect>"),
    ('<line x1="50%" y1="0" x2="1" y2="1"/>', "<line>"),
    ('<g transform="rotate(1 2)"><line x1="0" y1="0" x2="1" y2="1"/></g>', "<g>"),
    ('<g transform="spin(3)"><line x1="0" y1="0" x2="1" y2="1"/></g>', "<g>"),
    ('<polygon points="0,0 10,0 10"/>', "<polygon>"),
    ('<circle cx="0" cy="0" r="1e300"/>', "<circle>"),
    ('<g id="loop"><use href="#loop"/></g>', "<use>"),
])
def test_bad_elements_name_the_element(tmp_path, body, where):
    p = _svg(tmp_path, body)
    with pytest.raises(FileReadError) as err:
        import_svg(p)
    assert str(p) in err.value.message and where in err.value.place


def test_not_svg_and_missing(tmp_path):
    p = tmp_path / "notsvg.svg"
    p.write_text("<html><body/></html>")
    with pytest.raises(FileReadError, match="<svg>"):
        import_svg(p)
    with pytest.raises(FileReadError, match="not found"):
        import_svg(tmp_path / "absent.svg")


def test_drawing_far_from_the_origin_is_refused(tmp_path):
    # Common practice, as for DXF: a plan must lie near the origin (here 2000 km off at the
    # default 0.01 m per unit); 900 km off still reads.
    from kinematics.errors import FileReadError

    p = _svg(tmp_path, '<rect id="far-block" x="2e8" y="100" width="200" height="50"/>',
             'viewBox="0 0 1000 500"')
    with pytest.raises(FileReadError) as err:
        import_svg(p)
    assert "far-block" in err.value.place and "1000 km" in err.value.message
    p = _svg(tmp_path, '<rect x="9e7" y="100" width="200" height="50"/>',
             'viewBox="0 0 1000 500"', name="near.svg")
    assert import_svg(p).obstacles
