"""Wheel-rate schedules: per-segment wheel rates and steer angles, and timed samples.

A schedule joins the time-optimal speed profile (:mod:`kinematics.timing.profile`) with the drive's
inverse kinematics (:mod:`kinematics.motion.drives`). For each segment it gives the timing, the
speeds and the rate of every wheel (and the angle of every steered wheel) at the segment's
cruise speed; for a holonomic line that turns the body, the wheels are given at the middle of
the line, where the body is halfway through its turn. Samples every ``dt_s`` give pose, speed
and every wheel's rate and angle; they also fall on every joint and every end of a speed ramp,
and a joint is sampled twice (the end of one segment, the start of the next), so the wheel
rates between two neighbouring samples are linear in time on lines, arcs and pivots, and a
step in the rates (a line meeting an arc) shows as two samples at one time.

Rates are signed: reverse travel gives negative rates. A steered wheel at rest shows the angle
its segment needs, taken from the direction of travel, so the angles never jump to zero.
The output keys follow ``shared/contract.md`` (``schedule --format json`` and CSV).
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from kinematics.errors import ValidationError
from kinematics.motion.drives import DriveModel, drive_for
from kinematics.motion.segments import Segment
from kinematics.timing.profile import Limits, SpeedProfile, speed_profile

SEGMENT_COLUMNS = ("index", "kind", "t0_s", "duration_s", "length_m", "v_start_mps",
                   "v_cruise_mps", "v_end_mps", "yaw_rate_dps", "turn_deg", "radius_m",
                   "direction", "binding_limit")


@dataclass(frozen=True)
class Samples:
    """Timed samples of a schedule; every array has one entry per sample."""

    t_s: NDArray[np.float64]
    segment: NDArray[np.int64]
    station_m: NDArray[np.float64]
    x: NDArray[np.float64]
    y: NDArray[np.float64]
    heading_rad: NDArray[np.float64]
    v_mps: NDArray[np.float64]
    vx_mps: NDArray[np.float64]
    vy_mps: NDArray[np.float64]
    omega_radps: NDArray[np.float64]
    rate_radps: dict[str, NDArray[np.float64]]
    angle_rad: dict[str, NDArray[np.float64]]


@dataclass(frozen=True)
class Schedule:
    """A route's schedule: the profile, per-segment wheel commands and the samples."""

    route: str
    drive: DriveModel
    profile: SpeedProfile
    cruise_rate_radps: dict[str, NDArray[np.float64]]   # per wheel, one entry per segment
    cruise_angle_rad: dict[str, NDArray[np.float64]]    # per steered wheel
    samples: Samples
    dt_s: float

    @property
    def segments(self) -> tuple[Segment, ...]:
        return self.profile.segments


def _segment_unit_twists(profile: SpeedProfile) -> NDArray[np.float64]:
    """Body twist per unit progress rate at each segment's reference place, shape (n, 3)."""
    out = np.zeros((len(profile.segments), 3))
    for i, s in enumerate(profile.segments):
        if s.kind == "pivot":
            out[i] = (0.0, 0.0, math.copysign(1.0, s.turn_rad) if s.turn_rad else 0.0)
            continue
        if s.kind == "line":
            phi = s.course - (s.start[2] + 0.5 * s.turn_rad)  # middle of the line
        else:
            phi = 0.0 if s.direction > 0 else math.pi
        w = s.turn_rad / s.length_m if s.length_m > 0 else 0.0
        out[i] = (math.cos(phi), math.sin(phi), w)
    return out


def _sample_plan(profile: SpeedProfile, dt_s: float) -> tuple[NDArray, NDArray]:
    """(segment index, local time) of every sample, in time order."""
    total = profile.total_time_s
    grid = np.arange(0.0, total + 0.5 * dt_s, dt_s)
    grid = grid[grid < total - 1e-9]
    times = np.unique(np.concatenate([grid, profile.breakpoints_s(), [total]]))
    idx_out, tau_out = [], []
    n = len(profile.segments)
    for i in range(n):
        t0, dur = float(profile.t0_s[i]), float(profile.duration_s[i])
        if dur <= 0.0:
            continue
        inside = times[(times > t0 + 1e-9) & (times < t0 + dur - 1e-9)]
        tau = np.concatenate([[0.0], inside - t0, [dur]]) if dur > 0 else np.array([0.0])
        idx_out.append(np.full(tau.size, i))
        tau_out.append(tau)
    if not idx_out:  # nothing moves: one sample at the start, if there is a route at all
        k = min(n, 1)
        return np.zeros(k, dtype=np.int64), np.zeros(k)
    return np.concatenate(idx_out).astype(np.int64), np.concatenate(tau_out)


def _poses(profile: SpeedProfile, idx: NDArray, progress: NDArray) -> NDArray[np.float64]:
    out = np.zeros((idx.size, 3))
    for i in np.unique(idx):
        m = idx == i
        seg = profile.segments[i]
        amount = profile.amount[i]
        f = progress[m] / amount if amount > 0 else np.ones(int(m.sum()))
        out[m] = seg.poses_at_fraction(f)
    return out


MAX_SAMPLES = 2_000_000
"""Most timed samples one schedule holds (about 400 MB as JSON); a route that would need more
at its time step is refused before any sample is made."""


def build_schedule(route_name: str, segments: Sequence[Segment], chassis,
                   dt_s: float = 0.1, file: str = "<schedule>", place: str = "") -> Schedule:
    """The wheel-rate schedule of a planned route.

    Parameters
    ----------
    route_name : str
    segments : sequence of Segment
        The planned route (continuous).
    chassis : Chassis
        Drive type, dimensions and limits.
    dt_s : float
        Sample interval, s (samples also fall on joints and ends of speed ramps).
    file, place : str
        Named in a refusal (the project file and the route's key path).

    Returns
    -------
    Schedule

    Raises
    ------
    ValidationError
        ``dt_s`` not positive, the chassis lacks a dimension its drive needs, a pivot on a
        drive that cannot pivot, or more than :data:`MAX_SAMPLES` samples.
    """
    if not (isinstance(dt_s, (int, float)) and math.isfinite(dt_s) and dt_s > 0):
        raise ValidationError("<schedule>", "dt_s", f"a positive time step in s, got {dt_s!r}")
    drive = drive_for(chassis)
    try:
        prof = speed_profile(segments, drive, Limits.from_chassis(chassis))
    except ValidationError as exc:
        where = f"{place}, {exc.place}" if place and exc.place else (place or exc.place)
        raise ValidationError(file, where, exc.expected) from None
    n = len(prof.segments)
    total = prof.total_time_s
    need = total / float(dt_s) + 2 * n + 2  # the grid, plus joints and ramp ends
    if not need <= MAX_SAMPLES:
        raise ValidationError(file, place or "dt_s",
                              f"the schedule would need {need:.2g} samples (the route takes "
                              f"{total:.4g} s at a time step of {dt_s:g} s; at most "
                              f"{MAX_SAMPLES:.0e}); raise --dt or check max_speed_mps")

    unit = _segment_unit_twists(prof)
    cruise = prof.rate_cruise[:, None] * unit if n else np.zeros((0, 3))
    unit_cmd = drive.inverse(unit[:, 0], unit[:, 1], unit[:, 2])
    cruise_cmd = drive.inverse(cruise[:, 0], cruise[:, 1], cruise[:, 2],
                               hold_angles=unit_cmd.angle_rad)

    idx, tau = _sample_plan(prof, float(dt_s))
    st = prof.state_in_segment(idx, tau)
    ux, uy = prof.body_direction(st)
    vx, vy = st.v_mps * ux, st.v_mps * uy
    pose = _poses(prof, idx, st.progress)
    # Angles from the direction of travel so a wheel at rest already points where it must go.
    dir_cmd = drive.inverse(ux, uy, prof.yaw_per_progress[idx] if n else np.zeros(0))
    cmd = drive.inverse(vx, vy, st.omega_radps, hold_angles=dir_cmd.angle_rad)
    samples = Samples(
        t_s=prof.t0_s[idx] + tau if n else np.zeros(0), segment=idx, station_m=st.station_m,
        x=pose[:, 0], y=pose[:, 1], heading_rad=pose[:, 2], v_mps=st.v_mps, vx_mps=vx,
        vy_mps=vy, omega_radps=st.omega_radps,
        rate_radps={k: np.asarray(cmd.rate_radps[k]) for k in drive.wheel_names},
        angle_rad={k: np.asarray(dir_cmd.angle_rad[k]) for k in drive.steered_wheels},
    )
    return Schedule(route_name, drive, prof,
                    {k: np.asarray(cruise_cmd.rate_radps[k]) for k in drive.wheel_names},
                    {k: np.asarray(unit_cmd.angle_rad[k]) for k in drive.steered_wheels},
                    samples, float(dt_s))


# -- export ---------------------------------------------------------------------------------
def _segment_scalars(s: Schedule, i: int) -> dict:
    p = s.profile
    seg = p.segments[i]
    return {
        "index": i,
        "kind": seg.kind,
        "t0_s": float(p.t0_s[i]),
        "duration_s": float(p.duration_s[i]),
        "length_m": float(seg.length_m),
        "v_start_mps": float(p.v_start_mps[i]),
        "v_cruise_mps": float(p.v_cruise_mps[i]),
        "v_end_mps": float(p.v_end_mps[i]),
        "yaw_rate_dps": math.degrees(float(p.yaw_rate_cruise_radps[i])),
        "turn_deg": math.degrees(seg.turn_rad),
        "radius_m": seg.radius_m,
        "direction": int(seg.direction),
        "binding_limit": p.binding[i],
    }


def _wheels(drive: DriveModel, rates: dict, angles: dict, k: int) -> dict:
    out = {}
    for n in drive.wheel_names:
        w = {"rate_radps": float(rates[n][k])}
        if n in drive.steered_wheels:
            w["angle_deg"] = math.degrees(float(angles[n][k]))
        out[n] = w
    return out


def schedule_to_dict(s: Schedule) -> dict:
    """The contract's ``schedule --format json`` object (plus a few extra keys).

    Extra keys: per segment ``turn_deg``, ``radius_m``, ``direction``, ``binding_limit``
    (the limit that set the cruise); per sample ``segment``, ``station_m``,
    ``yaw_rate_dps``; at the top ``duration_s``, ``length_m``, ``dt_s`` and ``limits``.
    """
    p = s.profile
    lim = p.limits
    segs = []
    for i in range(len(p.segments)):
        row = _segment_scalars(s, i)
        row["wheels"] = _wheels(s.drive, s.cruise_rate_radps, s.cruise_angle_rad, i)
        segs.append(row)
    sm = s.samples
    samples = []
    for k in range(sm.t_s.size):
        samples.append({
            "t_s": float(sm.t_s[k]), "segment": int(sm.segment[k]),
            "station_m": float(sm.station_m[k]), "x": float(sm.x[k]), "y": float(sm.y[k]),
            "heading_deg": math.degrees(float(sm.heading_rad[k])), "v_mps": float(sm.v_mps[k]),
            "yaw_rate_dps": math.degrees(float(sm.omega_radps[k])),
            "wheels": _wheels(s.drive, sm.rate_radps, sm.angle_rad, k),
        })
    return {
        "route": s.route,
        "drive": s.drive.name,
        "duration_s": p.total_time_s,
        "length_m": float(sum(seg.length_m for seg in p.segments)),
        "dt_s": s.dt_s,
        "limits": {
            "max_speed_mps": lim.max_speed_mps, "max_accel_mps2": lim.max_accel_mps2,
            "max_decel_mps2": lim.max_decel_mps2,
            "max_wheel_rate_radps": lim.max_wheel_rate_radps,
            "max_lateral_accel_mps2": lim.max_lateral_accel_mps2,
            "max_yaw_rate_dps": None if lim.max_yaw_rate_radps is None
            else math.degrees(lim.max_yaw_rate_radps),
        },
        "segments": segs,
        "samples": samples,
    }


def csv_columns(drive: DriveModel) -> list[str]:
    """The CSV header: segment scalars, then wheel rates, then steered-wheel angles."""
    return (list(SEGMENT_COLUMNS) + [f"{n}_rate_radps" for n in drive.wheel_names]
            + [f"{n}_angle_deg" for n in drive.steered_wheels])


def schedule_to_csv(s: Schedule) -> str:
    """One row per segment, columns as :func:`csv_columns` (an arc-less radius is empty)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(csv_columns(s.drive))
    for i in range(len(s.profile.segments)):
        row = _segment_scalars(s, i)
        cells = ["" if row[c] is None else _cell(row[c]) for c in SEGMENT_COLUMNS]
        cells += [_cell(float(s.cruise_rate_radps[n][i])) for n in s.drive.wheel_names]
        cells += [_cell(math.degrees(float(s.cruise_angle_rad[n][i])))
                  for n in s.drive.steered_wheels]
        w.writerow(cells)
    return buf.getvalue()


def _cell(v) -> str:
    if isinstance(v, float):
        return f"{v:.9g}"
    return str(v)


def schedule_series(s: Schedule) -> dict:
    """Numpy arrays over the samples for plots, against time (``t_s``) or distance.

    Returns
    -------
    dict
        ``t_s``, ``station_m``, ``v_mps``, ``omega_radps``, ``segment``, ``x``, ``y``,
        ``heading_deg``; ``rate_radps`` and ``angle_deg`` (dicts by wheel name); ``limits``:
        the scalar chassis limits (``None`` where absent) and ``speed_cap_mps``, the speed cap
        of each sample's segment (NaN in pivots), with ``yaw_cap_radps`` (NaN off pivots).
    """
    sm = s.samples
    p = s.profile
    piv = p.is_pivot[sm.segment] if sm.segment.size else np.zeros(0, bool)
    cap = p.cap[sm.segment] if sm.segment.size else np.zeros(0)
    lim = p.limits
    return {
        "t_s": sm.t_s, "station_m": sm.station_m, "v_mps": sm.v_mps,
        "omega_radps": sm.omega_radps, "segment": sm.segment, "x": sm.x, "y": sm.y,
        "heading_deg": np.degrees(sm.heading_rad),
        "rate_radps": dict(sm.rate_radps),
        "angle_deg": {k: np.degrees(v) for k, v in sm.angle_rad.items()},
        "limits": {
            "max_speed_mps": lim.max_speed_mps,
            "max_wheel_rate_radps": lim.max_wheel_rate_radps,
            "max_lateral_accel_mps2": lim.max_lateral_accel_mps2,
            "max_yaw_rate_radps": lim.max_yaw_rate_radps,
            "speed_cap_mps": np.where(piv, np.nan, cap),
            "yaw_cap_radps": np.where(piv, cap, np.nan),
        },
    }
