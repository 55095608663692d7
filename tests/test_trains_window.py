"""A towing vehicle in the window: trailer outlines and the train's band on the canvas."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import shapely
from PySide6.QtCore import QSettings
from PySide6.QtWidgets import QApplication

from kinematics.check.sweep import placed_footprints, prepare_footprint

TRAIN = Path(__file__).resolve().parent.parent / "sample_floorplans" / "clinic_train.swathe.json"


def _window(qtbot, tmp_path):
    from app.main_window import MainWindow

    w = MainWindow(settings=QSettings(str(tmp_path / "s.ini"), QSettings.Format.IniFormat),
                   autosave_dir=tmp_path / "autosave")
    qtbot.addWidget(w)
    w.resize(1000, 700)
    assert w.open_project_file(TRAIN)
    w.show()
    QApplication.processEvents()
    return w


def _rings(canvas) -> list[np.ndarray]:
    out = []
    for it in canvas._outline_items.values():
        for poly in it.path().toSubpathPolygons():
            out.append(np.array([[p.x(), p.y()] for p in poly]))
    return out


def test_trailer_outlines_at_the_tug_stations(qtbot, tmp_path) -> None:
    w = _window(qtbot, tmp_path)
    doc, c = w.doc, w.canvas
    name = doc.route().name
    chassis = doc.vehicle(name)
    assert len(chassis.trailers) == 2
    chk = doc.check(name)
    trace = chk.train.trace
    segs = list(doc.plan(name).segments)
    spacing = c.outline_spacing_m
    rings = _rings(c)
    # Source: the check's own trailer trace (tested against textbook off-tracking and
    # solve_ivp in test_trailers.py): every trailer footprint placed at its pose at each
    # station where the tug's outline is drawn must be among the drawn rings.
    want = []
    for k, seg in enumerate(segs):
        if seg.length_m <= 0.0:
            continue
        local = np.arange(0.0, seg.length_m, spacing)
        if k == len(segs) - 1:
            local = np.append(local, seg.length_m)
        poses = trace.poses(k, local * (trace.amount(k) / seg.length_m))
        for j, t in enumerate(chassis.trailers):
            for g in placed_footprints(prepare_footprint(t.footprint), poses[:, j + 1]):
                want.append(np.asarray(g.exterior.coords)[:-1])
    n_tug = sum(len(np.arange(0.0, s.length_m, spacing)) for s in segs if s.length_m > 0) + 1
    assert len(rings) == n_tug * (1 + len(chassis.trailers))
    for ring in want:
        best = min(float(np.abs(r[:len(ring)] - ring).max()) if len(r) >= len(ring)
                   else np.inf for r in rings)
        assert best < 1e-6
    doc.undo_stack.setClean()
    w.close()


def test_band_holds_the_trailers(qtbot, tmp_path) -> None:
    w = _window(qtbot, tmp_path)
    doc, c = w.doc, w.canvas
    name = doc.route().name
    chk = doc.check(name)
    # Source: shapely: the filled band path contains the last trailer's axle positions along
    # the route (at the start they sit behind the tug, outside the tug's own band, and they
    # cut inside its path on the turn).
    poly = c.band_item.path().toFillPolygons()
    band = shapely.union_all([shapely.Polygon([(p.x(), p.y()) for p in q]).buffer(0)
                              for q in poly])
    trace = chk.train.trace
    pts = np.concatenate([trace.poses(k, np.linspace(0, trace.amount(k), 9))[:, -1, :2]
                          for k in range(len(trace.segments))])
    assert bool(np.all(shapely.covers(band.buffer(1e-6), shapely.points(pts))))
    doc.undo_stack.setClean()
    w.close()


def test_traffic_panel_lists_and_shows_places(qtbot, tmp_path) -> None:
    from kinematics.analysis.results import check_with_vehicle
    from kinematics.check.obstacles import ObstacleIndex
    from kinematics.check.traffic import band_of, traffic
    from kinematics.files.project import load_project
    from kinematics.plan.planner import plan_route

    w = _window(qtbot, tmp_path)
    panel = w.traffic_panel
    w.traffic_dock.raise_()
    report = panel.compute()
    # Source: the same kinematics.check.traffic run straight from the file (as
    # `swathe check --traffic` does, tested against shapely and analytic widths in
    # test_traffic.py): the panel lists exactly its conflicts and corridors.
    proj = load_project(TRAIN)
    idx = ObstacleIndex(proj.floorplan)
    bands = []
    for r in proj.routes:
        ch = proj.chassis_for(r)
        bands.append(band_of(check_with_vehicle(plan_route(r, ch), ch, idx, route=r), ch))
    ref = traffic(bands, idx)
    assert len(report["conflicts"]) == len(ref["conflicts"]) >= 1
    assert [c["verdict"] for c in report["corridors"]] == [c["verdict"] for c in
                                                            ref["corridors"]]
    for got, want in zip(report["conflicts"], ref["conflicts"]):
        assert abs(got["area_m2"] - want["area_m2"]) < 1e-9
    assert panel.table.rowCount() == len(ref["conflicts"]) + len(ref["corridors"])
    assert panel.table.item(0, 0).text() == "conflict"
    # Clicking the conflict row centres the plan on it and outlines the overlap itself.
    panel.table.cellClicked.emit(0, 0)
    QApplication.processEvents()
    (x0, x1), (y0, y1) = w.canvas.view.viewRange()
    c = ref["conflicts"][0]
    assert abs((x0 + x1) / 2 - c["x"]) < 1e-6 and abs((y0 + y1) / 2 - c["y"]) < 1e-6
    rect = w.canvas.plan_gestures.highlight_item.path().boundingRect()
    assert rect.width() * rect.height() >= c["area_m2"] - 1e-6
    assert rect.contains(rect.center()) and rect.width() < 5.0
    # An edit greys the list until it is computed again.
    route = w.doc.route()
    wp = route.waypoints[-1]
    w.doc.move_waypoint(w.doc.current_route, len(route.waypoints) - 1, wp.x, wp.y - 0.2)
    QApplication.processEvents()
    assert panel.stale_label.isVisibleTo(panel) and not panel.table.isEnabled()
    panel.compute()
    assert not panel.stale_label.isVisibleTo(panel) and panel.table.isEnabled()
    w.doc.undo_stack.setClean()
    w.close()
