"""The floor-plan reader checks many obstacles with array operations: the same polygons and the
same first-mistake messages as a one-by-one read (the project's rule that every error names
the key path of the first bad value)."""

from __future__ import annotations

import copy
import math

import numpy as np
import pytest
import shapely

from kinematics.errors import ValidationError
from kinematics.files.floorplan import (
    Obstacle,
    floorplan_from_dict,
    obstacle_polygon,
    obstacle_polygons,
    solids,
)
from kinematics.files.validate import Reader, join


def _plan(n: int = 300) -> dict:
    rng = np.random.default_rng(3)
    obstacles = []
    for k in range(n):
        x, y = float(rng.uniform(-50, 50)), float(rng.uniform(-50, 50))
        pts = [[x, y], [x + 1.0, y], [x + 1.0, y + 0.5], [x, y + 0.5]]
        if k % 7 == 0:
            pts.append([x, y])  # closed outline
        if k % 11 == 0:
            pts.insert(1, [x, y])  # a repeated point
        if k % 13 == 0:
            pts = [[x, y], [x + 1, y + 1], [x + 1, y], [x, y + 1]]  # crosses itself
        if k % 17 == 0:
            pts = [[int(x), int(y)], [int(x) + 2, int(y)], [int(x) + 2, int(y) + 1]]
        obstacles.append({"points": pts, "label": f"bay {k}"})
    return {"swathe_floorplan": 1, "name": "t", "walls": [], "obstacles": obstacles}


def _one_by_one_message(d: dict) -> str:
    """The message a plain point-by-point read of the obstacles gives (the reference)."""
    r = Reader("f.json")
    for i, o in enumerate(d["obstacles"]):
        op = join("obstacles", i)
        o = r.obj(o, op)
        pts = r.points(r.get(o, "points", op), join(op, "points"), 3)
        r.text(o.get("label", ""), join(op, "label"))
        if obstacle_polygon(Obstacle(pts)) is None:
            raise r.fail(join(op, "points"), "expected a polygon with non-zero area")
    raise AssertionError("no mistake found")


def test_polygons_are_those_of_the_one_by_one_builder():
    # Source: shapely (equals_exact with tolerance 0: the very same vertices) against this
    # project's obstacle_polygon, which the reader replaces by array operations.
    fp = floorplan_from_dict(_plan(), "f.json")
    for ob in fp.obstacles:
        ref = obstacle_polygon(Obstacle(ob.points, ob.label))
        assert ob.polygon is not None and ref is not None
        assert ob.polygon.geom_type == ref.geom_type
        assert shapely.equals_exact(ob.polygon, ref, tolerance=0.0)
    assert len(solids(fp)) >= len(fp.obstacles)


def test_array_builder_drops_what_the_one_by_one_builder_drops():
    # Source: common practice (a polygon needs three distinct points and an area).
    outlines = [[(0, 0), (1, 0), (0, 0)], [(0, 0), (1, 1), (2, 2)], [(0, 0), (0, 0), (0, 0)],
                [(0, 0), (2, 0), (2, 2), (0, 0)]]
    coords = np.array([p for o in outlines for p in o], dtype=float)
    offsets = np.cumsum([0] + [len(o) for o in outlines])
    got = obstacle_polygons(coords, offsets)
    want = [obstacle_polygon(Obstacle(tuple(map(tuple, o)))) for o in outlines]
    assert [g is None for g in got] == [w is None for w in want] == [True, True, True, False]


@pytest.mark.parametrize("mutate", [
    lambda d: d["obstacles"][150]["points"][2].__setitem__(1, "3"),
    lambda d: d["obstacles"][150]["points"][2].__setitem__(0, True),
    lambda d: d["obstacles"][150]["points"][2].__setitem__(0, math.nan),
    lambda d: d["obstacles"][150]["points"][2].__setitem__(0, 2.0e6),
    lambda d: d["obstacles"][150]["points"][2].__setitem__(1, -math.inf),
    lambda d: d["obstacles"][150]["points"].__setitem__(2, [1.0]),
    lambda d: d["obstacles"][150]["points"].__setitem__(2, {"x": 1}),
    lambda d: d["obstacles"][150].__setitem__("label", 5),
    lambda d: d["obstacles"][150].__setitem__("points", [[0, 0], [1, 1], [2, 2]]),
    lambda d: d["obstacles"][150].__setitem__("points", [[0, 0], [1, 1]]),
    lambda d: d["obstacles"].__setitem__(150, [1, 2]),
    # Two mistakes: the first in file order is the one named.
    lambda d: (d["obstacles"][150].__setitem__("label", None),
               d["obstacles"][151]["points"][0].__setitem__(0, "x")),
    lambda d: (d["obstacles"][150]["points"][1].__setitem__(0, "x"),
               d["obstacles"][150].__setitem__("label", None)),
    lambda d: (d["obstacles"][150].__setitem__("points", [[0, 0], [1, 1], [2, 2]]),
               d["obstacles"][151]["points"][0].__setitem__(0, "x")),
    lambda d: (d["obstacles"][152].__setitem__("points", [[0, 0], [1, 1], [2, 2]]),
               d["obstacles"][150]["points"][0].__setitem__(0, math.inf)),
])
def test_first_bad_obstacle_is_named_as_one_by_one(mutate):
    # Source: project rule (every bad value is named by its key path; the first in file
    # order), checked against a plain point-by-point read of the same document.
    d = _plan()
    mutate(d)
    with pytest.raises(ValidationError) as ref:
        _one_by_one_message(copy.deepcopy(d))
    with pytest.raises(ValidationError) as got:
        floorplan_from_dict(d, "f.json")
    assert str(got.value) == str(ref.value)
    assert "obstacles[15" in str(got.value)


@pytest.mark.parametrize("command", ["check", "plan"])
def test_cli_commands_import_neither_qt_nor_numpy_ma(command):
    # Source: project rule (issue 14: a command imports only what it needs; numpy.ma came in
    # with the first numpy.unique). Checked in a fresh interpreter after a real run.
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    code = ("import sys, io, contextlib\n"
            "from app.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            f"    main([{command!r}, 'sample_floorplans/clinic.swathe.json'])\n"
            "bad = sorted(m for m in sys.modules if m.split('.')[0] in "
            "('PySide6', 'shiboken6', 'pyqtgraph', 'ezdxf', 'scipy') or m == 'numpy.ma')\n"
            "print(bad)\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=root, env={**__import__("os").environ, "PYTHONPATH": str(root)})
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "[]"


def test_dubins_pairs_answer_alike_alone_and_in_blocks():
    # Source: project rule (a warm planner, which connects only the moved legs, gives the
    # fresh plan bit for bit), across the block boundaries of dubins.shortest.
    from kinematics.plan import dubins

    rng = np.random.default_rng(11)
    n = 2 * dubins._BLOCK + 7
    a = np.c_[rng.uniform(-10, 10, (n, 2)), rng.uniform(-np.pi, np.pi, n)]
    b = np.c_[rng.uniform(-10, 10, (n, 2)), rng.uniform(-np.pi, np.pi, n)]
    b[::5, :2] = a[::5, :2] + rng.uniform(-1.5, 1.5, (len(a[::5]), 2))  # CCC words too
    whole = dubins.shortest(a, b, 0.8)
    assert {int(w) for w in whole.word} == set(range(6))
    for i in (0, 1, dubins._BLOCK - 1, dubins._BLOCK, n - 1):
        one = dubins.shortest(a[i], b[i], 0.8)
        assert one.length_m[0] == whole.length_m[i] and one.word[0] == whole.word[i]
        assert np.array_equal(one.params[0], whole.params[i])


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_waypoint_candidates_from_the_tree_are_the_dense_tables(seed, monkeypatch):
    # Source: project rule (the O(n log n) search must give exactly the all-pairs answer),
    # checked against the dense table on routes of boxes with repeats, points and far strays.
    from kinematics.check import waypoints as W

    rng = np.random.default_rng(seed)
    m, n = 400, 300
    lo = rng.uniform(-30, 30, (m, 2))
    size = rng.uniform(0, 4, (m, 2)) * (rng.uniform(size=(m, 1)) > 0.2)  # some are points
    boxes = np.c_[lo, lo + size]
    boxes[50:60] = boxes[40:50]  # a route passing twice
    xy = np.r_[rng.uniform(-35, 35, (n - 6, 2)), boxes[:5, :2], [[500.0, -400.0]]]
    dense = W.candidate_pairs(xy, boxes)
    monkeypatch.setattr(W, "DENSE_PAIRS", 0)
    tree = W.candidate_pairs(xy, boxes)
    assert np.array_equal(dense[0], tree[0]) and np.array_equal(dense[1], tree[1])


def test_waypoint_check_of_a_long_route_answers_as_the_dense_one(monkeypatch):
    # Source: project rule (a faster search never changes a verdict), on a 300-waypoint
    # route through a rack field with some waypoints inside racks and beside them.
    from kinematics.check import waypoints as W
    from kinematics.check.clearance import ObstacleIndex, RouteChecker
    from kinematics.files.floorplan import FloorPlan
    from kinematics.files.project import Chassis, Route, Waypoint
    from kinematics.plan.planner import plan_route

    rng = np.random.default_rng(4)
    obs = tuple(Obstacle(((x, y), (x + 0.8, y), (x + 0.8, y + 0.8), (x, y + 0.8)))
                for x, y in rng.uniform(0, 60, (200, 2)))
    idx = ObstacleIndex(FloorPlan("t", (), obs, ()))
    pts = [(10 * (k % 6) + (k // 6) % 2 * 0.3, 1.2 * (k // 6)) for k in range(300)]
    pts = [(x if (k // 6) % 2 == 0 else 55 - x, y) for k, (x, y) in enumerate(pts)]
    route = Route("long", tuple(Waypoint(x, y) for x, y in pts), turn_radius_m=0.0)
    ch = Chassis(track_m=0.5)
    plan = plan_route(route, ch)
    fast = RouteChecker(ch, idx).check(plan, route=route)
    monkeypatch.setattr(W, "DENSE_PAIRS", 10 ** 12)
    dense = RouteChecker(ch, idx).check(plan, route=route)
    got = [v.to_dict() for v in fast.violations if v.kind == "waypoint_blocked"]
    assert got == [v.to_dict() for v in dense.violations if v.kind == "waypoint_blocked"]
    assert len(got) > 0


def _patrol_loop(n: int, corners: int, back_and_forth: bool = False):
    """A patrol driven over and over round ``corners`` places (or back and forth between two,
    retracing the same line exactly): a route whose waypoints each have segments of every lap
    round them. Invented scene."""
    from kinematics.files.floorplan import FloorPlan
    from kinematics.files.project import Chassis, Route, Waypoint

    if back_and_forth:
        pts = [(2.0, 5.0) if k % 2 == 0 else (8.0, 5.0) for k in range(n)]
    else:
        pts = [(5 + 3 * math.cos(2 * math.pi * k / corners) + 0.01 * k / n,
                5 + 3 * math.sin(2 * math.pi * k / corners)) for k in range(n)]
    obs = (Obstacle(((4.5, 4.5), (5.5, 4.5), (5.5, 5.5), (4.5, 5.5)), "pillar"),
           Obstacle(((7.7, 4.7), (8.5, 4.7), (8.5, 5.3), (7.7, 5.3)), "post"),
           Obstacle(((1.7, 4.9), (2.1, 4.9), (2.1, 5.6), (1.7, 5.6)), "bin"))
    ch = Chassis(name="patrol cart", footprint=((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3),
                                                (-0.3, 0.3)), margin_m=0.05, track_m=0.5)
    route = Route("loop", tuple(Waypoint(x, y) for x, y in pts), turn_radius_m=0.6)
    return route, ch, FloorPlan("patrol", (), obs, ())


@pytest.mark.parametrize("corners,back", [(8, False), (3, False), (2, True)])
def test_a_route_passing_one_place_many_times_answers_as_the_pair_search(corners, back,
                                                                         monkeypatch):
    # Source: project rule (a faster search never changes a verdict): a patrol loop driven
    # over and over, where every waypoint has a segment of every lap round it, is searched
    # in bulk (k-d tree) and must give exactly the pair-by-pair search's violations, ties
    # included (back and forth retraces the same poses exactly).
    from kinematics.check import waypoints as W
    from kinematics.check.clearance import ObstacleIndex, RouteChecker
    from kinematics.plan.planner import plan_route

    route, ch, fp = _patrol_loop(240, corners, back)
    idx = ObstacleIndex(fp)
    plan = plan_route(route, ch)
    monkeypatch.setattr(W, "BULK_PAIRS", 2_000)
    grid = RouteChecker(ch, idx).waypoints.segment_grid
    assert W.candidate_pairs(np.array([(w.x, w.y) for w in route.waypoints]),
                             np.array([grid(s)[2] for s in plan.segments]),
                             limit=W.BULK_PAIRS) is None
    bulk = RouteChecker(ch, idx).check(plan, route=route)
    monkeypatch.setattr(W, "BULK_PAIRS", 10 ** 12)
    pairs = RouteChecker(ch, idx).check(plan, route=route)
    got = [v.to_dict() for v in bulk.violations]
    assert got == [v.to_dict() for v in pairs.violations]
    assert any(v["kind"] == "waypoint_blocked" for v in got) or back


def test_nearest_in_bulk_is_the_first_nearest_in_route_order():
    # Source: the definition (the nearest grid pose, the first in route order among equal
    # distances), by brute force over every pose in plain Python.
    from kinematics.check import waypoints as W

    rng = np.random.default_rng(3)
    grids = []
    for _ in range(40):
        poses = np.round(rng.uniform(0, 5, (int(rng.integers(1, 30)), 3)), 1)  # many ties
        grids.append((None, poses, None))
    grids[7] = (None, grids[3][1].copy(), None)  # a segment retraced exactly
    xy = np.round(rng.uniform(-1, 6, (200, 2)), 1)
    best, found = W.nearest_in_bulk(xy, grids)
    for k, (wx, wy) in enumerate(xy.tolist()):
        ref = (math.inf, None)
        for i, (_, poses, _) in enumerate(grids):
            for r, (px, py, _) in enumerate(poses.tolist()):
                d = float(np.hypot(px - wx, py - wy))
                if d < ref[0]:
                    ref = (d, (i, r))
        assert (best[k], found[k]) == ref


def test_waypoint_check_of_a_long_patrol_loop_stays_linear_in_memory():
    # Source: project rule (issue 14: memory linear in the waypoints): 1,000 waypoints round
    # eight places (each with ~125 laps' segments round it) were ~280,000 pairs searched one
    # by one with a cache entry each; the budget is the work, measured by tracemalloc
    # (numpy reports its buffers to it), not a timer.
    import tracemalloc

    from kinematics.check.clearance import ObstacleIndex, RouteChecker
    from kinematics.motion.segments import segment_stations
    from kinematics.plan.planner import plan_route

    route, ch, fp = _patrol_loop(1000, 8)
    plan = plan_route(route, ch)
    segs = tuple(plan.segments)
    wc = RouteChecker(ch, ObstacleIndex(fp)).waypoints
    tracemalloc.start()
    wc.violations(segs, segment_stations(segs), route.waypoints)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert peak < 64e6
    assert len(wc._wp_near) == 0  # nothing cached pair by pair


def test_a_drag_step_redraws_only_what_moved(qtbot, tmp_path, monkeypatch):
    # Source: project rule (issue 14: a drag step's work is proportional to what moved):
    # outline items are made only for segments the move changed, the others stay the very
    # same items; the band is painted plain while the drag is live and antialiased after.
    from PySide6.QtCore import QSettings

    from app.document import Document
    from app.main_window import MainWindow

    # The drag stays live until finish_drag: with the 150 ms rest a loaded machine could let
    # the rest timer fire inside processEvents below and end the live state by the clock.
    monkeypatch.setattr(Document, "LIVE_RESULTS_MS", 10 ** 8)
    w = MainWindow(settings=QSettings(str(tmp_path / "s.ini"), QSettings.Format.IniFormat),
                   autosave_dir=tmp_path / "autosave")
    qtbot.addWidget(w)
    try:
        _drag_step_checks(w)
    finally:
        w.doc.undo_stack.setClean()  # no "save changes?" question when the window closes
        w.close()


def _drag_step_checks(w) -> None:
    from PySide6.QtWidgets import QApplication

    from app.document import new_drag_token
    from app.main_window import DEMO_PROJECT

    w.resize(1000, 700)
    assert w.open_project_file(DEMO_PROJECT)
    w.show()
    QApplication.processEvents()
    doc, c = w.doc, w.canvas
    names = doc.route_names()
    ri = max(range(len(names)), key=lambda i: len(doc.project.routes[i].waypoints))
    doc.set_current_route(ri)
    QApplication.processEvents()
    before_segs = set(doc.plan(names[ri]).segments)
    before = dict(c._outline_items)
    wi = len(doc.route().waypoints) // 2
    wp = doc.route().waypoints[wi]
    doc.move_waypoint(ri, wi, wp.x + 0.2, wp.y + 0.1, drag=new_drag_token())
    QApplication.processEvents()
    c.plot.viewport().repaint()
    after_segs = set(doc.plan(names[ri]).segments)
    moved = {s for s in after_segs - before_segs if s.length_m > 0.0}
    assert moved and len(moved) < len([s for s in after_segs if s.length_m > 0.0])
    kept = [k for k in c._outline_items if k in before]
    assert all(c._outline_items[k] is before[k] for k in kept)
    assert {k[0] for k in c._outline_items if k not in before} == moved
    assert doc.results_pending and c.band_item.painted_rough
    doc.finish_drag()
    QApplication.processEvents()
    c.plot.viewport().repaint()
    assert not c.band_item.painted_rough
