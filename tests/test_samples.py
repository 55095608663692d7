"""The bundled sample projects: they load, their waypoints are free, doors are as documented,
and each route is clear or violating as the README says (by an independent sampled sweep).
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np
import pytest
import shapely
from shapely.geometry import Point

from kinematics.files.floorplan import solids
from kinematics.files.loader import load_floorplan
from kinematics.files.project import DRIVES, load_project
from kinematics.plan.planner import plan_route

SAMPLES = Path(__file__).resolve().parent.parent / "sample_floorplans"
PROJECTS = sorted(SAMPLES.glob("*.swathe.json"))
# The one route the demo is meant to fail; every other sample route is meant to be clear.
VIOLATING = {("demo.swathe.json", "corridor-to-sluice")}


def test_there_are_samples_for_every_drive_and_a_demo():
    assert (SAMPLES / "demo.swathe.json").exists()
    drives = {load_project(p).chassis.drive for p in PROJECTS}
    assert drives == set(DRIVES)
    demo = load_project(SAMPLES / "demo.swathe.json")
    assert demo.chassis.drive == "differential"
    assert "pharmacy-to-ward" in [r.name for r in demo.routes]  # used in the top README
    assert len(demo.routes) >= 3


@pytest.mark.parametrize("path", PROJECTS, ids=lambda p: p.name)
def test_project_loads_and_waypoints_are_in_free_space(path):
    proj = load_project(path)
    assert proj.routes
    geoms = [s.geometry for s in solids(proj.floorplan)]
    tree = shapely.STRtree(geoms)
    for rt in proj.routes:
        for i, w in enumerate(rt.waypoints):
            # Source: shapely STRtree.query with the "intersects" predicate.
            hits = tree.query(Point(w.x, w.y), predicate="intersects")
            assert hits.size == 0, f"{path.name}: {rt.name} waypoint {i} is inside a solid"


def _sampled_clearance(proj, rt, ds=0.005, dth=0.25 * math.pi / 180):
    """Least distance from the footprint to any solid over poses sampled along the plan.

    Between two samples no footprint point moves further than ``ds + R dth`` (R the
    footprint's largest radius from the reference point), so the true least distance is at
    least the sampled one minus half that (triangle inequality); and it is at most the
    sampled one.
    """
    plan = plan_route(rt, proj.chassis)
    assert not plan.issues, [i.message for i in plan.issues]
    fp = np.array(proj.chassis.footprint, float)
    radius = float(np.max(np.hypot(fp[:, 0], fp[:, 1])))
    poses = []
    for seg in plan.segments:
        n = max(2, math.ceil(seg.length_m / ds), math.ceil(abs(seg.turn_rad) / dth))
        poses.append(seg.poses_at_fraction(np.linspace(0.0, 1.0, n + 1)))
    P = np.vstack(poses)
    c, s = np.cos(P[:, 2])[:, None], np.sin(P[:, 2])[:, None]
    X = P[:, 0:1] + c * fp[:, 0] - s * fp[:, 1]
    Y = P[:, 1:2] + s * fp[:, 0] + c * fp[:, 1]
    bodies = shapely.polygons(np.stack([X, Y], axis=-1))
    solid = shapely.union_all([q.geometry for q in solids(proj.floorplan)])
    # Source: shapely.distance (vectorised) between each placed footprint and the solids.
    d = float(np.min(shapely.distance(bodies, solid)))
    return d, (ds + radius * dth) / 2.0


@pytest.mark.parametrize("path", PROJECTS, ids=lambda p: p.name)
def test_routes_are_clear_or_violating_as_documented(path):
    proj = load_project(path)
    margin = proj.chassis.margin_m
    for rt in proj.routes:
        sampled, slack = _sampled_clearance(proj, rt)
        if (path.name, rt.name) in VIOLATING:
            assert sampled < margin, f"{rt.name} was meant to violate the margin"
        else:
            assert sampled - slack >= margin, f"{rt.name}: clearance {sampled:.4f} m"


def test_demo_violation_is_the_sluice_door():
    proj = load_project(SAMPLES / "demo.swathe.json")
    sluice = {d.label: d for d in proj.floorplan.doors}["sluice"]
    width = float(np.ptp([p[1] for p in proj.chassis.footprint]))
    # The cart centred in the door leaves (door - cart) / 2 a side: 0.04 m < 0.05 m margin.
    assert (sluice.width_m - width) / 2 == pytest.approx(0.04)
    assert (sluice.width_m - width) / 2 < proj.chassis.margin_m


def _readme_doors() -> list[tuple[str, str, float]]:
    text = (SAMPLES / "README.md").read_text(encoding="utf-8")
    section = text.split("## Doors", 1)[1]
    rows = re.findall(r"^\|\s*(\w+)\s*\|\s*([^|]+?)\s*\|\s*([0-9.]+)\s*\|", section, re.M)
    return [(plan, label, float(w)) for plan, label, w in rows]


def test_door_widths_match_the_readme():
    rows = _readme_doors()
    assert len(rows) >= 20
    by_plan: dict[str, dict[str, float]] = {}
    for plan, label, width in rows:
        by_plan.setdefault(plan, {})[label] = width
    for plan, doors in by_plan.items():
        fp = load_floorplan(SAMPLES / f"{plan}.floor.json")
        actual = {d.label: d.width_m for d in fp.doors}
        assert set(actual) == set(doors), plan  # every door documented, none invented
        for label, width in doors.items():
            assert actual[label] == pytest.approx(width, abs=1e-9), (plan, label)


def test_store_door_is_the_ada_minimum():
    # Source: 2010 ADA Standards for Accessible Design 404.2.3: clear width at least 32 in
    # (from memory); 32 in = 0.8128 m, the README rounds it to 815 mm.
    fp = load_floorplan(SAMPLES / "clinic.floor.json")
    store = {d.label: d for d in fp.doors}["store"]
    assert store.width_m >= 32 * 0.0254


def test_depot_aisle_widths_match_the_readme():
    fp = load_floorplan(SAMPLES / "depot.floor.json")
    racks = sorted((min(x for x, _ in o.points), max(x for x, _ in o.points))
                   for o in fp.obstacles if o.label.startswith("racking"))
    gaps = {round(b0 - a1, 9) for (_, a1), (b0, _) in zip(racks, racks[1:])}
    text = (SAMPLES / "README.md").read_text(encoding="utf-8")
    stated = {float(w) for w in re.findall(r"aisle \d \| [0-9-]+ \| [0-9.-]+ \| ([0-9.]+) \|",
                                           text)}
    # The aisles between rows are the 3.2 m and 1.8 m the README states, plus the main aisle.
    assert stated == {3.2, 1.8}
    assert stated <= gaps and gaps - stated == {5.2}


def test_clinic_corridor_is_eight_feet():
    # 8 ft = 2.4384 m (from memory, a typical hospital corridor); the plan uses 2.44 m.
    fp = load_floorplan(SAMPLES / "clinic.floor.json")
    walls = [s.geometry for s in solids(fp) if s.kind == "wall"]
    union = shapely.union_all(walls)
    # Source: shapely distance from the corridor centre line to the walls either side.
    probe = [Point(x, 10.0) for x in (5.0, 15.0, 25.0)]
    for p in probe:
        assert 2 * union.distance(p) == pytest.approx(2.44, abs=1e-9)


def test_dxf_test_room_matches_the_json_one():
    a = load_project(SAMPLES / "test_room_dxf.swathe.json").floorplan
    b = load_floorplan(SAMPLES / "test_room.floor.json")
    ua = shapely.union_all([s.geometry for s in solids(a)])
    ub = shapely.union_all([s.geometry for s in solids(b)])
    # Source: shapely symmetric_difference area; the same plan drawn in millimetres.
    assert ua.symmetric_difference(ub).area == pytest.approx(0.0, abs=1e-9)
    assert [(d.label, round(d.width_m, 9)) for d in a.doors] == [
        (d.label, round(d.width_m, 9)) for d in b.doors]
