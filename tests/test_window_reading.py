"""The window read as a user reads it: messages that still hold, labels inside the view and
whole, numbers not cut, shapes that mean one thing each (offscreen, on the bundled demo)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtWidgets import QApplication  # noqa: E402
from test_window import click, make_window  # noqa: E402, F401 - the window fixture

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "sample_floorplans" / "demo.swathe.json"
CLINIC = REPO / "sample_floorplans" / "clinic.swathe.json"


def _settle(n: int = 5) -> None:
    for _ in range(n):
        QApplication.processEvents()


def _demo_at(make_window, w: int, h: int, route: str | None = None):  # noqa: F811
    win = make_window(DEMO)
    win.resize(w, h)
    _settle()
    if route is not None:
        win.doc.set_current_route(win.doc.route_names().index(route))
    win.canvas.fit()
    _settle()
    return win


def _overlap(a, b) -> bool:
    return not (a[2] <= b[0] or a[0] >= b[2] or a[3] <= b[1] or a[1] >= b[3])


# -- status messages ----------------------------------------------------------------------------
def test_first_point_message_gives_way_once_the_route_exists(make_window, qtbot):  # noqa: F811
    win = make_window()
    win.canvas.set_mode("add")
    click(qtbot, win.canvas, 0.0, 0.0)
    assert win.statusBar().currentMessage().startswith("First point of a new route")
    click(qtbot, win.canvas, 2.0, 0.0)
    assert win.doc.route() is not None
    msg = win.statusBar().currentMessage()
    assert "First point" not in msg and msg.startswith("Added route 'route 1'")


def test_opened_message_does_not_outlive_the_project(make_window):  # noqa: F811
    win = make_window(DEMO)
    win.open_project_file(DEMO)
    assert win.statusBar().currentMessage() == "Opened demo.swathe.json"
    win._menu_new()
    msg = win.statusBar().currentMessage()
    assert "demo" not in msg and msg.startswith("New project")
    # The keys it names are the actions' own.
    assert win.act_open_plan.shortcut().toString() in msg


def test_hover_read_out_stops_short_of_the_summary(make_window):  # noqa: F811
    win = _demo_at(make_window, 1280, 720)
    r = win.doc.route()
    plan = win.doc.plan(r.name)
    from kinematics.motion.segments import poses_along

    x, y, _h = poses_along(plan.segments, [1.0])[0]
    info = win.canvas.info_at(float(x), float(y))
    assert info is not None
    full = info["text"]
    sb = win.statusBar()
    fm = sb.fontMetrics()
    room = win.summary_label.x() - 6
    assert fm.horizontalAdvance(full) > room - win.STATUS_GAP_PX, "the read-out is long here"
    win.canvas.hoverInfo.emit(full)
    shown = sb.currentMessage()
    assert shown.endswith("\u2026") and full.startswith(shown[:-1])
    assert fm.horizontalAdvance(shown) <= room - win.STATUS_GAP_PX
    win.canvas.hoverInfo.emit("")
    assert sb.currentMessage() == ""


def test_hover_ring_goes_with_the_project(make_window):  # noqa: F811
    win = _demo_at(make_window, 1280, 720)
    r = win.doc.route()
    wp = r.waypoints[0]
    win.canvas._mouse_moved(win.canvas.plot.getPlotItem().vb.mapViewToScene(
        __import__("PySide6.QtCore", fromlist=["QPointF"]).QPointF(wp.x, wp.y)))
    assert win.canvas.hover_item.data, "the ring is on the route"
    assert win.open_project_file(CLINIC)
    assert win.canvas.hover_item.data == []
    assert win.canvas.last_hover is None
    assert win.hover_text == ""


# -- labels and columns ----------------------------------------------------------------------
@pytest.mark.parametrize("size", [(1280, 720), (1920, 1080)])
def test_violation_labels_lie_inside_the_view(make_window, size):  # noqa: F811
    win = _demo_at(make_window, *size, route="corridor-to-sluice")
    c = win.canvas
    px = c.px_m()
    from app.canvas import _plan_box

    (x0, x1), (y0, y1) = c.view.viewRange()
    shown = [t for t in c.violation_labels if t.isVisible()]
    assert shown, "the violations are labelled"
    for t in shown:
        b = _plan_box(t, px)
        assert x0 <= b[0] and b[2] <= x1 and y0 <= b[1] and b[3] <= y1, t.text()
    # Panned so the markers sit at the right edge, the labels move inside.
    chk = win.doc.check("corridor-to-sluice")
    vx = max(v.x for v in chk.violations)
    w = x1 - x0
    c.view.setXRange(vx - 0.97 * w, vx + 0.03 * w, padding=0)
    _settle()
    (x0, x1), (y0, y1) = c.view.viewRange()
    shown = [t for t in c.violation_labels if t.isVisible()]
    assert shown
    for t in shown:
        b = _plan_box(t, px)
        assert x0 <= b[0] and b[2] <= x1, t.text()


def test_door_names_are_whole_and_apart_at_1280x720(make_window):  # noqa: F811
    # Source: common practice (a map label is shown whole or not at all, never under another).
    win = _demo_at(make_window, 1280, 720)
    c = win.canvas
    px = c.px_m()
    from app.canvas import _plan_box

    doors = c._door_labels
    shown = [t for t in doors if t.isVisible()]
    assert len(shown) >= 0.9 * len(doors), "nearly every door is named at this size"
    boxes = [_plan_box(t, px) for t in c.plan_labels if t.isVisible()]
    for i in range(len(boxes)):
        for j in range(i + 1, len(boxes)):
            assert not _overlap(boxes[i], boxes[j]), (i, j)
    names = {t.text() for t in shown}
    assert {"room 201", "room 202", "room 203", "room 204"} <= names


def test_results_amounts_are_never_cut_in_a_narrow_dock(make_window):  # noqa: F811
    win = _demo_at(make_window, 1280, 720, route="corridor-to-sluice")
    panel = win.results_panel
    for width in (320, 260):
        panel.resize(width, 500)
        _settle()
        for t in (panel.violations, panel.doors):
            fm = t.fontMetrics()
            assert t.rowCount() > 0
            for col in range(1, t.columnCount()):
                head = fm.horizontalAdvance(t.horizontalHeaderItem(col).text())
                assert t.columnWidth(col) >= head, (width, col)
                for r in range(t.rowCount()):
                    assert t.columnWidth(col) >= fm.horizontalAdvance(t.item(r, col).text())
            used = sum(t.columnWidth(k) for k in range(t.columnCount()))
            assert used <= t.viewport().width() + 1, "no column runs out of the table"


def test_heading_handle_is_a_shape_no_violation_uses(make_window):  # noqa: F811
    from app.scene import HANDLE_SHAPE, VIOLATION_SHAPES

    assert HANDLE_SHAPE not in VIOLATION_SHAPES.values()
    win = _demo_at(make_window, 1280, 720)
    assert win.canvas.handles_item._symbol == HANDLE_SHAPE


def test_canvas_has_no_auto_range_button(make_window):  # noqa: F811
    win = _demo_at(make_window, 1280, 720)
    pi = win.canvas.plot.getPlotItem()
    assert pi.buttonsHidden and not pi.autoBtn.isVisible()
    assert win.act_fit.shortcut().toString() == "F"


# -- help ---------------------------------------------------------------------------------------
def test_f1_opens_the_guide_listing_every_shortcut_mode_and_word(make_window, qtbot):  # noqa: F811
    from PySide6.QtCore import Qt
    from PySide6.QtGui import QAction, QKeySequence

    from kinematics.analysis.report_text import CAUTION

    win = _demo_at(make_window, 1280, 720)
    assert win.guide_box is None
    win.activateWindow()
    qtbot.waitUntil(lambda: QApplication.activeWindow() is win, timeout=2000)
    qtbot.keyClick(win.canvas.plot, Qt.Key.Key_F1)
    qtbot.waitUntil(lambda: win.guide_box is not None and win.guide_box.isVisible(),
                    timeout=2000)
    assert win.act_guide in win.menuBar().actions()[-1].menu().actions()  # Help > Guide
    text = win.guide_box.plain_text()
    # Every shortcut the window defines, found here independently of the guide's own code.
    keys = 0
    for a in win.findChildren(QAction):
        for k in a.shortcuts():
            if not k.isEmpty():
                keys += 1
                assert k.toString(QKeySequence.SequenceFormat.NativeText) in text, a.text()
    assert keys >= 15
    for a in (win.act_select, win.act_add, *win.plan_mode_actions.values()):
        assert a.text().replace("&", "") in text
    for word in ("station", "margin", "clearance", "band", "swept path", "footprint"):
        assert word in text
    assert " ".join(CAUTION.split()) in " ".join(text.split())
    # Read from the actions when opened: a key changed since shows at the next opening.
    win.guide_box.close()
    win.act_picture.setShortcut(QKeySequence("Ctrl+Alt+P"))
    win.show_guide()
    assert "Ctrl+Alt+P" in win.guide_box.plain_text()


def test_each_tab_group_has_one_tab_bar_on_screen(make_window):  # noqa: F811
    # A stray copy of a dock tab bar was painted over the plots' controls at 1920x1080.
    from PySide6.QtWidgets import QTabBar

    win = _demo_at(make_window, 1920, 1080)
    bars = [t for t in win.findChildren(QTabBar) if t.isVisible()
            and t.window() is win]
    tabs = [tuple(t.tabText(i) for i in range(t.count())) for t in bars]
    assert len(tabs) == len(set(tabs)), tabs
    assert ("Check results", "Legend") in tabs
    # The bottom group: plots and schedule first (a Traffic tab may follow them).
    assert any(t[:2] == ("Speed and wheel rates", "Schedule") for t in tabs), tabs
    for t in bars:
        assert win.rect().contains(t.mapTo(win, t.rect().bottomRight())), t.geometry()
