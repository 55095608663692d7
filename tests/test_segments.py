"""Segments: geometry and continuity of lines, arcs and pivots."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from kinematics.motion import segments as sg

finite = dict(allow_nan=False, allow_infinity=False)


def test_arc_centre_and_radius():
    # Source: common plane geometry: a left turn of radius R from heading +x has its centre
    # R to the left of the start; every point of the arc is R from it.
    a = sg.arc((1.0, 2.0, 0.0), 3.0, math.pi / 3)
    cx, cy = a.arc_centre()
    assert (cx, cy) == pytest.approx((1.0, 5.0))
    pts = a.poses_at(np.linspace(0, a.length_m, 50))
    np.testing.assert_allclose(np.hypot(pts[:, 0] - cx, pts[:, 1] - cy), 3.0, atol=1e-12)
    assert a.radius_m == pytest.approx(3.0)
    assert a.length_m == pytest.approx(math.pi)


def test_reverse_arc_moves_backwards():
    # Backing with the heading turning counter-clockwise: the centre lies to the right and the
    # body moves against its heading (common kinematics of reversing).
    a = sg.arc((0.0, 0.0, 0.0), 2.0, math.pi / 2, direction=-1)
    assert a.curvature == pytest.approx(-0.5)
    e = a.end
    assert e == pytest.approx((-2.0, -2.0, math.pi / 2))
    p = a.poses_at(np.array([1e-3]))[0]
    assert p[0] < 0  # moved backwards along heading +x


def test_pivot_and_holonomic_line():
    p = sg.pivot((1.0, 1.0, 0.0), -math.pi / 2)
    assert p.end == pytest.approx((1.0, 1.0, -math.pi / 2))
    assert p.to_dict()["turn_deg"] == pytest.approx(-90.0)
    h = sg.holonomic_line((0.0, 0.0, 0.5), (3.0, 4.0), turn_rad=1.0)
    assert h.length_m == pytest.approx(5.0)
    mid = h.poses_at(np.array([2.5]))[0]
    assert mid == pytest.approx((1.5, 2.0, 1.0))


@given(st.lists(st.tuples(st.sampled_from(["line", "arc", "pivot"]),
                          st.floats(0.0, 5.0, **finite), st.floats(-3, 3, **finite),
                          st.sampled_from([1, -1])), min_size=1, max_size=8))
def test_chained_segments_are_continuous(specs):
    segs = []
    pose = (0.0, 0.0, 0.0)
    for kind, L, turn, d in specs:
        if kind == "line":
            s = sg.line(pose, L, d)
        elif kind == "arc":
            if abs(turn) < 1e-6 or L < 1e-6:
                continue
            s = sg.arc(pose, L / abs(turn), turn, d)
        else:
            s = sg.pivot(pose, turn)
        segs.append(s)
        pose = s.end
    assume(segs)  # an empty path has no poses to check
    gaps = sg.joint_gaps(segs)
    assert np.all(gaps < 1e-12)
    stations = np.linspace(0, sg.path_length(segs), 30)
    poses = sg.poses_along(segs, stations)
    assert np.isfinite(poses).all()
    # A segment's end is its last sampled pose.
    for s in segs:
        np.testing.assert_allclose(s.poses_at_fraction([1.0])[0], s.end, atol=1e-12)


def test_to_dict_has_contract_keys():
    # Source: shared/contract.md, plan --json segment object.
    d = sg.arc((0, 0, 0), 1.0, math.pi / 2).to_dict()
    assert set(d) >= {"kind", "start", "end", "length_m", "radius_m", "turn_deg", "direction"}
    assert set(d["start"]) == {"x", "y", "heading_deg"}
    assert d["radius_m"] == pytest.approx(1.0)
    assert sg.line((0, 0, 0), 2.0).to_dict()["radius_m"] is None


def test_invalid_segments_refused():
    with pytest.raises(ValueError):
        sg.Segment("line", (0, 0, 0), -1.0)
    with pytest.raises(ValueError):
        sg.Segment("spiral", (0, 0, 0), 1.0)
    with pytest.raises(ValueError):
        sg.Segment("line", (0, 0, 0), float("nan"))
