"""Schedules: wheel rates against textbook kinematics, export keys, and a driven round trip."""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from test_profile import CHASSIS, random_route

from kinematics.errors import ValidationError
from kinematics.files.jsonio import dumps
from kinematics.motion import segments as S
from kinematics.motion.drives import WheelCommands, drive_for
from kinematics.timing.schedule import (
    build_schedule,
    schedule_series,
    schedule_to_csv,
    schedule_to_dict,
)


def _line_arc_line(start=(0.0, 0.0, 0.0), R=1.5, turn=math.pi / 2, direction=1):
    a = S.line(start, 3.0, direction)
    b = S.arc(a.end, R, turn, direction)
    c = S.line(b.end, 2.0, direction)
    return [a, b, c]


# -- wheel rates against the books ----------------------------------------------------------
@pytest.mark.parametrize("direction", [1, -1])
def test_differential_rates_on_lines_and_arcs(direction):
    c = CHASSIS["differential"]
    r, b, R = c.wheel_radius_m, c.track_m, 1.5
    sch = build_schedule("t", _line_arc_line(R=R, direction=direction), c)
    d = schedule_to_dict(sch)
    line, arc = d["segments"][0], d["segments"][1]
    v = line["v_cruise_mps"]
    # Source: Siegwart, Nourbakhsh & Scaramuzza, Intro. to Autonomous Mobile Robots, 2nd ed.,
    # ch. 3: on a line both wheels turn at v / r; on an arc of radius R at v (R -+ b/2)/(R r).
    for w in ("left", "right"):
        assert line["wheels"][w]["rate_radps"] == pytest.approx(direction * v / r)
    va = arc["v_cruise_mps"]
    # A left turn forwards has the left wheel inside; reversing on the same circle with the
    # same heading change puts the centre on the right, so the right wheel is inside.
    inner, outer = ("left", "right") if direction > 0 else ("right", "left")
    assert arc["wheels"][inner]["rate_radps"] == pytest.approx(
        direction * va * (R - b / 2) / (R * r))
    assert arc["wheels"][outer]["rate_radps"] == pytest.approx(
        direction * va * (R + b / 2) / (R * r))
    # Samples inside the arc follow the same formula at their own speed.
    sm = sch.samples
    m = (sm.segment == 1) & (sm.v_mps > 0)
    np.testing.assert_allclose(sm.rate_radps[outer][m],
                               direction * sm.v_mps[m] * (R + b / 2) / (R * r), rtol=1e-9)


def test_ackermann_angles_and_rates():
    c = CHASSIS["ackermann"]
    L, T, r = c.wheelbase_m, c.track_m, c.wheel_radius_m
    R = 4.0
    d = schedule_to_dict(build_schedule("t", _line_arc_line(R=R, turn=-1.2), c))
    arc = d["segments"][1]
    wl = arc["wheels"]
    inner = math.radians(abs(wl["front_right"]["angle_deg"]))  # right turn: right inside
    outer = math.radians(abs(wl["front_left"]["angle_deg"]))
    # Source: Gillespie, Fundamentals of Vehicle Dynamics, ch. 6: cot(outer) - cot(inner) = T/L,
    # inner = atan(L / (R - T/2)).
    assert 1 / math.tan(outer) - 1 / math.tan(inner) == pytest.approx(T / L)
    assert inner == pytest.approx(math.atan(L / (R - T / 2)))
    v = arc["v_cruise_mps"]
    om = v / R
    # Each wheel rolls at omega x (distance to the turn centre) / r (rigid body).
    assert wl["rear_right"]["rate_radps"] == pytest.approx(om * (R - T / 2) / r)
    assert wl["front_left"]["rate_radps"] == pytest.approx(om * math.hypot(R + T / 2, L) / r)
    assert "angle_deg" not in wl["rear_left"]
    assert d["segments"][0]["wheels"]["front_left"]["angle_deg"] == pytest.approx(0.0)


def test_mecanum_and_swerve_rates_on_holonomic_line():
    course = math.radians(30.0)
    seg = S.holonomic_line((0, 0, 0), (3 * math.cos(course), 3 * math.sin(course)))
    cm = CHASSIS["mecanum"]
    d = schedule_to_dict(build_schedule("t", [seg], cm))["segments"][0]
    v = d["v_cruise_mps"]
    r, lx, ly = cm.wheel_radius_m, cm.wheelbase_m / 2, cm.track_m / 2
    # Source: Lynch & Park, Modern Robotics, sec. 13.2, H(0) (book order FL, FR, RR, RL,
    # from memory), twist (omega, vx, vy).
    H = np.array([[-lx - ly, 1, -1], [lx + ly, 1, 1], [lx + ly, 1, -1], [-lx - ly, 1, 1]]) / r
    u = H @ np.array([0.0, v * math.cos(course), v * math.sin(course)])
    for k, n in enumerate(["front_left", "front_right", "rear_right", "rear_left"]):
        assert d["wheels"][n]["rate_radps"] == pytest.approx(u[k])
    assert max(abs(x) for x in u) <= cm.max_wheel_rate_radps + 1e-9

    cs = CHASSIS["swerve"]
    d = schedule_to_dict(build_schedule("t", [seg], cs))["segments"][0]
    v = d["v_cruise_mps"]
    for n in ("front_left", "front_right", "rear_left", "rear_right"):
        # Rigid body, omega = 0: every module points along the course at v / r.
        assert d["wheels"][n]["angle_deg"] == pytest.approx(30.0)
        assert d["wheels"][n]["rate_radps"] == pytest.approx(v / cs.wheel_radius_m)


def test_swerve_pivot_modules_tangent():
    cs = CHASSIS["swerve"]
    d = schedule_to_dict(build_schedule("t", [S.pivot((1, 1, 0.5), 2.0)], cs))["segments"][0]
    w = math.radians(d["yaw_rate_dps"])
    lx, ly = cs.wheelbase_m / 2, cs.track_m / 2
    # Source: rigid-body kinematics, v_i = omega x r_i: tangent to the circle of radius |r_i|.
    assert d["wheels"]["front_left"]["angle_deg"] == pytest.approx(
        math.degrees(math.atan2(lx, -ly)) - 180.0)
    assert abs(d["wheels"]["front_left"]["rate_radps"]) == pytest.approx(
        abs(w) * math.hypot(lx, ly) / cs.wheel_radius_m)
    assert w == pytest.approx(math.radians(cs.max_yaw_rate_dps)) or \
        d["binding_limit"] == "max_wheel_rate_radps"


# -- round trip -----------------------------------------------------------------------------
def _interp_commands(drive, sm, k, frac):
    """Wheel commands between samples k and k+1; steered wheels by their velocity vector."""
    rates, angles = {}, {}
    for n in drive.wheel_names:
        r0, r1 = sm.rate_radps[n][k], sm.rate_radps[n][k + 1]
        if n in drive.steered_wheels:
            a0, a1 = sm.angle_rad[n][k], sm.angle_rad[n][k + 1]
            vec = (1 - frac) * r0 * np.array([math.cos(a0), math.sin(a0)]) \
                + frac * r1 * np.array([math.cos(a1), math.sin(a1)])
            rates[n] = np.array(math.hypot(*vec))
            angles[n] = np.array(math.atan2(vec[1], vec[0]) if rates[n] > 0 else a0)
        else:
            rates[n] = np.array((1 - frac) * r0 + frac * r1)
    return WheelCommands(rates, angles)


def _with_segment_ends(sch):
    """The samples plus, before each joint, the segment's own end commands.

    Samples are one row per time (a joint is the later segment's start), so where the rates
    step at a joint (a line meeting an arc at speed) the earlier segment's end is not a row;
    its left limit is taken from the profile, so that each segment is driven on its own.
    """
    drive, sm, prof = sch.drive, sch.samples, sch.profile
    idx = sm.segment
    cut = np.flatnonzero(np.diff(idx) != 0)  # last row of each segment but the final one
    ends = prof.state_in_segment(idx[cut], prof.duration_s[idx[cut]])
    ux, uy = prof.body_direction(ends)
    cmd = drive.inverse(ends.v_mps * ux, ends.v_mps * uy, ends.omega_radps,
                        hold_angles={k: sm.angle_rad[k][cut] for k in drive.steered_wheels})
    order = np.argsort(np.concatenate([np.arange(idx.size), cut + 0.5]), kind="stable")

    def merge(a, b):
        return np.concatenate([a, b])[order]

    t = merge(sm.t_s, prof.t0_s[idx[cut]] + prof.duration_s[idx[cut]])
    seg = merge(idx, idx[cut])
    rates = {k: merge(sm.rate_radps[k], np.asarray(cmd.rate_radps[k])) for k in drive.wheel_names}
    angles = {k: merge(sm.angle_rad[k], sm.angle_rad[k][cut]) for k in drive.steered_wheels}
    return t, seg, type("S", (), {"rate_radps": rates, "angle_rad": angles})


def drive_schedule(sch):
    """Integrate the forward kinematics of the sampled wheel rates from the route's start."""
    drive = sch.drive
    t_all, seg_all, sm = _with_segment_ends(sch)
    pose = np.array(sch.segments[0].start)
    for i in np.unique(seg_all):
        ks = np.flatnonzero(seg_all == i)
        ts = t_all[ks]
        if ts[-1] <= ts[0]:
            continue

        def rhs(t, y, ks=ks, ts=ts):
            j = int(np.clip(np.searchsorted(ts, t, side="right") - 1, 0, len(ts) - 2))
            frac = (t - ts[j]) / (ts[j + 1] - ts[j])
            vx, vy, om = (float(v) for v in
                          drive.forward(_interp_commands(drive, sm, ks[j], frac)))
            c, s = math.cos(y[2]), math.sin(y[2])
            return [c * vx - s * vy, s * vx + c * vy, om]

        # Source: scipy.integrate.solve_ivp (RK45) of the planar rigid-body equations.
        sol = solve_ivp(rhs, (ts[0], ts[-1]), pose, rtol=1e-10, atol=1e-10, max_step=0.5)
        pose = sol.y[:, -1]
    return pose


@pytest.mark.parametrize("name", list(CHASSIS))
@pytest.mark.parametrize("seed", [11, 12])
def test_driving_the_schedule_ends_at_the_route_end(name, seed):
    c = CHASSIS[name]
    segs = random_route(c, seed, n=7)
    sch = build_schedule("gen", segs, c, dt_s=0.1)
    end = drive_schedule(sch)
    goal = segs[-1].end
    assert math.hypot(end[0] - goal[0], end[1] - goal[1]) < 0.01
    assert abs(math.remainder(end[2] - goal[2], 2 * math.pi)) < 1e-3
    # The sampled poses themselves lie on the route: last sample at the end pose.
    assert sch.samples.x[-1] == pytest.approx(goal[0], abs=1e-9)
    assert sch.samples.y[-1] == pytest.approx(goal[1], abs=1e-9)


def test_samples_respect_wheel_limit_and_rest_at_ends():
    for name, c in CHASSIS.items():
        sch = build_schedule("gen", random_route(c, 21), c)
        sm = sch.samples
        d = drive_for(c)
        allr = np.stack([sm.rate_radps[n] for n in d.wheel_names])
        assert np.all(np.abs(allr) <= c.max_wheel_rate_radps * (1 + 1e-9)), name
        assert np.all(allr[:, 0] == 0.0) and np.all(np.abs(allr[:, -1]) < 1e-12)
        assert np.all(np.diff(sm.t_s) >= 0.0)
        assert np.max(np.diff(sm.t_s)) <= 0.1 + 1e-9
        for n in d.steered_wheels:
            assert np.all(np.isfinite(sm.angle_rad[n]))


def test_joint_is_one_sample_of_the_later_segment():
    # Source: shared/contract.md, version 1 additions (t_s strictly increasing, always), so
    # a joint is one row, the start of the later segment; the step shows between neighbours.
    c = CHASSIS["differential"]
    sch = build_schedule("t", _line_arc_line(), c)
    sm = sch.samples
    assert np.all(np.diff(sm.t_s) > 0.0)
    t_joint = float(sch.profile.t0_s[1])
    at = np.flatnonzero(np.isclose(sm.t_s, t_joint, atol=1e-12))
    assert sm.segment[at].tolist() == [1]
    k = int(at[0])
    # Line side (the row before): equal wheels; arc side: the outer wheel faster (Siegwart
    # et al., ch. 3).
    assert sm.segment[k - 1] == 0
    assert sm.rate_radps["left"][k - 1] == pytest.approx(sm.rate_radps["right"][k - 1])
    assert sm.rate_radps["right"][k] > sm.rate_radps["left"][k]


# -- exports --------------------------------------------------------------------------------
CONTRACT_SEGMENT_KEYS = {"index", "kind", "t0_s", "duration_s", "length_m", "v_start_mps",
                         "v_cruise_mps", "v_end_mps", "yaw_rate_dps", "wheels"}
CONTRACT_SAMPLE_KEYS = {"t_s", "x", "y", "heading_deg", "v_mps", "wheels"}


@pytest.mark.parametrize("name", list(CHASSIS))
def test_json_has_every_contract_key(name):
    c = CHASSIS[name]
    d = drive_for(c)
    out = json.loads(dumps(schedule_to_dict(build_schedule("depot loop", random_route(c, 3),
                                                           c))))
    # Source: shared/contract.md, "schedule --format json" and its wheel names.
    assert out["route"] == "depot loop" and out["drive"] == name
    assert out["segments"] and out["samples"]
    for part, keys in (("segments", CONTRACT_SEGMENT_KEYS), ("samples", CONTRACT_SAMPLE_KEYS)):
        for row in out[part]:
            assert keys <= set(row)
            assert list(row["wheels"]) == list(d.wheel_names)
            for n, w in row["wheels"].items():
                assert isinstance(w["rate_radps"], (int, float))
                assert ("angle_deg" in w) == (n in d.steered_wheels)
    assert [s["index"] for s in out["segments"]] == list(range(len(out["segments"])))


@pytest.mark.parametrize("name", list(CHASSIS))
def test_csv_columns(name):
    c = CHASSIS[name]
    d = drive_for(c)
    sch = build_schedule("t", random_route(c, 4), c)
    rows = list(csv.reader(io.StringIO(schedule_to_csv(sch))))
    head = rows[0]
    # Source: shared/contract.md, CSV: segment scalars, then <wheel>_rate_radps per wheel,
    # then <wheel>_angle_deg per steered wheel.
    n_w, n_s = len(d.wheel_names), len(d.steered_wheels)
    tail = head[len(head) - n_w - n_s:]
    assert tail == [f"{n}_rate_radps" for n in d.wheel_names] + \
        [f"{n}_angle_deg" for n in d.steered_wheels]
    for key in CONTRACT_SEGMENT_KEYS - {"wheels"}:
        assert key in head
    assert len(rows) == 1 + len(sch.segments)
    js = schedule_to_dict(sch)["segments"]
    for row, seg in zip(rows[1:], js):
        rec = dict(zip(head, row))
        assert float(rec["duration_s"]) == pytest.approx(seg["duration_s"], rel=1e-8)
        for n in d.wheel_names:
            assert float(rec[f"{n}_rate_radps"]) == pytest.approx(
                seg["wheels"][n]["rate_radps"], rel=1e-8, abs=1e-12)


def test_series_for_plots():
    c = CHASSIS["mecanum"]
    sch = build_schedule("t", random_route(c, 8), c)
    ser = schedule_series(sch)
    n = ser["t_s"].size
    assert n == sch.samples.t_s.size
    for k in ("station_m", "v_mps", "omega_radps", "heading_deg"):
        assert ser[k].shape == (n,)
    assert set(ser["rate_radps"]) == set(drive_for(c).wheel_names)
    lim = ser["limits"]
    assert lim["max_wheel_rate_radps"] == c.max_wheel_rate_radps
    moving = ~np.isnan(lim["speed_cap_mps"])
    assert np.all(ser["v_mps"][moving] <= lim["speed_cap_mps"][moving] + 1e-12)
    assert np.all(np.diff(ser["station_m"]) >= -1e-12)


def test_bad_time_step():
    with pytest.raises(ValidationError):
        build_schedule("t", _line_arc_line(), CHASSIS["differential"], dt_s=0.0)
