"""Inverse sizing: widest and longest footprint, door widths needed, progress and cancel."""

from __future__ import annotations

import math

import pytest

from kinematics.check.clearance import ObstacleIndex, check_route
from kinematics.check.sizing import (
    RESOLUTION_M,
    SizingCancelled,
    attach_sizing,
    door_widths_needed,
    longest_footprint,
    widest_footprint,
)
from kinematics.files.floorplan import Door, FloorPlan, Wall
from kinematics.files.project import Chassis, Project
from kinematics.motion.segments import line, pivot

TOL = 0.002
MARGIN = 0.05
RECT = ((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3))
CHASSIS = Chassis(footprint=RECT, margin_m=MARGIN, track_m=0.5)


def corridor(width_m: float) -> FloorPlan:
    """Two wall faces at y = +-width/2 (walls 0.1 thick), 20 m long."""
    h = width_m / 2.0 + 0.05
    return FloorPlan(walls=(Wall(((-5, h), (25, h)), 0.1), Wall(((-5, -h), (25, -h)), 0.1)))


def test_widest_footprint_in_a_corridor():
    # Source: common plane geometry - a body centred in a corridor of width W keeps the margin
    # m on both sides while its width is at most W - 2 m.
    width = 1.2
    idx = ObstacleIndex(corridor(width))
    seen: list[float] = []
    res = widest_footprint([line((0, 0, 0), 10.0)], CHASSIS, idx, TOL, progress=seen.append)
    best = width - 2 * MARGIN
    assert best - RESOLUTION_M - 2 * TOL <= res.max_m <= best + 1e-9
    assert res.current_m == pytest.approx(0.6)
    assert seen and seen[-1] == 1.0 and all(0.0 <= f <= 1.0 for f in seen)
    assert seen == sorted(seen)


def test_longest_footprint_turning_on_the_spot():
    # Source: common plane geometry (Pythagoras) - turning on the spot sweeps the disc of the
    # farthest corner; a body of half-width b and length L (reference point mid-length) clears
    # a square room of half-size H by the margin while (L/2)^2 + b^2 <= (H - m)^2.
    fp = ((-0.4, -0.3), (0.4, -0.3), (0.4, 0.3), (-0.4, 0.3))
    half = 1.5  # wall faces at +-1.5 m
    t = 0.1
    walls = (Wall(((-half - t / 2, -half - t / 2), (half + t / 2, -half - t / 2),
                   (half + t / 2, half + t / 2), (-half - t / 2, half + t / 2),
                   (-half - t / 2, -half - t / 2)), t),)
    idx = ObstacleIndex(FloorPlan(walls=walls))
    chassis = Chassis(footprint=fp, margin_m=MARGIN)
    res = longest_footprint([pivot((0, 0, 0), 2 * math.pi)], chassis, idx, TOL)
    best = 2 * math.sqrt((half - MARGIN) ** 2 - 0.3 ** 2)
    assert best - RESOLUTION_M - 2 * TOL <= res.max_m <= best + 1e-9


def test_door_width_needed():
    # Source: common plane geometry - driving straight through the middle of a door, a body of
    # width w keeps the margin m from both jambs when the opening is at least w + 2 m.
    for opening in (0.5, 0.9):
        h = opening / 2
        fp = FloorPlan(walls=(Wall(((-5, 2), (-h, 2)), 0.15), Wall(((h, 2), (5, 2)), 0.15)),
                       doors=(Door((-h, 2.0), (h, 2.0), "D-7"),))
        idx = ObstacleIndex(fp)
        segs = [line((0, 0, math.pi / 2), 4.0)]
        (dw,) = door_widths_needed(segs, CHASSIS, idx, TOL)
        need = 0.6 + 2 * MARGIN
        assert dw.label == "D-7" and dw.width_m == pytest.approx(opening)
        assert need - 1e-9 <= dw.width_needed_m <= need + 2 * TOL + RESOLUTION_M


def test_cancel_stops_the_search():
    # Source: common practice - a long search in the window must stop when asked.
    idx = ObstacleIndex(corridor(1.2))
    calls = []

    def cancel() -> bool:
        calls.append(1)
        return len(calls) > 3

    with pytest.raises(SizingCancelled):
        widest_footprint([line((0, 0, 0), 10.0)], CHASSIS, idx, TOL, cancel=cancel)


def test_sizing_goes_into_the_check_json():
    # Source: shared/contract.md - extra keys may be added to the check route object.
    idx = ObstacleIndex(corridor(1.0))
    segs = [line((0, 0, 0), 5.0)]
    chk = check_route(segs, CHASSIS, idx)
    project = Project(floorplan=idx.floorplan, chassis=CHASSIS)
    attach_sizing(chk, segs, project, idx, TOL)
    d = chk.to_dict()
    assert d["sizing"]["widest"]["max_m"] == pytest.approx(0.9, abs=RESOLUTION_M + 2 * TOL)
    assert d["sizing"]["doors"] == []


def _door_plan(width_m: float, t: float) -> FloorPlan:
    """A wall along y = 2 (thickness ``t``) with a door of ``width_m`` centred on x = 0."""
    h = width_m / 2
    return FloorPlan(walls=(Wall(((-6, 2), (-h, 2)), t), Wall(((h, 2), (6, 2)), t)),
                     doors=(Door((-h, 2.0), (h, 2.0), "D-9"),))


def _through_door(theta: float) -> list:
    """A straight run through the door's midpoint at ``theta`` from the door's normal."""
    hd = math.pi / 2 - theta
    return [line((-3.0 * math.cos(hd), 2.0 - 3.0 * math.sin(hd), hd), 6.0)]


def _real_flip(segs: list, t: float) -> float:
    """The door width at which the real check (the plan rebuilt with the door at that width)
    starts keeping the margin, by bisection to 0.01 mm."""
    def ok(w: float) -> bool:
        return check_route(segs, CHASSIS, ObstacleIndex(_door_plan(w, t)),
                           TOL).min_clearance_m >= MARGIN

    lo, hi = 0.3, 3.0
    assert ok(hi) and not ok(lo)
    while hi - lo > 1e-5:
        mid = 0.5 * (lo + hi)
        lo, hi = (lo, mid) if ok(mid) else (mid, hi)
    return hi


@pytest.mark.parametrize("theta_deg", [0.0, 30.0, 45.0, 60.0])
def test_oblique_door_width_needed_answers_the_real_check_whatever_the_width(theta_deg):
    # A straight band of half-width b crossing a wall slot of depth t at angle theta from
    # the slot's normal keeps the margin m from both jamb corners while the opening is at
    # least 2 (b + m) / cos(theta) + t tan(theta) (at 30 deg with t = 0.1 that equals
    # 2 (b + m + t / 4) / cos(theta): 0.866 m for b = 0.3, m = 0.05).
    # Source: textbook plane geometry (distance from a point to a line; right triangle).
    th = math.radians(theta_deg)
    t = 0.1
    formula = 2 * (0.3 + MARGIN) / math.cos(th) + t * math.tan(th)
    segs = _through_door(th)
    real = _real_flip(segs, t)
    # The swept band exceeds the true one by at most the tolerance on each side.
    assert formula - 1e-6 <= real <= formula + 2 * TOL / math.cos(th) + 1e-4
    for w0 in (0.5, 0.8, 1.0, 1.5, 2.2):
        (dw,) = door_widths_needed(segs, CHASSIS, ObstacleIndex(_door_plan(w0, t)), TOL)
        assert dw.width_m == pytest.approx(w0)
        # Within the promised 1 mm of the real check, never below it.
        assert real - 1e-5 <= dw.width_needed_m <= real + RESOLUTION_M + 1e-5, w0


@pytest.mark.parametrize("door_y", [2.0, 2.04])
def test_jamb_blocks_of_a_narrowed_door_are_no_deeper_than_the_wall(door_y):
    # Narrowing a door must give a wall with a narrower gap: the added blocks lie between the
    # wall's two faces (y = 2 -+ t/2), also where the door line is drawn off the centreline.
    # Source: common practice (a door opening is a gap in the wall it sits in)
    from kinematics.check.sizing import door_solid_at_width

    t = 0.1
    fp = FloorPlan(walls=(Wall(((-6, 2), (-0.5, 2)), t), Wall(((0.5, 2), (6, 2)), t)),
                   doors=(Door((-0.5, door_y), (0.5, door_y), "D"),))
    idx = ObstacleIndex(fp)
    import shapely

    base = shapely.union_all(idx.geometries)
    narrowed = door_solid_at_width(fp.doors[0], base, 0.4)
    added = narrowed.difference(base)
    assert added.area == pytest.approx(2 * 0.3 * t, rel=1e-6)
    _x0, y0, _x1, y1 = added.bounds
    assert 2 - t / 2 - 1e-9 <= y0 and y1 <= 2 + t / 2 + 1e-9
    # The gap left is 0.4 m wide, centred on the door's midpoint.
    gap = shapely.box(-0.2, 1.9, 0.2, 2.1).difference(narrowed)
    assert gap.area == pytest.approx(0.4 * 0.2, rel=1e-6)
    assert shapely.box(-0.21, 1.9, 0.21, 2.1).intersection(narrowed).area > 0.0
