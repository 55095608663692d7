"""Drive kinematics against textbook formulas, a design-vehicle turning path and round trips."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from kinematics.errors import ValidationError
from kinematics.files.project import Chassis
from kinematics.motion.drives import (
    AckermannDrive,
    BicycleDrive,
    DifferentialDrive,
    MecanumDrive,
    SwerveDrive,
    WheelCommands,
    drive_for,
)

CHASSIS = {
    "differential": Chassis(drive="differential", wheel_radius_m=0.1, track_m=0.5),
    "bicycle": Chassis(drive="bicycle", wheel_radius_m=0.15, wheelbase_m=1.2,
                       max_steer_deg=40.0),
    "ackermann": Chassis(drive="ackermann", wheel_radius_m=0.2, wheelbase_m=1.6, track_m=0.9,
                         max_steer_deg=35.0),
    "mecanum": Chassis(drive="mecanum", wheel_radius_m=0.076, wheelbase_m=0.6, track_m=0.5),
    "swerve": Chassis(drive="swerve", wheel_radius_m=0.05, wheelbase_m=0.7, track_m=0.6),
}


# -- differential -------------------------------------------------------------------------
def test_differential_forward_and_inverse():
    d = drive_for(CHASSIS["differential"])
    wl, wr = 8.0, 12.0
    cmd = WheelCommands({"left": np.array(wl), "right": np.array(wr)})
    vx, vy, om = d.forward(cmd)
    # Source: Siegwart, Nourbakhsh & Scaramuzza, Intro. to Autonomous Mobile Robots, 2nd ed.,
    # ch. 3: v = r (wr + wl) / 2, omega = r (wr - wl) / track.
    assert float(vx) == pytest.approx(0.1 * (wr + wl) / 2)
    assert float(om) == pytest.approx(0.1 * (wr - wl) / 0.5)
    assert float(vy) == 0.0
    back = d.inverse(vx, 0.0, om)
    assert float(back.rate_radps["left"]) == pytest.approx(wl)
    assert float(back.rate_radps["right"]) == pytest.approx(wr)


def test_differential_arc_wheel_rates_and_outer_wheel_limit():
    d = drive_for(CHASSIS["differential"])
    R, v, b, r = 1.5, 0.8, 0.5, 0.1
    cmd = d.inverse(v, 0.0, v / R)
    # Source: Siegwart et al., ch. 3: wheel speeds on an arc are omega (R -+ b/2).
    assert float(cmd.rate_radps["left"]) == pytest.approx(v * (R - b / 2) / (R * r))
    assert float(cmd.rate_radps["right"]) == pytest.approx(v * (R + b / 2) / (R * r))
    # The outer wheel binds first: v_max = w_max r R / (R + b/2).
    vmax = d.max_speed_on_curvature(1.0 / R, 10.0)
    assert float(vmax) == pytest.approx(10.0 * r * R / (R + b / 2))
    assert float(d.max_speed_on_curvature(-1.0 / R, 10.0, direction=-1)) == pytest.approx(
        float(vmax))
    # Pivot: both wheels at omega b / 2 (Siegwart et al., ch. 3, R = 0).
    assert d.max_pivot_yaw_rate(10.0) == pytest.approx(10.0 * r / (b / 2))
    assert d.pivot_lever_m() == pytest.approx(b / 2)


def test_skid_steer_effective_track():
    c = Chassis(drive="differential", wheel_radius_m=0.1, track_m=0.5,
                effective_track_factor=1.4)
    d = drive_for(c)
    cmd = WheelCommands({"left": np.array(-5.0), "right": np.array(5.0)})
    _, _, om = d.forward(cmd)
    # Source: Siegwart et al., ch. 3 with the track replaced by the effective (slip) track,
    # common practice for skid-steer vehicles.
    assert float(om) == pytest.approx(0.1 * 10.0 / (1.4 * 0.5))


# -- bicycle --------------------------------------------------------------------------------
def test_bicycle_radius_and_yaw_rate():
    L, r = 1.2, 0.15
    d = BicycleDrive(r, L, 40.0)
    delta = math.radians(17.0)
    v = 1.3
    # Source: Rajamani, Vehicle Dynamics and Control, 2nd ed., sec. 2.2 (kinematic bicycle,
    # reference at the rear axle): R = L / tan(delta), yaw rate = v tan(delta) / L.
    omega = v * math.tan(delta) / L
    cmd = d.inverse(v, 0.0, omega)
    assert float(cmd.angle_rad["steer"]) == pytest.approx(delta)
    assert "drive" not in cmd.angle_rad  # the rear wheel is not steered
    # Rear wheel on the reference point rolls at v; the front wheel at v / cos(delta), the
    # front axle being farther from the turn centre (Rajamani sec. 2.2, same model).
    assert float(cmd.rate_radps["drive"]) == pytest.approx(v / r)
    assert float(cmd.rate_radps["steer"]) == pytest.approx(v / math.cos(delta) / r)
    assert d.min_turn_radius_m == pytest.approx(L / math.tan(math.radians(40.0)))
    vx, vy, om = d.forward(cmd)
    assert (float(vx), float(vy), float(om)) == pytest.approx((v, 0.0, omega))
    # Reverse on the same steer: the yaw rate changes sign, rates are negative, angle kept.
    rev = d.inverse(-v, 0.0, -omega)
    assert float(rev.angle_rad["steer"]) == pytest.approx(delta)
    assert float(rev.rate_radps["steer"]) == pytest.approx(-v / math.cos(delta) / r)
    assert float(rev.rate_radps["drive"]) == pytest.approx(-v / r)


def test_bicycle_min_radius_respects_chassis_minimum():
    c = Chassis(drive="bicycle", wheelbase_m=1.0, max_steer_deg=60.0, min_turn_radius_m=2.0)
    # Source: Rajamani sec. 2.2: L / tan(60 deg) = 0.577 m, below the stated chassis minimum.
    assert drive_for(c).min_turn_radius_m == pytest.approx(2.0)


# -- ackermann ------------------------------------------------------------------------------
@pytest.mark.parametrize("R", [1.9, 3.0, 8.0, -2.5])
def test_ackermann_condition(R):
    d = drive_for(CHASSIS["ackermann"])
    L, T = 1.6, 0.9
    cmd = d.inverse(1.0, 0.0, 1.0 / R)
    fl, fr = float(cmd.angle_rad["front_left"]), float(cmd.angle_rad["front_right"])
    inner, outer = (fl, fr) if R > 0 else (fr, fl)
    # Source: Gillespie, Fundamentals of Vehicle Dynamics, ch. 6: cot(outer) - cot(inner) = T/L
    # (magnitudes; a right turn has both angles negative).
    assert 1 / math.tan(abs(outer)) - 1 / math.tan(abs(inner)) == pytest.approx(T / L)
    assert abs(inner) > abs(outer)
    # Gillespie ch. 6 low-speed turning: inner angle = atan(L / (R - T/2)).
    assert abs(inner) == pytest.approx(math.atan(L / (abs(R) - T / 2)))
    # Rear wheels roll at omega (R -+ T/2) / r (rigid body about the turn centre).
    assert float(cmd.rate_radps["rear_left"]) == pytest.approx((R - T / 2) / R / 0.2)
    assert float(cmd.rate_radps["rear_right"]) == pytest.approx((R + T / 2) / R / 0.2)


def test_ackermann_min_radius_is_rear_axle_midpoint_at_inner_stop():
    d = drive_for(CHASSIS["ackermann"])
    L, T = 1.6, 0.9
    # Source: Gillespie ch. 6: inner wheel at its stop, tan(inner) = L / (R - T/2).
    assert d.min_turn_radius_m == pytest.approx(L / math.tan(math.radians(35.0)) + T / 2)
    cmd = d.inverse(1.0, 0.0, 1.0 / d.min_turn_radius_m)
    assert float(cmd.angle_rad["front_left"]) == pytest.approx(math.radians(35.0))


def test_design_vehicle_p_turning_path():
    # Values from memory of AASHTO, A Policy on Geometric Design of Highways and Streets,
    # Exhibits 2-3/2-4, design vehicle P (passenger car): wheelbase 11 ft = 3.35 m, width
    # 7 ft = 2.13 m, minimum design turning radius 24 ft = 7.31 m, minimum inside radius
    # 14.4 ft = 4.39 m. The design turning radius is the path of the outer front wheel; the
    # inside radius is the path of the inner rear wheel. The handbook's paths are drawn at
    # the vehicle's width, so the wheels are modelled at +-width/2 (track = width).
    L, W = 3.35, 2.13
    r_outer_front, r_inside_book = 7.31, 4.39
    # Rear-axle midpoint radius that puts the outer front wheel on the 7.31 m circle.
    r_mid = math.sqrt(r_outer_front**2 - L**2) - W / 2
    inner_stop = math.degrees(math.atan(L / (r_mid - W / 2)))
    d = drive_for(Chassis(drive="ackermann", wheel_radius_m=0.3, wheelbase_m=L, track_m=W,
                          max_steer_deg=inner_stop))
    assert d.min_turn_radius_m == pytest.approx(r_mid)
    omega = 1.0 / d.min_turn_radius_m  # left turn at 1 m/s
    cmd = d.inverse(1.0, 0.0, omega)
    # Each wheel traces a circle of radius |rim speed| / |omega| about the turn centre.
    radius = {n: abs(float(cmd.rate_radps[n])) * 0.3 / omega for n in d.wheel_names}
    assert radius["front_right"] == pytest.approx(r_outer_front)
    # The check against the handbook: the inner rear wheel path, within 5 cm.
    assert radius["rear_left"] == pytest.approx(r_inside_book, abs=0.05)

    # The same vehicle as a kinematic bicycle (Rajamani sec. 2.2): rigid-body velocities of
    # the wheel corners give the same two radii.
    steer = math.degrees(math.atan(L / r_mid))
    b = drive_for(Chassis(drive="bicycle", wheel_radius_m=0.3, wheelbase_m=L,
                          max_steer_deg=steer))
    assert b.min_turn_radius_m == pytest.approx(r_mid)
    om = 1.0 / b.min_turn_radius_m
    corners = {"outer_front": (L, -W / 2), "inner_rear": (0.0, W / 2)}
    rad = {k: math.hypot(1.0 - om * y, om * x) / om for k, (x, y) in corners.items()}
    assert rad["outer_front"] == pytest.approx(r_outer_front)
    assert rad["inner_rear"] == pytest.approx(r_inside_book, abs=0.05)


# -- mecanum --------------------------------------------------------------------------------
def test_mecanum_matches_modern_robotics_h0():
    r, lx, ly = 0.076, 0.3, 0.25
    d = drive_for(CHASSIS["mecanum"])
    # Source: Lynch & Park, Modern Robotics, sec. 13.2, H(0) for four mecanum wheels with
    # gamma = -45, 45, -45, 45 deg; book order 1 front-left, 2 front-right, 3 rear-right,
    # 4 rear-left (order and signs from memory), twist (omega, vx, vy), l = half wheelbase,
    # w = half track.
    H_book = np.array([[-lx - ly, 1, -1], [lx + ly, 1, 1], [lx + ly, 1, -1],
                       [-lx - ly, 1, 1]]) / r
    rng = np.random.default_rng(3)
    tw = rng.normal(size=(20, 3))  # (vx, vy, omega)
    u_book = np.stack([tw[:, 2], tw[:, 0], tw[:, 1]], axis=1) @ H_book.T
    cmd = d.inverse(tw[:, 0], tw[:, 1], tw[:, 2])
    order = ["front_left", "front_right", "rear_right", "rear_left"]
    for k, n in enumerate(order):
        np.testing.assert_allclose(cmd.rate_radps[n], u_book[:, k], rtol=1e-12)
    # Strafing left: front-left and rear-right run backwards (common practice, X rollers).
    s = d.inverse(0.0, 1.0, 0.0)
    assert float(s.rate_radps["front_left"]) < 0 < float(s.rate_radps["rear_left"])
    vx, vy, om = d.forward(cmd)
    np.testing.assert_allclose(np.stack([vx, vy, om], axis=1), tw, atol=1e-12)


# -- swerve ---------------------------------------------------------------------------------
def test_swerve_module_velocity_is_rigid_body():
    d = drive_for(CHASSIS["swerve"])
    r = 0.05
    v = np.array([0.4, -0.3, 0.0])
    w = np.array([0.0, 0.0, 0.9])
    cmd = d.inverse(v[0], v[1], w[2])
    for n, (x, y) in d.positions.items():
        # Source: rigid-body kinematics, v_i = v + omega x r_i (numpy.cross).
        vi = v + np.cross(w, np.array([x, y, 0.0]))
        a = float(cmd.angle_rad[n])
        rate = float(cmd.rate_radps[n])
        np.testing.assert_allclose(rate * r * np.array([math.cos(a), math.sin(a)]), vi[:2],
                                   atol=1e-12)
        assert -math.pi / 2 < a <= math.pi / 2


def test_steered_angle_held_when_still_never_nan():
    for name in ("bicycle", "ackermann", "swerve"):
        d = drive_for(CHASSIS[name])
        cmd = d.inverse(np.zeros(3), np.zeros(3), np.zeros(3))
        for n in d.steered_wheels:
            assert np.all(cmd.angle_rad[n] == 0.0)
            assert np.all(cmd.rate_radps[n] == 0.0)
        held = d.inverse(0.0, 0.0, 0.0, hold_angles={n: 0.3 for n in d.steered_wheels})
        for n in d.steered_wheels:
            assert float(held.angle_rad[n]) == pytest.approx(0.3)


# -- factory and flags ----------------------------------------------------------------------
def test_factory_flags_and_names():
    expect = {
        "differential": (DifferentialDrive, ("left", "right"), False, True),
        "bicycle": (BicycleDrive, ("drive", "steer"), False, False),
        "ackermann": (AckermannDrive, ("front_left", "front_right", "rear_left", "rear_right"),
                      False, False),
        "mecanum": (MecanumDrive, ("front_left", "front_right", "rear_left", "rear_right"),
                    True, True),
        "swerve": (SwerveDrive, ("front_left", "front_right", "rear_left", "rear_right"),
                   True, True),
    }
    for name, (cls, wheels, holo, pivot) in expect.items():
        d = drive_for(CHASSIS[name])
        # Source: shared/contract.md wheel names (the project's interface contract).
        assert isinstance(d, cls) and d.name == name
        assert d.wheel_names == wheels
        assert d.holonomic is holo and d.can_pivot is pivot
        assert set(d.steered_wheels) <= set(d.wheel_names)
    assert drive_for(CHASSIS["differential"]).min_turn_radius_m == 0.0
    stiff = drive_for(Chassis(drive="differential", track_m=0.5, min_turn_radius_m=0.7))
    assert stiff.min_turn_radius_m == 0.7 and stiff.can_pivot is False


@pytest.mark.parametrize("drive,missing", [("bicycle", "wheelbase_m"),
                                           ("bicycle", "max_steer_deg"),
                                           ("ackermann", "track_m"),
                                           ("differential", "track_m"),
                                           ("mecanum", "wheelbase_m"),
                                           ("swerve", "track_m")])
def test_factory_names_missing_dimension(drive, missing):
    full = dict(wheelbase_m=1.0, track_m=0.5, max_steer_deg=30.0)
    full[missing] = None
    with pytest.raises(ValidationError) as e:
        drive_for(Chassis(drive=drive, **full))
    assert e.value.place == f"chassis.{missing}"
    assert e.value.file == "<chassis>"


# -- round trips ----------------------------------------------------------------------------
finite = st.floats(-3.0, 3.0, allow_nan=False)


@settings(max_examples=150)
@given(vx=finite, vy=finite, om=finite)
def test_holonomic_round_trip(vx, vy, om):
    for name in ("mecanum", "swerve"):
        d = drive_for(CHASSIS[name])
        back = d.forward(d.inverse(vx, vy, om))
        # Source: Lynch & Park sec. 13.2 (forward kinematics as the pseudo-inverse of H).
        np.testing.assert_allclose([float(b) for b in back], [vx, vy, om], atol=1e-9)


@settings(max_examples=150)
@given(vx=finite, om=finite)
def test_differential_round_trip(vx, om):
    d = drive_for(CHASSIS["differential"])
    back = d.forward(d.inverse(vx, 0.0, om))
    np.testing.assert_allclose([float(b) for b in back], [vx, 0.0, om], atol=1e-9)


@settings(max_examples=150)
@given(vx=st.floats(0.01, 3.0).flatmap(lambda v: st.sampled_from([v, -v])),
       frac=st.floats(-1.0, 1.0))
def test_steered_car_round_trip(vx, frac):
    for name in ("bicycle", "ackermann"):
        d = drive_for(CHASSIS[name])
        om = frac * vx / d.min_turn_radius_m  # only twists the drive can make
        back = d.forward(d.inverse(vx, 0.0, om))
        np.testing.assert_allclose([float(b) for b in back], [vx, 0.0, om], atol=1e-9)


def test_inverse_is_vectorised_and_homogeneous():
    rng = np.random.default_rng(7)
    tw = rng.uniform(-1, 1, size=(5, 4, 3))
    for name, c in CHASSIS.items():
        d = drive_for(c)
        a = d.inverse(tw[..., 0], tw[..., 1], tw[..., 2])
        b = d.inverse(-2.5 * tw[..., 0], -2.5 * tw[..., 1], -2.5 * tw[..., 2])
        for n in d.wheel_names:
            assert a.rate_radps[n].shape == (5, 4), name
            np.testing.assert_allclose(b.rate_radps[n], -2.5 * a.rate_radps[n], rtol=1e-12)
        for n in d.steered_wheels:
            np.testing.assert_allclose(b.angle_rad[n], a.angle_rad[n], atol=1e-12)
