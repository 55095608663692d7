"""Route > Find route / Repair route in the window: background search, Cancel, the searched
area drawn, and the result one undoable edit."""

from __future__ import annotations

import os

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QSettings  # noqa: E402
from PySide6.QtWidgets import QApplication  # noqa: E402
from test_find_cli import DRIVES, write  # noqa: E402

from kinematics.check.clearance import check_route  # noqa: E402
from kinematics.plan.planner import plan_route  # noqa: E402


@pytest.fixture
def window(qtbot, tmp_path, monkeypatch):
    from app.main_window import MainWindow

    made = []
    # Error boxes are recorded rather than shown modally.
    shown: list[tuple[str, str]] = []
    monkeypatch.setattr(MainWindow, "show_error",
                        lambda self, title, text: shown.append((title, text)))

    def make(waypoints, reverse=False, chassis=None):
        path = write(tmp_path, waypoints, reverse, chassis)
        settings = QSettings(str(tmp_path / "settings.ini"), QSettings.Format.IniFormat)
        w = MainWindow(settings=settings, autosave_dir=tmp_path / "autosave")
        made.append(w)
        assert w.open_project_file(path)
        w.resize(1000, 700)
        w.show()
        qtbot.waitExposed(w)
        w.shown_errors = shown
        return w

    yield make
    for w in made:
        w.doc.undo_stack.setClean()
        w.doc._forced_dirty = False
        w.close()
        w.deleteLater()
    QApplication.processEvents()


def _menu_texts(w):
    return [a.text() for a in w.route_finder.menu.actions()]


def test_find_route_is_one_undoable_edit(window, qtbot):
    w = window([[1.0, 1.3, 0], [3.0, 1.3, 0], [6.6, 5.0, 90]])
    assert "&Find route" in _menu_texts(w) and "&Repair route" in _menu_texts(w)
    before = w.doc.route()
    depth = w.doc.undo_stack.count()
    w.route_finder.act_find.trigger()
    qtbot.waitUntil(lambda: not w.route_finder.running, timeout=20000)
    QApplication.processEvents()
    after = w.doc.route()
    assert after != before and after.name == before.name
    assert w.doc.undo_stack.count() == depth + 1
    assert w.doc.undo_stack.undoText() == "Find route 'in'"
    # The new route passes the check (as planned from its waypoints, like any route).
    chk = check_route(plan_route(after, w.doc.project.chassis), w.doc.project.chassis,
                      w.doc.obstacle_index(), route=after)
    assert chk.clear
    # The searched area is drawn on the canvas.
    assert w.route_finder.searched_item is not None
    assert w.route_finder.searched_item in w.canvas.plot.getPlotItem().items
    w.doc.undo_stack.undo()
    assert w.doc.route() == before


def test_repair_route_keeps_the_passing_leg(window, qtbot):
    w = window([[1.0, 1.3, 0], [3.0, 1.3, 0], [6.6, 5.0, 90]])
    w.route_finder.act_repair.trigger()
    qtbot.waitUntil(lambda: not w.route_finder.running, timeout=20000)
    QApplication.processEvents()
    assert w.route_finder.last_result.legs == (1,)
    assert w.doc.route().waypoints[:2] == w.route_finder.last_result.route.waypoints[:2]
    assert w.doc.route() == w.route_finder.last_result.route


def test_cancel_leaves_the_route_unchanged(window, qtbot, tmp_path):
    # A goal in a box in a wide hall whose only gap (0.68 m) is narrower than the cart with
    # its margins (0.7 m) but not for the 2D grid: the search would try the whole hall.
    import json

    import test_find_cli

    hall = [(-1, -1, 31, 0), (-1, 30, 31, 31), (-1, 0, 0, 30), (30, 0, 31, 30),
            (20, 20, 20.2, 26), (25.8, 20, 26, 26), (20, 20, 22.66, 20.2), (23.34, 20, 26, 20.2),
            (20, 25.8, 26, 26)]
    floor = dict(test_find_cli.FLOOR, doors=[], obstacles=[
        {"points": [[a, b], [c, b], [c, d], [a, d]], "label": f"wall {i}"}
        for i, (a, b, c, d) in enumerate(hall)])
    w = window([[2.0, 2.0, 0], [23.0, 23.0, 90]])
    (tmp_path / "door.floor.json").write_text(json.dumps(floor))
    assert w.open_project_file(tmp_path / "p.swathe.json")
    w.route_finder.time_limit_s = 60.0
    before = w.doc.route()
    rf = w.route_finder
    assert rf.start()
    qtbot.wait(300)
    assert rf.running
    rf.cancel()
    qtbot.waitUntil(lambda: not rf.running, timeout=5000)
    QApplication.processEvents()
    assert "cancelled" in w.statusBar().currentMessage()
    assert w.doc.route() == before
    assert rf.act_find.isEnabled()


def test_no_route_tells_why(window, qtbot):
    w = window([[1.8, 1.3, 180], [6.6, 5.0, 90]])
    w.route_finder.time_limit_s = 2.0
    before = w.doc.route()
    w.route_finder.act_find.trigger()
    qtbot.waitUntil(lambda: not w.route_finder.running, timeout=10000)
    QApplication.processEvents()
    assert w.doc.route() == before
    assert w.shown_errors and w.shown_errors[-1][0] == "No route found"
    assert "stopped near" in w.shown_errors[-1][1]


@pytest.mark.parametrize("drive", sorted(DRIVES))
def test_find_and_repair_in_the_window_for_every_drive(window, qtbot, drive):
    w = window([[1.0, 1.3, 0], [4.5, 1.3, 0], [6.6, 5.0, 90]], chassis=DRIVES[drive])
    ch = w.doc.project.chassis
    assert ch.drive == drive
    sketched = w.doc.route()
    for act, what in ((w.route_finder.act_repair, "Repair"), (w.route_finder.act_find, "Find")):
        if w.doc.route() != sketched:
            w.doc.undo_stack.undo()
        assert w.doc.route() == sketched
        act.trigger()
        qtbot.waitUntil(lambda: not w.route_finder.running, timeout=30000)
        QApplication.processEvents()
        after = w.doc.route()
        assert after != sketched, (what, w.shown_errors)
        assert w.doc.undo_stack.undoText() == f"{what} route 'in'"
        # Source: the check run afresh on the edited route, as any route is planned.
        chk = check_route(plan_route(after, ch), ch, w.doc.obstacle_index(), route=after)
        assert chk.clear, (what, [v.message for v in chk.violations])
