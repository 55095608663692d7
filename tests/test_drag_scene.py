"""After a drag, the canvas shows the scene's primitives for the dragged route.

The canvas builds the route being dragged segment by segment from the scene's per-segment
builders (app.scene.segment_samples, band_piece, segment_outline_stations), kept by segment
value so a drag step remakes only the segments that moved (app/canvas_routes.py). These tests
drag a waypoint of the demo's failing route the way the mouse does, end the drag, and compare
what the canvas holds with the scene built afresh from the document's plan and check
(app.scene.route_layer, band_pieces, violation_layer): the same colours, and the same geometry
within a tolerance."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import shapely
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QApplication
from scipy.spatial import cKDTree

from app import scene
from kinematics.analysis.results import vehicle_of
from kinematics.files.project import load_project

SAMPLES = Path(__file__).resolve().parent.parent / "sample_floorplans"
#: The demo's route that fails at the sluice door (lines and a pivot, with violations), and a
#: route of lines, arcs and clothoids.
CASES = (("demo", "corridor-to-sluice"), ("clinic_smooth", "ward-to-room-208"))


def _settle(n: int = 5) -> None:
    for _ in range(n):
        QApplication.processEvents()


@pytest.fixture(scope="module", params=CASES, ids=[c[1] for c in CASES])
def dragged(request):
    """A route with a middle waypoint dragged round a 0.3 m arc and let go: (canvas,
    document, route index, route name)."""
    from app.canvas import PlanCanvas
    from app.document import Document, new_drag_token

    QApplication.instance() or QApplication([])
    sample, name = request.param
    doc = Document(load_project(SAMPLES / f"{sample}.swathe.json"))
    ri = doc.route_names().index(name)
    doc.set_current_route(ri)
    canvas = PlanCanvas(doc)
    canvas.resize(1200, 800)
    canvas.show()
    _settle()
    canvas.fit()
    _settle()
    wi = len(doc.route().waypoints) // 2
    x0, y0 = doc.route().waypoints[wi].x, doc.route().waypoints[wi].y
    token = new_drag_token()
    for k in range(1, 9):  # as bench/bench_gui.py drags: small moves through the event loop
        a = 0.5 * math.pi * k / 8
        doc.move_waypoint(ri, wi, round(x0 + 0.3 * math.sin(a), 4),
                          round(y0 + 0.3 * (1 - math.cos(a)), 4), drag=token)
        QApplication.processEvents()
    doc.finish_drag()
    _settle()
    yield canvas, doc, ri, name
    canvas.close()
    canvas.deleteLater()


def _colour(c: QColor) -> tuple[str, int]:
    return c.name().upper(), c.alpha()


def _points(item) -> np.ndarray:
    x, y = item.getData()
    xy = np.column_stack([x, y])
    return xy[np.isfinite(xy).all(axis=1)]


def test_the_dragged_path_is_the_scenes_path_in_the_routes_colour(dragged):
    # Source: app.scene.route_layer (the picture's primitives); the same points within 1 um
    # and the route's stroke (solid forward, dashed in reverse).
    canvas, doc, ri, route = dragged
    plan = doc.plan(route)
    fp = vehicle_of(doc.project, doc.route()).footprint
    layer = scene.route_layer(doc.route(), ri, plan, fp)
    paths = [ln for ln in layer.lines if ln.role == "path"]
    assert paths
    for item, direction in ((canvas.path_fwd, 1), (canvas.path_rev, -1)):
        stroke = scene.route_style(ri, direction)
        assert _colour(item.pen().color()) == (stroke.colour.upper(), 255)
        want_dash = direction < 0
        assert (item.pen().style().name != "SolidLine") == want_dash
        want = [ln.xy for ln in paths if ln.stroke.dash == stroke.dash]
        got = _points(item)
        if not want:
            assert len(got) <= 1  # a pivot's one point at most
            continue
        want = np.vstack(want)
        if any(s.kind in ("arc", "clothoid") for s in plan.segments):
            assert len(want) > 100  # curves sampled as the scene samples them
        # Every point the canvas draws is one of the scene's, and the other way round.
        assert cKDTree(want).query(got)[0].max() < 1e-6
        assert cKDTree(got).query(want)[0].max() < 1e-6


def test_the_dragged_band_fills_the_scenes_band(dragged):
    # Source: app.scene.band_pieces from the final check (its union is the check's swept
    # area: tests/test_scene_band.py); the canvas's path, filled with the non-zero winding
    # rule, covers the same points (probed on a grid, away from the edge by 2 mm), in the
    # band's style.
    canvas, doc, _ri, route = dragged
    plan, chk = doc.plan(route), doc.check(route)
    fp = vehicle_of(doc.project, doc.route()).footprint
    band = shapely.union_all(np.concatenate(
        [np.asarray(p, dtype=object) for p in scene.band_pieces(fp, plan.segments, chk)]))
    assert shapely.symmetric_difference(band, chk.swept).area <= 1e-6 * chk.swept.area
    fill = scene.STYLES["band"].fill
    assert _colour(canvas.band_item.brush().color()) == (fill.colour.upper(), fill.alpha)
    path = canvas.band_item.path()
    x0, y0, x1, y1 = band.bounds
    xs, ys = np.meshgrid(np.linspace(x0, x1, 90), np.linspace(y0, y1, 90))
    pts = shapely.points(xs.ravel(), ys.ravel())
    far = shapely.distance(shapely.boundary(band), pts) > 0.002
    inside = shapely.contains(band, pts)
    from PySide6.QtCore import QPointF

    drawn = np.array([path.contains(QPointF(float(p.x), float(p.y))) for p in pts])
    assert inside[far].sum() > 500
    assert (drawn[far] == inside[far]).all(), int((drawn[far] != inside[far]).sum())


def test_the_dragged_outlines_are_the_scenes_outlines(dragged):
    # Source: app.scene.route_layer with the window's spacing (segment_outline_stations):
    # the same footprint rings within 1 um, in the outline style.
    canvas, doc, ri, route = dragged
    plan = doc.plan(route)
    fp = vehicle_of(doc.project, doc.route()).footprint
    spacing = canvas.outline_spacing_m
    assert spacing
    layer = scene.route_layer(doc.route(), ri, plan, fp, outline_spacing_m=spacing)
    want = [ln.xy[:-1] for ln in layer.lines if ln.role == "outline"]
    got = []
    stroke = scene.STYLES["outline"].stroke
    for item in canvas._outline_items.values():
        assert item.isVisible()
        assert _colour(item.pen().color()) == (stroke.colour.upper(), 255)
        for poly in item.path().toSubpathPolygons():
            ring = np.array([(q.x(), q.y()) for q in poly])
            got.append(ring[:-1] if np.allclose(ring[0], ring[-1]) else ring)
    assert len(want) > 10 and len(got) == len(want)
    key = lambda r: tuple(np.round(r.mean(axis=0), 4))  # noqa: E731
    for g, w in zip(sorted(got, key=key), sorted(want, key=key)):
        assert g.shape == w.shape and np.abs(g - w).max() < 1e-6


def test_the_dragged_waypoints_and_violations_are_the_scenes_markers(dragged):
    # Source: app.scene.route_layer's waypoint markers (ringed in the route's colour) and
    # violation_layer's markers (app.scene.marker_polygon's shape, radius VIOLATION_R_PX).
    canvas, doc, ri, route = dragged
    plan, chk = doc.plan(route), doc.check(route)
    layer = scene.route_layer(doc.route(), ri, plan,
                              vehicle_of(doc.project, doc.route()).footprint)
    want = [(m.x, m.y) for m in layer.markers if m.role == "waypoint"]
    assert np.allclose(canvas.waypoints_item.data, want, atol=1e-9)
    ring = layer.markers[0].stroke
    assert _colour(canvas.waypoints_item._pen.color()) == (ring.colour.upper(), 255)
    vlayer = scene.violation_layer({route: chk})
    if route == "corridor-to-sluice":
        assert vlayer.markers, "the dragged route still fails at the sluice door"
    assert np.allclose(canvas.violations_item.data, [(m.x, m.y) for m in vlayer.markers],
                       atol=1e-9)
    vst = scene.STYLES["violation"]
    shown = [it for it in canvas.violations_item._items if it.isVisible()]
    assert len(shown) == len(vlayer.markers)
    for it, m in zip(shown, vlayer.markers):
        assert _colour(it.brush().color()) == (vst.fill.colour.upper(), 255)
        assert _colour(it.pen().color()) == (vst.stroke.colour.upper(), 255)
        poly = it.path().toSubpathPolygons()[0]
        got = np.array([(q.x(), q.y()) for q in poly])[:-1]
        outline = scene.marker_polygon(m.shape)
        if outline is None:  # a circle: every point at the radius
            assert np.allclose(np.hypot(*got.T), scene.VIOLATION_R_PX, atol=0.05)
        else:
            assert np.allclose(got, outline * scene.VIOLATION_R_PX, atol=1e-6)
