"""The workbench window driven like a user: mouse on the canvas, menus' functions, files."""

from __future__ import annotations

import json
import math
import os
from pathlib import Path

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QEvent, QMimeData, QPoint, QPointF, QSettings, Qt, QUrl  # noqa: E402
from PySide6.QtGui import QDropEvent, QMouseEvent  # noqa: E402
from PySide6.QtWidgets import QApplication  # noqa: E402
from test_document import write_project  # noqa: E402

from kinematics.files.jsonio import dumps  # noqa: E402
from kinematics.files.project import Waypoint, load_project  # noqa: E402

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "sample_floorplans" / "demo.swathe.json"


@pytest.fixture
def make_window(qtbot, tmp_path):
    from app.main_window import MainWindow

    made = []

    def make(project: Path | None = None):
        settings = QSettings(str(tmp_path / "settings.ini"), QSettings.Format.IniFormat)
        w = MainWindow(settings=settings, autosave_dir=tmp_path / "autosave")
        made.append(w)
        w.resize(1200, 800)
        if project is not None:
            assert w.open_project_file(project)
        w.show()
        qtbot.waitExposed(w)
        w.canvas.fit()
        QApplication.processEvents()
        return w

    yield make
    for w in made:  # no "save changes?" question when the test ends
        w.doc.undo_stack.setClean()
        w.doc._forced_dirty = False
        w.close()
        w.deleteLater()
    QApplication.processEvents()


@pytest.fixture
def win(make_window, tmp_path):
    return make_window(write_project(tmp_path))


# -- mouse helpers: real events on the canvas viewport ------------------------------------
def _send(widget, kind, pos: QPoint, button, buttons, mods=Qt.KeyboardModifier.NoModifier):
    local = QPointF(pos)
    glob = QPointF(widget.mapToGlobal(pos))
    ev = QMouseEvent(kind, local, glob, button, buttons, mods)
    QApplication.sendEvent(widget, ev)


def click(qtbot, canvas, x, y, mods=Qt.KeyboardModifier.NoModifier, double=False,
          button=Qt.MouseButton.LeftButton):
    vp = canvas.plot.viewport()
    p = canvas.plan_to_viewport(x, y)
    _send(vp, QEvent.Type.MouseMove, p, Qt.MouseButton.NoButton, Qt.MouseButton.NoButton, mods)
    _send(vp, QEvent.Type.MouseButtonPress, p, button, button, mods)
    _send(vp, QEvent.Type.MouseButtonRelease, p, button, Qt.MouseButton.NoButton, mods)
    if double:
        _send(vp, QEvent.Type.MouseButtonDblClick, p, button, button, mods)
        _send(vp, QEvent.Type.MouseButtonRelease, p, button, Qt.MouseButton.NoButton, mods)
    qtbot.wait(1)


def drag(qtbot, canvas, a, b, steps=8):
    """Press at plan point ``a``, move in steps to ``b``, release (pyqtgraph rate-limits
    moves to 100 per second, hence the short waits)."""
    vp = canvas.plot.viewport()
    L = Qt.MouseButton.LeftButton
    pa = canvas.plan_to_viewport(*a)
    _send(vp, QEvent.Type.MouseMove, pa, Qt.MouseButton.NoButton, Qt.MouseButton.NoButton)
    _send(vp, QEvent.Type.MouseButtonPress, pa, L, L)
    qtbot.wait(12)
    for k in range(1, steps + 1):
        f = k / steps
        p = canvas.plan_to_viewport(a[0] + f * (b[0] - a[0]), a[1] + f * (b[1] - a[1]))
        _send(vp, QEvent.Type.MouseMove, p, Qt.MouseButton.NoButton, L)
        qtbot.wait(12)
    pb = canvas.plan_to_viewport(*b)
    _send(vp, QEvent.Type.MouseButtonRelease, pb, L, Qt.MouseButton.NoButton)
    qtbot.wait(1)


def px(canvas) -> float:
    return canvas.px_m()


# -- tests --------------------------------------------------------------------------------
def test_demo_opens_with_routes_and_drawn_plan(make_window):
    # Source: shared/contract.md (`swathe` opens the bundled demo project).
    w = make_window(DEMO)
    assert w.doc.path == DEMO
    assert w.doc.route_names() == [r.name for r in load_project(DEMO).routes]
    assert not w.canvas.walls_item.path().isEmpty()
    assert w.doc.check(w.doc.route().name) is not None
    assert "demo.swathe.json" in w.windowTitle()
    w.grab().save(str(Path(os.environ.get("SWATHE_SHOT_DIR", "/tmp")) / "swathe_demo.png"))


def test_true_scale_aspect_is_locked(win):
    # Source: common practice (a plan drawn at true scale: one metre equal across and up).
    c = win.canvas
    a, b, d = c.plan_to_viewport(0, 0), c.plan_to_viewport(5, 0), c.plan_to_viewport(0, 5)
    assert abs((b.x() - a.x()) - (a.y() - d.y())) <= 1


def test_add_mode_click_appends_waypoint(win, qtbot):
    # Source: common practice (a click places a point where the pointer is, within a pixel).
    c = win.canvas
    win.act_add.trigger()
    assert c.mode == "add"
    n = len(win.doc.route().waypoints)
    click(qtbot, c, 11.5, 1.5)
    wps = win.doc.route().waypoints
    assert len(wps) == n + 1
    assert math.hypot(wps[-1].x - 11.5, wps[-1].y - 1.5) <= 1.5 * px(c)
    assert win.doc.undo_stack.undoText() == f"Add waypoint {n + 1}"
    # In select mode a plain click adds nothing; Ctrl+click does.
    win.act_select.trigger()
    click(qtbot, c, 11.0, 1.8)
    assert len(win.doc.route().waypoints) == n + 1
    click(qtbot, c, 11.0, 1.8, mods=Qt.KeyboardModifier.ControlModifier)
    assert len(win.doc.route().waypoints) == n + 2


def test_drag_waypoint_one_undo_step_and_redo(win, qtbot):
    # Source: Qt QUndoCommand::mergeWith (one drag is one undoable step).
    c = win.canvas
    doc = win.doc
    start = doc.route().waypoints[1]
    assert (start.x, start.y) == (11.0, 0.6)
    drag(qtbot, c, (11.0, 0.6), (9.0, 1.0))
    moved = doc.route().waypoints[1]
    assert math.hypot(moved.x - 9.0, moved.y - 1.0) <= 1.5 * px(c)
    assert doc.undo_stack.count() == 1
    assert doc.undo_stack.undoText() == "Move waypoint 2"
    win.act_undo.trigger()
    assert doc.route().waypoints[1] == start
    win.act_redo.trigger()
    assert doc.route().waypoints[1] == moved


def test_drag_into_obstacle_shows_violation_and_undo_clears_it(win, qtbot):
    # Source: shared/contract.md (violation kinds; `collision` where the footprint overlaps).
    doc = win.doc
    name = doc.route().name
    assert doc.check(name).clear
    # Move the far end into the parked cart (x 6..6.4, y 1.3..1.95).
    drag(qtbot, win.canvas, (11.0, 0.6), (6.2, 1.6))
    chk = doc.check(name)
    assert not chk.clear
    assert any(v.kind in ("collision", "waypoint_blocked") for v in chk.violations)
    assert len(win.canvas.violations_item.data) == len(chk.violations)
    if win.results_panel is not None and hasattr(win.results_panel, "violation_count"):
        assert win.results_panel.violation_count() == len(chk.violations)
    win.act_undo.trigger()
    assert doc.check(name).clear
    assert len(win.canvas.violations_item.data) == 0


def test_double_click_leg_inserts_and_delete_key_removes(win, qtbot):
    # Source: common practice (double-click on a line inserts a vertex; Delete removes it).
    c = win.canvas
    doc = win.doc
    click(qtbot, c, 4.0, 0.6, double=True)
    wps = doc.route().waypoints
    assert len(wps) == 3
    assert math.hypot(wps[1].x - 4.0, wps[1].y - 0.6) <= 1.5 * px(c)
    assert c.selected == 1
    assert doc.undo_stack.undoText() == "Insert waypoint 2"
    c.plot.setFocus()
    qtbot.keyClick(c.plot, Qt.Key.Key_Delete)
    assert len(doc.route().waypoints) == 2
    assert doc.undo_stack.undoText() == "Delete waypoint 2"


def test_heading_handle_drag_sets_and_menu_clears(win, qtbot):
    # Source: shared/contract.md (heading counter-clockwise from +x, degrees in files).
    c = win.canvas
    doc = win.doc
    w0 = doc.route().waypoints[0]
    assert w0.heading_deg == 0.0
    L = 42.0 * px(c)  # the handle sits HANDLE_PX pixels along the heading
    drag(qtbot, c, (w0.x + L, w0.y), (w0.x, w0.y + L))
    h = doc.route().waypoints[0].heading_deg
    assert h == pytest.approx(90.0, abs=2.0)
    assert doc.undo_stack.undoText() == "Set heading of waypoint 1"
    menu = c.build_context_menu(w0.x, w0.y)
    clear = [a for a in menu.actions() if a.text() == "Clear heading"][0]
    clear.trigger()
    assert doc.route().waypoints[0].heading_deg is None


def test_routes_add_rename_remove_from_toolbar(win):
    # Source: common practice (named routes in a list; undo restores a removed one).
    doc = win.doc
    win.new_route()
    assert doc.current_route == 2 and win.route_combo.currentText() == "route 1"
    assert win.rename_route("night run")
    assert win.route_combo.currentText() == "night run"
    assert not win.rename_route("clear")  # names must stay unique
    assert win.error_box is not None and "already exists" in win.error_box.text()
    win.error_box.close()
    assert win.act_route_remove in win.route_finder.menu.actions()  # Route > Remove
    win.act_route_remove.trigger()
    assert doc.route_names() == ["clear", "second"]
    # Undoable, so no dialog: the status names what went and how to bring it back.
    assert win.error_box is None or not win.error_box.isVisible()
    assert win.statusBar().currentMessage() == "Removed route 'night run'; Ctrl+Z restores it"
    win.act_undo.trigger()
    assert "night run" in doc.route_names()


def test_hover_reports_station_and_clearance(win, qtbot):
    # Source: shapely.distance (clearance = distance from the footprint to the nearest solid).
    c = win.canvas
    info = c.info_at(5.0, 0.6)
    assert info is not None
    assert info["station_m"] == pytest.approx(4.0, abs=3 * px(c))
    # The bare footprint at y 0.3..0.9 against the bottom wall face at y = 0.05.
    assert info["clearance_m"] == pytest.approx(0.25, abs=0.01)
    assert "station 4.0" in info["text"]
    # Source: constant-acceleration kinematics, v^2 = 2 a s: at 0.5 m/s^2 the 1.0 m/s cap is
    # reached 1 m after the start, so at station 4 m on the straight the cart cruises at it;
    # a rolling wheel turns at v / r (rolling without slipping), 1.0 / 0.1 = 10 rad/s on both
    # sides of a differential drive going straight.
    assert info["speed_mps"] == pytest.approx(1.0, abs=1e-6)
    assert info["wheels"] == {"left": pytest.approx(10.0, abs=1e-6),
                              "right": pytest.approx(10.0, abs=1e-6)}
    assert "speed 1.00 m/s" in info["text"] and "left +10.0 rad/s" in info["text"]
    assert c.info_at(5.0, 1.9) is None


def test_export_schedule_matches_core(win, tmp_path):
    # Source: shared/contract.md (`swathe schedule` output); the core schedule is the reference.
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule, schedule_to_csv, schedule_to_dict

    route = win.doc.route()
    plan = plan_route(route, win.doc.project.chassis)
    ref = build_schedule(route.name, list(plan.segments), win.doc.project.chassis, dt_s=0.1)
    assert win.export_schedule(tmp_path / "s.csv")
    assert (tmp_path / "s.csv").read_text() == schedule_to_csv(ref)
    assert win.export_schedule(tmp_path / "s.json")
    assert json.loads((tmp_path / "s.json").read_text()) == json.loads(
        dumps(schedule_to_dict(ref)))


def test_export_matches_cli(win, tmp_path):
    # Source: shared/contract.md (`swathe schedule PROJECT --route NAME --format csv -o FILE`).
    from app.cli import main

    assert win.export_schedule(tmp_path / "gui.csv")
    code = main(["schedule", str(win.doc.path), "--route", win.doc.route().name,
                 "--format", "csv", "-o", str(tmp_path / "cli.csv")])
    assert code == 0
    assert (tmp_path / "gui.csv").read_text() == (tmp_path / "cli.csv").read_text()


def test_save_as_and_reopen_nothing_lost(win, make_window, qtbot, tmp_path):
    # Source: shared/contract.md (round trip keeps every key).
    drag(qtbot, win.canvas, (11.0, 0.6), (9.0, 1.0))
    win.doc.set_waypoint_heading(0, 1, 30.0)
    assert win.save_to(tmp_path / "saved.swathe.json")
    assert not win.doc.dirty and not win.isWindowModified()
    other = make_window(tmp_path / "saved.swathe.json")
    assert other.doc.project.routes == win.doc.project.routes
    assert other.doc.project.chassis == win.doc.project.chassis
    assert other.doc.project.extra == win.doc.project.extra
    assert str((tmp_path / "saved.swathe.json").resolve()) in other.recent_files()


def test_broken_file_shows_one_message_and_keeps_document(win, tmp_path):
    # Source: shared/contract.md (bad input: one message naming file and place).
    bad = tmp_path / "broken.swathe.json"
    bad.write_text('{"swathe_project": 1,\n  "floorplan": "corridor.floor.json",\n'
                   '  "chassis": {"drive": "hovercraft"}}')
    win.doc.move_waypoint(0, 0, 1.5, 0.6)
    before = win.doc.project
    assert not win.open_project_file(bad)
    assert win.doc.project is before and win.doc.dirty
    text = win.error_box.text()
    assert "broken.swathe.json" in text and "chassis.drive" in text
    assert "Traceback" not in text
    win.error_box.close()
    not_json = tmp_path / "notjson.swathe.json"
    not_json.write_text("{\n  nope")
    assert not win.open_project_file(not_json)
    assert "line 2" in win.error_box.text()
    assert win.doc.project is before


def test_dxf_import_in_background(win, qtbot, tmp_path):
    # Source: ezdxf documentation (new(), modelspace().add_lwpolyline); DXF $INSUNITS 6 = m.
    import ezdxf

    d = ezdxf.new()
    d.header["$INSUNITS"] = 6
    msp = d.modelspace()
    d.layers.add("A-WALL")
    d.layers.add("FURN")
    # An open outline on a wall layer is a wall line (shared/contract.md, DXF import).
    msp.add_lwpolyline([(0, 0), (8, 0), (8, 5), (0, 5)], close=False,
                       dxfattribs={"layer": "A-WALL"})
    msp.add_lwpolyline([(3, 2), (4, 2), (4, 3), (3, 3)], close=True,
                       dxfattribs={"layer": "FURN"})
    path = tmp_path / "room.dxf"
    d.saveas(path)
    opts = {"layers": {"walls": ["A-WALL"], "obstacles": ["FURN"], "doors": []}}
    with qtbot.waitSignal(win.taskFinished, timeout=10_000):
        assert win.open_floorplan_file(path, opts)
    fp = win.doc.project.floorplan
    assert len(fp.obstacles) == 1 and len(fp.walls) == 1
    assert win.doc.undo_stack.undoText().startswith("Use floor plan")
    ref = win.doc.project.floorplan_ref
    assert isinstance(ref, dict) and ref["layers"]["obstacles"] == ["FURN"]
    # A broken DXF gives a message and keeps the floor plan.
    junk = tmp_path / "junk.dxf"
    junk.write_text("0\nSECTION\n2\nNOPE\n")
    with qtbot.waitSignal(win.taskFinished, timeout=10_000):
        win.open_floorplan_file(junk, {})
    assert win.doc.project.floorplan is fp
    assert "junk.dxf" in win.error_box.text()


def test_drop_a_floor_plan_file(win, qtbot, tmp_path):
    # Source: Qt QDropEvent documentation (file URLs in the mime data).
    fp = {"swathe_floorplan": 1, "name": "dropped room",
          "walls": [{"points": [[0, 0], [6, 0], [6, 4], [0, 4], [0, 0]], "thickness_m": 0.1}]}
    path = tmp_path / "room.floor.json"
    path.write_text(json.dumps(fp))
    mime = QMimeData()
    mime.setUrls([QUrl.fromLocalFile(str(path))])
    ev = QDropEvent(QPointF(50, 50), Qt.DropAction.CopyAction, mime, Qt.MouseButton.LeftButton,
                    Qt.KeyboardModifier.NoModifier)
    with qtbot.waitSignal(win.taskFinished, timeout=10_000):
        win.dropEvent(ev)
    assert win.doc.project.floorplan.name == "dropped room"


def test_recover_autosave_after_crash(make_window, tmp_path, qtbot):
    # Source: common practice (work since the last save survives a crash).
    project = write_project(tmp_path)
    first = make_window(project)
    first.doc.add_waypoint(1, 3, Waypoint(11.6, 1.4))
    first.autosaver.save_now()
    edited = first.doc.project.routes
    # Crash: the window is never closed cleanly, so the autosave stays on disk.
    second = make_window()
    asked = []
    assert second.offer_recovery(ask=lambda e: asked.append(e) or True)
    assert asked[0].original_path == project
    assert second.doc.project.routes == edited
    assert second.doc.dirty and second.doc.path == project


def test_about_box_carries_the_caution(win):
    # Source: project brief (the About box carries the safety caution).
    from kinematics.analysis.report_text import CAUTION as SAFETY_CAUTION

    box = win.show_about()
    assert "ISO 3691-4" in box.text() and SAFETY_CAUTION in box.text()
    box.close()


def test_background_load_cancel_keeps_project(win, qtbot):
    # Source: common practice (Cancel on a long load leaves the document as it was).
    import threading

    from app.workers import ProgressDialog
    from kinematics.files.floorplan import FloorPlan

    gate = threading.Event()
    before = win.doc.project.floorplan

    def slow():
        gate.wait(5.0)
        return FloorPlan(name="arrived too late")

    win.run_task("Reading a large drawing...", slow,
                 lambda fp: win.doc.set_floorplan(fp, None), lambda text: None)
    from PySide6.QtWidgets import QPushButton

    dlg = win.findChildren(ProgressDialog)[-1]
    cancel = [b for b in dlg.findChildren(QPushButton) if b.text() == "Cancel"][0]
    with qtbot.waitSignal(win.taskFinished, timeout=10_000):
        cancel.click()
        gate.set()
    assert win.doc.project.floorplan is before
    assert win.doc.undo_stack.count() == 0


def _pixels(widget):
    import numpy as np
    from PySide6.QtGui import QImage

    img = widget.grab().toImage().convertToFormat(QImage.Format.Format_RGB32)
    a = np.frombuffer(img.constBits(), np.uint8).reshape(img.height(), img.bytesPerLine() // 4, 4)
    return a[:, :img.width(), :3].astype(int)


def test_drag_repaints_match_a_full_repaint_and_panels_follow_on_release(make_window, qtbot):
    # Source: Qt QGraphicsView::MinimalViewportUpdate and QGraphicsItem::CacheMode
    # documentation (only changed regions are repainted, cached items from their pixels):
    # what the drag leaves on screen must equal a fresh full repaint with caches off.
    from PySide6.QtWidgets import QGraphicsItem

    w = make_window(DEMO)
    doc, c = w.doc, w.canvas
    vp = c.plot.viewport()
    r = doc.route()
    last = r.waypoints[-1]
    drag(qtbot, c, (last.x, last.y), (last.x + 0.4, last.y + 0.3), steps=6)
    QApplication.processEvents()
    # Released: the panels have the results of where the drag ended, not of a middle step.
    assert not doc.results_pending
    chk = doc.check(r.name)
    n = len(chk.violations)
    assert w.results_panel.violations.rowCount() == n
    verdict = w.results_panel.verdict.text()
    assert ("CLEAR" in verdict) if chk.clear else (f"{n} VIOLATION" in verdict)
    shown = _pixels(vp)
    for it in c.plot.items():
        it.setCacheMode(QGraphicsItem.CacheMode.NoCache)
    for ax in ("left", "bottom"):
        c.plot.getPlotItem().getAxis(ax).setCacheMode(QGraphicsItem.CacheMode.NoCache)
    c.plot.resetCachedContent()
    vp.repaint()
    fresh = _pixels(vp)
    # Antialiased edges may differ by a few levels between a partial and a full paint.
    differ = (abs(shown - fresh).max(axis=2) > 40).sum()
    assert differ <= 0.0005 * shown.shape[0] * shown.shape[1]


def _file_action(win, text_start: str):
    file_menu = [a.menu() for a in win.menuBar().actions() if a.text() == "&File"][0]
    return [a for a in file_menu.actions() if a.text().startswith(text_start)][0]


def test_file_menu_exports_report_with_the_panels_sizing(win, qtbot, tmp_path, monkeypatch):
    # Source: ISO 32000-1:2008 clause 7.5.2 (a PDF begins "%PDF-1."); PNG specification
    # (ISO/IEC 15948) section 5.2 (the 8-byte signature).
    from PySide6.QtWidgets import QFileDialog

    import app.report

    panel = win.results_panel
    answers = {"route": win.doc.route().name,
               "widest": {"dimension": "width", "current_m": 0.6, "max_m": 0.75,
                          "scale": 1.25, "bounded": True},
               "doors": [{"label": "D-1", "door": 0, "width_needed_m": 0.71, "width_m": 2.0}]}
    panel.sizing_compute = lambda project, name, token: answers
    with qtbot.waitSignal(panel.sizingFinished, timeout=5000):
        panel.start_sizing()
    calls = []
    real = app.report.export_report

    def recording(project, path, route_name=None, sizing=None):
        calls.append(sizing)
        real(project, path, route_name=route_name, sizing=sizing)

    monkeypatch.setattr(app.report, "export_report", recording)
    out = tmp_path / "page"
    monkeypatch.setattr(QFileDialog, "getSaveFileName",
                        staticmethod(lambda *a, **k: (str(out), "PDF (*.pdf)")))
    _file_action(win, "Export &report").trigger()
    assert (tmp_path / "page.pdf").read_bytes().startswith(b"%PDF-1.")
    assert calls == [answers]
    # An edit makes the answers stale: the next report goes without them.
    win.doc.move_waypoint(0, 1, 10.5, 0.6)
    assert win.export_report(tmp_path / "page.png")
    assert (tmp_path / "page.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert calls[-1] is None
    assert not win.export_report(tmp_path / "page.txt")
    assert "page.txt" in win.error_box.text()
    win.error_box.close()


def test_file_menu_exports_the_plan_picture_as_the_cli_renders_it(win, tmp_path, monkeypatch):
    # Source: shared/contract.md (`swathe render PROJECT -o FILE.png`): the window's picture
    # is the same picture, pixel for pixel.
    from PySide6.QtGui import QImage
    from PySide6.QtWidgets import QFileDialog

    from app.cli import main

    out = tmp_path / "plan.png"
    monkeypatch.setattr(QFileDialog, "getSaveFileName",
                        staticmethod(lambda *a, **k: (str(out), "PNG (*.png)")))
    _file_action(win, "Export plan &picture").trigger()
    assert main(["render", str(win.doc.path), "-o", str(tmp_path / "cli.png")]) == 0
    a, b = QImage(str(out)), QImage(str(tmp_path / "cli.png"))
    assert not a.isNull() and a.size() == b.size()
    assert a == b


def test_band_fills_exactly_the_checked_swept_region(make_window):
    # Source: Qt QPainterPath::contains and Qt::WindingFill documentation (a point is inside
    # where the winding number is non-zero), against shapely's union of the same parts: the
    # band is drawn from the unmerged per-segment parts, never unioned, so the fill rule must
    # reproduce the union. Points within 3 mm of the union's outline are left out (the union
    # is made on a 1 mm grid and grown by 2 mm).
    import numpy as np
    import shapely

    w = make_window(DEMO)
    doc, c = w.doc, w.canvas
    for name in doc.route_names():
        doc.set_current_route(doc.route_names().index(name))
        QApplication.processEvents()
        union = doc.check(name).swept
        path = c.band_item.path()
        assert path.fillRule() == Qt.FillRule.WindingFill
        x0, y0, x1, y1 = union.bounds
        rng = np.random.default_rng(7)
        pts = rng.uniform((x0 - 0.2, y0 - 0.2), (x1 + 0.2, y1 + 0.2), size=(1500, 2))
        geoms = shapely.points(pts)
        far = shapely.distance(geoms, union.boundary) > 0.003
        inside = shapely.contains(union, geoms)
        drawn = np.array([path.contains(QPointF(*p)) for p in pts])
        assert far.sum() > 1000
        assert inside[far].any() and (~inside[far]).any()
        assert (drawn[far] == inside[far]).all(), name


def test_violation_labels_cover_no_marker_name_or_other_label(make_window):
    # Common practice in map labelling: a label never covers another label or a marker; it
    # tries the places round its point in turn. Checked on the demo's sluice door, where two
    # violations sit either side of the door's name, at the fitted view and zoomed in.
    from app.canvas import MARKER_PX, _plan_box

    w = make_window(DEMO)
    doc, c = w.doc, w.canvas
    doc.set_current_route(doc.route_names().index("corridor-to-sluice"))
    QApplication.processEvents()
    vs = doc.check("corridor-to-sluice").violations
    assert len(vs) >= 2

    def overlaps(a, b):
        return not (a[2] <= b[0] or a[0] >= b[2] or a[3] <= b[1] or a[1] >= b[3])

    for zoom in (None, 3.0):
        if zoom is not None:
            c.center_on(vs[0].x, vs[0].y, span_m=zoom)
            QApplication.processEvents()
        px = c.px_m()
        shown = [_plan_box(t, px) for t in c.violation_labels if t.isVisible()]
        names = [_plan_box(t, px) for t in c.plan_labels if t.isVisible()]
        half = 0.5 * MARKER_PX * px
        marks = [(v.x - half, v.y - half, v.x + half, v.y + half) for v in vs]
        for i, a in enumerate(shown):
            assert not any(overlaps(a, b) for b in names + marks)
            assert not any(overlaps(a, b) for b in shown[i + 1:])
        if zoom is not None:
            assert len(shown) == len(vs)  # room for every label once zoomed in


def _two_crashed_autosaves(tmp_path):
    """Two projects left unsaved by a crash, the second autosaved a second later."""
    import time as _time

    from app.autosave import Autosaver
    from app.document import Document

    store = tmp_path / "autosave"
    made = []
    for k in range(2):
        folder = tmp_path / f"p{k}"
        folder.mkdir()
        doc = Document()
        doc.open_project(write_project(folder))
        doc.move_waypoint(1, 1, 6.0 + k, 0.8)
        Autosaver(doc, directory=store, interval_ms=600_000).save_now()
        made.append((doc.path, doc.project.routes))
        if k == 0:
            _time.sleep(1.05)  # saved_at has whole seconds
    return store, made


def test_recovery_lists_every_autosave_and_keeps_what_is_not_chosen(make_window, tmp_path):
    # Source: common practice (no crash-saved work is deleted without being asked; the user
    # picks which work to bring back).
    from app.autosave import pending_autosaves
    from app.recovery import RecoveryDialog

    store, made = _two_crashed_autosaves(tmp_path)
    entries = pending_autosaves(store)
    assert [e.original_path for e in entries] == [made[1][0], made[0][0]]  # newest first
    dlg = RecoveryDialog(entries)
    assert dlg.list.count() == 2 and dlg.list.currentRow() == 0
    assert made[1][0].name in dlg.list.item(0).text()
    dlg.list.setCurrentRow(1)
    dlg.recover_button.click()
    assert dlg.chosen == entries[1]
    w = make_window()
    w.autosaver.directory = store
    # Keep for later: nothing recovered, nothing deleted.
    assert not w.offer_recovery(choose=lambda es: None)
    assert len(pending_autosaves(store)) == 2
    # Recover the older one: it opens as unsaved work; the other stays on disk.
    assert w.offer_recovery(choose=lambda es: es[1])
    assert w.doc.path == made[0][0] and w.doc.project.routes == made[0][1] and w.doc.dirty
    assert {e.original_path for e in pending_autosaves(store)} == {made[0][0], made[1][0]}


def test_recovery_dialog_deletes_only_the_confirmed_one(tmp_path):
    # Source: common practice (destructive actions ask first).
    from app.autosave import pending_autosaves
    from app.recovery import RecoveryDialog

    store, made = _two_crashed_autosaves(tmp_path)
    answers = [False, True]
    dlg = RecoveryDialog(pending_autosaves(store), confirm=lambda e: answers.pop(0))
    dlg.delete_button.click()  # declined
    assert len(pending_autosaves(store)) == 2 and dlg.list.count() == 2
    dlg.delete_button.click()  # confirmed: the selected (newest) goes
    left = pending_autosaves(store)
    assert [e.original_path for e in left] == [made[0][0]] and dlg.list.count() == 1


@pytest.mark.skipif(os.name != "posix", reason="liveness is asked with POSIX kill(pid, 0)")
def test_autosave_of_a_swathe_still_running_is_not_offered(tmp_path):
    # Source: POSIX kill(2): signal 0 checks that a process exists without signalling it.
    import platform
    import subprocess
    import sys

    from app.autosave import HEADER, pending_autosaves

    store, _made = _two_crashed_autosaves(tmp_path)
    other = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
    try:
        f = pending_autosaves(store)[0].file
        d = json.loads(f.read_text())
        d[HEADER]["pid"], d[HEADER]["host"] = other.pid, platform.node()
        f.write_text(json.dumps(d))
        assert f not in [e.file for e in pending_autosaves(store)]
    finally:
        other.kill()
        other.wait()
    assert f in [e.file for e in pending_autosaves(store)]  # its process has gone


def test_transitions_in_the_window(make_window, tmp_path):
    # Source: issue 10 - the chassis panel edits the new limits, the route toolbar switches
    # transitions, hover reads curvature; a CC turn's curvature lies between 0 and 1 / R
    # (Fraichard & Scheuer 2004).
    import dataclasses

    w = make_window(write_project(tmp_path, [{"name": "bend", "turn_radius_m": 0.8,
                                              "waypoints": [[1, 0.6], [8, 0.6], [8, 1.9]]}]))
    assert not w.transitions_check.isChecked()          # no rate limit: none by default
    c = w.doc.project.chassis
    w.doc.set_chassis(dataclasses.replace(c, max_wheel_accel_radps2=6.0))
    QApplication.processEvents()
    assert w.transitions_check.isChecked()              # the default follows the chassis
    plan = w.doc.plan("bend")
    clo = [i for i, s in enumerate(plan.segments) if s.kind == "clothoid"]
    assert clo
    seg = plan.segments[clo[0]]
    p = seg.poses_at([seg.length_m / 2])[0]
    info = w.canvas.info_at(float(p[0]), float(p[1]))
    assert info is not None and 0.0 < info["curvature_per_m"] < 1.0 / 0.8
    assert "curvature +" in info["text"]
    w.transitions_check.click()
    QApplication.processEvents()
    assert w.doc.route().transitions == "none"
    assert "clothoid" not in [s.kind for s in w.doc.plan("bend").segments]
    from app.panels import ChassisPanel

    panel = w.findChild(ChassisPanel)
    assert panel.fields["max_wheel_accel_radps2"].value() == pytest.approx(6.0)
    assert {"max_yaw_accel_dps2", "max_steer_rate_dps"} <= set(panel.fields)
