"""Held-out style check of the whole promise: random scenes of DXF round pillars (drawn
directly and as scaled, rotated block inserts, in mm and m drawings), random footprints
(some not holding their reference point) and routes planned by the planner for several
drives, checked through the real reader and checker; a dense-pose oracle on the TRUE circles
must find no reported clearance above the truth, and no "clear" verdict on a route that truly
comes closer than its margin.

Source: shapely distance from the bare footprint, placed at 2 mm steps along the path (and
every 0.25 degree of a pivot; refined to 0.01 mm around each least), to the true circles:
|p - c| - r (textbook geometry). The placements come from the segments' closed form
(kinematics.motion.segments), which tests/test_segments.py and tests/test_motion.py check
against scipy's ODE solver.
Fixed seed, deterministic; a few seconds.
"""

from __future__ import annotations

import math
import random

import ezdxf
import numpy as np
import shapely

from kinematics.check.clearance import ObstacleIndex, check_route
from kinematics.files.dxf_import import import_dxf
from kinematics.files.project import Chassis, Route, Waypoint
from kinematics.plan.planner import plan_route

#: The promise under test: a reported clearance is never above the truth (README, check).
OVER_M = 0.0005  # what the issue calls an over-report; the assertions below are stricter
TOL_M = 0.002    # and never more than the stated 2 mm (band plus flattening) below it


def _placed_min(seg, fr: np.ndarray, ring: np.ndarray, centres, cr) -> np.ndarray:
    """True clearance of the footprint placed at fractions ``fr`` of ``seg``, per placement."""
    poses = seg.poses_at_fraction(fr)
    c, si = np.cos(poses[:, 2])[:, None], np.sin(poses[:, 2])[:, None]
    xs = poses[:, :1] + c * ring[:, 0] - si * ring[:, 1]
    ys = poses[:, 1:2] + si * ring[:, 0] + c * ring[:, 1]
    polys = shapely.polygons(np.stack([xs, ys], axis=-1))
    return (shapely.distance(polys[:, None], centres[None, :]) - cr[None, :]).min(axis=1)


def _oracle(segs, footprint, circles) -> float:
    """Least true clearance of the bare footprint along ``segs``: placements every 2 mm (a
    pivot every 0.25 degree), then every 0.01 mm around each segment's least."""
    fp = np.asarray(footprint, dtype=float)
    ring = np.vstack([fp, fp[:1]])
    cx, cy, cr = (np.array(v) for v in zip(*circles))
    centres = shapely.points(cx, cy)
    best = math.inf
    for s in segs:
        if s.kind == "pivot":
            n = max(2, math.ceil(abs(math.degrees(s.turn_rad)) / 0.25) + 1)
        else:
            n = max(2, math.ceil(s.length_m / 0.002) + 1)
        fr = np.linspace(0.0, 1.0, n)
        d = _placed_min(s, fr, ring, centres, cr)
        k = int(np.argmin(d))
        fine = np.linspace(fr[max(k - 1, 0)], fr[min(k + 1, n - 1)], 401)
        best = min(best, float(d.min()), float(_placed_min(s, fine, ring, centres, cr).min()))
    return best


def _scene(rng: random.Random, tmp_path, k: int):
    """Pillars near a sketched route; a DXF drawing of them; the route and its chassis."""
    mm = k % 2 == 0
    scale = 1000.0 if mm else 1.0
    # The route: three or four waypoints wandering to the right.
    pts = [(0.0, 0.0)]
    for _ in range(rng.choice((2, 3))):
        x, y = pts[-1]
        pts.append((x + rng.uniform(2.5, 4.0), y + rng.uniform(-2.0, 2.0)))
    kind = ("differential", "differential_fillet", "ackermann", "mecanum")[k % 4]
    hw = rng.uniform(0.2, 0.4)
    if k % 3:
        x0, x1 = -rng.uniform(0.2, 0.5), rng.uniform(0.3, 0.9)
    else:  # fork-ahead: the outline does not hold its reference point
        x0 = rng.uniform(0.1, 0.3)
        x1 = x0 + rng.uniform(0.5, 1.0)
    footprint = ((x0, -hw), (x1, -hw), (x1 + 0.1, 0.0), (x1, hw), (x0, hw))
    if kind == "ackermann":
        chassis = Chassis(drive="ackermann", footprint=footprint, margin_m=0.05,
                          track_m=2 * hw - 0.05, wheelbase_m=0.6, max_steer_deg=35.0)
        route = Route("r", tuple(Waypoint(x, y, 0.0 if i == 0 else None)
                                 for i, (x, y) in enumerate(pts)), turn_radius_m=0.0)
    elif kind == "mecanum":
        chassis = Chassis(drive="mecanum", footprint=footprint, margin_m=0.05,
                          track_m=2 * hw - 0.05, wheelbase_m=0.5)
        route = Route("r", tuple(Waypoint(x, y, rng.uniform(-40, 40)) for x, y in pts))
    else:
        chassis = Chassis(footprint=footprint, margin_m=0.05, track_m=2 * hw - 0.05)
        r = 0.0 if kind == "differential" else rng.uniform(0.6, 1.5)
        route = Route("r", tuple(Waypoint(x, y) for x, y in pts), turn_radius_m=r,
                      extra={"allow_smaller_radius": True})
    plan = plan_route(route, chassis)
    # Pillars scattered along the path, a few of them close to it.
    path = plan.segments
    stations = np.linspace(0.0, sum(s.length_m for s in path), 9)[1:-1]
    from kinematics.motion.segments import poses_along

    at = poses_along(path, stations)
    circles = []
    for x, y, h in at[rng.sample(range(len(at)), 5)]:
        side = rng.choice((-1.0, 1.0))
        off = hw + rng.uniform(0.05, 0.9)
        r = rng.uniform(0.03, 0.35)
        circles.append((x - side * math.sin(h) * (off + r), y + side * math.cos(h) * (off + r),
                        r))
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4 if mm else 6
    doc.layers.add("FIXTURES")
    blk = doc.blocks.new("PILLAR")
    blk.add_circle((0.0, 0.0), 0.5 * scale, dxfattribs={"layer": "0"})
    msp = doc.modelspace()
    for j, (x, y, r) in enumerate(circles):
        if j % 2:
            msp.add_circle((x * scale, y * scale), r * scale, dxfattribs={"layer": "FIXTURES"})
        else:
            msp.add_blockref("PILLAR", (x * scale, y * scale),
                             dxfattribs={"layer": "FIXTURES", "xscale": 2 * r,
                                         "yscale": 2 * r, "rotation": rng.uniform(0, 360)})
    p = tmp_path / f"scene{k}.dxf"
    doc.saveas(p)
    return import_dxf(p), plan, route, chassis, circles


def test_no_reported_clearance_above_the_dense_pose_truth(tmp_path):
    rng = random.Random(1515)
    compared = short_scenes = 0
    worst_over = -math.inf
    for k in range(24):
        fp, plan, route, chassis, circles = _scene(rng, tmp_path, k)
        chk = check_route(plan, chassis, ObstacleIndex(fp), route=route)
        true = _oracle(plan.segments, chassis.footprint, circles)
        assert chk.min_clearance_m is not None
        worst_over = max(worst_over, chk.min_clearance_m - true)
        # Never above the truth (not even by the 0.5 mm; we hold it to 1 um).
        assert chk.min_clearance_m <= true + 1e-6, (k, chk.min_clearance_m, true)
        assert chk.min_clearance_m <= true + OVER_M
        if true > 0.0:
            # Conservative by at most the stated tolerance (sweep band plus flattening).
            assert chk.min_clearance_m >= true - TOL_M - 1e-7, (k, chk.min_clearance_m, true)
            compared += 1
        # No false "clear": a route truly closer than its margin is reported.
        kinds = {v.kind for v in chk.violations}
        if true < chassis.margin_m - 1e-6:
            short_scenes += 1
            assert kinds & {"collision", "clearance"}, (k, true, kinds)
        if true > chassis.margin_m + TOL_M:
            assert not kinds & {"collision", "clearance"}, (k, true, kinds)
    # Both sides of the margin are exercised by this seed.
    assert compared >= 15 and short_scenes >= 3, (compared, short_scenes)
    assert worst_over <= 1e-6
