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
