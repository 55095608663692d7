"""CC Reeds-Shepp and three-turn CC Dubins connections (kinematics/plan/cc_words.py) and their
use by the planner for car-like routes with transitions."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from kinematics.files.project import Chassis, Route, Waypoint
from kinematics.motion.segments import joint_gaps, path_length
from kinematics.plan import dubins, reeds_shepp
from kinematics.plan.cc_words import cc_shortest, turn_centre
from kinematics.plan.transitions import cc_turn_ends


def _k_end(s):
    return float(s.curvature_at(s.length_m)) if s.kind == "clothoid" else float(s.curvature)


def _k_start(s):
    return float(s.curvature_at(0.0)) if s.kind == "clothoid" else float(s.curvature)


def _assert_cc(segs, start, goal, R, sigma):
    """Every promise of a CC connection: reaches the goal pose (1 mm, 0.01 deg), no gaps,
    curvature continuous at every joint (cusps included), |kappa| <= 1/R, sharpness <= sigma."""
    e = segs[-1].end if segs else start
    assert math.hypot(e[0] - goal[0], e[1] - goal[1]) < 1e-3
    assert abs(math.degrees(math.remainder(e[2] - goal[2], 2 * math.pi))) < 0.01
    if not segs:
        return
    s0 = segs[0].start
    assert math.hypot(s0[0] - start[0], s0[1] - start[1]) == 0.0
    assert joint_gaps(segs).max(initial=0.0) < 1e-9
    steps = [abs(_k_end(a) - _k_start(b)) for a, b in zip(segs[:-1], segs[1:])]
    assert max(steps, default=0.0) < 1e-12
    assert abs(_k_start(segs[0])) < 1e-12 and abs(_k_end(segs[-1])) < 1e-12
    assert max(s.max_abs_curvature for s in segs) <= 1.0 / R + 1e-12
    assert all(abs(s.sharpness) <= sigma + 1e-12 for s in segs)
    assert all(s.kind in ("line", "arc", "clothoid") for s in segs)


def test_turn_centre_against_a_laid_out_turn():
    # Source: Fraichard & Scheuer, IEEE T-RO 2004, sec. IV (a CC turn of deflection >=
    # kappa^2 / sigma ends on the circle about Omega of radius |Omega|); the turn's end from
    # cc_turn_ends (scipy.special.fresnel, DLMF 7.2).
    R, sigma = 1.5, 0.4
    xo, yo, dmin = turn_centre(R, sigma)
    d = np.linspace(dmin, 2 * math.pi - 0.1, 25)
    ends = cc_turn_ends(d, R, sigma)
    assert np.allclose(np.hypot(ends[:, 0] - xo, ends[:, 1] - yo), math.hypot(xo, yo),
                       atol=1e-12)
    # and the heading there makes the mirror angle with the radius: Omega' = (-xo, yo).
    for di, (x, y) in zip(d, ends):
        c, s = math.cos(di), math.sin(di)
        assert x + c * -xo - s * yo == pytest.approx(xo, abs=1e-12)
        assert y + s * -xo + c * yo == pytest.approx(yo, abs=1e-12)


pose_st = st.tuples(st.floats(-8.0, 8.0), st.floats(-8.0, 8.0),
                    st.floats(-math.pi, math.pi))


@settings(max_examples=120, derandomize=True, database=None, deadline=None)
@given(goal=pose_st, start=pose_st, R=st.floats(0.5, 3.0), sigma=st.floats(0.1, 5.0),
       reverse=st.booleans())
def test_cc_connections_reach_the_goal_with_continuous_bounded_curvature(goal, start, R,
                                                                         sigma, reverse):
    # Source: Fraichard & Scheuer, IEEE T-RO 2004 (CC paths: curvature continuous,
    # |kappa| <= kmax, |dkappa/ds| <= sigma_max); Dubins 1957 / Reeds & Shepp 1990 (the plain
    # shortest path with curvature <= 1/R, its lengths checked against OMPL in test_dubins and
    # test_reeds_shepp, is a lower bound on any path with that curvature bound).
    segs = cc_shortest(start, goal, R, sigma, reverse)
    assert segs is not None
    _assert_cc(segs, start, goal, R, sigma)
    plain = path_length((reeds_shepp if reverse else dubins).path_segments(start, goal, R))
    # A goal within the CC search's goal tolerance (1 um, 1e-8 rad) of the start is reached by
    # staying put, where the plain path may loop round (a rounding edge of its closed form).
    there = (math.hypot(goal[0] - start[0], goal[1] - start[1]) <= 1e-6
             and abs(math.remainder(goal[2] - start[2], 2 * math.pi)) <= 1e-8)
    assert path_length(segs) >= plain - 1e-9 or (there and not segs)
    if not reverse:
        assert all(s.direction == 1 for s in segs)


def _parts(letters):
    return len(letters.replace("|", "").replace("S", "C"))


@pytest.mark.parametrize("reverse", [False, True])
def test_cc_paths_tend_to_the_plain_shortest_as_the_clothoids_shrink(reverse):
    # Source: Fraichard & Scheuer 2004, sec. IV - as sigma grows the clothoids (length
    # kappa / sigma) vanish and a CC turn tends to the circular arc, so the CC path of a word
    # tends to the Reeds-Shepp / Dubins path of that word (Reeds & Shepp 1990; Dubins 1957).
    # Only goals whose plain shortest word has at most three parts (the words built here) are
    # compared; the plain lengths are checked against OMPL elsewhere.
    rng = np.random.default_rng(11)
    R, sigma = 1.0, 1e5
    compared = 0
    for _ in range(150):
        goal = (rng.uniform(-6, 6), rng.uniform(-6, 6), rng.uniform(-math.pi, math.pi))
        if reverse:
            b = reeds_shepp.shortest(np.zeros((1, 3)), np.array([goal]), R)
            if _parts(reeds_shepp.LETTERS[int(b.word[0])]) > 3:
                continue
            plain = float(b.length_m[0])
        else:
            plain = path_length(dubins.path_segments((0, 0, 0), goal, R))
        segs = cc_shortest((0.0, 0.0, 0.0), goal, R, sigma, reverse)
        _assert_cc(segs, (0, 0, 0), goal, R, sigma)
        assert plain - 1e-9 <= path_length(segs) <= plain + 1e-3
        compared += 1
    assert compared > 60


def test_three_turn_word_wins_where_the_goal_is_close_behind():
    # Source: Dubins 1957 - for a goal close to the start facing back, the shortest path is a
    # three-turn word (LRL / RLR); its CC version is built here (Fraichard & Scheuer 2004).
    goal = (0.3, 0.0, math.pi)
    R, sigma = 1.0, 2.0
    b = dubins.shortest(np.zeros((1, 3)), np.array([goal]), R)
    assert dubins.WORDS[int(b.word[0])] in ("LRL", "RLR")
    segs = cc_shortest((0.0, 0.0, 0.0), goal, R, sigma, False)
    _assert_cc(segs, (0, 0, 0), goal, R, sigma)
    signs = [int(np.sign(s.turn_rad)) for s in segs if s.kind == "arc"]
    assert len(signs) == 3 and signs[0] == signs[2] == -signs[1]
    assert "line" not in [s.kind for s in segs]


def test_reverse_cc_connection_has_cusps_at_zero_curvature():
    # Source: Reeds & Shepp 1990 (a goal beside the start, facing the same way, is reached
    # shorter with a reversal than without); Fraichard & Scheuer 2004 (cusps of CC paths fall
    # where a CC turn or a line ends, at curvature 0).
    goal = (0.0, 1.0, 0.0)
    R, sigma = 1.0, 2.0
    segs = cc_shortest((0.0, 0.0, 0.0), goal, R, sigma, True)
    _assert_cc(segs, (0, 0, 0), goal, R, sigma)
    fwd = cc_shortest((0.0, 0.0, 0.0), goal, R, sigma, False)
    assert path_length(segs) < path_length(fwd)
    cusps = [i for i in range(len(segs) - 1) if segs[i].direction != segs[i + 1].direction]
    assert cusps
    for i in cusps:
        assert abs(_k_end(segs[i])) < 1e-12 and abs(_k_start(segs[i + 1])) < 1e-12


def test_car_like_reverse_route_with_transitions_is_cc_reeds_shepp():
    # Source: issue rule (a car-like route with transitions "clothoid" connects its poses with
    # CC paths; where it reverses, the CC Reeds-Shepp family); Fraichard & Scheuer 2004.
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule

    wps = (Waypoint(0, 0, heading_deg=0.0), Waypoint(-3.0, 0.5, heading_deg=0.0),
           Waypoint(-1.0, 4.0, heading_deg=90.0))
    for drive in ("bicycle", "ackermann"):
        c = Chassis(drive=drive, wheelbase_m=0.9, track_m=0.5, max_steer_deg=40,
                    max_steer_rate_dps=45.0, wheel_radius_m=0.1)
        pl = plan_route(Route("r", wps, 0.0, reverse=True), c)
        plain = plan_route(Route("r", wps, 0.0, reverse=True, transitions="none"), c)
        kinds = [s.kind for s in pl.segments]
        assert "clothoid" in kinds and "clothoid" not in [s.kind for s in plain.segments]
        assert -1 in [s.direction for s in pl.segments]
        assert -1 in [s.direction for s in plain.segments]
        R = pl.turn_radius_m
        sigma = max(abs(s.sharpness) for s in pl.segments)
        _assert_cc(list(pl.segments), (0, 0, 0), (-1.0, 4.0, math.pi / 2), R, sigma)
        # the middle waypoint's pose is passed
        ends = np.array([s.end for s in pl.segments])
        i = int(np.argmin(np.hypot(ends[:, 0] + 3.0, ends[:, 1] - 0.5)))
        assert math.hypot(ends[i, 0] + 3.0, ends[i, 1] - 0.5) < 1e-6
        assert abs(math.remainder(ends[i, 2], 2 * math.pi)) < 1e-8
        assert path_length(pl.segments) >= path_length(plain.segments) - 1e-9
        # the schedule stops at each cusp and its steer angle never jumps there
        sch = build_schedule("r", pl.segments, c, dt_s=0.02)
        dt = np.diff(sch.samples.t_s)
        assert np.all(dt > 0.0)
        assert np.any(sch.samples.v_mps[1:-1] == 0.0)
        lim = math.radians(c.max_steer_rate_dps)
        for w, a in sch.samples.angle_rad.items():
            assert np.all(np.abs(np.diff(a)) <= lim * dt * 1.01 + 1e-12), w


def test_turn_radius_issue_reads_the_smallest_radius_a_clothoid_reaches():
    # Source: the clothoid's curvature is linear in distance (Euler spiral), so its smallest
    # radius is 1 / max(|kappa0|, |kappa1|), reached at an end; a turn_radius issue names it.
    from kinematics.motion.segments import clothoid
    from kinematics.plan.planner import _Builder, _check_radii

    b = _Builder(Route("r", (Waypoint(0, 0), Waypoint(1, 0))), (0.0, 0.0, 0.0))
    b.segs = [clothoid((0.0, 0.0, 0.0), 0.25, 1.0 / 0.8, 0.9),
              clothoid((1.0, 0.0, 0.0), 1.0 / 1.2, 0.0, 0.9)]
    _check_radii(b, 1.0, False, "bicycle")
    assert len(b.issues) == 1
    issue = b.issues[0]
    assert issue.kind == "turn_radius" and issue.segment == 0
    assert "clothoid reaching radius 0.8 m" in issue.message
    assert issue.amount_m == pytest.approx(0.2)
