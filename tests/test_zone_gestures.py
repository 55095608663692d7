"""Drawing zones in the window with real mouse events, their rule dialog, the legend dock and
the plan toolbars.

Each zone gesture must make the model change as kinematics.files.plan_edits says, be one undo
step that gives back the exact bytes on disk, be autosaved, and read back unchanged after save
and reopen.
"""

from __future__ import annotations

import json
import math
import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import numpy as np  # noqa: E402
import pytest  # noqa: E402
import shapely  # noqa: E402
import test_window  # noqa: E402
from PySide6.QtCore import Qt, QTimer  # noqa: E402
from PySide6.QtGui import QColor  # noqa: E402
from PySide6.QtWidgets import QApplication, QToolBar, QToolButton  # noqa: E402
from shapely.geometry import Polygon  # noqa: E402
from test_document import write_project  # noqa: E402
from test_window import click, px  # noqa: E402

from kinematics.files.floorplan import Zone, save_floorplan  # noqa: E402
from kinematics.files.loader import load_floorplan  # noqa: E402
from kinematics.files.project import load_project  # noqa: E402

make_window = test_window.make_window  # the window fixture, shared

CORNERS = ((2.0, 0.4), (4.0, 0.4), (4.0, 1.6), (2.0, 1.6))


def _answer_dialog(qtbot, kind, value, label, seen=None, cancel=False):
    """When the zone dialog opens, pick ``kind``, type ``value`` and ``label`` into it and
    press OK (or Cancel), as a user would."""

    def fill():
        from app.zone_dialog import ZoneDialog

        dlg = QApplication.activeModalWidget()
        if not isinstance(dlg, ZoneDialog):
            QTimer.singleShot(20, fill)
            return
        if seen is not None:
            seen.append(dlg.rule())
        dlg.set_rule(kind, value, label)
        from PySide6.QtWidgets import QDialogButtonBox

        which = (QDialogButtonBox.StandardButton.Cancel if cancel
                 else QDialogButtonBox.StandardButton.Ok)
        qtbot.mouseClick(dlg.buttons.button(which), Qt.MouseButton.LeftButton)

    QTimer.singleShot(0, fill)


def _draw_zone(qtbot, win, corners, kind, value, label, seen=None, cancel=False):
    c = win.canvas
    win.plan_mode_actions["zone"].trigger()
    assert c.mode == "zone"
    for p in corners[:-1]:
        click(qtbot, c, *p)
    _answer_dialog(qtbot, kind, value, label, seen, cancel)
    click(qtbot, c, *corners[-1], double=True)


def _files(path):
    proj = load_project(path)
    plan = path.parent / proj.floorplan_ref if isinstance(proj.floorplan_ref, str) else None
    return path.read_bytes(), (plan.read_bytes() if plan else b"")


@pytest.mark.parametrize("kind,value,key", [("keep_out", None, None),
                                            ("slow", 0.35, "speed_mps"),
                                            ("margin", 0.25, "margin_m"),
                                            ("one_way", 180.0, "direction_deg")])
def test_draw_zone_of_each_kind_undo_restores_bytes_and_reopens(make_window, tmp_path, qtbot,
                                                                kind, value, key):
    # Source: issue 12 (zones drawn in the window, one undo step per edit, round trip gives
    # the same model); shared/contract.md (zones keys). Undo to the exact bytes on disk is
    # common practice for an editor's undo.
    path = write_project(tmp_path)
    plan = tmp_path / "corridor.floor.json"
    save_floorplan(load_floorplan(plan), plan)  # the plan file as Swathe writes it
    win = make_window(path)
    c = win.canvas
    assert win.doc.save()
    before = _files(path)
    fp0 = win.doc.project.floorplan
    seen: list = []
    _draw_zone(qtbot, win, CORNERS, kind, value, f"{kind} area", seen)
    zones = win.doc.project.floorplan.zones
    assert len(zones) == 1
    z = zones[0]
    assert z.kind == kind and z.label == f"{kind} area"
    if key is not None:
        assert getattr(z, key) == pytest.approx(value)
    tol = 1.5 * px(c)
    assert len(z.points) == 4
    for p, q in zip(z.points, CORNERS):
        assert math.dist(p, q) <= tol
    # A drawn one-way zone starts with its first edge's direction (drawn towards +x: 0 deg).
    assert seen and seen[0][0] == "keep_out"
    if kind == "one_way":
        assert seen[0][1] is None  # keep_out shown first; the direction field was 0 deg
    assert win.doc.undo_stack.undoText() == "Draw zone"
    assert win.doc.undo_stack.count() == 1
    # Save, reopen: the same model.
    assert win.doc.save()
    again = load_project(path).floorplan
    assert again.zones == win.doc.project.floorplan.zones
    # Undo and save: the exact bytes of both files before the zone.
    win.act_undo.trigger()
    assert win.doc.project.floorplan == fp0
    assert win.doc.save()
    assert _files(path) == before


def test_one_way_direction_from_the_first_edge_and_typed(make_window, tmp_path, qtbot):
    # Source: issue 12 (one_way direction_deg); atan2 of the first edge, drawn straight up
    # (+y), is 90 degrees (plane geometry).
    win = make_window(write_project(tmp_path))
    seen: list = []
    up = ((3.0, 0.3), (3.0, 1.7), (1.5, 1.7), (1.5, 0.3))
    _draw_zone(qtbot, win, up, "one_way", None, "lane", seen)
    z = win.doc.project.floorplan.zones[0]
    assert z.kind == "one_way" and z.direction_deg == pytest.approx(90.0, abs=1.0)
    # Typed instead: the value given in the dialog wins.
    _draw_zone(qtbot, win, ((6.5, 0.3), (8.0, 0.3), (8.0, 1.2)), "one_way", -45.0, "exit")
    assert win.doc.project.floorplan.zones[1].direction_deg == -45.0


def test_cancelled_or_open_zone_draws_nothing(make_window, tmp_path, qtbot):
    # Source: issue 12 (bad zone data: an open outline is no zone); cancel changes nothing
    # (common practice).
    win = make_window(write_project(tmp_path))
    fp0 = win.doc.project.floorplan
    _draw_zone(qtbot, win, CORNERS, "slow", 0.4, "x", cancel=True)
    assert win.doc.project.floorplan == fp0 and win.doc.undo_stack.count() == 0
    # Two points enclose no area: refused before any question, with a message.
    c = win.canvas
    win.plan_mode_actions["zone"].trigger()
    click(qtbot, c, 2.0, 0.5)
    click(qtbot, c, 4.0, 0.5, double=True)
    assert win.doc.project.floorplan == fp0
    assert "zone needs at least three" in win.statusBar().currentMessage()


def test_edit_zone_rule_later_is_one_undo_step_and_autosaved(make_window, tmp_path, qtbot):
    # Source: issue 12 (edit a zone's values; each edit undoable and autosaved like route
    # edits).
    path = write_project(tmp_path)
    win = make_window(path)
    win.autosaver._settle.setInterval(50)
    c = win.canvas
    _draw_zone(qtbot, win, CORNERS, "slow", 0.5, "ward")
    qtbot.waitUntil(lambda: win.autosaver.file.exists(), timeout=3000)
    saved = json.loads(win.autosaver.file.read_text())
    assert "ward" in json.dumps(saved)
    fp1 = win.doc.project.floorplan
    win.act_select.trigger()
    click(qtbot, c, 3.0, 1.0)  # inside the zone, away from walls and obstacles
    assert c.plan_gestures.selection == ("zone", 0)
    seen: list = []
    _answer_dialog(qtbot, "margin", 0.45, "people", seen)
    win.act_edit_zone.trigger()
    assert seen == [("slow", 0.5, "ward")]  # the dialog opens on the zone's current rule
    z = win.doc.project.floorplan.zones[0]
    assert (z.kind, z.margin_m, z.label, z.speed_mps) == ("margin", 0.45, "people", None)
    assert z.points == fp1.zones[0].points
    assert win.doc.undo_stack.undoText() == "Edit zone 0"
    mtime = win.autosaver.file.stat().st_mtime_ns
    qtbot.waitUntil(lambda: win.autosaver.file.stat().st_mtime_ns != mtime, timeout=3000)
    assert '"people"' in win.autosaver.file.read_text()
    win.act_undo.trigger()
    assert win.doc.project.floorplan == fp1


def test_legend_dock_lists_the_zone_kinds_with_the_pictures_samples(make_window, tmp_path,
                                                                    qtbot):
    # Source: issue 12 (zones drawn with their own hatching and a legend); the rows are the
    # picture's (app.scene.legend_rows), so window and picture agree.
    from app.scene import zone_legend_rows
    from kinematics.files import plan_edits as pe

    win = make_window(write_project(tmp_path))
    panels = win._build_later_panels()
    legend = panels["legend"]
    win.legend_dock.raise_()
    QApplication.processEvents()
    view = legend.view
    assert view.zone_rows() == []
    fp = win.doc.project.floorplan
    fp = pe.add_zone(fp, Zone("slow", CORNERS, "ward", speed_mps=0.4))
    fp = pe.add_zone(fp, Zone("keep_out", ((7.0, 0.2), (8.0, 0.2), (8.0, 0.9)), "spill"))
    win.doc.edit_floorplan(fp, "zones")
    QApplication.processEvents()
    rows = view.zone_rows()
    assert [r[2] for r in rows] == ["keep_out", "slow"]
    assert rows == zone_legend_rows(win.doc.project.floorplan.zones)
    img = view.grab().toImage()
    assert img.height() >= 25 * len(view.rows())
    # The keep-out sample (first zone row, after wall, obstacle, door) holds its colour.

    from app.palette import VERMILLION

    target = QColor(VERMILLION)
    y0 = int(2 + 28 + 4 + 25 * 3)
    hits = 0
    for y in range(y0, y0 + 25):
        for x in range(12, 50):
            c = img.pixelColor(x, y)
            if (abs(c.red() - target.red()) < 40 and abs(c.green() - target.green()) < 40
                    and abs(c.blue() - target.blue()) < 40):
                hits += 1
    assert hits > 20
    win.grab().save(str(tmp_path / "legend.png"))


@pytest.mark.parametrize("width", [1200, 1280, 1400])
def test_no_toolbar_action_is_hidden_behind_an_overflow_button(make_window, width):
    # Source: Qt QToolBar documentation (actions that do not fit go behind the extension
    # button); every tool should be one click away at common laptop widths.
    win = make_window()
    win.resize(width, 800)
    QApplication.processEvents()
    bars = win.findChildren(QToolBar)
    assert {"tools", "route", "plan_tools"} <= {b.objectName() for b in bars}
    for bar in bars:
        if not bar.isVisible():
            continue
        ext = [b for b in bar.findChildren(QToolButton)
               if b.objectName() == "qt_toolbar_ext_button"]
        assert not any(e.isVisible() for e in ext), bar.objectName()
        for a in bar.actions():
            w = bar.widgetForAction(a)
            if w is not None and a.isVisible():
                assert w.isVisible(), (bar.objectName(), a.text())
    plan = [b for b in bars if b.objectName() == "plan_tools"][0]
    for a in win.plan_mode_actions.values():
        assert plan.widgetForAction(a).isVisible()


# -- zones and stops in the window, the CLI, the report and the schedule, side by side ------
ZONED = test_window.REPO / "docs" / "examples" / "zoned_corridor.swathe.json"


def _cli_json(capsys, *args):
    from app.cli import main

    code = main(list(args))
    return code, json.loads(capsys.readouterr().out)


def test_zones_and_stops_agree_in_window_cli_report_and_schedule(make_window, capsys):
    # Source: issue 12 ("zones and stops work in window, CLI, report and schedule"); the
    # window, the CLI and the report must show the same check and the same schedule.
    import io

    import pypdf

    from app.report import report_bytes

    win = make_window(ZONED)
    doc = win.doc
    name = doc.route().name
    sched = doc.schedule(name)
    code, cli = _cli_json(capsys, "schedule", str(ZONED), "--route", name)
    assert code == 0
    assert cli["samples"][-1]["t_s"] == pytest.approx(sched.samples.t_s[-1], abs=1e-6)
    (stop,) = cli["stops"]
    assert stop["dwell_s"] == 15
    # The window's schedule rests through the dwell at the stop, as the CLI's does.
    t, v = sched.samples.t_s, sched.samples.v_mps
    during = (t >= stop["t_s"] + 1e-6) & (t <= stop["t_s"] + 15 - 1e-6)
    assert during.sum() >= 10 and np.all(v[during] == 0.0)
    # The slow zone caps the window's schedule (samples whose footprint is inside the ward).
    from kinematics.check.sweep import placed_footprints

    ward = [z for z in doc.project.floorplan.zones if z.kind == "slow"][0]
    fps = placed_footprints(doc.project.chassis.footprint,
                            np.column_stack([sched.samples.x, sched.samples.y,
                                             sched.samples.heading_rad]))
    inside = shapely.intersects(fps, Polygon(ward.points))
    assert inside.any() and np.all(v[inside] <= ward.speed_mps + 1e-9)
    # The plots panel draws that schedule: its speed curve spans the dwell and rests 15 s.
    plots = win._build_later_panels()["plots"]
    plots.set_x_axis("time")
    plots.refresh()
    curve = [c for c in plots.speed_plot.listDataItems() if c.name() == "speed"][0]
    px_, py_ = curve.getData()
    assert px_[-1] == pytest.approx(cli["samples"][-1]["t_s"], abs=1e-6)
    rest = px_[(py_ == 0.0) & (px_ > 1.0) & (px_ < px_[-1] - 1.0)]
    assert rest.max() - rest.min() >= 15.0 - 1e-6
    # Check: window and CLI give the same verdict and least clearance.
    code, chk = _cli_json(capsys, "check", str(ZONED), "--json")
    r = chk["routes"][0]
    mine = doc.check(name)
    assert r["min_clearance_m"] == pytest.approx(mine.min_clearance_m, abs=1e-9)
    assert [x["kind"] for x in r["violations"]] == [x.kind for x in mine.violations]
    assert r["stops"][0]["waypoint"] == 1
    # Canvas: every zone kind drawn; the legend tab lists them.
    for kind in ("keep_out", "slow", "margin", "one_way"):
        items = win.canvas.zone_items[kind]
        items = items if isinstance(items, list) else [items]
        assert not items[0].path().isEmpty(), kind
    legend = win._build_later_panels()["legend"].view
    assert [r[2] for r in legend.zone_rows()] == ["keep_out", "slow", "margin", "one_way"]
    # Report: zone legend, captions, stops and the slow-zone cap in the plot.
    text = pypdf.PdfReader(io.BytesIO(report_bytes(doc.project, "pdf"))).pages[0]
    text = " ".join(text.extract_text().split())
    for words in ("keep-out zone", "slow zone (cap)", "margin zone (margin)",
                  "one-way zone (arrows)", "ward: 0.4 m/s", "people: 300 mm", "Stops",
                  "stop at waypoint 2", "waits 15 s", "slow zone"):
        assert words in text, words


def test_breaking_zone_rules_is_reported_alike_in_window_and_cli(make_window, tmp_path,
                                                                   capsys):
    # Source: issue 12 (keep_out and wrong_way violation kinds; a margin zone's wider margin);
    # the window's results and the CLI's JSON are one check.
    d = json.loads(ZONED.read_text())
    d["routes"] = [{"name": "back", "waypoints": [[15.5, 1.5], [14, 0.8], [1, 1.5]]}]
    d["floorplan"]["zones"][2]["margin_m"] = 1.4  # wider than the corridor leaves
    p = tmp_path / "broken.swathe.json"
    p.write_text(json.dumps(d))
    code, chk = _cli_json(capsys, "check", str(p), "--json")
    assert code == 1
    kinds = {v["kind"] for v in chk["routes"][0]["violations"]}
    assert {"keep_out", "wrong_way", "clearance"} <= kinds
    win = make_window(p)
    mine = {v.kind for v in win.doc.check("back").violations}
    assert mine == kinds
    legend = win._build_later_panels()["legend"].view
    legend.refresh()
    words = [r[1] for r in legend.rows()]
    assert "in keep-out zone" in words and "against one-way zone" in words


def test_hover_names_a_wall_as_messages_cite_it(make_window, tmp_path, qtbot):
    # Source: issue 12 ("walls cited in messages ('wall 23') ... the plan labels it on
    # hover"): the name shown is the check's own solid name.
    from PySide6.QtCore import QEvent

    win = make_window(write_project(tmp_path))
    c = win.canvas
    names = {s.name for s in win.doc.obstacle_index().solids}
    assert {"wall 0", "wall 1"} <= names
    for (x, y), want in (((3.0, 2.0), "wall 1"), ((3.0, 0.0), "wall 0"),
                         ((6.2, 1.6), "obstacle 0 (parked cart)")):
        vp = c.plot.viewport()
        test_window._send(vp, QEvent.Type.MouseMove, c.plan_to_viewport(x, y),
                          Qt.MouseButton.NoButton, Qt.MouseButton.NoButton)
        qtbot.wait(15)
        QApplication.processEvents()
        assert c.last_hover_element is not None and c.last_hover_element["name"] == want
        assert c.plot.toolTip().startswith(want)
        # A message citing it outlines it and writes the same name on the plan.
        assert c.plan_gestures.highlight(want)
        assert c.plan_gestures.highlight_text.toPlainText() == want
    assert not c.plan_gestures.highlight("wall 9")  # no such wall: nothing outlined
    assert not c.plan_gestures.highlight_text.isVisible()


def test_grid_snap_in_the_window(make_window, tmp_path, qtbot):
    # Source: issue 12 (snap to grid); 25 cm grid from View > Snap to grid.
    win = make_window(write_project(tmp_path))
    c = win.canvas
    act = [a for a in win.snap_group.actions() if a.text() == "25 cm"][0]
    act.trigger()
    assert c.snap_m == 0.25
    win.plan_mode_actions["rect"].trigger()
    click(qtbot, c, 2.07, 0.58)
    click(qtbot, c, 3.41, 1.19)
    r = win.doc.project.floorplan.obstacles[-1]
    xs = sorted({p[0] for p in r.points})
    ys = sorted({p[1] for p in r.points})
    assert xs == [2.0, 3.5] and ys == [0.5, 1.25]


def test_drag_a_zone_corner_and_refuse_a_crossing_outline(make_window, tmp_path, qtbot):
    # Source: issue 12 (move vertices, one undo step); shared/contract.md (a zone outline
    # may not cross itself, so the window never makes one).
    from test_window import drag

    from kinematics.files import plan_edits as pe

    win = make_window(write_project(tmp_path))
    c = win.canvas
    fp = pe.add_zone(win.doc.project.floorplan, Zone("slow", CORNERS, "ward", speed_mps=0.4))
    win.doc.edit_floorplan(fp, "zone")
    fp1 = win.doc.project.floorplan
    win.act_select.trigger()
    click(qtbot, c, 3.0, 1.0)
    assert c.plan_gestures.selection == ("zone", 0)
    drag(qtbot, c, (4.0, 0.4), (4.5, 0.7))           # corner 1 moved: a valid outline
    z = win.doc.project.floorplan.zones[0]
    assert math.dist(z.points[1], (4.5, 0.7)) <= 1.5 * px(c)
    assert win.doc.undo_stack.undoText() == "Move zone 0 vertex"
    win.act_undo.trigger()
    assert win.doc.project.floorplan == fp1
    # Past x = 2 the edge from corner 1 to corner 2 would cross the closing edge (x = 2).
    drag(qtbot, c, (4.0, 0.4), (1.0, 1.0))
    z = win.doc.project.floorplan.zones[0]
    # The corner stops at the last place the outline was still a zone; the others stay.
    assert Polygon(z.points).is_valid
    assert z.points[1][0] >= 2.0 - 1e-9 and math.dist(z.points[1], (1.0, 1.0)) > 0.5
    assert [z.points[k] for k in (0, 2, 3)] == [fp1.zones[0].points[k] for k in (0, 2, 3)]
    assert win.doc.save()
    assert load_project(win.doc.path).floorplan.zones == win.doc.project.floorplan.zones


def test_dxf_layers_become_zones_in_the_window_import(make_window, tmp_path, qtbot):
    # Source: issue 12 (DXF import can map layers to zone kinds); ezdxf documentation
    # (LWPOLYLINE, CIRCLE, layers), DXF $INSUNITS 6 = metres.
    import ezdxf

    from app.main_window import DxfImportDialog

    d = ezdxf.new()
    d.header["$INSUNITS"] = 6
    msp = d.modelspace()
    for name in ("A-WALL", "WARD", "SPILL"):
        d.layers.add(name)
    msp.add_lwpolyline([(0, 0), (10, 0), (10, 4), (0, 4)], close=False,
                       dxfattribs={"layer": "A-WALL"})
    msp.add_lwpolyline([(2, 0.5), (5, 0.5), (5, 3.5), (2, 3.5)], close=True,
                       dxfattribs={"layer": "WARD"})
    msp.add_circle((8, 2), 0.5, dxfattribs={"layer": "SPILL"})
    path = tmp_path / "zoned.dxf"
    d.saveas(path)
    win = make_window(write_project(tmp_path))

    def fill():
        dlg = QApplication.activeModalWidget()
        if not isinstance(dlg, DxfImportDialog):
            QTimer.singleShot(20, fill)
            return
        dlg.combos["A-WALL"].setCurrentText("walls")
        dlg.combos["WARD"].setCurrentText("slow zone")
        assert dlg.values["WARD"].suffix() == " m/s"
        dlg.values["WARD"].setValue(0.3)
        dlg.combos["SPILL"].setCurrentText("keep-out zone")
        dlg.accept()

    QTimer.singleShot(0, fill)
    with qtbot.waitSignal(win.taskFinished, timeout=10_000):
        assert win.open_floorplan_file(path)
    fp = win.doc.project.floorplan
    kinds = sorted((z.kind, z.label, z.speed_mps) for z in fp.zones)
    assert kinds == [("keep_out", "SPILL", None), ("slow", "WARD", 0.3)]
    assert len(fp.walls) == 1 and not fp.obstacles
    # The circle's zone holds the true circle (flattened outward, textbook geometry).
    spill = [z for z in fp.zones if z.kind == "keep_out"][0]
    assert Polygon(spill.points).exterior.distance(shapely.Point(8, 2)) >= 0.5 - 1e-9
    # Saved with the project's import object, it reads back the same zones.
    assert win.doc.save()
    again = load_project(win.doc.path)
    assert again.floorplan.zones == fp.zones
    assert again.floorplan_ref["zones"][0]["kind"] in ("slow", "keep_out")


def test_a_zone_name_never_hides_an_obstacle(make_window):
    # Source: common practice for plan drawings (names of areas sit under the solids); the
    # zoned corridor's pillar (centre 11, 2.4; r 0.25) lies right under the "people" name.
    win = make_window(ZONED)
    c = win.canvas
    labels = [t for t, _lb in c._zone_labels]
    assert len(labels) == 4
    for t in labels:
        assert t.zValue() < min(c.obstacles_item.zValue(), c.walls_item.zValue())
        assert t.zValue() > max(it.zValue() for parts in c.zone_items.values()
                                for it in (parts if isinstance(parts, list) else [parts]))


def test_svg_groups_become_zones_in_the_window_import(make_window, tmp_path, qtbot):
    # Source: issue 12 (SVG import can map layers to zone kinds); SVG 1.1 (g, id, rect,
    # circle), Inkscape's layer label attribute; 1 unit = 1 cm given in the dialog.
    from app.main_window import SvgImportDialog
    from kinematics.files.svg_import import svg_groups

    svg = ('<svg xmlns="http://www.w3.org/2000/svg" '
           'xmlns:inkscape="http://www.inkscape.org/namespaces/inkscape" viewBox="0 0 1000 500">'
           '<line x1="0" y1="480" x2="1000" y2="480" stroke-width="10"/>'
           '<g id="layer2" inkscape:label="Aisle"><rect x="100" y="100" width="200" '
           'height="100"/></g>'
           '<g id="wet"><circle cx="700" cy="200" r="50"/></g>'
           '<g id="furniture"><rect x="500" y="300" width="40" height="40"/></g></svg>')
    path = tmp_path / "hall.svg"
    path.write_text(svg)
    assert svg_groups(path) == ["Aisle", "wet", "furniture"]
    win = make_window(write_project(tmp_path))

    def fill():
        dlg = QApplication.activeModalWidget()
        if not isinstance(dlg, SvgImportDialog):
            QTimer.singleShot(20, fill)
            return
        dlg.scale.setValue(0.01)
        dlg.combos["Aisle"].setCurrentText("one-way zone")
        assert dlg.values["Aisle"].suffix() == " deg"
        dlg.values["Aisle"].setValue(180.0)
        dlg.combos["wet"].setCurrentText("keep-out zone")
        dlg.accept()

    QTimer.singleShot(0, fill)
    with qtbot.waitSignal(win.taskFinished, timeout=10_000):
        assert win.open_floorplan_file(path)
    fp = win.doc.project.floorplan
    kinds = sorted((z.kind, z.label, z.direction_deg) for z in fp.zones)
    assert kinds == [("keep_out", "wet", None), ("one_way", "Aisle", 180.0)]
    assert len(fp.obstacles) == 1 and len(fp.walls) == 1
    aisle = [z for z in fp.zones if z.kind == "one_way"][0]
    assert Polygon(aisle.points).area == pytest.approx(2.0)  # 200 x 100 cm
    wet = [z for z in fp.zones if z.kind == "keep_out"][0]
    # Outward: the circle (centre 7, 5 - 2 = 3; r 0.5 m) lies inside the zone (textbook).
    assert Polygon(wet.points).exterior.distance(shapely.Point(7.0, 3.0)) >= 0.5 - 1e-9
    assert win.doc.save()
    assert load_project(win.doc.path).floorplan.zones == fp.zones
