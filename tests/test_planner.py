"""Route planner: continuity, waypoints met, turn radii, lengths against OMPL and geometry."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

from kinematics.errors import ValidationError
from kinematics.files.floorplan import FloorPlan
from kinematics.files.project import Chassis, Project, Route, Waypoint
from kinematics.motion.segments import joint_gaps, path_length
from kinematics.plan.planner import PlanIssue, RoutePlan, plan_project, plan_route

CHASSIS = {
    "differential": Chassis(drive="differential", track_m=0.5),
    "bicycle": Chassis(drive="bicycle", wheelbase_m=1.2, max_steer_deg=40.0),
    "ackermann": Chassis(drive="ackermann", wheelbase_m=2.0, track_m=1.2, max_steer_deg=35.0,
                         min_turn_radius_m=1.0),
    "mecanum": Chassis(drive="mecanum", wheelbase_m=0.5, track_m=0.5),
    "swerve": Chassis(drive="swerve", wheelbase_m=0.6, track_m=0.6),
}


def _min_radius(c: Chassis) -> float:
    tan = math.tan(math.radians(c.max_steer_deg or 45.0))
    if c.drive == "bicycle":
        # Source: kinematic bicycle model, R = wheelbase / tan(steer) at the rear axle
        # (Rajamani, Vehicle Dynamics and Control, 2nd ed., sec. 2.2; from memory).
        return max(c.min_turn_radius_m, c.wheelbase_m / tan)
    if c.drive == "ackermann":
        # Source: Ackermann steering geometry, inner wheel at the stop: tan(d_i) = L/(R - T/2)
        # for the rear-axle midpoint (Gillespie, Fundamentals of Vehicle Dynamics, ch. 6
        # low-speed turning; from memory).
        return max(c.min_turn_radius_m, c.wheelbase_m / tan + c.track_m / 2)
    return c.min_turn_radius_m


def _wp(x, y, h=None):
    return Waypoint(float(x), float(y), None if h is None else float(h))


@st.composite
def waypoint_lists(draw):
    """Waypoints with the degenerate cases mixed in: repeats, collinear runs, straight-back
    reversals and points much closer than the turn radius."""
    first = (draw(st.integers(-4, 4)), draw(st.integers(-4, 4)))
    pts = [first]
    heads = [draw(st.none() | st.sampled_from([0, 45, 90, 180, -90, 270]) | st.floats(-360, 360))]
    n = draw(st.integers(1, 5))
    for _ in range(n):
        kind = draw(st.sampled_from(["grid", "grid", "grid", "repeat", "close", "back"]))
        px, py = pts[-1]
        if kind == "grid":
            p = (draw(st.integers(-4, 4)) * 1.5, draw(st.integers(-4, 4)) * 1.5)
        elif kind == "repeat":
            p = (px, py)
        elif kind == "close":
            ang = draw(st.floats(-math.pi, math.pi))
            d = draw(st.floats(1e-4, 0.2))
            p = (px + d * math.cos(ang), py + d * math.sin(ang))
        else:
            p = pts[-2] if len(pts) > 1 else (px + 1.0, py)
        if kind == "repeat":
            # A repeat carries the same heading, none, or another one (met on the spot).
            h = draw(st.sampled_from([heads[-1], None, 90.0]))
        else:
            h = draw(st.none() | st.none() | st.sampled_from([0, 90, 180, -45])
                     | st.floats(-360, 360))
        pts.append(p)
        heads.append(h)
    return [_wp(x, y, h) for (x, y), h in zip(pts, heads)]


def _finite(plan: RoutePlan) -> bool:
    vals = []
    for s in plan.segments:
        vals += [*s.start, *s.end, s.length_m, s.turn_rad]
    vals += [i.amount_m for i in plan.issues] + [i.x for i in plan.issues]
    vals += list(plan.chosen_headings.values())
    return bool(np.all(np.isfinite(vals)))


def _poses(plan: RoutePlan) -> list[tuple[float, float, float]]:
    """Every joint pose of the route (segment starts and the last end)."""
    if not plan.segments:
        return [plan.start]
    assert plan.start == plan.segments[0].start
    return [s.start for s in plan.segments] + [plan.segments[-1].end]


def _same_heading(a: float, b: float, tol: float = 1e-9) -> bool:
    return abs(math.remainder(a - b, 2 * math.pi)) < tol


def _assert_route_invariants(plan: RoutePlan, wps, chassis: Chassis, route: Route) -> None:
    # Source: IEEE 754 / numpy.isfinite - nothing may be NaN or infinite.
    assert _finite(plan)
    json.dumps(plan.to_dict(), allow_nan=False)
    segs = plan.segments
    # Source: kinematics.motion.segments.joint_gaps definition (zero gaps for a continuous path).
    if len(segs) > 1:
        assert np.all(joint_gaps(segs) < 1e-9)
    poses = _poses(plan)
    # Source: the route's definition - it starts and ends exactly at its end waypoints.
    assert math.hypot(poses[0][0] - wps[0].x, poses[0][1] - wps[0].y) < 1e-9
    assert math.hypot(poses[-1][0] - wps[-1].x, poses[-1][1] - wps[-1].y) < 1e-9
    if wps[0].heading_deg is not None:
        assert _same_heading(poses[0][2], math.radians(wps[0].heading_deg))
    if wps[-1].heading_deg is not None:
        assert _same_heading(poses[-1][2], math.radians(wps[-1].heading_deg))
    # Every waypoint with a heading is a pose of the route, with that heading.
    for i, w in enumerate(wps):
        if w.heading_deg is None:
            continue
        h = math.radians(w.heading_deg)
        hit = any(math.hypot(p[0] - w.x, p[1] - w.y) < 1e-9 and _same_heading(p[2], h)
                  for p in poses)
        assert hit, f"waypoint {i} {w} not met"
    r_min = _min_radius(chassis)
    for s in segs:
        assert s.kind != "arc" or s.length_m > 0.0  # no zero-length arcs
        if s.kind == "arc":
            # Source: chassis limit - no arc tighter than the chassis turns.
            assert s.radius_m >= r_min * (1 - 1e-9)
            if not route.extra.get("allow_smaller_radius"):
                assert s.radius_m >= max(route.turn_radius_m, r_min) * (1 - 1e-9)
    if chassis.drive in ("bicycle", "ackermann"):
        assert all(s.kind != "pivot" for s in segs)
    if chassis.drive in ("mecanum", "swerve"):
        # Straight moves; turns on the spot only where one point carries several headings.
        assert all(s.kind in ("line", "pivot") for s in segs)
    if chassis.drive == "differential" and route.turn_radius_m == 0.0:
        assert all(s.kind in ("line", "pivot") for s in segs)
    for iss in plan.issues:
        assert iss.kind in ("infeasible", "turn_radius")
        assert iss.waypoint is None or 0 <= iss.waypoint < len(wps)
        assert iss.segment is None or 0 <= iss.segment < len(segs)
        assert iss.amount_m >= 0.0
    # Source: contract.md - the route's length_m is the sum of its segments.
    assert plan.length_m == pytest.approx(sum(s.length_m for s in segs))
    # Every headingless corner differential R>0 could not fillet is named as infeasible.
    assert plan.turn_radius_m >= r_min * (1 - 1e-9)


@pytest.mark.parametrize("drive", list(CHASSIS))
@settings(max_examples=60)
@given(wps=waypoint_lists(), radius=st.sampled_from([0.0, 0.3, 1.0, 2.5]),
       reverse=st.booleans(), smaller=st.booleans())
def test_route_invariants_all_drives(drive, wps, radius, reverse, smaller):
    chassis = CHASSIS[drive]
    route = Route("r", tuple(wps), radius, reverse,
                  {"allow_smaller_radius": True} if smaller else {})
    plan = plan_route(route, chassis)
    _assert_route_invariants(plan, wps, chassis, route)


# -- differential ---------------------------------------------------------------------------
def test_differential_pivots_are_signed_smallest_turns():
    wps = (_wp(0, 0), _wp(4, 0), _wp(4, 3), _wp(1, -1), _wp(1, -1), _wp(5, -1, 90))
    plan = plan_route(Route("r", wps), CHASSIS["differential"])
    pivots = [math.degrees(s.turn_rad) for s in plan.segments if s.kind == "pivot"]
    # Source: common plane geometry - leg directions 0, 90, atan2(-4, -3), 0 deg; then 90.
    d2 = math.degrees(math.atan2(-4, -3))
    expected = [90.0, math.degrees(math.remainder(math.radians(d2 - 90), 2 * math.pi)),
                -d2, 90.0]
    assert pivots == pytest.approx(expected)
    # Source: shapely LineString.length - straight legs and pivots keep the polyline length.
    line = shapely.LineString([(w.x, w.y) for w in wps])
    assert plan.length_m == pytest.approx(line.length)
    assert any("merged" in n for n in plan.notes)
    # Messages count waypoints from 1: the fifth waypoint (index 4) repeats the fourth.
    assert "waypoint(s) 5 repeat waypoint 4 and were merged" in plan.notes


def test_differential_reversal_is_a_half_turn_pivot():
    plan = plan_route(Route("r", (_wp(0, 0), _wp(3, 0), _wp(0, 0))), CHASSIS["differential"])
    kinds = [s.kind for s in plan.segments]
    assert kinds == ["line", "pivot", "line"]
    # Source: common plane geometry - going straight back is a 180 degree turn.
    assert abs(plan.segments[1].turn_rad) == pytest.approx(math.pi)
    assert plan.issues == ()


def test_differential_with_reverse_backs_instead_of_half_turn():
    plan = plan_route(Route("r", (_wp(0, 0), _wp(3, 0), _wp(0, 0)), reverse=True),
                      CHASSIS["differential"])
    assert [(s.kind, s.direction) for s in plan.segments] == [("line", 1), ("line", -1)]


def test_differential_fillets_match_plane_geometry():
    wps = (_wp(0, 0), _wp(6, 0), _wp(6, 5), _wp(1, 8))
    r = 1.5
    plan = plan_route(Route("r", wps, r), CHASSIS["differential"])
    assert [s.kind for s in plan.segments] == ["line", "arc", "line", "arc", "line"]
    p = np.array([(w.x, w.y) for w in wps])
    d = np.diff(p, axis=0)
    a = np.arccos((d[:-1] * d[1:]).sum(1) / (np.hypot(*d[:-1].T) * np.hypot(*d[1:].T)))
    # Source: simple circular curve T = R tan(I/2), L = R I (Wolf & Ghilani, Elementary
    # Surveying, horizontal curves; from memory) and shapely LineString.length.
    expected = shapely.LineString(p).length - np.sum(2 * r * np.tan(a / 2)) + np.sum(r * a)
    assert plan.length_m == pytest.approx(expected, rel=1e-12)
    assert plan.issues == ()


def test_differential_crowded_fillets_are_infeasible_with_the_waypoint():
    wps = (_wp(0, 0), _wp(4, 0), _wp(4, 1), _wp(0, 1))
    plan = plan_route(Route("r", wps, 1.0), CHASSIS["differential"])
    (iss,) = plan.issues
    # Source: common plane geometry - two right-angle fillets of R = 1 need 2 m on a 1 m leg.
    assert (iss.kind, iss.waypoint, iss.amount_m) == ("infeasible", 1, pytest.approx(1.0))
    assert plan.segments[iss.segment].kind == "pivot"
    assert (iss.x, iss.y) == (4.0, 0.0)
    # The JSON field is the 0-based index; the message names the second waypoint from 1.
    assert iss.message.startswith("waypoint 2: ") and "from waypoint 2 to 3" in iss.message
    # Allowed to shrink: both fillets take half the leg, R = 0.5 each, and no issue.
    plan2 = plan_route(Route("r", wps, 1.0, extra={"allow_smaller_radius": True}),
                       CHASSIS["differential"])
    assert plan2.issues == ()
    assert [s.radius_m for s in plan2.segments if s.kind == "arc"] == pytest.approx([0.5, 0.5])
    assert any("radius 0.5" in n for n in plan2.notes)
    assert any(n.startswith("fillet at waypoint 2 ") for n in plan2.notes)
    assert any(n.startswith("fillet at waypoint 3 ") for n in plan2.notes)


def test_differential_reversal_with_radius_is_infeasible_pivot():
    plan = plan_route(Route("r", (_wp(0, 0), _wp(3, 0), _wp(0, 0)), 1.0), CHASSIS["differential"])
    (iss,) = plan.issues
    assert (iss.kind, iss.waypoint) == ("infeasible", 1)
    assert "straight back" in iss.message


def test_differential_heading_with_radius_uses_dubins_between_poses():
    from kinematics.plan import dubins

    wps = (_wp(0, 0), _wp(5, 0, 90), _wp(5, 6))
    plan = plan_route(Route("r", wps, 1.0), CHASSIS["differential"])
    assert plan.issues == ()
    assert all(s.kind != "pivot" for s in plan.segments)
    # First leg: Dubins (0,0,0) -> (5,0,90); second: straight up from (5,0,90).
    first = dubins.shortest([[0, 0, 0]], [[5, 0, math.pi / 2]], 1.0).length_m[0]
    assert plan.length_m == pytest.approx(first + 6.0, rel=1e-12)


# -- bicycle / ackermann -------------------------------------------------------------------
_pose = st.tuples(st.floats(-6, 6), st.floats(-6, 6), st.floats(-180, 180))


@pytest.mark.parametrize("drive", ["bicycle", "ackermann"])
@pytest.mark.parametrize("reverse", [False, True])
@settings(max_examples=40)
@given(a=_pose, b=_pose, radius=st.sampled_from([0.0, 1.0, 2.0, 3.3]))
def test_steered_two_pose_length_matches_ompl(drive, reverse, a, b, radius):
    ob = pytest.importorskip("ompl.base")
    chassis = CHASSIS[drive]
    wps = (Waypoint(*a), Waypoint(*b))
    if math.hypot(a[0] - b[0], a[1] - b[1]) < 1e-5:
        return  # merged into one point: covered by the invariants test
    plan = plan_route(Route("r", wps, radius, reverse), chassis)
    r = max(radius, _min_radius(chassis))
    assert plan.turn_radius_m == pytest.approx(r)
    # Source: OMPL ompl.base.DubinsStateSpace / ReedsSheppStateSpace.distance.
    space = (ob.ReedsSheppStateSpace if reverse else ob.DubinsStateSpace)(r)
    s0, s1 = space.allocState(), space.allocState()
    s0.setX(a[0]), s0.setY(a[1]), s0.setYaw(math.radians(a[2]))
    s1.setX(b[0]), s1.setY(b[1]), s1.setYaw(math.radians(b[2]))
    assert plan.length_m == pytest.approx(space.distance(s0, s1), rel=1e-6, abs=1e-6)
    if reverse:
        assert all(s.kind != "pivot" for s in plan.segments)
    else:
        assert all(s.direction == 1 for s in plan.segments)


@pytest.mark.parametrize("reverse", [False, True])
def test_steered_headed_route_is_the_sum_of_ompl_legs(reverse):
    ob = pytest.importorskip("ompl.base")
    rng = np.random.default_rng(7)
    c = CHASSIS["ackermann"]
    r = _min_radius(c)
    space = (ob.ReedsSheppStateSpace if reverse else ob.DubinsStateSpace)(r)
    s0, s1 = space.allocState(), space.allocState()
    for _ in range(10):
        pts = np.c_[rng.uniform(-10, 10, (5, 2)), rng.uniform(-180, 180, 5)]
        plan = plan_route(Route("r", tuple(Waypoint(*p) for p in pts), 0.0, reverse), c)
        total = 0.0
        for a, b in zip(pts[:-1], pts[1:]):
            s0.setX(a[0]), s0.setY(a[1]), s0.setYaw(math.radians(a[2]))
            s1.setX(b[0]), s1.setY(b[1]), s1.setYaw(math.radians(b[2]))
            total += space.distance(s0, s1)
        # Source: OMPL DubinsStateSpace / ReedsSheppStateSpace.distance, summed over legs.
        assert plan.length_m == pytest.approx(total, rel=1e-6)
        assert plan.chosen_headings == {}


def test_arcs_below_the_chassis_minimum_are_turn_radius_issues():
    # A differential chassis that cannot pivot (it states a minimum turn radius of 0.5 m).
    c = Chassis(drive="differential", track_m=0.5, min_turn_radius_m=0.5)
    wps = (_wp(0, 0), _wp(4, 0), _wp(4, 0.6), _wp(0, 0.6))
    plan = plan_route(Route("r", wps, 1.0, extra={"allow_smaller_radius": True}), c)
    arcs = [(i, s) for i, s in enumerate(plan.segments) if s.kind == "arc"]
    # Source: common plane geometry - two right-angle fillets share a 0.6 m leg: R = 0.3 each.
    assert [s.radius_m for _, s in arcs] == pytest.approx([0.3, 0.3])
    tr = [i for i in plan.issues if i.kind == "turn_radius"]
    assert [i.segment for i in tr] == [i for i, _ in arcs]
    assert [i.amount_m for i in tr] == pytest.approx([0.2, 0.2])
    # Without shrinking: even one 1 m fillet (tangent 1 m) overfills the 0.6 m leg, so both
    # corners become pivots, which this chassis cannot make.
    plan2 = plan_route(Route("r", wps, 1.0), c)
    inf = [i for i in plan2.issues if i.kind == "infeasible"]
    assert [i.waypoint for i in inf] == [1, 2]
    # Source: common plane geometry - first both tangents (2 m), then one (1 m) on 0.6 m.
    assert [i.amount_m for i in inf] == pytest.approx([1.4, 0.4])
    tr = [i for i in plan2.issues if i.kind == "turn_radius"]
    assert [i.segment for i in tr] == [i.segment for i in inf]
    assert all(plan2.segments[i.segment].kind == "pivot" for i in inf)


def test_steered_radius_below_minimum_is_raised_with_an_issue():
    c = CHASSIS["bicycle"]
    r_min = _min_radius(c)
    plan = plan_route(Route("r", (_wp(0, 0), _wp(10, 0), _wp(10, 10)), 0.5), c)
    (iss,) = [i for i in plan.issues if i.kind == "turn_radius"]
    assert iss.amount_m == pytest.approx(r_min - 0.5)
    assert plan.turn_radius_m == pytest.approx(r_min)
    # 0 means "not set": the minimum, with a note and no issue.
    plan0 = plan_route(Route("r", (_wp(0, 0), _wp(10, 0), _wp(10, 10)), 0.0), c)
    assert plan0.issues == () and any("minimum" in n for n in plan0.notes)


def test_steered_chosen_headings_bisect_the_legs():
    plan = plan_route(Route("r", (_wp(0, 0), _wp(5, 0), _wp(5, 5), _wp(0, 5))),
                      CHASSIS["bicycle"])
    # Source: common practice - a driver enters a corner along the bisector of its legs;
    # the leg direction at the route's ends.
    assert plan.chosen_headings == pytest.approx({0: 0.0, 1: 45.0, 2: 135.0, 3: 180.0})


# -- holonomic ------------------------------------------------------------------------------
@pytest.mark.parametrize("drive", ["mecanum", "swerve"])
def test_holonomic_lines_turn_the_short_way_to_given_headings(drive):
    wps = (_wp(0, 0), _wp(4, 0), _wp(4, 3, 170), _wp(0, 3), _wp(0, 0, -150))
    plan = plan_route(Route("r", wps, 1.0), CHASSIS[drive])
    segs = plan.segments
    assert [s.kind for s in segs] == ["line"] * 4
    # Source: common plane geometry - start along the first leg (0), hold, turn 0 -> 170,
    # hold, then 170 -> -150 the short way (+40 deg).
    assert [math.degrees(s.turn_rad) for s in segs] == pytest.approx([0, 170, 0, 40])
    assert plan.length_m == pytest.approx(shapely.LineString([(w.x, w.y) for w in wps]).length)
    assert plan.chosen_headings[0] == pytest.approx(0.0)
    # Source: the definition of a holonomic line - the course is the straight to the next point.
    for s, w in zip(segs, wps[1:]):
        assert s.end[:2] == pytest.approx((w.x, w.y), abs=1e-12)


# -- output and errors ----------------------------------------------------------------------
def test_to_dict_has_every_plan_json_key():
    plan = plan_route(Route("store-to-ward", (_wp(1, 1), _wp(8, 1), _wp(8, 6, 90)), 1.0),
                      CHASSIS["differential"])
    d = plan.to_dict()
    # Source: shared/contract.md, `plan --json` route and segment objects.
    assert {"name", "drive", "length_m", "segments"} <= set(d)
    assert d["name"] == "store-to-ward" and d["drive"] == "differential"
    for seg in d["segments"]:
        assert {"kind", "start", "end", "length_m", "radius_m", "turn_deg", "direction"} <= set(seg)
        assert set(seg["start"]) >= {"x", "y", "heading_deg"}
        assert set(seg["end"]) >= {"x", "y", "heading_deg"}
        assert seg["kind"] in ("line", "arc", "pivot") and seg["direction"] in (1, -1)
        assert (seg["radius_m"] is None) == (seg["kind"] != "arc")
    assert d["length_m"] == pytest.approx(sum(s["length_m"] for s in d["segments"]))
    assert isinstance(d["issues"], list) and isinstance(d["chosen_headings"], list)
    assert d["chosen_headings"] == [{"waypoint": 0, "heading_deg": 0.0}]
    iss = PlanIssue("infeasible", "m", 2, 3, 1.0, 2.0, 0.5).to_dict()
    assert set(iss) == {"kind", "message", "waypoint", "segment", "x", "y", "amount_m"}


def test_non_finite_waypoint_is_bad_input():
    with pytest.raises(ValidationError, match=r"waypoints\[1\]"):
        plan_route(Route("r", (_wp(0, 0), Waypoint(float("nan"), 1.0))), CHASSIS["bicycle"])


def test_single_point_route_pivots_to_its_heading():
    plan = plan_route(Route("r", (_wp(1, 1, 0), _wp(1, 1, 90))), CHASSIS["differential"])
    assert [(s.kind, round(math.degrees(s.turn_rad), 9)) for s in plan.segments] == [
        ("pivot", 90.0)]


def test_plan_project_plans_every_route_in_order():
    routes = (Route("a", (_wp(0, 0), _wp(1, 0))), Route("b", (_wp(0, 0), _wp(0, 2))))
    proj = Project(FloorPlan("fp", (), (), ()), CHASSIS["differential"], routes)
    plans = plan_project(proj)
    assert [p.name for p in plans] == ["a", "b"]
    assert [p.length_m for p in plans] == pytest.approx([1.0, 2.0])
    assert path_length(plans[1].segments) == pytest.approx(2.0)


# -- incremental planning -------------------------------------------------------------------
@st.composite
def edit_sequences(draw):
    """A sketched route and a few edits of one waypoint each: moved a little, moved far, or
    given / cleared a heading, as a drag or a heading edit in the window makes them."""
    wps = draw(waypoint_lists())
    if len(wps) < 2:
        wps = [*wps, _wp(wps[0].x + 2.0, wps[0].y)]
    edits = []
    for _ in range(draw(st.integers(1, 6))):
        k = draw(st.integers(0, len(wps) - 1))
        kind = draw(st.sampled_from(["nudge", "nudge", "far", "heading"]))
        if kind == "nudge":
            edits.append((k, draw(st.floats(-0.3, 0.3)), draw(st.floats(-0.3, 0.3)), "keep"))
        elif kind == "far":
            edits.append((k, draw(st.floats(-3, 3)), draw(st.floats(-3, 3)), "keep"))
        else:
            edits.append((k, 0.0, 0.0, draw(st.none() | st.floats(-180, 180))))
    return wps, edits


def _apply(wps, edit):
    k, dx, dy, h = edit
    w = wps[k]
    out = list(wps)
    out[k] = Waypoint(w.x + dx, w.y + dy, w.heading_deg if h == "keep" else h)
    return out


@pytest.mark.parametrize("drive", list(CHASSIS))
@settings(max_examples=30, deadline=None)
@given(seq=edit_sequences(), radius=st.sampled_from([0.0, 0.5, 1.0]), reverse=st.booleans())
def test_cached_planner_gives_the_fresh_plan_after_every_edit(drive, seq, radius, reverse):
    from kinematics.files.jsonio import dumps
    from kinematics.plan.planner import RoutePlanner

    # Source: common practice - a cache must not change the answer: every plan the warm
    # RoutePlanner returns equals, segment for segment and in its JSON to the last bit, the
    # plan made from scratch by plan_route.
    chassis = CHASSIS[drive]
    wps, edits = seq
    planner = RoutePlanner()
    for step in [None, *edits]:
        if step is not None:
            wps = _apply(wps, step)
        route = Route("r", tuple(wps), radius, reverse)
        cached, fresh = planner.plan(route, chassis), plan_route(route, chassis)
        assert cached == fresh
        assert dumps(cached.to_dict()) == dumps(fresh.to_dict())


def test_moving_one_waypoint_reuses_the_pieces_away_from_it():
    from kinematics.plan.planner import RoutePlanner

    wps = [_wp(3.8 * k, 2.0 * math.sin(0.7 * k)) for k in range(30)]
    planner = RoutePlanner()
    before = planner.plan(Route("r", tuple(wps), 1.0), CHASSIS["differential"])
    misses = planner.cache.misses
    wps[15] = _wp(wps[15].x + 0.2, wps[15].y - 0.1)
    after = planner.plan(Route("r", tuple(wps), 1.0), CHASSIS["differential"])
    # Source: common plane geometry - a fillet depends on its corner and the two neighbouring
    # points, so moving point 15 changes the arcs at 14, 15, 16 and the four lines between
    # corners 13 and 17; every other segment is the same object as before.
    assert planner.cache.misses - misses == 7
    same = sum(any(a is b for b in before.segments) for a in after.segments)
    assert same == len(after.segments) - 7


def test_plan_text_lists_notes_and_counts_waypoints_from_one():
    from kinematics.analysis.report_text import format_plan_text

    wps = (_wp(0, 0), _wp(4, 0), _wp(4, 0), _wp(4, 1), _wp(0, 1))
    plan = plan_route(Route("r", wps, 1.0, extra={"allow_smaller_radius": True}),
                      CHASSIS["differential"])
    text = format_plan_text([plan])
    # Source: common practice - the text listing shows the RoutePlan.notes verbatim, and
    # waypoints are numbered from 1 as in the window (the last of five is "waypoint 5").
    for note in plan.notes:
        assert f"note: {note}" in text
    assert "waypoint(s) 3 repeat waypoint 2" in text
    assert "heading at waypoint 5 chosen as 180.0 deg" in text


def test_a_route_spread_over_more_than_ten_km_is_refused_not_sampled():
    # Common practice: no building route spans 10 km, and the checks sample every route at
    # centimetre steps, so a route sketched or built in code that far apart is an input error
    # naming the waypoint, as the file reader says it.
    from kinematics.errors import SwatheInputError
    from kinematics.files.project import Chassis, Route, Waypoint

    far = Route("far", (Waypoint(0.0, 0.0), Waypoint(5.0, 0.0), Waypoint(5.0, 2.0e4)))
    with pytest.raises(SwatheInputError) as err:
        plan_route(far, Chassis(track_m=0.5))
    assert "waypoints[2]" in err.value.message and "10 km" in err.value.message
    near = Route("near", (Waypoint(0.0, 0.0), Waypoint(9.0e3, 0.0)))
    assert plan_route(near, Chassis(track_m=0.5)).segments
