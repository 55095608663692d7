"""One scene, two painters: the picture (app.render) and the canvas (app.canvas) draw the demo's
walls, doors, zones, waypoints and violation markers in the same colours and shapes
(app.scene). The demo gets one zone of each kind, in rooms no route enters."""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from pathlib import Path

import numpy as np
import pytest
from PySide6.QtGui import QColor, QImage
from PySide6.QtWidgets import QApplication

from app import render, scene
from app.palette import ORANGE, VERMILLION, WALL_FILL
from kinematics.analysis.results import compute_results
from kinematics.files.floorplan import Zone, solids
from kinematics.files.project import load_project

DEMO = Path(__file__).resolve().parent.parent / "sample_floorplans" / "demo.swathe.json"
FAILING = "corridor-to-sluice"
ONE_WAY_DEG = 30.0


def _box(x0: float, y0: float, x1: float, y1: float) -> tuple:
    return ((x0, y0), (x1, y0), (x1, y1), (x0, y1))


def _zoned_demo():
    """The demo with a zone of each kind in the rooms south of the corridor (rooms 202-205,
    which no route enters, so the checks are the demo's)."""
    project = load_project(DEMO)
    zones = (Zone("keep_out", _box(10.5, 3.2, 13.5, 7.6), "spill"),
             Zone("slow", _box(14.5, 3.2, 17.5, 7.6), "ward", speed_mps=0.4),
             Zone("margin", _box(18.5, 3.2, 21.5, 7.6), "people", margin_m=0.3),
             Zone("one_way", _box(22.5, 3.2, 25.5, 7.6), "aisle", direction_deg=ONE_WAY_DEG))
    return dataclasses.replace(project, floorplan=dataclasses.replace(project.floorplan,
                                                                      zones=zones))


def _array(img: QImage) -> np.ndarray:
    img = img.convertToFormat(QImage.Format.Format_RGB32)
    a = np.frombuffer(img.constBits(), np.uint8).reshape(img.height(), img.bytesPerLine() // 4, 4)
    return a[:, :img.width(), 2::-1].astype(int)  # BGRA in memory -> RGB


def _rgb(spec: str) -> np.ndarray:
    c = QColor(spec)
    return np.array([c.red(), c.green(), c.blue()])


def _near(a: np.ndarray, x: float, y: float, colour: str, r: int = 1, tol: int = 30) -> bool:
    """Whether a pixel within ``r`` of (x, y) has ``colour`` (to ``tol`` levels per channel)."""
    xi, yi = int(round(x)), int(round(y))
    h, w, _ = a.shape
    win = a[max(0, yi - r):min(h, yi + r + 1), max(0, xi - r):min(w, xi + r + 1)]
    return bool(win.size) and bool((np.abs(win - _rgb(colour)).max(axis=2) <= tol).any())


def _mask(a: np.ndarray, x: float, y: float, colour: str, r: int) -> np.ndarray:
    xi, yi = int(round(x)), int(round(y))
    win = a[yi - r:yi + r + 1, xi - r:xi + r + 1]
    return (np.abs(win - _rgb(colour)).max(axis=2) <= 40)


@pytest.fixture(scope="module")
def painted():
    """The demo painted by both: (picture array, plan -> picture px, canvas array,
    plan -> canvas px, project, checks)."""
    from app.canvas import PlanCanvas
    from app.document import Document

    render.ensure_app()
    project = _zoned_demo()
    plans, checks, _errors = compute_results(project)
    img = render.new_image((1600, 1000))
    info = render.render_scene(img, project, plans, checks, footer=False)
    pic = _array(img)

    doc = Document(project)
    doc.set_current_route(doc.route_names().index(FAILING))
    canvas = PlanCanvas(doc)
    canvas.resize(1500, 1000)
    canvas.show()
    for _ in range(5):
        QApplication.processEvents()
    canvas.fit()
    for _ in range(5):
        QApplication.processEvents()
    can = _array(canvas.plot.viewport().grab().toImage())

    def to_can(x: float, y: float) -> tuple[float, float]:
        q = canvas.plan_to_viewport(x, y)
        return q.x(), q.y()

    def to_pic(x: float, y: float) -> tuple[float, float]:
        q = info["to_px"](x, y)
        return q.x(), q.y()

    def covered_pic(x: float, y: float) -> bool:
        return any(r.adjusted(-2, -2, 2, 2).contains(x, y) for r in info["covered"])

    def covered_can(x: float, y: float) -> bool:
        # Labels and markers drawn over the plan: their boxes on the viewport.
        from app.canvas import _plan_box

        px = canvas.px_m()
        for t in (canvas.plan_labels + canvas.zone_labels + canvas.wp_labels
                  + canvas.violation_labels):
            if t.isVisible():
                x0, y0, x1, y1 = _plan_box(t, px)
                a, b = to_can(x0, y1), to_can(x1, y0)  # top-left, bottom-right on screen
                if a[0] - 2 <= x <= b[0] + 2 and a[1] - 2 <= y <= b[1] + 2:
                    return True
        return False

    # Where routes run, their lines, outlines and markers lie over the plan (the window draws
    # the route being edited over the doors, as the picture does): probes go elsewhere.
    import shapely

    busy = shapely.union_all([c.swept.buffer(0.1) for c in checks.values() if c.swept]
                             + [shapely.Point(v.x, v.y).buffer(0.4)
                                for c in checks.values() for v in c.violations])
    # A door's jambs overlap the ends of the walls beside it.
    jambs = shapely.union_all([shapely.Point(q).buffer(0.25) for d in project.floorplan.doors
                               for q in (d.a, d.b)])

    def free(x: float, y: float, jamb: bool = True) -> bool:
        pt = shapely.Point(x, y)
        return not busy.contains(pt) and not (jamb and jambs.contains(pt))

    info["canvas_arrows"] = list(canvas.zone_arrows_item.data)
    canvas.painted_info = info
    yield pic, to_pic, can, to_can, project, checks, canvas, covered_pic, covered_can, free
    canvas.close()
    canvas.deleteLater()


def test_walls_have_the_wall_fill_in_both(painted):
    # Source: app/palette.py WALL_FILL is the one wall colour (issue 16: same colours
    # everywhere); probed at points well inside each wall (its outline shrunk by 5 cm).
    pic, to_pic, can, to_can, project, _checks, _c, cov_pic, cov_can, free = painted
    walls = [s.geometry for s in solids(project.floorplan) if s.kind == "wall"]
    assert len(walls) > 10
    for painter, arr, to_px, covered in (("picture", pic, to_pic, cov_pic),
                                         ("canvas", can, to_can, cov_can)):
        probed = filled = 0
        for w in walls:
            core = w.buffer(-0.05).boundary
            for f in np.linspace(0, 1, 12)[:-1]:
                q = core.interpolate(f, normalized=True)
                px = to_px(q.x, q.y)
                if covered(*px) or not free(q.x, q.y):
                    continue  # under a label or marker
                probed += 1
                filled += _near(arr, *px, WALL_FILL)
        assert probed > 200
        assert filled >= 0.97 * probed, (painter, filled, probed)


def test_doors_are_the_same_orange_in_both(painted):
    # Source: issue 16 (doors were orange and solid in the window, blue and dotted in the
    # picture); app.scene.STYLES["door"] now draws both.
    pic, to_pic, can, to_can, project, _checks, _c, cov_pic, cov_can, free = painted
    doors = project.floorplan.doors
    assert len(doors) > 5
    for painter, arr, to_px, covered in (("picture", pic, to_pic, cov_pic),
                                         ("canvas", can, to_can, cov_can)):
        probed = orange = 0
        for d in doors:
            # A solid line: orange at every probe along the opening (a dotted one fails).
            for f in np.linspace(0.15, 0.85, 15):
                q = np.add(d.a, f * np.subtract(d.b, d.a))
                px = to_px(*q)
                if covered(*px) or not free(*q, jamb=False):
                    continue
                probed += 1
                orange += _near(arr, *px, ORANGE, r=0)
        assert probed > 50, (painter, probed)
        assert orange >= 0.95 * probed, (painter, orange, probed)


def test_violation_markers_have_the_same_colour_and_shape(painted):
    # Source: issue 16 (the "short of margin" triangle pointed down in one painter and up in
    # the other); app.scene.marker_polygon draws it pointing up in both.
    pic, to_pic, can, to_can, _project, checks, canvas, _cp, _cc, _free = painted
    vs = list(checks[FAILING].violations)
    assert vs and {v.kind for v in vs} == {"clearance"}
    # Zoom the canvas in on them so neighbouring markers do not share a window.
    canvas.center_on(vs[0].x, vs[0].y, 4.0)
    for _ in range(5):
        QApplication.processEvents()
    can = _array(canvas.plot.viewport().grab().toImage())
    r = int(scene.VIOLATION_R_PX) + 1
    for v in vs:
        mp = _mask(pic, *to_pic(v.x, v.y), VERMILLION, r)
        mc = _mask(can, *to_can(v.x, v.y), VERMILLION, r)
        assert mp.sum() > 20 and mc.sum() > 20
        iou = (mp & mc).sum() / (mp | mc).sum()
        assert iou > 0.6, iou
        # Points up: more of it in the lower half (its base) than in the upper (its apex).
        for m in (mp, mc):
            assert m[r + 2:].sum() > m[:r - 1].sum()


def test_the_scene_has_one_style_per_role_and_the_legend_names_every_kind():
    rows = scene.legend_rows(["a", "b"], {})
    kinds = [arg for kind, _w, arg in rows if kind == "violation"]
    # Every kind is listed, the zone rules only where a route breaks one.
    assert kinds == [k for k in scene.VIOLATION_SHAPES if k not in ("keep_out", "wrong_way")]
    paths = [arg for kind, _w, arg in rows if kind == "path"]
    assert paths == list(scene.ROUTE_COLOURS[:2])
    assert ORANGE not in scene.ROUTE_COLOURS  # a route never looks like a door
    tri = scene.marker_polygon("triangle")
    assert tri[:, 1].argmin() == 0 and tri[0, 1] < 0  # the apex is up on the screen




def _refit(canvas) -> np.ndarray:
    """The canvas fitted to the plan again (another test may have zoomed it), grabbed."""
    canvas.fit()
    for _ in range(5):
        QApplication.processEvents()
    return _array(canvas.plot.viewport().grab().toImage())


def _zone_pixels(arr, to_px, covered, zone, obstacles):
    """RGB of every painted pixel inside ``zone`` (5 cm in from its edge), leaving out the
    obstacles drawn over it and anything under a label."""
    import shapely

    inner = shapely.Polygon(zone.points).buffer(-0.05)
    x0, y0, x1, y1 = inner.bounds
    a, b = to_px(x0, y1), to_px(x1, y0)  # top-left, bottom-right on the image
    xs = np.arange(int(math.ceil(a[0])), int(b[0]))
    ys = np.arange(int(math.ceil(a[1])), int(b[1]))
    keep = np.zeros((len(ys), len(xs)), bool)
    for j, y in enumerate(ys):
        for i, x in enumerate(xs):
            keep[j, i] = not covered(x, y)
    # Plan points of the pixel grid: drop those on or near an obstacle.
    gx = x0 + (xs - a[0]) / (b[0] - a[0]) * (x1 - x0)
    gy = y1 - (ys - a[1]) / (b[1] - a[1]) * (y1 - y0)
    px, py = np.meshgrid(gx, gy)
    near = shapely.contains_xy(obstacles, px, py)
    return arr[ys[0]:ys[-1] + 1, xs[0]:xs[-1] + 1], keep & ~near


def _hatch_direction(win: np.ndarray, keep: np.ndarray, colour: str) -> str:
    """Which way the hatch lines run: the neighbour step (right, down, down-right, down-left)
    along which a hatch pixel is most often followed by another."""
    ref = _rgb(colour)
    hatch = (np.abs(win - ref).max(axis=2) <= 60) & keep
    share = {}
    for name, (dy, dx) in {"hor": (0, 1), "ver": (1, 0), "fdiag": (1, 1),
                           "bdiag": (1, -1)}.items():
        a = hatch[:hatch.shape[0] - dy, max(0, -dx):hatch.shape[1] - max(0, dx)]
        b = hatch[dy:, max(0, dx):hatch.shape[1] - max(0, -dx) or None]
        b = b[:, :a.shape[1]]
        share[name] = (a & b).sum() / max(a.sum(), 1)
    return max(share, key=share.get), share


def test_zones_are_hatched_and_tinted_alike_in_both(painted):
    # Source: issue 16 (zone styles lived apart from the scene; the canvas drew no hatching);
    # app.scene.STYLES["zone_<kind>"] now styles both painters. The mean colour inside each
    # zone (fill and hatch over the plan's ground) agrees within 25 levels per channel, and
    # the hatch lines run the way the style's pattern says in both.
    pic, to_pic, can, to_can, project, _checks, canvas, cov_pic, cov_can, _free = painted
    import shapely

    can = _refit(canvas)
    obstacles = shapely.union_all([s.geometry for s in solids(project.floorplan)
                                   if s.kind == "obstacle"]).buffer(0.08)
    means = {}
    for z in project.floorplan.zones:
        st = scene.STYLES["zone_" + z.kind]
        row = []
        for painter, arr, to_px, covered in (("picture", pic, to_pic, cov_pic),
                                             ("canvas", can, to_can, cov_can)):
            win, keep = _zone_pixels(arr, to_px, covered, z, obstacles)
            assert keep.sum() > 1500, (painter, z.kind, keep.sum())
            row.append(win[keep].mean(axis=0))
            way, share = _hatch_direction(win, keep, st.fill.hatch_colour)
            if st.fill.pattern == "cross":
                # Both diagonals, neither straight.
                assert min(share["fdiag"], share["bdiag"]) > max(share["hor"], share["ver"]), \
                    (painter, z.kind, share)
            else:
                assert way == st.fill.pattern, (painter, z.kind, share)
        means[z.kind] = row
        assert np.abs(row[0] - row[1]).max() <= 25, (z.kind, row)
    # Each kind reads apart from the others by colour too (it differs by pattern already).
    kinds = list(means)
    for i, a in enumerate(kinds):
        for b in kinds[i + 1:]:
            assert np.abs(means[a][0] - means[b][0]).max() > 20, (a, b)


def test_zone_outlines_have_the_kind_colour_in_both(painted):
    # Source: app.scene.STYLES (outline per zone kind); a dashed or dotted outline shows its
    # colour along part of the edge, a solid one along nearly all of it.
    pic, to_pic, can, to_can, project, _checks, canvas, cov_pic, cov_can, _free = painted
    can = _refit(canvas)
    import shapely

    obstacles = shapely.union_all([s.geometry for s in solids(project.floorplan)
                                   if s.kind == "obstacle"]).buffer(0.08)
    for z in project.floorplan.zones:
        st = scene.STYLES["zone_" + z.kind].stroke
        (x0, y0), (x1, _y) = z.points[0], z.points[1]
        for painter, arr, to_px, covered in (("picture", pic, to_pic, cov_pic),
                                             ("canvas", can, to_can, cov_can)):
            probed = hit = 0
            for f in np.linspace(0.05, 0.95, 40):  # the bottom edge, clear of labels
                q = (x0 + f * (x1 - x0), y0)
                px = to_px(*q)
                if covered(*px) or obstacles.contains(shapely.Point(q)):
                    continue
                probed += 1
                hit += _near(arr, *px, st.colour, r=1, tol=45)
            assert probed >= 20
            least = 0.9 if st.dash == "solid" else 0.25
            assert least * probed <= hit, (painter, z.kind, hit, probed)


def test_one_way_arrows_point_along_the_zone_in_both(painted):
    # Source: the zone's direction_deg (README, zones): each arrow's green pixels, taken as a
    # point cloud, have their long axis along it (principal axis of the second moments) and
    # more of their mass ahead of the centre (the head) than behind.
    pic, to_pic, can, to_can, project, _checks, canvas, cov_pic, cov_can, _free = painted
    info = canvas.painted_info
    can = _refit(canvas)
    import shapely

    # Arrows near an obstacle (drawn over the zone) are left out.
    obstacles = shapely.union_all([s.geometry for s in solids(project.floorplan)
                                   if s.kind == "obstacle"]).buffer(0.5)
    z = [z for z in project.floorplan.zones if z.kind == "one_way"][0]
    pic_arrows = [(m.x, m.y) for m in scene.zone_layer(
        [z], scene.ZONE_ARROW_STEP_PX / info["px_per_m"]).markers]
    a = math.radians(ONE_WAY_DEG)
    for painter, arr, to_px, arrows, covered in (
            ("picture", pic, to_pic, pic_arrows, cov_pic),
            ("canvas", can, to_can, info["canvas_arrows"], cov_can)):
        assert len(arrows) >= 4, painter
        r = int(scene.ZONE_ARROW_R_PX) + 2
        good = 0
        # Those under the zone's name are left out too.
        arrows = [(x, y) for x, y in arrows if not obstacles.contains(shapely.Point(x, y))
                  and not covered(*to_px(x, y))]
        assert len(arrows) >= 3, painter
        for x, y in arrows:
            cx, cy = to_px(x, y)
            m = _mask(arr, cx, cy, scene.STYLES["zone_arrow"].fill.colour, r)
            if m.sum() < 8:
                continue
            yy, xx = np.nonzero(m)
            dx, dy = xx - xx.mean(), -(yy - yy.mean())  # plan y up
            cov = np.cov(np.vstack([dx, dy]))
            w, v = np.linalg.eigh(cov)
            axis = v[:, 1]
            ang = math.atan2(axis[1], axis[0])
            off = abs((ang - a + math.pi / 2) % math.pi - math.pi / 2)
            # Head ahead: the part of the arrow beyond its middle along the direction is wider.
            along = dx * math.cos(a) + dy * math.sin(a)
            across = np.abs(-dx * math.sin(a) + dy * math.cos(a))
            head = across[along > 0].mean() > across[along < 0].mean()
            good += off < math.radians(15) and head
        assert good >= 0.75 * len(arrows), (painter, good, len(arrows))


def test_waypoint_markers_are_the_same_ring_in_both(painted):
    # Source: app.scene (waypoint marker: radius WAYPOINT_R_PX, ringed in the route's colour);
    # the canvas drew them 13 px across against the picture's 15.
    pic, to_pic, can, to_can, project, _checks, canvas, _cp, _cc, _free = painted
    k = [r.name for r in project.routes].index(FAILING)
    colour = scene.ROUTE_COLOURS[k % len(scene.ROUTE_COLOURS)]
    canvas.center_on(30.0, 9.0, 12.0)
    for _ in range(5):
        QApplication.processEvents()
    can = _array(canvas.plot.viewport().grab().toImage())
    # The ring at the picture's scale: compare the ring's radius, found in each image as the
    # mean distance of its ring-coloured pixels from the centre.
    for w in project.route(FAILING).waypoints[1:]:
        radii = []
        for arr, to_px in ((pic, to_pic), (can, to_can)):
            cx, cy = to_px(w.x, w.y)
            r = int(scene.WAYPOINT_R_PX) + 3
            win = arr[int(round(cy)) - r:int(round(cy)) + r + 1,
                      int(round(cx)) - r:int(round(cx)) + r + 1]
            white = (np.abs(win - 255).max(axis=2) <= 20)
            yy, xx = np.nonzero(white)
            d = np.hypot(xx - r, yy - r)
            assert (d < 3).sum() == 0 or white.sum() > 20  # a white disc round the number
            ring = (np.abs(win - _rgb(colour)).max(axis=2) <= 60)
            yy, xx = np.nonzero(ring)
            d = np.hypot(xx - (cx - round(cx) + r), yy - (cy - round(cy) + r))
            d = d[(d > scene.WAYPOINT_R_PX - 3) & (d < scene.WAYPOINT_R_PX + 3)]
            assert len(d) > 20
            radii.append(d.mean())
        assert abs(radii[0] - radii[1]) < 1.0, radii


def _dark(win: np.ndarray, level: int = 110) -> np.ndarray:
    """The ink of text and of a black route: every channel below ``level`` (the white disc,
    the light band and the route colours other than black are all lighter; at 45 the grey
    footprint outlines are too)."""
    return win.max(axis=2) < level


def _fit_grab(canvas) -> np.ndarray:
    """The canvas fitted to the plan again and grabbed (a test before may have zoomed in, and
    ``to_can`` maps through the view as it is now)."""
    canvas.fit()
    for _ in range(5):
        QApplication.processEvents()
    return _array(canvas.plot.viewport().grab().toImage())


def test_waypoint_numbers_sit_inside_the_ring_in_both(painted):
    # Source: app.painting._paint_marker (the picture centres a waypoint's number in its
    # ring, bold 10 px) and the legend's "waypoint (number)"; the canvas drew the number above
    # and to the right of the ring. Inside the ring's white disc (radius WAYPOINT_R_PX less
    # its line) the only dark pixels are the number's; their centroid is the ring's centre.
    pic, to_pic, _can, to_can, project, _checks, canvas, _cp, _cc, _free = painted
    can = _fit_grab(canvas)
    inner = scene.WAYPOINT_R_PX - 2.5
    for k, w in enumerate(project.route(FAILING).waypoints):
        counts = []
        for painter, arr, to_px in (("picture", pic, to_pic), ("canvas", can, to_can)):
            cx, cy = to_px(w.x, w.y)
            r = int(scene.WAYPOINT_R_PX) + 2
            xi, yi = int(round(cx)), int(round(cy))
            win = arr[yi - r:yi + r + 1, xi - r:xi + r + 1]
            yy, xx = np.mgrid[-r:r + 1, -r:r + 1]
            d = np.hypot(xx + xi - cx, yy + yi - cy)
            ink = _dark(win) & (d < inner)
            n = int(ink.sum())
            assert n >= 6, (painter, k + 1, n)  # the digit is there, inside the ring
            mx = (xx + xi - cx)[ink].mean()
            my = (yy + yi - cy)[ink].mean()
            assert math.hypot(mx, my) < 2.0, (painter, k + 1, mx, my)
            counts.append(n)
        # The same digit in the same type: about as many ink pixels in each.
        assert 0.5 < counts[0] / counts[1] < 2.0, (k + 1, counts)


def _ring_profile(arr: np.ndarray, cx: float, cy: float, r: float, skip_deg: Sequence[float]
                  ) -> tuple[set[int], float]:
    """A pivot symbol of radius ``r`` px centred at (cx, cy) in an image: the 10-degree bins
    (angles counter-clockwise from +x on screen, y up) holding black pixels on the ring's
    circle, and the mean angle of the black pixels just outside it (the arrow head). Bins
    within 15 degrees of ``skip_deg`` (route lines leaving the centre) are left out."""
    n = int(r * 1.6) + 3
    xi, yi = int(round(cx)), int(round(cy))
    win = arr[yi - n:yi + n + 1, xi - n:xi + n + 1]
    yy, xx = np.mgrid[-n:n + 1, -n:n + 1]
    dx, dy = xx + xi - cx, -(yy + yi - cy)
    d = np.hypot(dx, dy)
    ang = np.degrees(np.arctan2(dy, dx)) % 360.0
    keep = np.ones_like(d, dtype=bool)
    for s in skip_deg:
        keep &= np.abs((ang - s + 180.0) % 360.0 - 180.0) > 15.0
    dark = _dark(win, 45) & keep
    on = dark & (np.abs(d - r) <= 1.2)
    bins = {int(a // 10) for a in ang[on]}
    out = dark & (d > r + 1.8) & (d < r * 1.5 + 1.0)
    a = np.radians(ang[out])
    head = math.degrees(math.atan2(np.sin(a).sum(), np.cos(a).sum())) % 360.0 if a.size \
        else float("nan")
    return bins, head


def _pivot_and_lines(project, plans) -> tuple[tuple[float, float], float, list[float]]:
    segs = list(plans[FAILING].segments)
    i = next(i for i, s in enumerate(segs) if s.kind == "pivot" and s.turn_rad != 0.0)
    x, y = segs[i].start[0], segs[i].start[1]
    # Screen angles (y up) of the lines arriving and leaving: from the centre back along the
    # previous segment and on along the next.
    lines = [math.degrees(math.atan2(q[1] - y, q[0] - x)) % 360.0
             for q in (segs[i - 1].start, segs[i + 1].end)]
    return (x, y), segs[i].turn_rad, lines


def _mirror(bins: set[int]) -> set[int]:
    """Bins of the mirror image about the 30-degree line the ring starts on (a clockwise
    symbol seen as the counter-clockwise one: angle -> 60 - angle)."""
    return {int(((60.0 - (b * 10 + 5)) % 360.0) // 10) for b in bins}


def test_a_pivot_has_the_same_symbol_in_the_canvas_the_picture_and_the_legend(painted):
    # Source: app.qstyle.pivot_paths (an open ring of 300 degrees from the 30-degree line, an
    # arrow head at its end, turning the way the body turns) drawn by the picture and its
    # legend; the canvas drew no pivot at all, and the legend a ring without a head. The
    # demo's failing route turns on the spot (differential chassis) at waypoint 2.
    from PySide6.QtCore import QRectF
    from PySide6.QtGui import QPainter

    from app.painting import font
    from app.picture_frame import draw_legend

    pic, to_pic, _can, to_can, project, checks, canvas, _cp, _cc, _free = painted
    can = _fit_grab(canvas)
    assert project.chassis.drive == "differential"
    plans, _checks, _e = compute_results(project)
    (x, y), turn, lines = _pivot_and_lines(project, plans)
    assert turn < 0  # clockwise: the ring runs from 30 degrees down round to 90
    profiles = []
    for painter, arr, to_px in (("picture", pic, to_pic), ("canvas", can, to_can)):
        cx, cy = to_px(x, y)
        bins, head = _ring_profile(arr, cx, cy, scene.PIVOT_R_PX, lines)
        # 300 of 360 degrees drawn (less the bins the route lines hide); the 60-degree gap
        # lies between 30 and 90 degrees, and the head at the ring's end, at 90 degrees.
        assert len(bins) >= 22, (painter, sorted(bins))
        assert not bins & {4, 5}, (painter, sorted(bins))
        assert abs((head - 90.0 + 180.0) % 360.0 - 180.0) < 25.0, (painter, head)
        profiles.append((bins, head))
    (bp, hp), (bc, hc) = profiles
    assert len(bp ^ bc) <= 3, sorted(bp ^ bc)
    assert abs((hp - hc + 180.0) % 360.0 - 180.0) < 12.0, (hp, hc)

    # The legend's sample: the same symbol, counter-clockwise, at radius 8 px (u = 1).
    render.ensure_app()
    img = QImage(400, 700, QImage.Format.Format_RGB32)
    img.fill(QColor("white"))
    p = QPainter(img)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    names = [r.name for r in project.routes]
    rect = QRectF(10, 10, 380, 680)
    draw_legend(p, rect, names, {n: i for i, n in enumerate(names)}, checks, 1.0,
                font(12), font(10))
    p.end()
    rows = scene.legend_rows(names, checks, {n: i for i, n in enumerate(names)})
    i = [kind for kind, _t, _a in rows].index("pivot")
    cx, cy = rect.left() + 10 + 38 / 2, rect.top() + 28 + 4 + 25 * (i + 0.5)
    bl, hl = _ring_profile(_array(img), cx, cy, 8.0, [])
    assert len(bl) >= 27 and not bl & {0, 1}, sorted(bl)  # the gap about 0 degrees
    assert abs((hl - 330.0 + 180.0) % 360.0 - 180.0) < 25.0, hl
    # Mirrored about its 30-degree line, the picture's clockwise ring is the legend's.
    assert len(_mirror(bp) - bl) <= 2, sorted(_mirror(bp) - bl)


def test_other_routes_are_drawn_in_their_colours_in_both(painted):
    # Source: app.scene.route_style (each route's colour from its place in the project, as
    # the legend names it); the canvas drew every route but the current one grey dash-dot.
    # Probed along each other route's path, away from waypoints, doors, other routes and the
    # current route's band.
    import shapely

    pic, to_pic, _can, to_can, project, checks, canvas, cov_pic, cov_can, _free = painted
    can = _fit_grab(canvas)
    plans, _c, _e = compute_results(project)
    names = [r.name for r in project.routes]
    lines = {n: shapely.LineString(np.vstack([scene.segment_samples(s)[0]
                                              for s in plans[n].segments if s.kind != "pivot"]))
             for n in names if plans.get(n) is not None}
    wps = shapely.MultiPoint([(w.x, w.y) for r in project.routes for w in r.waypoints])
    doors = shapely.MultiLineString([[d.a, d.b] for d in project.floorplan.doors])
    band = checks[FAILING].swept
    probed = {"picture": 0, "canvas": 0}
    hit = {"picture": 0, "canvas": 0}
    for k, n in enumerate(names):
        if n == FAILING or n not in lines:
            continue
        colour = scene.ROUTE_COLOURS[k % len(scene.ROUTE_COLOURS)]
        others = shapely.union_all([ln for m, ln in lines.items() if m != n])
        for f in np.linspace(0.0, 1.0, 80):
            q = lines[n].interpolate(f, normalized=True)
            if (q.distance(wps) < 0.45 or q.distance(doors) < 0.3 or q.distance(others) < 0.3
                    or q.distance(band) < 0.3):
                continue
            for painter, arr, to_px, covered in (("picture", pic, to_pic, cov_pic),
                                                 ("canvas", can, to_can, cov_can)):
                px = to_px(q.x, q.y)
                if covered(*px):
                    continue
                probed[painter] += 1
                hit[painter] += _near(arr, *px, colour, r=1, tol=40)
    for painter in probed:
        assert probed[painter] > 40, probed
        assert hit[painter] >= 0.9 * probed[painter], (painter, hit, probed)


def test_a_fixed_heading_is_drawn_in_the_routes_colour_in_both(painted):
    # Source: app.scene.route_style; the picture drew a fixed heading's line in the route's
    # colour and the canvas its handle purple (the second route's colour). A heading fixed at
    # the first waypoint of the first route (blue) as the planner chose it: pixels 12-20 px
    # from the waypoint along the heading are blue in both, and so is the handle's knob.
    from app.canvas_items import HANDLE_PX

    _pic, _to_pic, _can, to_can, _project, _checks, canvas, _cp, _cc, _free = painted
    doc = canvas.doc
    k = 0
    colour = scene.ROUTE_COLOURS[k]
    doc.set_current_route(k)
    for _ in range(5):
        QApplication.processEvents()
    try:
        h = round(canvas._free_heading_deg(0), 2)
        doc.set_waypoint_heading(k, 0, h)
        for _ in range(5):
            QApplication.processEvents()
        w = doc.route().waypoints[0]
        assert w.heading_deg == h
        can = _fit_grab(canvas)
        plans, checks, _e = compute_results(doc.project)
        img = render.new_image((1600, 1000))
        info = render.render_scene(img, doc.project, plans, checks, footer=False)
        pic = _array(img)

        def to_pic(x: float, y: float) -> tuple[float, float]:
            q = info["to_px"](x, y)
            return q.x(), q.y()

        a = math.radians(h)
        for painter, arr, to_px in (("picture", pic, to_pic), ("canvas", can, to_can)):
            cx, cy = to_px(w.x, w.y)
            for d in (12, 15, 18, 20):
                x, y = cx + d * math.cos(a), cy - d * math.sin(a)
                assert _near(arr, x, y, colour, r=1, tol=40), (painter, d)
        cx, cy = to_can(w.x, w.y)
        x, y = cx + HANDLE_PX * math.cos(a), cy - HANDLE_PX * math.sin(a)
        assert _near(can, x, y, colour, r=1, tol=40), "the knob"
    finally:
        doc.undo_stack.undo()
        doc.set_current_route(doc.route_names().index(FAILING))
        for _ in range(5):
            QApplication.processEvents()
