"""The clothoid sweep's stand-in arcs (kinematics/check/sweep.py): every footprint point of the
true motion stays within the stated deviation of its place on the chunk's stand-in arc."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from kinematics.check import sweep
from kinematics.motion.segments import arc, clothoid

FOOT = np.array([(-0.3, -0.25), (0.9, -0.25), (0.9, 0.25), (0.1, 0.1), (-0.3, 0.25)])


def _quad_pose(start, k0, k1, length, d, s):
    """Pose after distance s by scipy.integrate.quad of the heading th0 + d (k0 u + c u^2 / 2)."""
    c = (k1 - k0) / length

    def th(u):
        return start[2] + d * (k0 * u + 0.5 * c * u * u)

    x = start[0] + d * quad(lambda u: math.cos(th(u)), 0.0, s, epsabs=1e-13)[0]
    y = start[1] + d * quad(lambda u: math.sin(th(u)), 0.0, s, epsabs=1e-13)[0]
    return np.array([x, y, th(s)])


def _placed(pose, pts):
    c, s = math.cos(pose[2]), math.sin(pose[2])
    return np.stack([pose[0] + c * pts[:, 0] - s * pts[:, 1],
                     pose[1] + s * pts[:, 0] + c * pts[:, 1]], axis=-1)


@pytest.mark.parametrize("start,k0,k1,length,d", [
    ((0.0, 0.0, 0.0), 0.0, 1.2, 1.5, 1),
    ((1.0, 0.5, 0.8), 0.9, -0.4, 2.0, 1),
    ((0.0, 0.0, 2.0), 0.0, -0.8, 1.2, -1),
    ((0.3, -0.2, -1.0), 0.4, 1.6, 0.7, -1),
])
def test_stand_in_arcs_stay_within_the_stated_deviation(start, k0, k1, length, d):
    # Source: the clothoid's poses by scipy.integrate.quad of cos / sin of its heading (an
    # Euler spiral's definition, DLMF 7.2); the bound dev = |sigma| l^2 (l + r_far) / 16 of the
    # module docstring must hold at every station of every chunk for every footprint point
    # (here the footprint's vertices and points along its edges).
    seg = clothoid(start, k0, k1, length, d)
    fp = sweep.prepare_footprint(FOOT)
    m, dev = sweep.clothoid_chunks(seg, fp.r_far_m, 0.002)
    assert dev <= 0.3 * 0.002 + 1e-15
    # the fewest chunks: one fewer would break the share
    assert m == 1 or sweep.clothoid_deviation(seg, fp.r_far_m, length / (m - 1)) > 0.3 * 0.002
    le = length / m
    off = sweep.clothoid_heading_offset(seg, le)
    edge = np.concatenate([FOOT + t * (np.roll(FOOT, -1, axis=0) - FOOT)
                           for t in np.linspace(0.0, 1.0, 5, endpoint=False)])
    worst = 0.0
    for k in range(m):
        p0 = _quad_pose(start, k0, k1, length, d, k * le)
        km = k0 + (k1 - k0) * (k + 0.5) / m
        stand = arc((p0[0], p0[1], p0[2] + off), 1.0 / abs(km), d * le * km, d)
        for w in np.linspace(0.0, le, 9):
            true = _quad_pose(start, k0, k1, length, d, k * le + w)
            sp = stand.poses_at(np.array([w]))[0]
            gap = np.hypot(*(_placed(true, edge) - _placed(sp, edge)).T).max()
            worst = max(worst, float(gap))
    assert worst <= dev
    assert worst >= 0.5 * dev  # and the bound is not loose by more than 2x


@pytest.mark.parametrize("wall_x,d", [(1.95, 1), (1.7, 1), (1.8, -1)])
def test_hit_on_a_clothoid_starts_where_dense_placements_first_break_the_margin(wall_x, d):
    # Source: the dense-pose oracle - the footprint placed every 1 mm along the clothoid
    # (poses checked against scipy.integrate.quad above); the check's reported start of the
    # margin breach must lie within the tolerance of the first placement that breaks it
    # (it may be earlier by the sweep between placements, never later by more than 1 mm).
    import shapely

    from kinematics.check.clearance import ObstacleIndex, check_route
    from kinematics.files.floorplan import FloorPlan, Wall
    from kinematics.files.project import Chassis

    rect = [(-0.3, -0.25), (0.6, -0.25), (0.6, 0.25), (-0.3, 0.25)]
    chassis = Chassis(name="t", footprint=rect, margin_m=0.05, track_m=0.4)
    seg = clothoid((0.0, 0.0, 0.0 if d > 0 else math.pi), 0.0, 1.2, 1.6, d)
    wall = Wall(((wall_x, -3.0), (wall_x, 3.0)), 0.1)
    idx = ObstacleIndex(FloorPlan(walls=(wall,)))
    chk = check_route([seg], chassis, idx, route_name="r")
    assert chk.violations
    v = chk.violations[0]
    st = np.arange(0.0, seg.length_m + 1e-12, 0.001)
    solid = shapely.box(wall_x - 0.05, -3.0, wall_x + 0.05, 3.0)
    dist = shapely.distance(sweep.placed_footprints(rect, seg.poses_at(st)), solid)
    # a collision's stretch starts where the body first touches, a clearance one's where
    # the margin is first broken
    bad = dist <= 0.0 if v.kind == "collision" else dist < 0.05
    assert bad.any()
    first = st[int(np.argmax(bad))]
    assert first - 0.002 - 1e-9 <= v.station_m <= first + 0.001 + 1e-9
