"""Plan drawing, editing and measuring driven with real mouse events on the canvas.

Each gesture must make the model change the plan edits (kinematics.files.plan_edits) define,
and one undo must give back the exact previous floor plan.
"""

from __future__ import annotations

import math
import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import test_window  # noqa: E402
from PySide6.QtCore import Qt  # noqa: E402
from PySide6.QtWidgets import QApplication  # noqa: E402
from test_document import write_project  # noqa: E402
from test_window import click, drag, px  # noqa: E402

from kinematics.files.floorplan import Wall  # noqa: E402

make_window = test_window.make_window  # the window fixture, shared


def _win(make_window, tmp_path):
    return make_window(write_project(tmp_path))


def _mode(win, mode):
    win.plan_mode_actions[mode].trigger()
    assert win.canvas.mode == mode


def _undo_restores(win, before):
    win.act_undo.trigger()
    assert win.doc.project.floorplan == before


def test_draw_wall_with_thickness_double_click_ends_and_undo(make_window, tmp_path, qtbot):
    # Source: issue 12 (a wall is a polyline with a thickness; one undo step per edit);
    # right-angle snap is common practice for drawing floor plans.
    win = _win(make_window, tmp_path)
    c = win.canvas
    before = win.doc.project.floorplan
    win.thickness_spin.setValue(0.2)
    _mode(win, "wall")
    click(qtbot, c, 2.0, 3.5)
    click(qtbot, c, 5.0, 3.52)  # snaps to the right angle: y of the previous point
    drag_png = tmp_path / "drawing.png"
    c.plan_gestures.moved(5.0, 4.5)
    assert win.grab().save(str(drag_png))
    assert drag_png.stat().st_size > 1000
    assert len(win.doc.project.floorplan.walls) == 2  # nothing committed yet
    click(qtbot, c, 5.0, 4.5, double=True)
    walls = win.doc.project.floorplan.walls
    assert len(walls) == 3
    w = walls[-1]
    assert isinstance(w, Wall) and w.thickness_m == 0.2
    assert len(w.points) == 3
    tol = 1.5 * px(c)
    assert w.points[1][1] == w.points[0][1]  # right angle kept exactly
    assert w.points[2][0] == w.points[1][0]
    for p, q in zip(w.points, [(2.0, 3.5), (5.0, 3.5), (5.0, 4.5)]):
        assert math.dist(p, q) <= tol
    assert win.doc.undo_stack.undoText() == "Draw wall"
    _undo_restores(win, before)


def test_draw_rectangle_circle_polygon_enter_ends(make_window, tmp_path, qtbot):
    # Source: issue 12 (rectangle by two corners, polygon by clicks, circle by centre and
    # radius kept as a circle in the model).
    win = _win(make_window, tmp_path)
    c = win.canvas
    tol = 1.5 * px(c)
    fp0 = win.doc.project.floorplan
    _mode(win, "rect")
    click(qtbot, c, 2.0, 3.0)
    click(qtbot, c, 3.0, 4.0)
    fp1 = win.doc.project.floorplan
    r = fp1.obstacles[-1]
    xs, ys = [p[0] for p in r.points], [p[1] for p in r.points]
    assert len(r.points) == 4 and len(fp1.obstacles) == 2
    assert abs(max(xs) - min(xs) - 1.0) <= 2 * tol and abs(max(ys) - min(ys) - 1.0) <= 2 * tol
    _mode(win, "circle")
    click(qtbot, c, 7.0, 3.5)
    click(qtbot, c, 7.5, 3.5)
    fp2 = win.doc.project.floorplan
    o = fp2.obstacles[-1]
    assert o.is_circle and math.dist(o.centre, (7.0, 3.5)) <= tol
    assert abs(o.radius_m - 0.5) <= 2 * tol
    _mode(win, "polygon")
    for p in ((9.0, 3.0), (10.5, 3.2), (9.8, 4.4)):
        click(qtbot, c, *p)
    c.plot.setFocus()
    qtbot.keyClick(c.plot, Qt.Key.Key_Return)
    fp3 = win.doc.project.floorplan
    assert len(fp3.obstacles) == 4 and len(fp3.obstacles[-1].points) == 3
    _undo_restores(win, fp2)
    _undo_restores(win, fp1)
    _undo_restores(win, fp0)


def test_door_jambs_snap_to_wall_ends(make_window, tmp_path, qtbot):
    # Source: issue 12 (a door placed between two points snapping to wall ends).
    win = _win(make_window, tmp_path)
    c = win.canvas
    before = win.doc.project.floorplan
    _mode(win, "door")
    click(qtbot, c, 12.0 + 2 * px(c), 0.0 - 2 * px(c))
    click(qtbot, c, 12.0 - 2 * px(c), 2.0 + 2 * px(c))
    d = win.doc.project.floorplan.doors[-1]
    assert (d.a, d.b) == ((12.0, 0.0), (12.0, 2.0))  # exactly the wall ends
    _undo_restores(win, before)


def test_select_drag_insert_delete_relabel_plan_element(make_window, tmp_path, qtbot):
    # Source: common practice for vector editing (drag a vertex, double-click an edge inserts
    # one, Delete removes the selected vertex, then the element), issue 12 for undo.
    win = _win(make_window, tmp_path)
    c = win.canvas
    doc = win.doc
    tol = 1.5 * px(c)
    fp0 = doc.project.floorplan
    assert c.mode == "select"
    click(qtbot, c, 6.2, 1.6)  # inside the parked cart
    assert c.plan_gestures.selection == ("obstacle", 0)
    drag(qtbot, c, (6.4, 1.3), (7.0, 1.1))
    pts = doc.project.floorplan.obstacles[0].points
    assert math.dist(pts[1], (7.0, 1.1)) <= tol
    assert pts[0] == fp0.obstacles[0].points[0]
    assert doc.undo_stack.undoText() == "Move obstacle 0 vertex"
    _undo_restores(win, fp0)  # the whole drag is one step
    click(qtbot, c, 6.2, 1.3, double=True)  # on the bottom edge
    pts = doc.project.floorplan.obstacles[0].points
    assert len(pts) == 5 and math.dist(pts[1], (6.2, 1.3)) <= tol
    c.plot.setFocus()
    qtbot.keyClick(c.plot, Qt.Key.Key_Delete)  # the inserted vertex is the selected one
    assert doc.project.floorplan == fp0
    assert c.plan_gestures.relabel("rack A")
    assert doc.project.floorplan.obstacles[0].label == "rack A"
    _undo_restores(win, fp0)
    c.plan_gestures.vertex = None
    qtbot.keyClick(c.plot, Qt.Key.Key_Delete)
    assert doc.project.floorplan.obstacles == ()
    _undo_restores(win, fp0)


def test_measure_distance_and_gap_between_elements(make_window, tmp_path, qtbot):
    # Source: analytic geometry: |(2,3)-(5,-1)| = 5 (3-4-5 triangle); the bottom wall's face is
    # at y 0.05 (0.1 m thick about y 0) and the cart's lowest edge at y 1.3: gap 1.25 m.
    win = _win(make_window, tmp_path)
    c = win.canvas
    tol = 1.5 * px(c)
    before = win.doc.project.floorplan
    _mode(win, "measure")
    click(qtbot, c, 2.0, 3.0)
    click(qtbot, c, 5.0, -1.0)
    assert abs(c.plan_gestures.last_distance_m - 5.0) <= 2 * tol
    assert win.statusBar().currentMessage().startswith("Distance ")
    assert c.plan_gestures.measure_text.toPlainText().startswith("Distance ")
    _mode(win, "gap")
    click(qtbot, c, 3.0, 0.0)
    click(qtbot, c, 6.2, 1.6)
    assert abs(c.plan_gestures.last_gap_m - 1.25) < 1e-9
    msg = win.statusBar().currentMessage()
    assert "wall 0" in msg and "parked cart" in msg and "1.250 m" in msg
    assert win.doc.project.floorplan == before  # measuring edits nothing


def test_violation_citing_an_obstacle_highlights_it(make_window, tmp_path, qtbot):
    # Source: issue 12 (a message citing a wall or obstacle highlights it on the canvas).
    win = _win(make_window, tmp_path)
    c = win.canvas
    drag(qtbot, c, (11.0, 0.6), (6.2, 1.6))  # into the parked cart
    QApplication.processEvents()
    panel = win._build_later_panels()["results"]
    panel.refresh()
    rows = [k for k, v in enumerate(panel._violation_rows) if v.solid]
    assert rows
    v = panel._violation_rows[rows[0]]
    panel._violation_clicked(rows[0], 0)
    assert c.plan_gestures.highlighted == v.solid
    box = c.plan_gestures.highlight_item.path().boundingRect()
    solid = [s for s in win.doc.obstacle_index().solids if s.name == v.solid][0]
    x0, y0, x1, y1 = solid.geometry.bounds
    assert abs(box.left() - x0) < 1e-6 and abs(box.right() - x1) < 1e-6
    assert abs(box.top() - y0) < 1e-6 and abs(box.bottom() - y1) < 1e-6
    # ... and names it on the plan with the message's own words ("obstacle 0 (...)").
    hl = c.plan_gestures.highlight_text
    assert hl.isVisible() and hl.toPlainText() == v.solid
    assert x0 <= hl.pos().x() <= x1 and abs(hl.pos().y() - y1) < 1e-6
    c.plan_gestures.highlight(None)
    assert not hl.isVisible()
    win.grab().save(str(tmp_path / "highlight.png"))
