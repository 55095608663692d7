"""A towing vehicle in the window: trailer outlines and the train's band on the canvas."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
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


# -- the fleet and trailers edited in the window ------------------------------------------------


def _doc():
    from app.document import Document
    from kinematics.files.project import load_project

    return Document(load_project(TRAIN))


def _reloaded(doc, tmp_path):
    """The document's project written and read back by the file reader."""
    from kinematics.files.project import load_project

    path = tmp_path / "fleet.swathe.json"
    doc.save(path)
    return load_project(path)


def test_fleet_edits_are_undoable_and_keep_the_file_valid(qtbot, tmp_path) -> None:
    # Source: the project file's own reader (kinematics.files.project.load_project, which
    # refuses a route naming a vehicle the fleet does not hold): after every edit the saved
    # project reads back with the same vehicles and route assignments, and undo restores the
    # tree exactly.
    import dataclasses

    doc = _doc()
    start = doc.project
    assert doc.vehicle_names() == ["ward tug", "hospital delivery cart"]
    # Add: a copy of the default vehicle without trailers, under a free name.
    i = doc.add_vehicle()
    assert i == 2 and doc.vehicle_names()[2] == "ward tug 2"
    assert doc.project.fleet[2].trailers == ()
    # Rename the cart: the route that named it follows, in the file too.
    cart = doc.project.fleet[1]
    doc.set_vehicle(1, dataclasses.replace(cart, name="pallet cart"))
    assert doc.undo_stack.text(doc.undo_stack.index() - 1) == \
        "Rename vehicle 'hospital delivery cart' to 'pallet cart'"
    assert doc.project.routes[1].chassis == "pallet cart"
    back = _reloaded(doc, tmp_path)
    assert [c.name for c in back.fleet] == ["ward tug", "pallet cart", "ward tug 2"]
    assert back.chassis_for(back.routes[1]).name == "pallet cart"
    # A name another vehicle has is refused; so is removing a vehicle that drives a route
    # (the default one drives the route naming none) or the last one.
    with pytest.raises(ValueError, match="already named"):
        doc.set_vehicle(2, dataclasses.replace(doc.project.fleet[2], name="ward tug"))
    with pytest.raises(ValueError, match="drives 'supply-return'"):
        doc.remove_vehicle(1)
    with pytest.raises(ValueError, match="drives 'linen-to-ward-b'"):
        doc.remove_vehicle(0)
    # Choose the new vehicle for the linen route; the check then uses it (no trailers).
    doc.set_route_vehicle(0, "ward tug 2")
    name = doc.project.routes[0].name
    assert doc.vehicle(name).name == "ward tug 2"
    assert doc.check(name).train is None
    doc.set_route_vehicle(0, None)
    assert doc.check(name).train is not None
    doc.remove_vehicle(2)
    assert doc.vehicle_names() == ["ward tug", "pallet cart"]
    assert _reloaded(doc, tmp_path).routes[1].chassis == "pallet cart"
    while doc.undo_stack.canUndo():
        doc.undo_stack.undo()
    assert doc.project == start


def test_trailer_rows_are_read_as_the_file_reads_them() -> None:
    # Source: kinematics.files.project.trailer_from_dict (the file's rules: a positive
    # drawbar, a footprint around the trailer's own axle midpoint) gives the same trailers,
    # and the table names the refused cell.
    from app.fleet_panel import footprint_text, trailers_from_rows
    from kinematics.errors import SwatheInputError
    from kinematics.files.project import load_project, trailer_to_dict

    tug = load_project(TRAIN).chassis
    rows = [{"name": t.name, "hitch_x_m": f"{t.hitch_x_m}", "drawbar_m": f"{t.drawbar_m}",
             "margin_m": "" if t.margin_m is None else f"{t.margin_m}",
             "max_hitch_deg": f"{t.max_hitch_deg}",
             "footprint": footprint_text(t.footprint)} for t in tug.trailers]
    got = trailers_from_rows(rows)
    assert [trailer_to_dict(t) for t in got] == [trailer_to_dict(t) for t in tug.trailers]
    bad = [dict(rows[0], drawbar_m="-0.5")]
    with pytest.raises(SwatheInputError) as exc:
        trailers_from_rows(bad)
    assert exc.value.place == "trailers[0].drawbar_m"
    off = [dict(rows[0], footprint="1 -0.2; 1.5 -0.2; 1.5 0.2; 1 0.2")]
    with pytest.raises(SwatheInputError) as exc:
        trailers_from_rows(off)
    assert exc.value.place == "trailers[0].footprint" and "(0, 0)" in exc.value.expected
    with pytest.raises(SwatheInputError, match="corner 2"):
        trailers_from_rows([dict(rows[0], footprint="-0.3 -0.2; oops; 0.3 0.2")])


def test_chassis_panel_edits_fleet_and_trailers(qtbot, tmp_path) -> None:
    w = _window(qtbot, tmp_path)
    doc = w.doc
    panel = w.chassis_panel
    assert panel is not None
    fleet, trailers = panel.fleet_box, panel.trailer_box
    assert fleet.vehicle.count() == 2 and trailers.table.rowCount() == 2
    # The cart has no trailers; choosing it in the fleet box shows it in the form.
    fleet.vehicle.setCurrentIndex(1)
    fleet.vehicle.activated.emit(1)
    assert panel.member == 1 and panel.name_edit.text() == "hospital delivery cart"
    assert trailers.table.rowCount() == 0
    # Hitch a trailer to it: one undo step, the row appears.
    n0 = doc.undo_stack.count()
    trailers.add_button.click()
    assert doc.undo_stack.count() == n0 + 1
    assert len(doc.project.fleet[1].trailers) == 1 and trailers.table.rowCount() == 1
    # A negative drawbar is refused with a message naming the cell; the document keeps the
    # last good trailer and says its results are of it.
    good = doc.project.fleet[1].trailers
    trailers.table.item(0, 2).setText("-0.4")
    assert doc.project.fleet[1].trailers == good
    assert trailers.message.isVisibleTo(trailers)
    assert trailers.message.text().startswith("\u26a0 Trailer 1, drawbar:")
    assert doc.stale_reason
    # A valid drawbar is taken: the message goes, the check is of the new trailer.
    trailers.table.item(0, 2).setText("0.75")
    assert doc.project.fleet[1].trailers[0].drawbar_m == pytest.approx(0.75)
    assert not trailers.message.isVisibleTo(trailers) and not doc.stale_reason
    chk = doc.check("supply-return")
    assert chk.train is not None and len(chk.train.bodies) == 2
    # Its footprint, in the line under the table: one not around the trailer's axle is
    # refused (the file's rule), a good one taken.
    trailers.table.setCurrentCell(0, 0)
    trailers.footprint.setText("0.5 -0.2; 1.2 -0.2; 1.2 0.2; 0.5 0.2")
    trailers.footprint.editingFinished.emit()
    assert trailers.message.text().startswith("\u26a0 Trailer 1, footprint:")
    assert doc.project.fleet[1].trailers[0].footprint == good[0].footprint
    trailers.footprint.setText("-0.4 -0.25; 0.4 -0.25; 0.4 0.25; -0.4 0.25")
    trailers.footprint.editingFinished.emit()
    assert doc.project.fleet[1].trailers[0].footprint == \
        ((-0.4, -0.25), (0.4, -0.25), (0.4, 0.25), (-0.4, 0.25))
    assert not trailers.message.isVisibleTo(trailers)
    # The current route is the linen route; have the cart drive it through the fleet box.
    assert doc.route().name == "linen-to-ward-b"
    fleet.route_vehicle.setCurrentIndex(1)
    fleet.route_vehicle.activated.emit(1)
    assert doc.vehicle("linen-to-ward-b").name == "hospital delivery cart"
    # Removing a vehicle that drives routes is refused with a message.
    fleet.remove_button.click()
    assert fleet.message.isVisibleTo(fleet) and "drives" in fleet.message.text()
    assert len(doc.project.fleet) == 2
    # Renaming in the form's Name field renames the vehicle; the routes follow.
    panel.name_edit.setText("meal cart")
    panel.name_edit.editingFinished.emit()
    assert doc.vehicle_names()[1] == "meal cart"
    assert {r.chassis for r in doc.project.routes} == {"meal cart"}
    assert fleet.route_vehicle.currentText() == "meal cart"
    # Remove the trailer again, then undo everything: the sample's tree comes back.
    trailers.table.setCurrentCell(0, 0)
    trailers.remove_button.click()
    assert trailers.table.rowCount() == 0
    while doc.undo_stack.canUndo():
        doc.undo_stack.undo()
    QApplication.processEvents()
    from kinematics.files.project import load_project

    assert doc.project.fleet == load_project(TRAIN).fleet
    assert panel.name_edit.text() == "hospital delivery cart" and panel.member == 1
    fleet.vehicle.setCurrentIndex(0)
    fleet.vehicle.activated.emit(0)
    assert trailers.table.rowCount() == 2
    doc.undo_stack.setClean()
    w.close()
