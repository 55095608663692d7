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
