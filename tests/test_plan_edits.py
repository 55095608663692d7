"""Editing the floor plan: every edit one undo step, saved to the floor-plan file or inline.

Round trip (draw, save, reopen) gives the same model; undo of every edit kind gives back the
exact bytes the files had before it.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from app.document import Document
from kinematics.files import plan_edits as pe
from kinematics.files.floorplan import FloorPlan, Zone, save_floorplan
from kinematics.files.project import Chassis, Project, Route, Waypoint, load_project


def _doc(tmp_path: Path) -> tuple[Document, Path, Path]:
    fp = FloorPlan(name="edit test")
    fp = pe.add_wall(fp, ((0, 0), (10, 0), (10, 6)), 0.15)
    fp = pe.add_rectangle(fp, (3, 2), (4, 3), "crate")
    fp = pe.add_zone(fp, Zone("margin", ((5, 4), (9, 4), (9, 5.5), (5, 5.5)), "people",
                              margin_m=0.3))
    plan_path = tmp_path / "hall.floor.json"
    save_floorplan(fp, plan_path)
    proj = Project(fp, Chassis(track_m=0.5),
                   (Route("r", (Waypoint(1, 1), Waypoint(8, 1))),), "hall.floor.json",
                   tmp_path / "hall.swathe.json")
    doc = Document(proj)
    path = doc.save()
    return doc, path, plan_path


EDITS = {
    "add wall": lambda fp: pe.add_wall(fp, ((0, 6), (5, 6)), 0.1),
    "add polygon": lambda fp: pe.add_obstacle(fp, ((6, 2), (7, 2), (6.5, 3)), "bin"),
    "add rectangle": lambda fp: pe.add_rectangle(fp, (7, 4), (8, 5), "rack"),
    "add circle": lambda fp: pe.add_circle(fp, (2, 4), 0.2, "pillar"),
    "add door": lambda fp: pe.add_door(fp, (9.9, 2.05), (10.05, 3), "D-1", snap_m=0.2),
    "add zone": lambda fp: pe.add_zone(fp, Zone("slow", ((1, 1), (3, 1), (3, 2)), "w",
                                                speed_mps=0.4)),
    "move vertex": lambda fp: pe.move_vertex(fp, "wall", 0, 1, (10.5, 0)),
    "insert vertex": lambda fp: pe.insert_vertex(fp, "obstacle", 0, 2, (4.5, 2.5)),
    "delete vertex": lambda fp: pe.delete_vertex(fp, "wall", 0, 2),
    "delete element": lambda fp: pe.delete(fp, "obstacle", 0),
    "relabel": lambda fp: pe.relabel(fp, "obstacle", 0, "crate 2"),
    "edit zone rule": lambda fp: pe.set_zone_rule(fp, 0, "slow", 0.6, "ward"),
    "move zone vertex": lambda fp: pe.move_vertex(fp, "zone", 0, 2, (9.5, 5.8)),
    "delete zone": lambda fp: pe.delete(fp, "zone", 0),
}


@pytest.mark.parametrize("name", sorted(EDITS))
def test_undo_of_every_edit_kind_restores_the_exact_file_bytes(tmp_path, qtbot, name):
    # Common practice: undo returns the document to its previous state, byte for byte on disk.
    doc, path, plan_path = _doc(tmp_path)
    before = (path.read_bytes(), plan_path.read_bytes())
    doc.edit_floorplan(EDITS[name](doc.project.floorplan), name)
    doc.save()
    assert (path.read_bytes(), plan_path.read_bytes()) != before
    doc.undo_stack.undo()
    doc.save()
    assert (path.read_bytes(), plan_path.read_bytes()) == before


def test_draw_save_reopen_gives_the_same_model(tmp_path, qtbot):
    # Common practice: a saved model reads back unchanged.
    doc, path, plan_path = _doc(tmp_path)
    for name in ("add wall", "add polygon", "add circle", "add door", "add zone",
                 "move vertex", "relabel", "edit zone rule", "move zone vertex"):
        doc.edit_floorplan(EDITS[name](doc.project.floorplan), name)
    doc.save()
    again = load_project(path).floorplan
    mine = doc.project.floorplan
    for key in ("name", "walls", "obstacles", "doors", "zones"):
        assert getattr(again, key) == getattr(mine, key), key
    assert again.obstacles[-1].is_circle
    # Inline: the same model inside the project file.
    proj = json.loads(path.read_text())
    assert proj["floorplan"] == "hall.floor.json"
    inline = tmp_path / "inline.swathe.json"
    from kinematics.files.project import save_project

    save_project(doc.project, inline, inline_floorplan=True)
    back = load_project(inline).floorplan
    for key in ("walls", "obstacles", "doors", "zones"):
        assert getattr(back, key) == getattr(mine, key), key


def test_door_snaps_to_wall_ends_and_snap_rules():
    fp = pe.add_wall(FloorPlan(), ((0, 0), (4, 0)), 0.1)
    fp = pe.add_wall(fp, ((5, 0), (9, 0)), 0.1)
    d = pe.add_door(fp, (4.08, 0.05), (4.9, -0.1), snap_m=0.2).doors[0]
    assert d.a == (4.0, 0.0) and d.b == (5.0, 0.0)
    assert pe.snap(fp, (3.95, 0.1), 0.2) == (4.0, 0.0)                      # wall end
    assert pe.snap(fp, (2.0, 3.07), 0.2, previous=(2.13, 1.0)) == (2.13, 3.07)  # right angle
    assert pe.snap(fp, (2.26, 3.0), 0.05, grid_m=0.5) == (2.5, 3.0)          # grid


@pytest.mark.parametrize("cx", [3.0, 2.5, 1.4])
def test_gap_between_elements_uses_the_true_circle(cx):
    # Source: distance from a disc to a set is the centre's distance less the radius
    # (Euclidean geometry); between two discs, centres' distance less both radii.
    fp = pe.add_rectangle(FloorPlan(), (0, 0), (1, 1))
    fp = pe.add_circle(fp, (cx, 0.5), 0.25)
    fp = pe.add_circle(fp, (cx, 3.0), 0.5)
    assert pe.gap_m(fp, ("obstacle", 0), ("obstacle", 1)) == pytest.approx(
        max(0.0, cx - 1.0 - 0.25), abs=1e-12)
    assert pe.gap_m(fp, ("obstacle", 1), ("obstacle", 2)) == pytest.approx(2.5 - 0.75)
    assert pe.gap_m(fp, ("obstacle", 0), ("obstacle", 2)) == pytest.approx(
        math.hypot(max(0.0, cx - 1.0), 2.0) - 0.5, abs=1e-9)


def test_open_project_on_a_floor_plan_offers_a_new_project(qtbot, tmp_path, monkeypatch):
    # Common practice: a file of the wrong kind is offered for what it is, not refused.
    from PySide6.QtCore import QSettings

    from app.main_window import MainWindow

    plan = {"swathe_floorplan": 1, "name": "loading bay",
            "walls": [{"points": [[0, 0], [8, 0], [8, 5]], "thickness_m": 0.2}]}
    path = tmp_path / "bay.floor.json"
    path.write_text(json.dumps(plan))
    settings = QSettings(str(tmp_path / "s.ini"), QSettings.Format.IniFormat)
    w = MainWindow(settings=settings, autosave_dir=tmp_path / "autosave")
    qtbot.addWidget(w)
    asked = []
    monkeypatch.setattr(w, "ask_new_from_plan", lambda p: asked.append(p) or False)
    assert not w.open_project_file(path)
    assert asked == [path] and w.doc.project.floorplan.name != "loading bay"
    monkeypatch.setattr(w, "ask_new_from_plan", lambda p: True)
    with qtbot.waitSignal(w.taskFinished, timeout=10_000):
        assert w.open_project_file(path)
    assert w.doc.project.floorplan.name == "loading bay" and not w.doc.project.routes
    assert w.doc.project.path is None
    # File > New project from floor plan does the same without asking.
    assert w.new_project_from_floorplan(path, background=False)
    assert w.doc.project.floorplan.name == "loading bay"
    assert "New project from floor p&lan..." in [a.text() for a in
                                                  w.menuBar().actions()[0].menu().actions()]
    w.doc.undo_stack.setClean()
    w.close()


def test_rebased_checker_answers_as_a_fresh_one_after_wall_edits():
    # Common practice: an incremental result must equal the full recomputation.
    from kinematics.check.clearance import ObstacleIndex, RouteChecker
    from kinematics.files.floorplan import Obstacle
    from kinematics.plan.planner import plan_route

    ch = Chassis(track_m=0.5)
    fp = FloorPlan(obstacles=tuple(Obstacle(((x, 1.0), (x + 0.5, 1.0), (x + 0.5, 1.5),
                                             (x, 1.5)), f"bay {x}") for x in range(0, 12, 2)))
    fp = pe.add_wall(fp, ((0, -0.6), (6, -0.6)), 0.1)
    fp = pe.add_wall(fp, ((6.5, -0.6), (12, -0.6)), 0.1)
    fp = pe.add_wall(fp, ((0, 9), (12, 9)), 0.1)
    route = Route("r", (Waypoint(0.5, 0), Waypoint(3, 0.3), Waypoint(6, 0), Waypoint(9, 0.3),
                        Waypoint(11.5, 0)), 1.0)
    plan = plan_route(route, ch)
    checker = RouteChecker(ch, ObstacleIndex(fp))
    checker.check(plan, route=route)
    swept = []
    for w, v, to in ((2, 1, (12, 8.5)), (0, 1, (6, -0.3)), (1, 0, (6.5, -0.25)),
                     (0, 1, (6, -0.6))):
        fp = pe.move_vertex(fp, "wall", w, v, to)
        idx = ObstacleIndex(fp)
        checker = checker.rebased(idx)
        got = checker.check(plan, route=route).to_dict()
        want = RouteChecker(ch, idx).check(plan, route=route).to_dict()
        assert got == want
        swept.append(checker.swept_count)
    # The far wall's edit re-sweeps nothing; the near ones only some segments.
    assert swept[0] == 0 and 0 < swept[1] < len(plan.segments)


def test_hover_names_walls_obstacles_doors_and_zones_as_messages_do():
    # Common practice: the name on screen is the name in the message ("wall 1").
    from app.plan_tools import element_at
    from kinematics.check.clearance import ObstacleIndex

    fp = pe.add_wall(FloorPlan(), ((0, 0), (4, 0)), 0.2)
    fp = pe.add_wall(fp, ((5, 0), (9, 0)), 0.2)
    fp = pe.add_door(fp, (4, 0), (5, 0), "D-7")
    fp = pe.add_circle(fp, (2, 3), 0.3, "pillar")
    fp = pe.add_zone(fp, Zone("slow", ((6, 2), (8, 2), (8, 4), (6, 4)), "ward", speed_mps=0.5))
    idx = ObstacleIndex(fp)
    assert element_at(idx, 7.0, 0.05, 0.05)["name"] == "wall 1"
    assert element_at(idx, 2.0, 3.31, 0.05)["name"] == "obstacle 0 (pillar)"
    assert element_at(idx, 4.5, 0.0, 0.05)["text"] == "door D-7 (1.000 m wide)"
    assert element_at(idx, 7.0, 3.0, 0.05)["text"] == "zone 0 (ward): slow, 0.5 m/s"
    assert element_at(idx, 5.0, 6.0, 0.05) is None


@pytest.mark.parametrize("kind,points,value,words", [
    ("fast", ((0, 0), (1, 0), (1, 1)), None, "unknown zone kind"),
    ("slow", ((0, 0), (1, 0)), 0.5, "at least three"),
    ("slow", ((0, 0), (1, 1), (1, 0), (0, 1)), 0.5, "crossing itself"),
    ("slow", ((0, 0), (1, 0), (1, 1)), -0.2, "speed above 0"),
    ("slow", ((0, 0), (1, 0), (1, 1)), float("nan"), "speed above 0"),
    ("margin", ((0, 0), (1, 0), (1, 1)), -0.01, "margin of 0 m or more"),
    ("one_way", ((0, 0), (1, 0), (1, 1)), 400.0, "360"),
    ("one_way", ((0, 0), (1, 0), (1, 1)), None, "360"),
])
def test_zone_edits_refuse_what_the_file_refuses(kind, points, value, words):
    # Source: shared/contract.md (zones: kind, closed outline, speed_mps > 0, margin_m >= 0,
    # direction_deg); the same limits as the floor-plan reader.
    with pytest.raises(ValueError, match=words):
        pe.make_zone(kind, points, "z", value)


def test_set_zone_rule_keeps_the_outline():
    fp = pe.add_zone(FloorPlan(), Zone("slow", ((0, 0), (2, 0), (2, 1)), "w", speed_mps=0.4))
    fp2 = pe.set_zone_rule(fp, 0, "one_way", 30.0)
    z = fp2.zones[0]
    assert (z.kind, z.direction_deg, z.speed_mps, z.label) == ("one_way", 30.0, None, "w")
    assert z.points == fp.zones[0].points
    assert pe.set_zone_rule(fp, 0, "keep_out", None, "spill").zones[0] == Zone(
        "keep_out", fp.zones[0].points, "spill")


def test_zone_vertex_edits_never_make_an_outline_the_file_refuses(tmp_path):
    # Source: shared/contract.md (a zone outline must not cross itself); an edited plan must
    # read back (common practice: save what can be opened).
    from kinematics.files.loader import load_floorplan

    square = ((0, 0), (2, 0), (2, 2), (0, 2))
    fp = pe.add_zone(FloorPlan(), Zone("keep_out", square, "spill"))
    with pytest.raises(ValueError, match="crossing itself"):
        pe.move_vertex(fp, "zone", 0, 1, (0, 2.5))       # a bow tie
    with pytest.raises(ValueError):
        pe.insert_vertex(fp, "zone", 0, 1, (1.0, 3.0))   # an edge across the square
    ok = pe.move_vertex(fp, "zone", 0, 1, (2.5, -0.5))
    path = tmp_path / "z.floor.json"
    save_floorplan(ok, path)
    assert load_floorplan(path).zones == ok.zones
