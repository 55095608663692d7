"""Side panels and background jobs: chassis edits and undo, inline refusals, the results list,
the schedule table's exports, the sizing job and its Cancel, the plots' limit lines."""

from __future__ import annotations

import math
import os
import threading
import time
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import numpy as np  # noqa: E402
import pytest  # noqa: E402
from PySide6.QtCore import Qt  # noqa: E402
from PySide6.QtWidgets import QApplication, QTableWidgetItem  # noqa: E402

from app.document import Document  # noqa: E402
from app.panels import PRESETS, ChassisPanel, ResultsPanel, ScheduleTable  # noqa: E402
from app.workers import Cancelled, error_text, run_in_background  # noqa: E402
from kinematics.errors import GeometryError  # noqa: E402
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall  # noqa: E402
from kinematics.files.project import Chassis, Project, Route, Waypoint  # noqa: E402


def small_project() -> Project:
    """An invented 12 m x 6 m store room with a door and a crate in the second route's way."""
    walls = (Wall(((0, 0), (12, 0), (12, 6), (0, 6), (0, 0)), 0.2),
             Wall(((6, 0), (6, 2.5)), 0.15), Wall(((6, 3.5), (6, 6)), 0.15))
    obstacles = (Obstacle(((8.0, 1.2), (9.0, 1.2), (9.0, 1.9), (8.0, 1.9)), "crate"),)
    fp = FloorPlan("test store room", walls, obstacles, (Door((6.0, 2.5), (6.0, 3.5), "D-1"),))
    chassis = Chassis(name="test tug", drive="differential",
                      footprint=((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3)),
                      margin_m=0.05, wheel_radius_m=0.1, track_m=0.5,
                      max_wheel_rate_radps=12.0, max_lateral_accel_mps2=0.5)
    routes = (Route("into-crate", (Waypoint(7.0, 1.5), Waypoint(10.5, 1.5)), 0.0),
              Route("through-door", (Waypoint(1.5, 3.0), Waypoint(10.5, 3.0),
                                     Waypoint(10.5, 5.0)), 0.8))
    return Project(fp, chassis, routes)


@pytest.fixture
def doc(qapp):
    return Document(small_project())


# -- chassis ----------------------------------------------------------------------------------
def test_editing_track_is_one_undo_step(doc, qtbot):
    panel = ChassisPanel(doc)
    qtbot.addWidget(panel)
    before = doc.project.chassis
    panel.fields["track_m"].setValue(0.62)
    assert doc.project.chassis.track_m == pytest.approx(0.62)
    assert doc.project.chassis.footprint == before.footprint
    assert doc.undo_stack.count() == 1
    doc.undo_stack.undo()
    assert doc.project.chassis == before
    # The form follows the document back.
    assert panel.fields["track_m"].value() == pytest.approx(0.5)


def test_a_burst_of_edits_of_one_field_is_one_undo_step(doc, qtbot):
    # Source: common practice (text editors merge a run of typing into one undo step;
    # QUndoCommand.mergeWith is Qt's way to do it).
    panel = ChassisPanel(doc)
    qtbot.addWidget(panel)
    panel.show()
    now = [100.0]
    panel.clock = lambda: now[0]
    spin = panel.fields["track_m"]
    spin.lineEdit().selectAll()
    qtbot.keyClicks(spin, "0.62")  # typed digit by digit, then Enter
    qtbot.keyClick(spin, Qt.Key.Key_Return)
    assert doc.project.chassis.track_m == pytest.approx(0.62)
    assert doc.undo_stack.count() == 1
    for _ in range(3):  # three quick steps of the same box with the arrow key
        now[0] += 0.3
        qtbot.keyClick(spin, Qt.Key.Key_Up)
    assert doc.project.chassis.track_m == pytest.approx(0.65)
    assert doc.undo_stack.count() == 1
    assert doc.undo_stack.text(0) == "Change chassis track"
    now[0] += 5.0  # a pause: the next edit is a new step
    spin.setValue(0.7)
    assert doc.undo_stack.count() == 2
    now[0] += 0.1  # another field at once: a step of its own
    panel.fields["wheel_radius_m"].setValue(0.12)
    assert doc.undo_stack.count() == 3
    assert doc.undo_stack.text(2) == "Change chassis wheel radius"
    doc.undo_stack.undo()
    doc.undo_stack.undo()
    assert doc.project.chassis.track_m == pytest.approx(0.65)
    doc.undo_stack.undo()
    assert doc.project.chassis.track_m == pytest.approx(0.5)
    assert spin.value() == pytest.approx(0.5)
    # After an undo the next edit does not merge into anything left on the stack.
    now[0] += 0.1
    spin.setValue(0.55)
    assert doc.undo_stack.count() == 1 and doc.undo_stack.index() == 1
    doc.undo_stack.undo()
    assert doc.project.chassis.track_m == pytest.approx(0.5)


def test_footprint_cell_edit_and_optional_limit(doc, qtbot):
    panel = ChassisPanel(doc)
    qtbot.addWidget(panel)
    panel.table.setItem(1, 0, QTableWidgetItem("0.8"))
    panel.table.setItem(2, 0, QTableWidgetItem("0.8"))
    assert doc.project.chassis.footprint[1] == (0.8, -0.3)
    assert doc.project.chassis.footprint[2] == (0.8, 0.3)
    panel.fields["max_lateral_accel_mps2"].setValue(0.0)  # shown as "none": no such limit
    assert doc.project.chassis.max_lateral_accel_mps2 is None
    assert panel.fields["max_lateral_accel_mps2"].text() == "none"


def test_self_intersecting_footprint_shows_message_not_exception(doc, qtbot):
    panel = ChassisPanel(doc)
    qtbot.addWidget(panel)
    panel.show()
    before = doc.project.chassis
    # Moving the last corner of the rectangle to (1.2, 0.3) makes its closing edge cross the
    # front edge x = 0.6 at y = 0.06. Source: shapely Polygon.is_valid (OGC Simple Features:
    # a polygon's boundary must not cross itself).
    panel.table.setItem(3, 0, QTableWidgetItem("1.2"))
    assert panel.message.isVisible()
    assert "crosses itself" in panel.message.text()
    assert "Footprint" in panel.message.text()
    assert doc.project.chassis == before
    assert not panel.preview.valid
    assert doc.undo_stack.count() == 0
    # Putting the corner back clears the message; nothing changed, so nothing to undo.
    panel.table.setItem(3, 0, QTableWidgetItem("-0.3"))
    assert not panel.message.isVisible()
    assert doc.project.chassis == before
    assert doc.undo_stack.count() == 0


def test_bad_cell_text_and_zero_size_refused_inline(doc, qtbot):
    panel = ChassisPanel(doc)
    qtbot.addWidget(panel)
    panel.show()
    before = doc.project.chassis
    panel.table.setItem(0, 1, QTableWidgetItem("abc"))
    assert panel.message.isVisible() and "row 1" in panel.message.text()
    assert doc.project.chassis == before
    panel.load()
    # A negative size cannot be typed (the box stops at 0) and 0 is refused with a message.
    panel.fields["wheel_radius_m"].setValue(-0.2)
    assert panel.fields["wheel_radius_m"].value() == 0.0
    assert panel.message.isVisible() and "Wheel radius" in panel.message.text()
    assert doc.project.chassis == before


def test_form_check_names_the_field(doc):
    from app.panels import chassis_from_form

    vals = {"name": "x", "drive": "differential", "track_m": -0.4, "wheel_radius_m": 0.1,
            "margin_m": 0.05, "max_speed_mps": 1.0, "max_accel_mps2": 0.5}
    rows = [("-0.3", "-0.3"), ("0.6", "-0.3"), ("0.6", "0.3"), ("-0.3", "0.3")]
    with pytest.raises(Exception) as ei:
        chassis_from_form(vals, rows)
    assert "track_m" in ei.value.place
    with pytest.raises(GeometryError):
        chassis_from_form(dict(vals, track_m=0.5), [rows[0], rows[2], rows[1], rows[3]])


def test_drive_change_and_preset(doc, qtbot):
    panel = ChassisPanel(doc)
    qtbot.addWidget(panel)
    name = next(n for n, c in PRESETS.items() if c.drive == "ackermann")
    i = panel.preset.findText(name)
    panel.preset.setCurrentIndex(i)
    panel.preset.activated.emit(i)
    assert doc.project.chassis == PRESETS[name]
    assert panel.drive.currentData() == "ackermann"
    assert panel.fields["max_steer_deg"].isEnabled()
    assert not panel.fields["effective_track_factor"].isEnabled()
    doc.undo_stack.undo()
    assert doc.project.chassis.drive == "differential"
    assert not panel.fields["max_steer_deg"].isEnabled()


def test_drive_list_writes_ackermann_as_a_name():
    # Source: common practice (the steering geometry is named after Rudolph Ackermann).
    from app.panels import DRIVE_WORDS

    assert DRIVE_WORDS["ackermann"].startswith("Ackermann")


def test_presets_are_valid_chassis():
    from kinematics.files.project import chassis_from_dict, chassis_to_dict
    from kinematics.motion.drives import drive_for

    for name, c in PRESETS.items():
        # Round trip through the project file's reader: every preset is a chassis the file
        # format accepts.
        assert chassis_from_dict(chassis_to_dict(c), name) == c
        drive_for(c)


def test_preset_names_are_plain_descriptions():
    # Example vehicles are named for what they are, never like a product (no model numbers,
    # no invented brand words): every word of the chassis name is a plain lowercase word.
    import re

    from kinematics.files.project import DRIVES

    assert len(PRESETS) >= 4
    for key, c in PRESETS.items():
        assert not re.search(r"\d", key + c.name), key
        assert re.fullmatch(r"[a-z]+( [a-z]+)*", c.name), c.name
        assert key.lower().startswith(c.name), (key, c.name)
        assert c.drive in DRIVES
    assert {"small tug", "ward cart", "pallet mover", "flat carrier"} <= {
        c.name for c in PRESETS.values()}


# -- results ----------------------------------------------------------------------------------
def test_results_list_matches_check_and_click_zooms(doc, qtbot):
    pytest.importorskip("kinematics.check.clearance")
    panel = ResultsPanel(doc)
    qtbot.addWidget(panel)
    doc.set_current_route(0)
    chk = doc.check("into-crate")
    assert chk is not None and chk.violations
    assert panel.violations.rowCount() == len(chk.violations)
    assert "VIOLATION" in panel.verdict.text()
    with qtbot.waitSignal(panel.zoomRequested, timeout=2000) as sig:
        panel.violations.cellClicked.emit(0, 2)
    v = chk.violations[0]
    assert sig.args == [pytest.approx(v.x), pytest.approx(v.y)]
    doc.set_current_route(1)
    chk = doc.check("through-door")
    assert panel.violations.rowCount() == len(chk.violations)
    labels = [panel.doors.item(r, 0).text() for r in range(panel.doors.rowCount())]
    assert labels == [d.label for d in chk.doors]


def test_sizing_job_runs_and_reports_progress(doc, qtbot):
    panel = ResultsPanel(doc)
    qtbot.addWidget(panel)
    seen = []

    def fake(project, name, token):
        for k in range(5):
            token.report(k / 5, "step")
            time.sleep(0.01)
        seen.append(name)
        return {"route": name,
                "widest": {"dimension": "width", "current_m": 0.6, "max_m": 0.75,
                           "scale": 1.25, "bounded": True},
                "longest": {"dimension": "length", "current_m": 0.9, "max_m": 1.5,
                            "scale": 1.67, "bounded": True},
                "doors": [{"label": "D-1", "door": 0, "width_needed_m": 0.71, "width_m": 1.0}]}

    panel.sizing_compute = fake
    with qtbot.waitSignal(panel.sizingFinished, timeout=5000):
        panel.start_sizing()
    assert seen == [doc.route().name]
    assert "0.750 m" in panel.sizing_label.text()
    assert "D-1 needs 0.710 m" in panel.sizing_label.text()
    assert panel.current_sizing() is not None
    # An edit makes the answers stale: the panel says so and does not hand them out.
    doc.set_chassis(Chassis(**{**doc.project.chassis.__dict__, "track_m": 0.55}))
    assert panel.current_sizing() is None
    assert "changed" in panel.sizing_label.text()


def test_sizing_job_can_be_cancelled(doc, qtbot):
    panel = ResultsPanel(doc)
    qtbot.addWidget(panel)
    started = threading.Event()

    def slow(project, name, token):
        started.set()
        while not token():
            time.sleep(0.005)
        raise Cancelled()

    panel.sizing_compute = slow
    job = panel.start_sizing()
    assert started.wait(5)
    assert panel.cancel_button.isEnabled()
    with qtbot.waitSignal(job.cancelled, timeout=5000):
        panel.cancel_button.click()
    qtbot.waitUntil(lambda: panel.sizing_button.isEnabled(), timeout=2000)
    assert "Cancelled" in panel.sizing_label.text()
    assert panel.current_sizing() is None


def test_real_sizing_answers_and_cancel(doc, qtbot):
    pytest.importorskip("kinematics.check.sizing")
    from app.panels import compute_sizing
    from app.workers import CancelToken

    panel = ResultsPanel(doc)
    qtbot.addWidget(panel)
    doc.set_current_route(1)
    with qtbot.waitSignal(panel.sizingFinished, timeout=60000) as sig:
        panel.start_sizing()
    got = sig.args[0]
    assert got["route"] == "through-door"
    # By hand (common practice, plain geometry): the route runs on the centre line of the
    # 1.0 m door D-1, so a footprint symmetric about it clears the jambs by the 0.05 m margin
    # while it is at most 1.0 - 2 * 0.05 = 0.90 m wide; and the 0.60 m footprint needs a door
    # of 0.60 + 2 * 0.05 = 0.70 m. The search stops within 1 mm (plus the 2 mm sweep
    # tolerance), never above the limit.
    assert 0.90 - 0.004 <= got["widest"]["max_m"] <= 0.90 + 1e-9
    (door,) = got["doors"]
    assert door["label"] == "D-1"
    assert 0.70 - 1e-9 <= door["width_needed_m"] <= 0.70 + 0.004
    assert "Door D-1 needs 0.70" in panel.sizing_label.text()

    # Cancel part-way: the token turns true once progress passes 30 %.
    tok = CancelToken()
    seen = []

    def progress(f, text):
        seen.append(f)
        if f > 0.3:
            tok.cancel()

    tok._progress = progress
    with pytest.raises(Cancelled):
        compute_sizing(doc.project, "through-door", tok)
    assert max(seen) < 1.0


# -- workers ----------------------------------------------------------------------------------
def test_worker_result_and_errors_come_back_as_one_line(qapp, qtbot):
    got = {}
    job = run_in_background(lambda tok: sum(range(10)), done_cb=lambda r: got.setdefault("r", r))
    qtbot.waitUntil(lambda: "r" in got, timeout=3000)
    assert got["r"] == 45 and job.token() is False

    def bad(tok):
        raise GeometryError("plan.json", "obstacles[2]", "expected a polygon")

    job = run_in_background(bad, error_cb=lambda m: got.setdefault("e", m))
    qtbot.waitUntil(lambda: "e" in got, timeout=3000)
    assert got["e"] == "plan.json: obstacles[2]: expected a polygon"
    assert error_text(KeyError("x")) == "KeyError: 'x'"
    assert "\n" not in error_text(RuntimeError("one\ntwo"))


class _AtOncePool:
    """A thread pool stand-in that runs the job inside ``start()``: the fastest job there is."""

    def start(self, runnable) -> None:
        runnable.run()


def test_progress_dialog_closes_for_a_job_that_ends_at_once(qapp, qtbot):
    # Source: Qt QProgressDialog documentation (the dialog shows itself after
    # minimumDuration unless reset; setValue(maximum) with autoReset resets it).
    from app.workers import ProgressDialog

    got = []
    dlg = ProgressDialog.run(None, "Quick job", lambda tok: 7, done_cb=got.append,
                             pool=_AtOncePool())
    qtbot.waitUntil(lambda: got == [7], timeout=3000)
    qtbot.wait(dlg.minimumDuration() + 150)  # past the moment it would pop up
    assert not dlg.isVisible()
    assert dlg.job is not None and not dlg.job.running
    dlg.deleteLater()


def test_progress_dialog_follows_a_real_job_and_cancel_stops_it(qapp, qtbot):
    # Source: Qt QProgressDialog::canceled documentation (the Cancel button emits canceled).
    from app.workers import ProgressDialog

    go = threading.Event()

    def slow(tok):
        tok.report(0.5, "half way")
        go.wait(5.0)
        tok.raise_if_cancelled()
        return 1

    dlg = ProgressDialog.run(None, "Slow job", slow)
    qtbot.waitUntil(lambda: dlg.value() == 500, timeout=3000)
    assert dlg.labelText() == "half way"
    from PySide6.QtWidgets import QPushButton

    [b for b in dlg.findChildren(QPushButton) if b.text() == "Cancel"][0].click()
    go.set()
    qtbot.waitUntil(lambda: not dlg.job.running, timeout=3000)
    assert dlg.job.token.cancelled and dlg.job.result is None
    assert not dlg.isVisible()
    dlg.deleteLater()


# -- schedule table ----------------------------------------------------------------------------
def test_schedule_table_exports_equal_the_core(doc, qtbot, tmp_path):
    from kinematics.files.jsonio import dumps
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import (
        build_schedule,
        csv_columns,
        schedule_to_csv,
        schedule_to_dict,
    )

    table = ScheduleTable(doc)
    qtbot.addWidget(table)
    doc.set_current_route(1)
    table.refresh()
    r = doc.route()
    sched = build_schedule(r.name, list(plan_route(r, doc.project.chassis).segments),
                           doc.project.chassis, dt_s=doc.schedule_dt_s)
    assert table.table.rowCount() == len(sched.segments)
    heads = [table.table.horizontalHeaderItem(i).text()
             for i in range(table.table.columnCount())]
    assert heads == csv_columns(sched.drive)
    table.export_csv(tmp_path / "s.csv")
    table.export_json(tmp_path / "s.json")
    assert (tmp_path / "s.csv").read_text(encoding="utf-8") == schedule_to_csv(sched)
    assert (tmp_path / "s.json").read_text(encoding="utf-8") == dumps(schedule_to_dict(sched))


# -- plots --------------------------------------------------------------------------------------
def test_plots_show_series_and_named_limits(doc, qtbot):
    from app.plots import PlotsPanel
    from kinematics.timing.schedule import schedule_series

    panel = PlotsPanel(doc)
    qtbot.addWidget(panel)
    doc.set_current_route(1)  # has an arc: the lateral-acceleration cap binds there
    panel.refresh()
    s = schedule_series(doc.schedule("through-door"))
    curves = panel.speed_plot.listDataItems()
    speed = next(c for c in curves if c.name() == "speed")
    x, y = speed.getData()
    assert np.allclose(x, s["t_s"]) and np.allclose(y, s["v_mps"])
    texts = [ln.label.format for ln in panel.limit_lines]
    assert any("max speed" in t for t in texts)
    assert any("max wheel rate" in t for t in texts)
    assert "lateral-accel cap" in panel.cap_labels
    panel.set_x_axis("distance")
    speed = next(c for c in panel.speed_plot.listDataItems() if c.name() == "speed")
    assert np.allclose(speed.getData()[0], s["station_m"])
    wheels = [c.name() for c in panel.rate_plot.listDataItems()]
    assert wheels == ["left", "right"]
    assert math.isclose(float(np.max(s["v_mps"])), float(np.max(y)))


def test_negative_least_clearance_is_told_as_an_overlap():
    # Source: shared/contract.md (min_clearance_m is negative where the footprint overlaps);
    # common practice: say "overlap" rather than a negative distance.
    from app.panels import clearance_words

    assert clearance_words(-0.098) == "overlaps by 98\u00a0mm"
    assert clearance_words(0.3) == "least clearance 300\u00a0mm"
    assert clearance_words(-0.0004) == "least clearance 0\u00a0mm"


def test_cap_labels_never_drawn_over_each_other(qtbot):
    # Source: common practice (map and chart labelling: a label that would cover another is
    # moved, else left out). The bicycle depot route has two turns close together, each with
    # its lateral-acceleration cap; their names used to sit on top of one another.
    from app.plots import PlotsPanel

    REPO = Path(__file__).resolve().parents[1]
    d = Document()
    d.open_project(REPO / "sample_floorplans" / "depot_bicycle.swathe.json")
    d.set_current_route(d.route_names().index("dock-3-to-aisle-2"))
    panel = PlotsPanel(d)
    qtbot.addWidget(panel)
    panel.resize(1280, 230)
    panel.show()
    qtbot.waitExposed(panel)
    for axis in ("time", "distance"):
        panel.set_x_axis(axis)
        QApplication.processEvents()
        assert len(panel.cap_items) >= 2
        shown = [t for t in panel.cap_items if t.isVisible()]
        assert shown, "at least one cap is named"
        rects = [t.sceneBoundingRect() for t in shown]
        rects += [ln.label.sceneBoundingRect() for ln in panel.limit_lines
                  if ln.getViewBox() is panel.speed_plot.getViewBox()]
        for i in range(len(rects)):
            for j in range(i + 1, len(rects)):
                assert not rects[i].intersects(rects[j]), (axis, i, j)
    # Zoomed in on the first cap, every name fits again.
    t0 = panel.cap_items[0]
    panel.speed_plot.setXRange(t0.pos().x() - 0.5, t0.pos().x() + 0.5, padding=0)
    QApplication.processEvents()
    assert t0.isVisible()


def test_plots_hide_the_auto_range_button_and_have_their_own_fit(doc, qtbot):
    from app.plots import PlotsPanel

    panel = PlotsPanel(doc)
    qtbot.addWidget(panel)
    panel.show()
    doc.set_current_route(1)
    panel.refresh()
    for plot in (panel.speed_plot, panel.rate_plot, panel.hitch_plot):
        assert plot.buttonsHidden and not plot.autoBtn.isVisible()
    (x0, x1), (y0, y1) = panel.speed_plot.viewRange()
    panel.speed_plot.setXRange(x0 + 1.0, x0 + 2.0, padding=0)
    panel.speed_plot.setYRange(0.2, 0.3, padding=0)
    panel.fit_button.click()
    (a0, a1), (b0, b1) = panel.speed_plot.viewRange()
    assert (a0, a1) == pytest.approx((x0, x1)) and (b0, b1) == pytest.approx((y0, y1))


def test_results_band_and_plots_say_they_are_stale_while_the_form_is_invalid(doc, qtbot):
    # A drive change the form cannot yet honour (Ackermann needs a wheelbase; this chassis
    # has none): nothing is pushed, so the check and plots still show the differential drive.
    # Every view of the results says so, greyed with the reason, until the form is valid.
    from app.canvas import PlanCanvas
    from app.plots import PlotsPanel

    chassis, results, plots = ChassisPanel(doc), ResultsPanel(doc), PlotsPanel(doc)
    canvas = PlanCanvas(doc)
    for w in (chassis, results, plots, canvas):
        qtbot.addWidget(w)
        w.show()
    doc.set_current_route(0)
    assert not (results.stale or plots.stale or canvas.stale)
    i = chassis.drive.findData("ackermann")
    chassis.drive.setCurrentIndex(i)
    chassis.drive.activated.emit(i)
    assert doc.project.chassis.drive == "differential"  # the refused form was not applied
    reason = doc.stale_reason
    assert "Out of date" in reason and "Wheelbase" in reason
    assert results.stale and results.stale_label.isVisible()
    assert reason == results.stale_label.text()
    assert not results.violations.isEnabled() and not results.verdict.isEnabled()
    assert plots.stale and plots.stale_label.isVisible() and plots.stale_label.text() == reason
    assert canvas.stale and canvas.stale_label.isVisible() and canvas.stale_label.text() == reason
    assert canvas.band_item.opacity() < 0.5
    assert all(t.opacity() < 0.5 for t in canvas.violation_labels if t.isVisible())
    # A wheelbase and a steer angle make the form valid: the Ackermann chassis is applied and
    # the results are current again.
    chassis.fields["wheelbase_m"].setValue(0.8)
    if doc.stale_reason:
        chassis.fields["max_steer_deg"].setValue(35.0)
    assert doc.project.chassis.drive == "ackermann"
    assert doc.stale_reason == ""
    assert not (results.stale or plots.stale or canvas.stale)
    assert results.violations.isEnabled() and not results.stale_label.isVisible()
    assert canvas.band_item.opacity() == 1.0
    # Undo puts the form back on a valid chassis: not stale either.
    chassis.drive.setCurrentIndex(i)
    chassis.fields["wheelbase_m"].setValue(0.0)
    assert results.stale
    doc.undo_stack.undo()
    assert not results.stale and doc.stale_reason == ""


def test_limit_names_stay_inside_short_plots(qtbot):
    # The demo's pivots turn the wheels backwards: the wheel-rate plot has a lower limit whose
    # name sat under its line and was cut at the plot's bottom in a short dock.
    from app.plots import PlotsPanel

    REPO = Path(__file__).resolve().parents[1]
    d = Document()
    d.open_project(REPO / "sample_floorplans" / "demo.swathe.json")
    panel = PlotsPanel(d)
    qtbot.addWidget(panel)
    for h in (150, 230, 400):
        panel.resize(1280, h)
        panel.show()
        qtbot.waitExposed(panel)
        QApplication.processEvents()
        assert len(panel.limit_lines) >= 3, "max speed and both wheel-rate limits"
        for ln in panel.limit_lines:
            box = ln.getViewBox().sceneBoundingRect()
            r = ln.label.sceneBoundingRect()
            assert box.top() <= r.top() and r.bottom() <= box.bottom(), (h, ln.label.format)
