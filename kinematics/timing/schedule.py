"""Wheel-rate schedules: per-segment wheel rates and steer angles, and timed samples.

A schedule joins the time-optimal speed profile (:mod:`kinematics.timing.profile`) with the drive's
inverse kinematics (:mod:`kinematics.motion.drives`). For each segment it gives the timing, the
speeds and the rate of every wheel (and the angle of every steered wheel) at the segment's
cruise speed; for a holonomic line that turns the body, the wheels are given at the middle of
the line, where the body is halfway through its turn. Samples every ``dt_s`` give pose, speed
and every wheel's rate and angle; they also fall on every joint and every end of a speed ramp,
so the wheel rates between two neighbouring samples are linear in time on lines, arcs and
pivots. ``t_s`` is strictly increasing: a joint is one sample, taken as the start of the later
segment, so a real step in the rates (a line meeting an arc at speed, transitions off) shows
as the change between two neighbouring samples, never as two rows at one time. Where the
chassis stands at a joint while its wheels steer (``SpeedProfile.hold_s``) the samples show
the steer angles turning linearly in time, at the steer-rate limit.

Rates are signed: reverse travel gives negative rates. A steered wheel at rest shows the angle
its segment needs, taken from the direction of travel, so the angles never jump to zero.
The output keys follow ``shared/contract.md`` (``schedule --format json`` and CSV).

Size: one schedule from its build to its three outputs (per-segment table, timed samples,
CSV/JSON text and the plot series); the samples and the trailer columns share the segment walk,
and the exports must write exactly the columns the build made, so they are kept beside it.
"""

from __future__ import annotations

import csv
import io
import itertools
import json
import math
from collections.abc import Iterator, Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from kinematics.errors import ValidationError
from kinematics.files.floorplan import Zone
from kinematics.files.project import Route
from kinematics.motion.arrays import unique_sorted
from kinematics.motion.drives import DriveModel, drive_for
from kinematics.motion.segments import Segment
from kinematics.timing.profile import Limits, SpeedProfile, joint_angles, speed_profile
from kinematics.timing.schedule_text import sample_curvature
from kinematics.timing.zones import SLOW_ZONE, RoutePieces, StopAt, split_route

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
    #: A train's trailers at each sample: shape (samples, trailers, 4) holding x, y (axle
    #: midpoint), heading and hitch angle (to the body ahead), radians; ``None`` without.
    trailers: NDArray[np.float64] | None = None
    trailer_names: tuple[str, ...] = ()


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
    chassis: object = None
    pieces: RoutePieces | None = None  # slow zones and stops: how the plan was cut

    @property
    def segments(self) -> tuple[Segment, ...]:
        return self.profile.segments

    @property
    def stops(self) -> tuple[StopAt, ...]:
        return () if self.pieces is None else self.pieces.stops

    def stop_rows(self) -> list[dict]:
        """Each stop with where it is and when the chassis arrives (``t_s``)."""
        out = []
        p = self.profile
        for st in self.stops:
            k = int(np.searchsorted(p.station0_m, st.station_m - 1e-9, side="left"))
            if k < len(p.segments):
                hold = 0.0 if p.hold_s is None else float(p.hold_s[k])
                t = float(p.t0_s[k]) - hold
            else:
                t = p.total_time_s
            out.append(st.to_dict() | {"t_s": t})
        return out


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


#: Sample times closer than this (s) are one sample.
SAMPLE_MERGE_S = 1e-9


def sample_times(profile: SpeedProfile, dt_s: float) -> NDArray[np.float64]:
    """Every sample time: the ``dt_s`` grid, the joints and ramp ends, and the end; strictly
    increasing (times within ``SAMPLE_MERGE_S`` of an earlier one are dropped)."""
    total = profile.total_time_s
    grid = np.arange(0.0, total + 0.5 * dt_s, dt_s)
    grid = grid[grid < total - SAMPLE_MERGE_S]
    times = unique_sorted(np.concatenate([grid, profile.breakpoints_s(), [total]]))
    keep = np.ones(times.size, dtype=bool)
    last = -np.inf
    for k, t in enumerate(times):
        if t - last <= SAMPLE_MERGE_S:
            keep[k] = False
        else:
            last = t
    if times.size and not keep[-1]:  # the end itself stays
        keep[np.flatnonzero(keep)[-1]] = False
        keep[-1] = True
    return times[keep]


def _sample_plan(profile: SpeedProfile, dt_s: float) -> tuple[NDArray, NDArray]:
    """(segment index, local time) of every sample, in time order; a time before a
    segment's start (``tau < 0``) is its hold, standing at its start."""
    n = len(profile.segments)
    moving = np.flatnonzero(profile.duration_s > 0.0) if n else np.zeros(0, dtype=np.int64)
    if moving.size == 0:  # nothing moves: one sample at the start, if there is a route at all
        k = min(n, 1)
        return np.zeros(k, dtype=np.int64), np.zeros(k)
    times = sample_times(profile, dt_s)
    hold = profile.hold_s if profile.hold_s is not None else np.zeros(n)
    starts = profile.t0_s[moving] - hold[moving]
    starts[0] = -np.inf
    pos = np.searchsorted(starts, times + SAMPLE_MERGE_S, side="right") - 1
    idx = moving[np.clip(pos, 0, moving.size - 1)]
    tau = times - profile.t0_s[idx]
    # Rounding at the end of each segment: the end time itself is the last segment's end.
    tau[-1] = profile.duration_s[idx[-1]]
    return idx.astype(np.int64), tau


def _poses(profile: SpeedProfile, idx: NDArray, progress: NDArray) -> NDArray[np.float64]:
    out = np.zeros((idx.size, 3))
    for i in unique_sorted(idx):
        m = idx == i
        seg = profile.segments[i]
        amount = profile.amount[i]
        f = progress[m] / amount if amount > 0 else np.ones(int(m.sum()))
        out[m] = seg.poses_at_fraction(f)
    return out


MAX_SAMPLES = 200_000
"""Most timed samples one schedule holds (about 40 MB as JSON, written in seconds; 1.6e6 took
over 40 s, found by bench/fuzz.py); a route that needs more at its time step is refused
before any sample is made."""


def build_schedule(route_name: str, segments: Sequence[Segment], chassis,
                   dt_s: float = 0.1, zones: Sequence[Zone] = (),
                   route: Route | None = None, file: str = "<schedule>",
                   place: str = "") -> Schedule:
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
    zones : sequence of Zone
        The floor plan's zones; ``slow`` ones cap the speed (:mod:`kinematics.timing.zones`).
    route : Route, optional
        Its ``stops``: the chassis rests there and waits.
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
    pieces = None
    stops = tuple(getattr(route, "stops", ()) or ())
    try:
        if stops or any(z.kind == "slow" for z in zones):
            pieces = split_route(segments, chassis.footprint, zones,
                                 route.waypoints if route is not None else (), stops)
            prof = speed_profile(pieces.pieces, drive, Limits.from_chassis(chassis),
                                 caps=[None if c is None else (c, SLOW_ZONE) for c in pieces.cap],
                                 rest_before=pieces.rest_before, dwell_s=pieces.dwell_s)
        else:
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
    ypp = prof.yaw_per_progress[idx].copy() if n else np.zeros(0)
    for i in unique_sorted(idx):  # a clothoid's yaw per metre follows its curvature
        seg = prof.segments[i]
        if seg.kind == "clothoid":
            m = idx == i
            ypp[m] = seg.direction * seg.curvature_at(st.progress[m])
    omega = st.rate * ypp
    dir_cmd = drive.inverse(ux, uy, ypp)
    _steer_in_holds(prof, drive, idx, tau, dir_cmd.angle_rad)
    cmd = drive.inverse(vx, vy, omega, hold_angles=dir_cmd.angle_rad)
    samples = Samples(
        t_s=prof.t0_s[idx] + tau if n else np.zeros(0), segment=idx, station_m=st.station_m,
        x=pose[:, 0], y=pose[:, 1], heading_rad=pose[:, 2], v_mps=st.v_mps, vx_mps=vx,
        vy_mps=vy, omega_radps=omega,
        rate_radps={k: np.asarray(cmd.rate_radps[k]) for k in drive.wheel_names},
        angle_rad={k: np.asarray(dir_cmd.angle_rad[k]) for k in drive.steered_wheels},
        **_trailer_samples(prof, chassis, idx, st.progress, file, place),
    )
    return Schedule(route_name, drive, prof,
                    {k: np.asarray(cruise_cmd.rate_radps[k]) for k in drive.wheel_names},
                    {k: np.asarray(unit_cmd.angle_rad[k]) for k in drive.steered_wheels},
                    samples, float(dt_s), chassis, pieces)


def _steer_in_holds(prof: SpeedProfile, drive: DriveModel, idx: NDArray, tau: NDArray,
                    angles: dict) -> None:
    """Steer angles of samples in a hold (``tau < 0``): linear in time from the previous
    segment's end angles to this segment's start angles, in place."""
    if prof.hold_s is None or not drive.steered_wheels:
        return
    for i in unique_sorted(idx[tau < 0.0]):
        h = float(prof.hold_s[i])
        if h <= 0.0 or i == 0:
            continue
        a, b = prof.segments[i - 1], prof.segments[i]
        m = (idx == i) & (tau < 0.0)
        f = np.clip(1.0 + tau[m] / h, 0.0, 1.0)
        ea, sb = joint_angles(drive, a, True), joint_angles(drive, b, False)
        for w in drive.steered_wheels:
            angles[w][m] = float(ea[w]) + f * (float(sb[w]) - float(ea[w]))


def _trailer_samples(profile: SpeedProfile, chassis, idx: NDArray, progress: NDArray,
                     file: str = "<schedule>", place: str = "") -> dict:
    """The trailers' poses and hitch angles at the samples (nothing for a lone chassis); a
    train past the integration budget is refused naming ``file`` and ``place``."""
    trailers = tuple(getattr(chassis, "trailers", ()) or ())
    if not trailers or not profile.segments or idx.size == 0:
        return {}
    from kinematics.motion.trailers import TrainBudgetError, hitch_angles, trace_train

    try:
        trace = trace_train(profile.segments, trailers)
    except TrainBudgetError as exc:
        raise ValidationError(file, f"{place}, trailers" if place else "trailers",
                              exc.expected) from None
    out = np.zeros((idx.size, len(trailers), 4))
    for i in unique_sorted(idx).tolist():
        m = idx == i
        amount = profile.amount[i]
        f = progress[m] / amount if amount > 0 else np.ones(int(m.sum()))
        poses = trace.poses(i, np.clip(f, 0.0, 1.0) * trace.amount(i))
        out[m, :, :3] = poses[:, 1:]
        out[m, :, 3] = hitch_angles(poses)
    return {"trailers": out, "trailer_names": tuple(t.name for t in trailers)}


def trailer_sample_columns(s: Schedule) -> list[str]:
    """Per-sample CSV columns of a train's trailers (``trailer1_x`` ... ``trailer1_hitch_deg``;
    none for a lone chassis)."""
    return [f"trailer{j + 1}_{k}" for j in range(len(s.samples.trailer_names))
            for k in ("x", "y", "heading_deg", "hitch_deg")]


def trailer_sample_cells(s: Schedule, k: int) -> list[float]:
    """The values of :func:`trailer_sample_columns` at sample ``k``."""
    tr = s.samples.trailers
    if tr is None:
        return []
    out: list[float] = []
    for j in range(tr.shape[1]):
        x, y, th, hitch = tr[k, j]
        out += [float(x), float(y), math.degrees(float(th)), math.degrees(float(hitch))]
    return out


def _trailer_dicts(s: Schedule, k: int) -> list[dict]:
    tr = s.samples.trailers
    return [{"name": n, "x": float(tr[k, j, 0]), "y": float(tr[k, j, 1]),
             "heading_deg": math.degrees(float(tr[k, j, 2])),
             "hitch_deg": math.degrees(float(tr[k, j, 3]))}
            for j, n in enumerate(s.samples.trailer_names)]


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


def _sample_dicts(s: Schedule):
    """The JSON rows of the samples, one at a time."""
    sm = s.samples
    curv = sample_curvature(s)
    for k in range(sm.t_s.size):
        row: dict = {}
        if s.pieces is not None:
            row["plan_segment"] = s.pieces.plan_segment[int(sm.segment[k])]
        row.update({
            "t_s": float(sm.t_s[k]), "segment": int(sm.segment[k]),
            "station_m": float(sm.station_m[k]), "x": float(sm.x[k]), "y": float(sm.y[k]),
            "heading_deg": math.degrees(float(sm.heading_rad[k])), "v_mps": float(sm.v_mps[k]),
            "yaw_rate_dps": math.degrees(float(sm.omega_radps[k])),
            "x_m": float(sm.x[k]), "y_m": float(sm.y[k]),
            "curvature_per_m": float(curv[k]),
            "wheels": _wheels(s.drive, sm.rate_radps, sm.angle_rad, k),
        })
        if sm.trailers is not None:
            row["trailers"] = _trailer_dicts(s, k)
        yield row


def schedule_json_pieces(s: Schedule) -> Iterator[str]:
    """The text of ``jsonio.dumps(schedule_to_dict(s))`` in pieces, to be joined or written
    one after another: the samples a block of rows at a time
    (:mod:`kinematics.timing.schedule_text`), never every sample as Python objects at once
    (a 126 000-sample mecanum schedule took 1.1 GB that way; fuzzing found it).

    Raises ``ValueError`` on a non-finite number before the first piece is made."""
    from kinematics.files.jsonio import dumps
    from kinematics.timing.schedule_text import sample_rows_json

    mark = "\x00samples\x00"
    head = schedule_to_dict(s, samples=False)
    head["samples"] = mark
    text = dumps(head)
    before, after = text.split(json.dumps(mark), 1)
    body = sample_rows_json(s)
    if body is None:  # a name the fast template cannot hold: a row at a time
        rows = [dumps(row).rstrip("\n").replace("\n", "\n    ") for row in _sample_dicts(s)]
        body = iter(["[\n    " + ",\n    ".join(rows) + "\n  ]" if rows else "[]"])
    return itertools.chain((before,), body, (after,))


def schedule_json_text(s: Schedule) -> str:
    """``jsonio.dumps(schedule_to_dict(s))``, the same text, made a block of samples at a
    time (:func:`schedule_json_pieces`)."""
    return "".join(schedule_json_pieces(s))


def schedule_to_dict(s: Schedule, samples: bool = True) -> dict:
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
        seg = p.segments[i]
        if seg.kind == "clothoid":
            row["curvature_start_per_m"] = seg.kappa0
            row["curvature_end_per_m"] = seg.kappa1
        row["wheels"] = _wheels(s.drive, s.cruise_rate_radps, s.cruise_angle_rad, i)
        if s.pieces is not None:
            row["plan_segment"] = s.pieces.plan_segment[i]
            if s.pieces.zone[i]:
                row["slow_zone"] = s.pieces.zone[i]
        segs.append(row)
    rows = list(_sample_dicts(s)) if samples else []
    out = {
        "meta": schedule_meta(s),
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
        "samples": rows,
    }
    if s.pieces is not None:
        out["stops"] = s.stop_rows()
    return out


#: Columns of the sampled CSV before the wheels (each carries its unit).
SAMPLE_COLUMNS = ("t_s", "segment", "station_m", "x_m", "y_m", "heading_deg", "v_mps",
                  "yaw_rate_dps", "curvature_per_m")


def sample_columns(drive: DriveModel) -> list[str]:
    """The sampled CSV's header row: sample scalars, wheel rates, steered-wheel angles."""
    return (list(SAMPLE_COLUMNS) + [f"{n}_rate_radps" for n in drive.wheel_names]
            + [f"{n}_angle_deg" for n in drive.steered_wheels])


def schedule_meta(s: Schedule) -> dict:
    """What a controller needs to know about a schedule besides its rows: the chassis
    geometry and limits, the units, the route, its length and duration, the Swathe version."""
    from kinematics import __version__

    c = s.chassis
    geometry: dict = {}
    limits: dict = {}
    if c is not None:
        for key in ("drive", "wheel_radius_m", "track_m", "wheelbase_m", "max_steer_deg",
                    "effective_track_factor", "margin_m"):
            v = getattr(c, key, None)
            if v is not None:
                geometry[key] = v
        geometry["footprint"] = [list(pt) for pt in c.footprint]
        for key in ("max_speed_mps", "max_accel_mps2", "max_decel_mps2",
                    "max_wheel_rate_radps", "max_lateral_accel_mps2", "max_yaw_rate_dps",
                    "max_steer_rate_dps", "max_wheel_accel_radps2", "max_yaw_accel_dps2",
                    "min_turn_radius_m"):
            limits[key] = getattr(c, key, None)
    p = s.profile
    return {
        "swathe_version": __version__,
        "route": s.route,
        "drive": s.drive.name,
        "chassis_name": getattr(c, "name", None),
        "length_m": float(sum(seg.length_m for seg in p.segments)),
        "duration_s": p.total_time_s,
        "dt_s": s.dt_s,
        "samples": int(s.samples.t_s.size),
        "chassis": geometry,
        "limits": limits,
        "units": {"t_s": "s", "station_m": "m", "x_m": "m", "y_m": "m", "x": "m", "y": "m",
                  "heading_deg": "deg, counter-clockwise from +x", "v_mps": "m/s",
                  "yaw_rate_dps": "deg/s", "curvature_per_m": "1/m",
                  "rate_radps": "rad/s, signed", "angle_deg": "deg, body frame"},
        "columns": sample_columns(s.drive) + trailer_sample_columns(s),
        "note": "t_s strictly increasing; rows every dt_s and at joints and ramp ends",
    }


def samples_csv_pieces(s: Schedule) -> Iterator[str]:
    """The text of :func:`samples_to_csv` in pieces: the comment lines and header, then the
    rows a block at a time (:func:`kinematics.timing.schedule_text.sample_rows_csv`)."""
    from kinematics.timing.schedule_text import sample_rows_csv

    meta = schedule_meta(s)

    def dumps(v: object) -> str:
        return json.dumps(v, separators=(", ", ": "))

    buf = io.StringIO()
    buf.write("# Swathe sampled wheel schedule (planning aid, not a safety certification)\n")
    for key in ("swathe_version", "route", "drive", "chassis_name", "length_m", "duration_s",
                "dt_s", "samples"):
        buf.write(f"# {key}: {meta[key]}\n")
    buf.write(f"# chassis: {dumps(meta['chassis'])}\n")
    buf.write(f"# limits: {dumps(meta['limits'])}\n")
    buf.write("# units: " + "; ".join(f"{k} {v}" for k, v in meta["units"].items()) + "\n")
    buf.write("# columns: " + ", ".join(meta["columns"]) + "\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(sample_columns(s.drive) + trailer_sample_columns(s))
    return itertools.chain((buf.getvalue(),), sample_rows_csv(s))


def samples_to_csv(s: Schedule) -> str:
    """The sampled schedule as CSV: ``#`` comment lines (:func:`schedule_meta`), a header row
    (:func:`sample_columns`), then one row per sample, ``t_s`` strictly increasing."""
    return "".join(samples_csv_pieces(s))


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
        ``heading_deg``; ``rate_radps`` and ``angle_deg`` (dicts by wheel name); ``hitch_deg``
        (by trailer name); ``limits``:
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
        # A train's hitch angles by trailer name, degrees (empty for a lone chassis).
        "hitch_deg": ({} if sm.trailers is None else
                      {n: np.degrees(sm.trailers[:, j, 3])
                       for j, n in enumerate(sm.trailer_names)}),
        "limits": {
            "max_speed_mps": lim.max_speed_mps,
            "max_wheel_rate_radps": lim.max_wheel_rate_radps,
            "max_lateral_accel_mps2": lim.max_lateral_accel_mps2,
            "max_yaw_rate_radps": lim.max_yaw_rate_radps,
            "speed_cap_mps": np.where(piv, np.nan, cap),
            "yaw_cap_radps": np.where(piv, cap, np.nan),
        },
    }
