"""Transition curves end to end: the new chassis limits and route key, continuous-curvature
turns, the profile under rate limits and the sampled schedule."""

from __future__ import annotations

import copy
import json
import math

import numpy as np
import pytest

from kinematics.errors import SwatheInputError
from kinematics.files.project import Chassis, Route, Waypoint, load_project, route_transitions
from tests.test_files import PROJECT, _error, _with, _write


# -- files --------------------------------------------------------------------------------------
@pytest.mark.parametrize("key", ["max_steer_rate_dps", "max_wheel_accel_radps2",
                                 "max_yaw_accel_dps2"])
@pytest.mark.parametrize("value,words", [(-1.0, "positive"), (0.0, "positive"),
                                         (1e9, "at most"), (1e-9, "at least"),
                                         ("fast", "number"), (True, "number")])
def test_bad_rate_limits_name_file_and_key(tmp_path, key, value, words):
    # Source: common practice - negative, zero, absurd and wrong-typed limits are refused with
    # one line naming the file and the key path (shared/contract.md, bad input).
    p, e = _error(tmp_path, _with(("chassis", key), value))
    assert e.file == str(p) and e.place == f"chassis.{key}"
    assert words in e.expected
    assert e.message.startswith(f"{p}: chassis.{key}: ")


def test_nan_rate_limit_is_refused(tmp_path):
    # Source: common practice (JSON has no NaN; Python's reader accepts the literal).
    text = json.dumps(PROJECT).replace('"track_m": 0.5', '"track_m": 0.5, '
                                       '"max_wheel_accel_radps2": NaN')
    p = _write(tmp_path, text)
    with pytest.raises(SwatheInputError) as err:
        load_project(p)
    # The JSON reader refuses the literal itself, naming line and column of the key's value.
    col = text.index("NaN") + 1
    assert str(p) in err.value.message and f"line 1, column {col}" in err.value.message


def test_bad_transitions_value_is_refused(tmp_path):
    for value, words in (("spline", "clothoid"), (3, "text")):
        p, e = _error(tmp_path, _with(("routes", 0, "transitions"), value))
        assert e.place == "routes[0].transitions" and words in e.expected


def test_transitions_default_follows_the_chassis(tmp_path):
    # Source: the issue's rule - absent means "clothoid" where the chassis gives one of the new
    # limits, else "none", so existing files keep their meaning.
    proj = load_project(_write(tmp_path, PROJECT))
    assert proj.routes[0].transitions is None
    assert route_transitions(proj.routes[0], proj.chassis) == "none"
    d = copy.deepcopy(PROJECT)
    d["chassis"]["max_wheel_accel_radps2"] = 8.0
    proj = load_project(_write(tmp_path, d))
    assert proj.chassis.max_wheel_accel_radps2 == 8.0
    assert route_transitions(proj.routes[0], proj.chassis) == "clothoid"
    d["routes"][0]["transitions"] = "none"
    proj = load_project(_write(tmp_path, d))
    assert route_transitions(proj.routes[0], proj.chassis) == "none"
    r = Route("r", (Waypoint(0, 0), Waypoint(1, 0)), transitions="clothoid")
    assert route_transitions(r, Chassis(track_m=0.5)) == "clothoid"


# -- planner: CC turns --------------------------------------------------------------------------
def _curvature_steps(segs):
    """|curvature| jump at each joint (end of one segment against the start of the next)."""
    out = []
    for a, b in zip(segs[:-1], segs[1:]):
        if a.kind == "pivot" or b.kind == "pivot":
            continue
        ka = float(a.curvature_at(a.length_m)) if a.kind == "clothoid" else a.curvature
        kb = float(b.curvature_at(0.0)) if b.kind == "clothoid" else b.curvature
        out.append(abs(ka - kb))
    return out


def test_cc_fillets_have_continuous_curvature_and_keep_the_radius():
    # Source: Fraichard & Scheuer, IEEE T-RO 2004, sec. III - a CC turn is clothoid, arc,
    # clothoid with curvature continuous and never above 1/R; plane geometry of the corner.
    from kinematics.motion.segments import joint_gaps
    from kinematics.plan.planner import plan_route

    wps = (Waypoint(0, 0), Waypoint(6, 0), Waypoint(6, 5), Waypoint(1, 7))
    c = Chassis(track_m=0.5, max_wheel_accel_radps2=5.0)
    plain = plan_route(Route("r", wps, 1.0, transitions="none"), c)
    cc = plan_route(Route("r", wps, 1.0), c)  # absent: clothoid (the chassis gives a limit)
    assert "clothoid" not in [s.kind for s in plain.segments]
    assert max(_curvature_steps(plain.segments)) == pytest.approx(1.0)
    kinds = [s.kind for s in cc.segments]
    assert kinds.count("clothoid") == 4
    assert max(_curvature_steps(cc.segments)) < 1e-12
    assert joint_gaps(cc.segments).max() < 1e-9
    assert min(s.min_radius_m for s in cc.segments if s.min_radius_m) == pytest.approx(1.0)
    end = cc.segments[-1].end
    assert math.hypot(end[0] - 1, end[1] - 7) < 1e-9
    assert sum(s.turn_rad for s in cc.segments) == pytest.approx(
        sum(s.turn_rad for s in plain.segments), abs=1e-12)
    assert not cc.issues


def test_cc_turn_that_does_not_fit_keeps_the_arc_with_a_note():
    # Source: common practice - a corner with no room for its clothoids is still drivable as
    # an arc (the profile then stops there), and the planner says so.
    from kinematics.plan.planner import plan_route

    wps = (Waypoint(0, 0), Waypoint(1.2, 0), Waypoint(1.2, 2.2))
    c = Chassis(track_m=0.5, max_wheel_accel_radps2=0.5)  # gentle: 10 m clothoids
    pl = plan_route(Route("r", wps, 1.0), c)
    assert [s.kind for s in pl.segments] == ["line", "arc", "line"]
    assert any("no room for transition curves at waypoint 2" in n for n in pl.notes)


# -- profile and samples ------------------------------------------------------------------------
WPS20 = (Waypoint(0, 0), Waypoint(8, 0), Waypoint(8, 6), Waypoint(2, 9))  # about 20 m
LIMITS = dict(max_speed_mps=1.2, max_accel_mps2=0.6, max_wheel_rate_radps=14.0,
              max_lateral_accel_mps2=0.6, max_wheel_accel_radps2=4.0, max_yaw_accel_dps2=60.0)
DRIVES3 = {
    "differential": Chassis(drive="differential", track_m=0.5, wheel_radius_m=0.1, **LIMITS),
    "bicycle": Chassis(drive="bicycle", wheelbase_m=0.9, max_steer_deg=40, wheel_radius_m=0.1,
                       max_steer_rate_dps=45.0, **LIMITS),
    "ackermann": Chassis(drive="ackermann", wheelbase_m=0.9, track_m=0.5, max_steer_deg=40,
                         wheel_radius_m=0.1, max_steer_rate_dps=45.0, **LIMITS),
    "mecanum": Chassis(drive="mecanum", wheelbase_m=0.6, track_m=0.5, wheel_radius_m=0.08,
                       **LIMITS),
    "swerve": Chassis(drive="swerve", wheelbase_m=0.6, track_m=0.5, wheel_radius_m=0.08,
                      max_steer_rate_dps=90.0, **LIMITS),
}


def _schedule(name, transitions=None, dt=0.02):
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule

    c = DRIVES3[name]
    plan = plan_route(Route("r20", WPS20, 1.5, transitions=transitions), c)
    return plan, build_schedule("r20", plan.segments, c, dt_s=dt), c


@pytest.mark.parametrize("name", list(DRIVES3))
def test_rates_and_steer_angles_change_within_their_limits(name):
    # Source: the issue's continuity check - max |wheel-rate change| between samples <=
    # max_wheel_accel_radps2 * dt * 1.01, steer angle change <= max_steer_rate_dps * dt * 1.01.

    _, s, c = _schedule(name)
    sm = s.samples
    dt = np.diff(sm.t_s)
    assert np.all(dt > 0.0)                                   # t_s strictly increasing
    for w, r in sm.rate_radps.items():
        assert np.all(np.abs(np.diff(r)) <= c.max_wheel_accel_radps2 * dt * 1.01 + 1e-12), w
    for w, a in sm.angle_rad.items():
        lim = math.radians(c.max_steer_rate_dps)
        # A module angle is kept in (-90, 90] deg with the rate's sign carrying the rest, so a
        # half-turn flip (where the rate passes through 0) is no steering: unwrap it.
        a = np.unwrap(a, period=math.pi)
        assert np.all(np.abs(np.diff(a)) <= lim * dt * 1.01 + 1e-12), w
    yaw_acc = np.abs(np.diff(sm.omega_radps)) / dt
    assert yaw_acc.max() <= math.radians(c.max_yaw_accel_dps2) * 1.01 + 1e-9


def test_differential_rates_are_continuous_only_with_transitions():
    # Source: Siegwart et al. ch. 3 (wheel rates (v +- omega b / 2) / r): at a line/arc joint
    # the rates step unless the chassis is at rest there; with CC turns it need not stop.

    _, cc, _ = _schedule("differential")
    _, none, _ = _schedule("differential", "none")
    assert "clothoid" in [s.kind for s in cc.segments]
    # Without transitions the profile stops at each of the four line/arc joints ...
    stops = np.flatnonzero(none.samples.v_mps[1:-1] == 0.0)
    assert len(stops) >= 4
    # ... with them it never stops between the ends, and so is faster.
    assert np.all(cc.samples.v_mps[1:-1] > 0.0)
    assert cc.profile.total_time_s < none.profile.total_time_s


def _forward(name, c, rates, angles):
    """Textbook forward kinematics from wheel rates (and steer angles): body (vx, vy, omega)
    for the holonomic drives, (v, omega) for the others."""
    r = c.wheel_radius_m
    lx, ly = (c.wheelbase_m or 0.0) / 2, (c.track_m or 0.0) / 2
    if name == "mecanum":
        # Source: Lynch & Park, Modern Robotics, sec. 13.2 (45 degree rollers, the inverse of
        # H(0)): fl/rr rollers at -45 degrees, fr/rl at +45.
        fl, fr, rl, rr = (rates[k] for k in ("front_left", "front_right", "rear_left",
                                             "rear_right"))
        return (r / 4 * (fl + fr + rl + rr), r / 4 * (-fl + fr + rl - rr),
                r / (4 * (lx + ly)) * (-fl + fr - rl + rr))
    if name == "swerve":
        # Source: rigid-body kinematics, v_i = v + omega x r_i, solved by least squares over
        # the four modules at (+-L/2, +-T/2) (their mean and their moment about the centre).
        pos = {"front_left": (lx, ly), "front_right": (lx, -ly), "rear_left": (-lx, ly),
               "rear_right": (-lx, -ly)}
        vx = vy = om = 0.0
        for k, (x, y) in pos.items():
            ux, uy = r * rates[k] * np.cos(angles[k]), r * rates[k] * np.sin(angles[k])
            vx, vy = vx + ux / 4, vy + uy / 4
            om = om + (x * uy - y * ux) / (4 * (lx * lx + ly * ly))
        return vx, vy, om
    if name == "differential":
        # Source: Siegwart, Nourbakhsh & Scaramuzza, ch. 3.
        return r * (rates["right"] + rates["left"]) / 2, r * (rates["right"] - rates["left"]) \
            / c.track_m
    if name == "bicycle":
        # Source: Rajamani, Vehicle Dynamics and Control, sec. 2.2 (rear-axle reference; the
        # "drive" entry is the rear wheel on the reference point, "steer" the front wheel).
        d = angles["steer"]
        v = r * rates["drive"]
        return v, v * np.tan(d) / c.wheelbase_m
    # Source: Gillespie, Fundamentals of Vehicle Dynamics, ch. 6: rear axle speed from the rear
    # wheels, yaw from the front-left wheel's angle at (L, T/2): tan d = w L / (v - w T / 2).
    v = r * (rates["rear_left"] + rates["rear_right"]) / 2
    t = np.tan(angles["front_left"])
    return v, v * t / (c.wheelbase_m + t * c.track_m / 2)


@pytest.mark.parametrize("name", list(DRIVES3))
def test_integrated_samples_reach_the_planned_end(name):
    # Source: scipy.integrate.solve_ivp of the unicycle equations under textbook forward
    # kinematics (per drive, above), wheel commands linear between samples: the issue asks
    # 1 cm and 0.5 deg at the end of a 20 m route.
    from scipy.integrate import solve_ivp

    plan, s, c = _schedule(name)
    sm = s.samples
    assert plan.length_m > 18.0

    def cmd(t):
        k = int(np.clip(np.searchsorted(sm.t_s, t, side="right") - 1, 0, sm.t_s.size - 2))
        f = (t - sm.t_s[k]) / (sm.t_s[k + 1] - sm.t_s[k])
        rates = {w: (1 - f) * v[k] + f * v[k + 1] for w, v in sm.rate_radps.items()}
        angles = {w: (1 - f) * v[k] + f * v[k + 1] for w, v in sm.angle_rad.items()}
        if name == "swerve":  # a module's velocity vector is what varies linearly
            k1 = k + 1
            vel = {w: (1 - f) * sm.rate_radps[w][k] * np.exp(1j * sm.angle_rad[w][k])
                   + f * sm.rate_radps[w][k1] * np.exp(1j * sm.angle_rad[w][k1])
                   for w in sm.angle_rad}
            rates = {w: abs(z) for w, z in vel.items()}
            angles = {w: float(np.angle(z)) for w, z in vel.items()}
        return _forward(name, c, rates, angles)

    def rhs(t, p):
        out = cmd(t)
        vx, vy, w = out if len(out) == 3 else (out[0], 0.0, out[1])
        c, s_ = math.cos(p[2]), math.sin(p[2])
        return [c * vx - s_ * vy, s_ * vx + c * vy, w]

    start = plan.segments[0].start
    out = solve_ivp(rhs, (0.0, float(sm.t_s[-1])), list(start), rtol=1e-9, atol=1e-10,
                    max_step=0.02)
    end = plan.segments[-1].end
    assert math.hypot(out.y[0, -1] - end[0], out.y[1, -1] - end[1]) < 0.01
    assert abs(math.degrees(math.remainder(out.y[2, -1] - end[2], 2 * math.pi))) < 0.5


def test_pivot_turns_within_the_yaw_acceleration_limit():
    # Source: constant angular acceleration (Halliday et al. ch. 10): a pivot of theta from
    # rest to rest at alpha with no rate cap reached takes 2 sqrt(theta / alpha).
    from kinematics.motion.segments import pivot
    from kinematics.timing.profile import profile_for

    c = Chassis(track_m=0.5, max_yaw_accel_dps2=30.0)
    p = profile_for([pivot((0, 0, 0), math.radians(90))], c)
    alpha = math.radians(30.0)
    assert p.binding == ("max_yaw_accel_dps2",)
    assert p.total_time_s == pytest.approx(2 * math.sqrt(math.radians(90) / alpha))


def test_binding_limit_is_the_limit_that_binds():
    # Source: constant-acceleration kinematics (Halliday et al. ch. 2): a 1 m line from rest
    # to rest at 0.5 m/s^2 peaks at sqrt(a d) = 0.71 m/s, never the 1 m/s speed cap, so the
    # acceleration limit binds; a 20 m line cruises at the cap.
    from kinematics.motion.segments import line
    from kinematics.timing.profile import profile_for

    c = Chassis(track_m=0.5)
    short = profile_for([line((0, 0, 0), 1.0)], c)
    assert short.binding == ("max_accel_mps2",) and short.cap_binding == ("max_speed_mps",)
    assert float(short.v_cruise_mps[0]) == pytest.approx(math.sqrt(0.5 * 1.0))
    long = profile_for([line((0, 0, 0), 20.0)], c)
    assert long.binding == ("max_speed_mps",)


def test_samples_never_repeat_a_time_on_a_plain_line():
    # Source: issue 15 point 4 (a time stamp repeated at a profile knot on a plain line).

    from kinematics.motion.segments import line
    from kinematics.timing.schedule import build_schedule

    s = build_schedule("l", [line((0, 0, 0), 3.0), line((3, 0, 0), 2.0)], Chassis(track_m=0.5),
                       dt_s=0.1)
    assert np.all(np.diff(s.samples.t_s) > 0.0)
    assert s.samples.t_s[-1] == pytest.approx(s.profile.total_time_s)


@pytest.mark.parametrize("goal", [(6.0, 3.0, 0.5), (4.0, -5.0, -2.0), (8.0, 0.5, 3.0),
                                  (-3.0, 6.0, 1.2)])
def test_cc_connection_meets_the_goal_and_is_no_shorter_than_dubins(goal):
    # Source: Dubins 1957 (the Dubins path is the shortest with curvature <= 1/R, so a CC path
    # with the same bound cannot be shorter); Fraichard & Scheuer 2004 (CC paths: curvature
    # continuous, |kappa| <= 1/R, |dkappa/ds| <= sigma).
    from kinematics.motion.segments import joint_gaps, path_length
    from kinematics.plan import dubins
    from kinematics.plan.transitions import cc_connect

    start, R, sigma = (0.0, 0.0, 0.0), 1.5, 0.4
    segs = cc_connect(start, goal, R, sigma)
    assert segs is not None
    end = segs[-1].end
    assert math.hypot(end[0] - goal[0], end[1] - goal[1]) < 1e-9
    assert abs(math.remainder(end[2] - goal[2], 2 * math.pi)) < 1e-9
    assert joint_gaps(segs).max() < 1e-9
    assert max(_curvature_steps(segs), default=0.0) < 1e-12
    assert max(s.max_abs_curvature for s in segs) <= 1.0 / R + 1e-12
    assert all(abs(s.sharpness) <= sigma + 1e-12 for s in segs)
    plain = path_length(dubins.path_segments(start, goal, R))
    assert path_length(segs) >= plain - 1e-9


def test_car_like_route_with_transitions_never_stops_to_steer():
    # Source: issue 10 - with CC connections the steer angle is continuous, so the chassis
    # need not stand still to steer; without them it stops at every curvature step.
    for name in ("bicycle", "ackermann"):
        plan, s, _ = _schedule(name)
        assert "clothoid" in [x.kind for x in plan.segments]
        assert max(_curvature_steps(plan.segments)) < 1e-12
        assert float(s.profile.hold_s.max()) == 0.0
        assert np.all(s.samples.v_mps[1:-1] > 0.0)
        _, none, _ = _schedule(name, "none")
        assert float(none.profile.hold_s.max()) > 0.0
        assert s.profile.total_time_s < none.profile.total_time_s


def test_doorway_clearance_with_and_without_transitions():
    # Source: shapely distance from the footprint placed every 1 mm along each plan (the
    # dense-pose oracle) - the check stays conservative (never above the truth by 0.5 mm, never
    # below by 2 mm) for both, and the test shows how much the CC turn changes the least
    # clearance at an invented doorway just past a corner (measured: 23 mm more room).
    import shapely

    from kinematics.check.clearance import ObstacleIndex, check_route
    from kinematics.check.sweep import placed_footprints
    from kinematics.files.floorplan import Door, FloorPlan, Wall, solids
    from kinematics.motion.segments import path_length, poses_along
    from kinematics.plan.planner import plan_route

    fp = FloorPlan("doorway", (Wall(((0, -1), (4, -1), (4, 3.0)), 0.1),
                               Wall(((2.9, 1.1), (2.9, 3.0)), 0.1)), (),
                   (Door((2.9, 1.1), (4, 1.1), "store"),))
    index = ObstacleIndex(fp)
    walls = shapely.union_all([s.geometry for s in solids(fp)])
    c = Chassis(track_m=0.5, max_wheel_accel_radps2=5.0)
    got = {}
    for tr in ("none", "clothoid"):
        r = Route("r", (Waypoint(0, 0), Waypoint(3.45, 0), Waypoint(3.45, 3.0)), 1.2,
                  transitions=tr)
        plan = plan_route(r, c)
        chk = check_route(plan, c, index, route_name="r", route=r)
        st = np.linspace(0.0, plan.length_m, int(path_length(plan.segments) / 0.001) + 1)
        truth = float(np.min(shapely.distance(placed_footprints(c.footprint,
                                                                 poses_along(plan.segments, st)),
                                              walls)))
        assert truth - 0.002 <= chk.min_clearance_m <= truth + 0.0005
        got[tr] = chk.min_clearance_m
    assert got["clothoid"] - got["none"] == pytest.approx(0.0233, abs=0.002)


@pytest.mark.parametrize("name", ["mecanum", "swerve"])
def test_turning_holonomic_lines_keep_wheel_and_steer_rates(name):
    # Source: the issue's continuity check on lines whose body turns (the body-frame course
    # changes with distance, so the wheel rates change even at constant speed).
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule

    c = DRIVES3[name]
    wps = (Waypoint(0, 0, 0), Waypoint(8, 0, 90), Waypoint(8, 6, 180), Waypoint(2, 9, -60))
    plan = plan_route(Route("turning", wps, 0.0), c)
    assert any(s.kind == "line" and s.turn_rad != 0.0 for s in plan.segments)
    sm = build_schedule("turning", plan.segments, c, dt_s=0.02).samples
    dt = np.diff(sm.t_s)
    assert np.all(dt > 0.0)
    for w, r in sm.rate_radps.items():
        # A swerve module's signed rate flips with its angle's half turn (the angle is kept in
        # (-90, 90] deg); its rolling speed is what the wheel motor must change.
        r = np.abs(r) if name == "swerve" else r
        assert np.all(np.abs(np.diff(r)) <= c.max_wheel_accel_radps2 * dt * 1.01 + 1e-12), w
    for w, a in sm.angle_rad.items():
        a = np.unwrap(a, period=math.pi)
        assert np.all(np.abs(np.diff(a)) <= math.radians(c.max_steer_rate_dps) * dt * 1.01
                      + 1e-12), w
