"""One scene, two painters: the picture (app.render) and the canvas (app.canvas) draw the demo's
walls, doors and violation markers in the same colours and shapes (app.scene)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from PySide6.QtGui import QColor, QImage
from PySide6.QtWidgets import QApplication

from app import render, scene
from app.palette import ORANGE, VERMILLION, WALL_FILL
from kinematics.analysis.results import compute_results
from kinematics.files.floorplan import solids
from kinematics.files.project import load_project

DEMO = Path(__file__).resolve().parent.parent / "sample_floorplans" / "demo.swathe.json"
FAILING = "corridor-to-sluice"


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
    project = load_project(DEMO)
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
        for t in canvas.plan_labels + canvas.wp_labels + canvas.violation_labels:
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


