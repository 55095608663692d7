"""Speed profiles: closed-form ramp times, distance by quadrature, every limit kept, optimality."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from kinematics.files.project import Chassis
from kinematics.motion import segments as S
from kinematics.motion.drives import DifferentialDrive, drive_for
from kinematics.timing.profile import Limits, profile_for, speed_profile, trapezoid_duration

CHASSIS = {
    "differential": Chassis(drive="differential", wheel_radius_m=0.1, track_m=0.5,
                            max_speed_mps=1.2, max_accel_mps2=0.6, max_decel_mps2=0.9,
                            max_wheel_rate_radps=11.0, max_lateral_accel_mps2=0.5,
                            max_yaw_rate_dps=80.0),
    "bicycle": Chassis(drive="bicycle", wheel_radius_m=0.15, wheelbase_m=1.2,
                       max_steer_deg=40.0, max_speed_mps=1.5, max_accel_mps2=0.5,
                       max_wheel_rate_radps=9.0, max_lateral_accel_mps2=0.8),
    "ackermann": Chassis(drive="ackermann", wheel_radius_m=0.2, wheelbase_m=1.6, track_m=0.9,
                         max_steer_deg=35.0, max_speed_mps=2.0, max_accel_mps2=0.7,
                         max_decel_mps2=1.0, max_wheel_rate_radps=9.5,
                         max_lateral_accel_mps2=0.9, max_yaw_rate_dps=45.0),
    "mecanum": Chassis(drive="mecanum", wheel_radius_m=0.076, wheelbase_m=0.6, track_m=0.5,
                       max_speed_mps=1.0, max_accel_mps2=0.5, max_wheel_rate_radps=12.0,
                       max_lateral_accel_mps2=0.6, max_yaw_rate_dps=90.0),
    "swerve": Chassis(drive="swerve", wheel_radius_m=0.05, wheelbase_m=0.7, track_m=0.6,
                      max_speed_mps=1.5, max_accel_mps2=0.8, max_decel_mps2=0.6,
                      max_wheel_rate_radps=25.0, max_yaw_rate_dps=70.0),
}


def random_route(chassis: Chassis, seed: int, n: int = 8) -> list[S.Segment]:
    """A continuous route of lines, arcs, pivots and holonomic lines the drive can make."""
    d = drive_for(chassis)
    rng = np.random.default_rng(seed)
    pose = (float(rng.uniform(-5, 5)), float(rng.uniform(-5, 5)), float(rng.uniform(-3, 3)))
    kinds = ["line", "arc"] + (["pivot"] if d.can_pivot else []) + \
        (["holo"] if d.holonomic else [])
    segs: list[S.Segment] = []
    for _ in range(n):
        k = kinds[int(rng.integers(len(kinds)))]
        direction = int(rng.choice([1, -1]))
        if k == "line":
            seg = S.line(pose, float(rng.uniform(0.1, 4.0)), direction)
        elif k == "arc":
            rmin = max(d.min_turn_radius_m, 0.2)
            turn = float(rng.uniform(0.2, 3.0)) * float(rng.choice([1, -1]))
            seg = S.arc(pose, float(rng.uniform(rmin, rmin + 3.0)), turn, direction)
        elif k == "pivot":
            seg = S.pivot(pose, float(rng.uniform(-6.0, 6.0)))
        else:
            goal = (pose[0] + float(rng.uniform(-3, 3)), pose[1] + float(rng.uniform(-3, 3)))
            seg = S.holonomic_line(pose, goal, float(rng.uniform(-4.0, 4.0)))
        segs.append(seg)
        pose = seg.end
    return segs


def _dense_times(p, per_s: int = 200) -> np.ndarray:
    t = np.linspace(0.0, p.total_time_s, int(p.total_time_s * per_s) + 2)
    return np.unique(np.concatenate([t, p.breakpoints_s()]))


# -- closed-form ramp times -----------------------------------------------------------------
def test_trapezoid_and_triangle_times():
    # Source: constant-acceleration kinematics (Halliday, Resnick & Walker, Fundamentals of
    # Physics, ch. 2): from rest to rest, time = d/v + v/a when d >= v^2/a, else 2 sqrt(d/a).
    v, a = 1.0, 0.5
    for d in (2.0, 5.0, 12.0):
        assert trapezoid_duration(d, 0.0, 0.0, v, a, a)[0] == pytest.approx(d / v + v / a)
    for d in (0.3, 1.0, 1.99):
        dur, peak = trapezoid_duration(d, 0.0, 0.0, v, a, a)
        assert dur == pytest.approx(2 * math.sqrt(d / a))
        assert peak == pytest.approx(math.sqrt(a * d))
    # Unequal ramps: t = v/(2a) + v/(2b) + d/v (same source).
    dur, _ = trapezoid_duration(6.0, 0.0, 0.0, 1.0, 0.5, 1.0)
    assert dur == pytest.approx(1.0 / (2 * 0.5) + 1.0 / (2 * 1.0) + 6.0)


def test_single_line_profile_time():
    prof = speed_profile([S.line((1.0, 2.0, 0.3), 5.0)], DifferentialDrive(0.1, 0.5),
                         Limits(1.0, 0.5, 0.5))
    # Source: as above, d/v + v/a = 5/1 + 1/0.5.
    assert prof.total_time_s == pytest.approx(7.0)
    assert float(prof.v_cruise_mps[0]) == pytest.approx(1.0)
    short = speed_profile([S.line((0, 0, 0), 1.0)], DifferentialDrive(0.1, 0.5),
                          Limits(1.0, 0.5, 0.5))
    assert short.total_time_s == pytest.approx(2 * math.sqrt(1.0 / 0.5))


# -- distance and limits on generated routes ------------------------------------------------
@pytest.mark.parametrize("name", list(CHASSIS))
@pytest.mark.parametrize("seed", [1, 2, 3])
def test_integrated_speed_gives_segment_lengths(name, seed):
    segs = random_route(CHASSIS[name], seed)
    p = profile_for(segs, CHASSIS[name])
    bps = p.breakpoints_s()
    for i, s in enumerate(segs):
        t0, t1 = float(p.t0_s[i]), float(p.t0_s[i] + p.duration_s[i])
        if t1 <= t0:
            continue
        inner = [b for b in bps if t0 < b < t1]
        # Source: scipy.integrate.quad of the reference-point speed over the segment's time.
        dist, _ = quad(lambda t, i=i: float(_speed_in(p, i, t)), t0, t1, points=inner or None,
                       limit=200)
        assert dist == pytest.approx(s.length_m, abs=1e-3)
        if s.kind == "pivot":
            turned, _ = quad(lambda t, i=i: float(_yaw_in(p, i, t)), t0, t1,
                             points=inner or None, limit=200)
            assert turned == pytest.approx(abs(s.turn_rad), abs=1e-6)


def _speed_in(p, i, t):
    # Speed is continuous at joints, so the joint's owner does not matter.
    return p.speed_at_time(np.array([t]))[0]


def _yaw_in(p, i, t):
    return abs(p.state_at_time(np.array([t])).omega_radps[0])


@pytest.mark.parametrize("name", list(CHASSIS))
@pytest.mark.parametrize("seed", [4, 5, 6, 7])
def test_no_sample_exceeds_any_limit(name, seed):
    c = CHASSIS[name]
    d = drive_for(c)
    segs = random_route(c, seed)
    p = profile_for(segs, c)
    t = _dense_times(p)
    vx, vy, om, st = p.twist_at_time(t)
    tol = 1e-9
    # Source: the chassis limits themselves (common practice: a limit is never exceeded).
    assert np.all(st.v_mps <= c.max_speed_mps + tol)
    rates = d.inverse(vx, vy, om).rates(d.wheel_names)
    assert np.all(np.abs(rates) <= c.max_wheel_rate_radps * (1 + tol))
    if c.max_yaw_rate_dps is not None:
        assert np.all(np.abs(om) <= math.radians(c.max_yaw_rate_dps) * (1 + tol))
    kappa = np.array([s.curvature if s.kind == "arc" else 0.0 for s in segs])[st.index]
    if c.max_lateral_accel_mps2 is not None:
        # Lateral acceleration v^2 / R on arcs (Halliday et al., ch. 4, uniform circular motion).
        assert np.all(st.v_mps**2 * np.abs(kappa) <= c.max_lateral_accel_mps2 * (1 + tol))
    # Linear acceleration from finite differences of the sampled speeds, within segments.
    decel = c.max_decel_mps2 or c.max_accel_mps2
    same = (st.index[1:] == st.index[:-1]) & ~p.is_pivot[st.index[1:]]
    dv = np.diff(st.v_mps)[same] / np.diff(t)[same]
    assert np.all(dv <= c.max_accel_mps2 + 1e-6) and np.all(dv >= -decel - 1e-6)
    # Speed is continuous everywhere, and zero at the ends, at cusps and at pivots.
    assert np.all(np.abs(np.diff(st.v_mps)) <= max(c.max_accel_mps2, decel) * np.diff(t) + 1e-9)
    assert p.v_start_mps[0] == 0.0 and p.v_end_mps[-1] == 0.0
    for i in range(len(segs) - 1):
        a, b = segs[i], segs[i + 1]
        if "pivot" in (a.kind, b.kind) or (a.kind != "line" and b.kind != "line"
                                            and a.direction != b.direction):
            assert p.v_end_mps[i] == 0.0 and p.v_start_mps[i + 1] == 0.0
        assert p.rate_end[i] == pytest.approx(p.rate_start[i + 1]) or a.kind == "pivot" \
            or b.kind == "pivot"
    # Pivots: angular acceleration within the rim limit max_accel / lever.
    piv = p.is_pivot[st.index]
    if piv.any():
        lever = d.pivot_lever_m()
        samep = (st.index[1:] == st.index[:-1]) & piv[1:]
        dw = np.diff(np.abs(om))[samep] / np.diff(t)[samep]
        assert np.all(dw <= c.max_accel_mps2 / lever + 1e-6)
        assert np.all(dw >= -decel / lever - 1e-6)


def test_reverse_arc_after_forward_arc_rests_at_cusp():
    c = CHASSIS["ackermann"]
    a = S.arc((0, 0, 0), 3.0, 1.0, 1)
    b = S.arc(a.end, 3.0, 0.7, -1)
    p = profile_for([a, b], c)
    # Common practice: a change of travel direction needs the vehicle at rest.
    assert p.v_end_mps[0] == 0.0 and p.v_start_mps[1] == 0.0
    g = S.line(b.end, 2.0, -1)  # same travel direction as the reverse arc's end
    p2 = profile_for([a, b, g], c)
    assert p2.v_end_mps[1] > 0.0


# -- optimality -----------------------------------------------------------------------------
@pytest.mark.parametrize("R", [0.6, 1.5, 4.0, 12.0])
def test_long_arc_cruises_at_tightest_limit(R):
    c = CHASSIS["differential"]
    r, b = c.wheel_radius_m, c.track_m
    seg = S.arc((0, 0, 0), R, 6.0, 1)  # long enough to reach every cap
    p = profile_for([seg], c)
    caps = {
        "max_speed_mps": c.max_speed_mps,
        # Source: Siegwart et al., ch. 3: the outer wheel runs at v (R + b/2) / (R r).
        "max_wheel_rate_radps": c.max_wheel_rate_radps * r * R / (R + b / 2),
        # Source: uniform circular motion, a = v^2 / R (Halliday et al., ch. 4).
        "max_lateral_accel_mps2": math.sqrt(c.max_lateral_accel_mps2 * R),
        "max_yaw_rate_dps": math.radians(c.max_yaw_rate_dps) * R,
    }
    tight = min(caps, key=caps.get)
    assert float(p.v_cruise_mps[0]) == pytest.approx(caps[tight])
    assert p.binding[0] == tight
    # And the time is the trapezoid at that cruise (Halliday et al., ch. 2).
    v, a, dd = caps[tight], c.max_accel_mps2, c.max_decel_mps2
    assert p.total_time_s == pytest.approx(v / (2 * a) + v / (2 * dd) + seg.length_m / v)


def test_pivot_time_from_yaw_and_wheel_limits():
    c = CHASSIS["differential"]
    p = profile_for([S.pivot((0, 0, 0), -2 * math.pi)], c)
    half = c.track_m / 2
    w = min(math.radians(c.max_yaw_rate_dps), c.max_wheel_rate_radps * c.wheel_radius_m / half)
    al, be = c.max_accel_mps2 / half, c.max_decel_mps2 / half
    # Source: constant angular acceleration, the same trapezoid in angle (Halliday ch. 10).
    assert p.total_time_s == pytest.approx(w / (2 * al) + w / (2 * be) + 2 * math.pi / w)
    assert float(p.yaw_rate_cruise_radps[0]) == pytest.approx(-w)


def test_holonomic_turning_line_binds_on_worst_wheel():
    c = CHASSIS["mecanum"]
    d = drive_for(c)
    seg = S.holonomic_line((0, 0, 0.2), (6.0, 1.0), 1.3)
    p = profile_for([seg], c)
    assert p.binding[0] == "max_wheel_rate_radps"
    # Brute force over the line: the highest rate at the cruise speed is the limit.
    f = np.linspace(0, 1, 20001)
    heading = 0.2 + 1.3 * f
    phi = seg.course - heading
    v = float(p.v_cruise_mps[0])
    w = v * 1.3 / seg.length_m
    rates = d.inverse(v * np.cos(phi), v * np.sin(phi), w * np.ones_like(f)).rates(d.wheel_names)
    # Source: Lynch & Park, Modern Robotics, sec. 13.2 (mecanum inverse kinematics).
    assert np.max(np.abs(rates)) == pytest.approx(c.max_wheel_rate_radps, rel=1e-6)


def test_joint_speed_is_as_fast_as_limits_allow():
    # A long line into a tight arc: the line must brake to the arc's cap, not to rest.
    c = CHASSIS["differential"]
    a = S.line((0, 0, 0), 6.0)
    b = S.arc(a.end, 0.5, math.pi / 2)
    p = profile_for([a, b], c)
    arc_cap = float(p.cap[1])
    assert p.v_end_mps[0] == pytest.approx(arc_cap)
    # On a line both wheels run at v / r (Siegwart et al., ch. 3): 11 rad/s x 0.1 m binds
    # before the 1.2 m/s speed limit.
    v = min(c.max_speed_mps, c.max_wheel_rate_radps * c.wheel_radius_m)
    assert float(p.v_cruise_mps[0]) == pytest.approx(v)
    # Time on the line: accelerate, cruise, brake to the arc cap (Halliday ch. 2).
    acc, dec = c.max_accel_mps2, c.max_decel_mps2
    s1 = v * v / (2 * acc)
    s3 = (v * v - arc_cap**2) / (2 * dec)
    t = v / acc + (6.0 - s1 - s3) / v + (v - arc_cap) / dec
    assert float(p.duration_s[0]) == pytest.approx(t)


def test_pivot_on_car_is_refused():
    with pytest.raises(ValueError):
        profile_for([S.pivot((0, 0, 0), 1.0)], CHASSIS["ackermann"])
