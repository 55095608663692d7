"""The time-optimal speed profile of a route under speed, acceleration and wheel limits.

Each segment is one piece of constant curvature, so every limit gives one speed cap per piece:

- ``max_speed_mps`` on the reference point;
- ``max_wheel_rate_radps`` on every wheel's own rate from the drive's inverse kinematics
  (on an arc the outer wheel reaches it first; on a holonomic line that turns the body the
  worst body-frame course along the line is taken, found exactly from the extremes of
  ``A cos(phi) + B sin(phi) + C``, see
  :meth:`~kinematics.motion.drives.DriveModel.critical_course_angles`);
- ``max_lateral_accel_mps2`` on arcs: ``v^2 / R <= a_lat``;
- ``max_yaw_rate_dps`` on arcs (``v / R``), on holonomic lines that turn (``v |turn| / L``)
  and on pivots.

The chassis comes to rest at the start and end of the route, at every cusp (the direction of
travel in the plan changes at a joint) and before and after every pivot. Between those, the
standard forward-backward pass over the pieces gives the fastest joint speeds: forward from
rest with ``v^2 = v0^2 + 2 a s`` and backward with the deceleration limit, each joint also
capped by both neighbours' caps. Within a piece the speed is then a trapezoid (or triangle)
between its entry and exit speeds, peak ``min(cap, sqrt((2 a d L + d v0^2 + a v1^2) / (a + d)))``
(constant-acceleration kinematics, e.g. Halliday, Resnick & Walker, *Fundamentals of Physics*,
ch. 2). Everything is closed form; nothing is stepped in time.

Rate-of-change limits (optional chassis keys; see :mod:`kinematics.plan.transitions` for how
the planner chose each clothoid's sharpness ``sigma`` from them) act on each piece as follows,
where ``rho`` is a wheel's rate per unit speed and ``rho'`` its change per unit curvature, both
bounded over the piece (:func:`kinematics.plan.transitions.wheel_rate_bounds`):

- ``max_wheel_accel_radps2`` (``alpha_w``): a wheel's rate ``v rho`` changes at
  ``a rho + v^2 sigma rho'``. On lines and arcs the acceleration is capped at
  ``alpha_w / max rho``; on a clothoid half the limit goes to each term: the speed is capped
  at ``sqrt(alpha_w / (2 sigma max rho'))`` and the acceleration at ``alpha_w / (2 max rho)``.
  In a pivot the yaw acceleration is capped so the fastest wheel's rate changes no faster.
- ``max_yaw_accel_dps2``: the yaw rate ``kappa v`` changes at ``kappa a + sigma v^2``; the
  same split (all to ``kappa a`` on arcs); in a pivot it caps the yaw acceleration itself.
- ``max_steer_rate_dps`` (bicycle, Ackermann): a steered wheel's angle changes at
  ``v sigma |d angle / d kappa|``, capping the speed on clothoids.
- On a mecanum or swerve line whose body turns, the body-frame course changes with distance,
  so the wheel rates (and swerve module angles) change at constant speed too: the same split
  caps the speed there.
- Where the curvature steps at a joint (a plain line/arc joint, transitions off) and a limit
  watches it (``max_wheel_accel_radps2`` or ``max_yaw_accel_dps2``: the rates would jump;
  ``max_steer_rate_dps``: the steer angle would), the chassis comes to rest there; where the
  steer angle steps, it stands still for ``hold_s`` while the wheels steer at the limit.

``binding`` names the limit that really sets each piece's fastest speed: the cap where the
piece reaches it, otherwise the acceleration limit (``max_accel_mps2``, ``max_decel_mps2``,
or the rate limit that lowered it) or the neighbour whose cap held the joint speed;
``cap_binding`` names the limit behind the cap itself (the plots label the cap with it).

A pivot is the same trapezoid in the turned angle. Its yaw-rate cap is the least of
``max_yaw_rate_dps`` and the wheel-rate limit; its angular acceleration keeps the fastest
wheel's rim within the linear limits: ``alpha = max_accel / lever`` with ``lever`` the rim
speed of that wheel per unit yaw rate (``track / 2`` for a differential drive). With neither a
yaw-rate nor a wheel-rate limit, a pivot keeps every wheel's rim speed within
``max_speed_mps``. Steering (bicycle, ackermann, swerve) is taken as instantaneous.

Size: one forward-backward pass and every limit it honours; each limit's cap (speed, wheel
rate, lateral and yaw, clothoid transitions, pivots, steer and curvature steps) is a short
function the pass calls, and they share the segment and limit types defined here.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from kinematics.errors import ValidationError
from kinematics.files.project import a_drive
from kinematics.motion.arrays import unique_sorted
from kinematics.motion.drives import DriveModel, drive_for
from kinematics.motion.segments import Segment, segment_stations
from kinematics.plan.transitions import wheel_rate_bounds

# Directions of travel differing by more than this (rad) at a joint make a cusp.
_CUSP_RAD = 1e-6
#: Curvature steps (1/m) and steer-angle steps (rad) below these are rounding, not steps.
_STEP_PER_M = 1e-9
_STEER_STEP_RAD = 1e-9
#: Share of each rate-of-change limit left to speeding up and slowing down on a clothoid.
ACCEL_SHARE = 0.5
#: Slack on a derivative bounded by differences over a grid (its largest value may fall
#: between grid points; 129 points over at most a half turn, common practice).
_GRID_SLACK = 1.05


@dataclass(frozen=True)
class Limits:
    """The chassis limits a profile respects; ``None`` means no such limit."""

    max_speed_mps: float
    max_accel_mps2: float
    max_decel_mps2: float
    max_wheel_rate_radps: float | None = None
    max_lateral_accel_mps2: float | None = None
    max_yaw_rate_radps: float | None = None
    max_wheel_accel_radps2: float | None = None
    max_yaw_accel_radps2: float | None = None
    max_steer_rate_radps: float | None = None

    @classmethod
    def from_chassis(cls, chassis) -> Limits:
        """The limits of a :class:`~kinematics.files.project.Chassis` (decel defaults to accel)."""
        decel = chassis.max_decel_mps2 if chassis.max_decel_mps2 is not None \
            else chassis.max_accel_mps2

        def rad(v):
            return None if v is None else math.radians(v)

        return cls(float(chassis.max_speed_mps), float(chassis.max_accel_mps2), float(decel),
                   chassis.max_wheel_rate_radps, chassis.max_lateral_accel_mps2,
                   rad(chassis.max_yaw_rate_dps),
                   getattr(chassis, "max_wheel_accel_radps2", None),
                   rad(getattr(chassis, "max_yaw_accel_dps2", None)),
                   rad(getattr(chassis, "max_steer_rate_dps", None)))


@dataclass(frozen=True)
class ProfileState:
    """Where the chassis is at given times; every field is an array of the times' shape."""

    index: NDArray[np.int64]        # segment index
    progress: NDArray[np.float64]   # along the segment: m (line, arc) or rad turned (pivot)
    rate: NDArray[np.float64]       # d(progress)/dt: m/s or rad/s, >= 0
    accel: NDArray[np.float64]      # d(rate)/dt
    station_m: NDArray[np.float64]  # distance from the route start
    v_mps: NDArray[np.float64]      # reference-point speed, >= 0 (0 in a pivot)
    omega_radps: NDArray[np.float64]  # yaw rate, signed


@dataclass(frozen=True)
class SpeedProfile:
    """Per-segment timing of a route; arrays have one entry per segment.

    For lines and arcs the ``rate_*`` arrays are speeds (m/s) and ``amount`` is the length;
    for pivots they are yaw rates (rad/s, unsigned) and ``amount`` is ``|turn_rad|``. The
    ``v_*_mps`` arrays are reference-point speeds (0 in a pivot); ``v_cruise_mps`` is the peak
    reached. ``binding`` names the limit that set each piece's cap.
    """

    segments: tuple[Segment, ...]
    t0_s: NDArray[np.float64]
    duration_s: NDArray[np.float64]
    amount: NDArray[np.float64]
    rate_start: NDArray[np.float64]
    rate_cruise: NDArray[np.float64]
    rate_end: NDArray[np.float64]
    accel: NDArray[np.float64]
    decel: NDArray[np.float64]
    cap: NDArray[np.float64]
    binding: tuple[str, ...]
    yaw_per_progress: NDArray[np.float64]  # signed yaw (rad) per unit of progress
    station0_m: NDArray[np.float64]
    limits: Limits
    cap_binding: tuple[str, ...] = ()
    hold_s: NDArray[np.float64] | None = None  # standing still before each segment (steering)

    @property
    def is_pivot(self) -> NDArray[np.bool_]:
        return np.array([s.kind == "pivot" for s in self.segments], dtype=bool)

    @property
    def v_start_mps(self) -> NDArray[np.float64]:
        return np.where(self.is_pivot, 0.0, self.rate_start)

    @property
    def v_cruise_mps(self) -> NDArray[np.float64]:
        return np.where(self.is_pivot, 0.0, self.rate_cruise)

    @property
    def v_end_mps(self) -> NDArray[np.float64]:
        return np.where(self.is_pivot, 0.0, self.rate_end)

    @property
    def yaw_rate_cruise_radps(self) -> NDArray[np.float64]:
        """Signed yaw rate at each segment's peak (cruise) rate."""
        return self.rate_cruise * self.yaw_per_progress

    @property
    def total_time_s(self) -> float:
        if len(self.segments) == 0:
            return 0.0
        return float(self.t0_s[-1] + self.duration_s[-1])

    def state_at_time(self, t: ArrayLike) -> ProfileState:
        """Segment, progress, rates and station at times ``t`` (s), vectorised.

        Times before 0 or after the end are clamped to the start and end of the route. A time
        on a joint belongs to the later segment (the last segment keeps the end time).
        """
        t = np.clip(np.asarray(t, dtype=float), 0.0, self.total_time_s)
        n = len(self.segments)
        if n == 0:
            z = np.zeros_like(t)
            return ProfileState(z.astype(np.int64), z, z, z, z, z, z)
        idx = np.clip(np.searchsorted(self.t0_s, t, side="right") - 1, 0, n - 1)
        return self.state_in_segment(idx, t - self.t0_s[idx])

    def state_in_segment(self, index: ArrayLike, tau: ArrayLike) -> ProfileState:
        """State at local times ``tau`` (s, clamped to the segment) of segments ``index``.

        Unlike :meth:`state_at_time` this says which side of a joint is meant, so the end of
        one segment and the start of the next can both be sampled.
        """
        idx = np.asarray(index, dtype=np.int64)
        tau = np.clip(np.asarray(tau, dtype=float), 0.0, self.duration_s[idx])
        prog, rate, acc = _trapezoid_at(tau, self.amount[idx], self.rate_start[idx],
                                        self.rate_cruise[idx], self.rate_end[idx],
                                        self.accel[idx], self.decel[idx])
        pivot = self.is_pivot[idx]
        station = self.station0_m[idx] + np.where(pivot, 0.0, prog)
        v = np.where(pivot, 0.0, rate)
        ypp = self.yaw_per_progress[idx]
        clo = [i for i in unique_sorted(idx) if self.segments[int(i)].kind == "clothoid"]
        if clo:
            ypp = np.array(ypp, dtype=float, copy=True)
            for i in clo:
                seg = self.segments[int(i)]
                m = idx == i
                ypp[m] = seg.direction * seg.curvature_at(prog[m])
        omega = rate * ypp
        return ProfileState(idx, prog, rate, acc, station, v, omega)

    def twist_at_time(self, t: ArrayLike) -> tuple[NDArray, NDArray, NDArray, ProfileState]:
        """Body twist ``(vx, vy, omega)`` at times ``t`` and the :class:`ProfileState`.

        On arcs and plain lines the body moves along its x axis (backwards in reverse); on a
        holonomic line the course is fixed in the plan while the body turns, so the
        body-frame direction of travel is ``course - heading``.
        """
        st = self.state_at_time(t)
        vx, vy = self.body_direction(st)
        return st.v_mps * vx, st.v_mps * vy, st.omega_radps, st

    def body_direction(self, state: ProfileState) -> tuple[NDArray, NDArray]:
        """Unit body-frame direction of travel ``(cos phi, sin phi)`` at the given states.

        Zero in a pivot. On arcs and plain lines it is ``(+-1, 0)``; on a holonomic line
        ``phi = course - heading`` changes as the body turns.
        """
        n = len(self.segments)
        phi = np.zeros(max(n, 1))
        dphi = np.zeros(max(n, 1))  # change of body-frame course per unit progress
        moving = np.zeros(max(n, 1))
        for i, s in enumerate(self.segments):
            if s.kind == "pivot":
                continue
            moving[i] = 1.0
            if s.kind == "line":
                phi[i] = s.course - s.start[2]
                dphi[i] = -s.turn_rad / s.length_m if s.length_m > 0 else 0.0
            else:
                phi[i] = 0.0 if s.direction > 0 else math.pi
        idx = state.index
        ang = phi[idx] + dphi[idx] * state.progress
        return moving[idx] * np.cos(ang), moving[idx] * np.sin(ang)

    def speed_at_time(self, t: ArrayLike) -> NDArray[np.float64]:
        """Reference-point speed (m/s, >= 0) at times ``t``, vectorised."""
        return self.state_at_time(t).v_mps

    def breakpoints_s(self) -> NDArray[np.float64]:
        """Every time where the acceleration changes: joints and the ends of ramps."""
        with np.errstate(divide="ignore", invalid="ignore"):
            t1 = np.where(self.accel > 0, (self.rate_cruise - self.rate_start) / self.accel, 0.0)
            t3 = np.where(self.decel > 0, (self.rate_cruise - self.rate_end) / self.decel, 0.0)
        ends = self.t0_s + self.duration_s
        holds = self.t0_s - (self.hold_s if self.hold_s is not None else 0.0)
        pts = np.concatenate([self.t0_s, self.t0_s + t1, ends - t3, ends, holds])
        pts = unique_sorted(np.clip(pts, 0.0, self.total_time_s))
        # Round-off makes near-copies of one time (a ramp ending on a joint); keep one.
        keep = np.concatenate([[True], np.diff(pts) > 1e-9])[:pts.size]
        return pts[keep]


def _trapezoid_at(tau, amount, v0, vp, v1, a, d):
    """Progress, rate and acceleration at local time ``tau`` of a trapezoidal piece."""
    with np.errstate(divide="ignore", invalid="ignore"):
        t1 = np.where(a > 0, (vp - v0) / a, 0.0)
        t3 = np.where(d > 0, (vp - v1) / d, 0.0)
        s1 = 0.5 * (v0 + vp) * t1
        s3 = 0.5 * (vp + v1) * t3
        tc = np.where(vp > 0, np.maximum(amount - s1 - s3, 0.0) / vp, 0.0)
    in_acc = tau < t1
    in_dec = tau > t1 + tc
    td = np.maximum(tau - t1 - tc, 0.0)
    prog = np.where(in_acc, v0 * tau + 0.5 * a * tau * tau,
                    np.where(in_dec, s1 + vp * tc + vp * td - 0.5 * d * td * td,
                             s1 + vp * (tau - t1)))
    rate = np.where(in_acc, v0 + a * tau, np.where(in_dec, vp - d * td, vp))
    acc = np.where(in_acc, a, np.where(in_dec, -d, 0.0))
    return np.clip(prog, 0.0, amount), np.maximum(rate, 0.0), acc


def trapezoid_duration(amount: float, v0: float, v1: float, cap: float, accel: float,
                       decel: float) -> tuple[float, float]:
    """Least time over ``amount`` from rate ``v0`` to ``v1`` with a rate cap and ramp limits.

    Returns ``(duration, peak)``. ``v1`` must be reachable from ``v0`` within ``amount``.

    Examples
    --------
    >>> trapezoid_duration(5.0, 0.0, 0.0, 1.0, 0.5, 0.5)  # d >= v^2/a: d/v + v/a
    (7.0, 1.0)
    """
    if amount <= 0.0:
        return 0.0, max(v0, v1)
    peak2 = (2.0 * accel * decel * amount + decel * v0 * v0 + accel * v1 * v1) / (accel + decel)
    peak = min(cap, math.sqrt(max(peak2, 0.0)))
    peak = max(peak, v0, v1)
    t1 = (peak - v0) / accel
    t3 = (peak - v1) / decel
    s1 = 0.5 * (v0 + peak) * t1
    s3 = 0.5 * (peak + v1) * t3
    tc = max(amount - s1 - s3, 0.0) / peak if peak > 0 else 0.0
    return t1 + tc + t3, peak


# -- caps -----------------------------------------------------------------------------------
def _holonomic_line_per_unit(drive: DriveModel, seg: Segment) -> float:
    """Largest wheel rate per unit speed over a line whose body heading turns linearly."""
    w = seg.turn_rad / seg.length_m
    phi0 = seg.course - seg.start[2]          # body-frame course at the start
    phi1 = phi0 - seg.turn_rad                # ... and at the end (the body turned)
    lo, hi = min(phi0, phi1), max(phi0, phi1)
    cands = [phi0, phi1]
    for c in drive.critical_course_angles():
        k0 = math.ceil((lo - c) / math.pi)
        k1 = math.floor((hi - c) / math.pi)
        cands += [c + k * math.pi for k in range(k0, k1 + 1)]
    phi = np.array(cands)
    return float(np.max(drive.max_rate_per_unit(np.cos(phi), np.sin(phi), w * np.ones_like(phi))))


def _per_unit(drive: DriveModel, seg: Segment) -> float:
    """Largest wheel rate per unit speed over a line, arc or clothoid."""
    turning_line = seg.kind == "line" and (seg.turn_rad != 0.0 or seg.course_rad is not None)
    if turning_line:
        return _holonomic_line_per_unit(drive, seg)
    if seg.kind == "clothoid":
        return wheel_rate_bounds(drive, seg.kappa0, seg.kappa1, seg.direction)[0]
    return float(drive.max_rate_per_unit(float(seg.direction), 0.0,
                                         seg.turn_rad / seg.length_m))


def _steer_per_curvature(drive: DriveModel, seg: Segment) -> float:
    """Largest |d angle / d kappa| of a steered wheel over a clothoid (rad per 1/m)."""
    if not drive.steered_wheels or drive.holonomic:
        return 0.0
    ks = np.linspace(seg.kappa0, seg.kappa1, 33)
    h = 1e-6 * max(1.0, float(np.max(np.abs(ks))))
    d = float(seg.direction)
    one, zero = np.ones_like(ks), np.zeros_like(ks)
    up = drive.inverse(d * one, zero, d * (ks + h)).angle_rad
    dn = drive.inverse(d * one, zero, d * (ks - h)).angle_rad
    return float(max(np.max(np.abs(up[w] - dn[w])) / (2.0 * h) for w in drive.steered_wheels))


def _travel_caps(drive: DriveModel, seg: Segment, lim: Limits) -> tuple[float, str]:
    caps = {"max_speed_mps": lim.max_speed_mps}
    if seg.length_m > 0.0:
        if lim.max_wheel_rate_radps is not None:
            per = _per_unit(drive, seg)
            if per > 0.0:
                caps["max_wheel_rate_radps"] = lim.max_wheel_rate_radps / per
        yaw_per_m = abs(seg.turn_rad) / seg.length_m
        if seg.kind == "clothoid":
            yaw_per_m = seg.max_abs_curvature
        if lim.max_yaw_rate_radps is not None and yaw_per_m > 0.0:
            caps["max_yaw_rate_dps"] = lim.max_yaw_rate_radps / yaw_per_m
        if lim.max_lateral_accel_mps2 is not None and seg.kind in ("arc", "clothoid") \
                and yaw_per_m > 0.0:
            caps["max_lateral_accel_mps2"] = math.sqrt(lim.max_lateral_accel_mps2 / yaw_per_m)
        caps.update(_transition_caps(drive, seg, lim))
    key = min(caps, key=caps.get)
    return caps[key], key


def _transition_caps(drive: DriveModel, seg: Segment, lim: Limits) -> dict[str, float]:
    """Speed caps on a clothoid from the rate-of-change limits (module docstring)."""
    sigma = abs(seg.sharpness)
    caps: dict[str, float] = {}
    if _turning_line(seg):
        return _turning_line_caps(drive, seg, lim)
    if seg.kind != "clothoid" or sigma == 0.0:
        return caps
    if lim.max_wheel_accel_radps2 is not None:
        grad = wheel_rate_bounds(drive, seg.kappa0, seg.kappa1, seg.direction)[1]
        if grad > 0.0:
            caps["max_wheel_accel_radps2"] = math.sqrt(
                (1.0 - ACCEL_SHARE) * lim.max_wheel_accel_radps2 / (sigma * grad))
    if lim.max_yaw_accel_radps2 is not None:
        caps["max_yaw_accel_dps2"] = math.sqrt((1.0 - ACCEL_SHARE) * lim.max_yaw_accel_radps2
                                               / sigma)
    if lim.max_steer_rate_radps is not None:
        g = _steer_per_curvature(drive, seg)
        if g > 0.0:
            caps["max_steer_rate_dps"] = lim.max_steer_rate_radps / (sigma * g)
    return caps


def _turning_line(seg: Segment) -> bool:
    return seg.kind == "line" and seg.turn_rad != 0.0 and seg.length_m > 0.0


def _turning_line_caps(drive: DriveModel, seg: Segment, lim: Limits) -> dict[str, float]:
    """Speed caps on a holonomic line whose body turns: the body-frame course ``phi`` changes
    at ``v |turn| / L``, so a wheel's rate ``v rho(phi)`` changes at ``a rho + v^2 rho'(phi)
    |turn| / L`` and a steered module's angle at ``v A'(phi) |turn| / L`` (both bounded over
    the line on a grid of courses, the angles unwrapped over their half-turn flips)."""
    caps: dict[str, float] = {}
    w = seg.turn_rad / seg.length_m
    phi0 = seg.course - seg.start[2]
    phi = np.linspace(phi0, phi0 - seg.turn_rad, 129)
    one = np.ones_like(phi)
    cmd = drive.inverse(np.cos(phi), np.sin(phi), w * one)
    dphi = float(phi[1] - phi[0]) if phi.size > 1 else 1.0
    per_turn = abs(w)  # d phi / d s
    if lim.max_wheel_accel_radps2 is not None:
        rates = cmd.rates(drive.wheel_names)
        if drive.steered_wheels:  # a module's rate changes sign where its angle flips
            rates = np.abs(rates)
        g = float(np.max(np.abs(np.diff(rates, axis=0)))) / abs(dphi) * _GRID_SLACK
        if g > 0.0:
            caps["max_wheel_accel_radps2"] = math.sqrt(
                (1.0 - ACCEL_SHARE) * lim.max_wheel_accel_radps2 / (g * per_turn))
    if lim.max_steer_rate_radps is not None and drive.steered_wheels:
        g = max(float(np.max(np.abs(np.diff(np.unwrap(np.asarray(cmd.angle_rad[k]),
                                                            period=math.pi)))))
                for k in drive.steered_wheels) / abs(dphi) * _GRID_SLACK
        if g > 0.0:
            caps["max_steer_rate_dps"] = lim.max_steer_rate_radps / (g * per_turn)
    return caps


def _travel_accel(drive: DriveModel, seg: Segment, lim: Limits) -> tuple[float, float, str, str]:
    """Acceleration and deceleration limits on a line, arc or clothoid, and the keys that set
    them (module docstring: a clothoid, or a line whose body turns, leaves ``ACCEL_SHARE`` of
    each rate limit to them)."""
    share = ACCEL_SHARE if seg.kind == "clothoid" or _turning_line(seg) else 1.0
    acc, dec = lim.max_accel_mps2, lim.max_decel_mps2
    akey, dkey = "max_accel_mps2", "max_decel_mps2"
    if seg.length_m <= 0.0:
        return acc, dec, akey, dkey
    lims = []
    if lim.max_wheel_accel_radps2 is not None:
        per = _per_unit(drive, seg)
        if per > 0.0:
            lims.append((share * lim.max_wheel_accel_radps2 / per, "max_wheel_accel_radps2"))
    k = seg.max_abs_curvature if seg.kind == "clothoid" else abs(seg.curvature)
    if seg.kind == "line" and seg.length_m > 0.0:
        k = abs(seg.turn_rad) / seg.length_m
    if lim.max_yaw_accel_radps2 is not None and k > 0.0:
        lims.append((share * lim.max_yaw_accel_radps2 / k, "max_yaw_accel_dps2"))
    for v, key in lims:
        if v < acc:
            acc, akey = v, key
        if v < dec:
            dec, dkey = v, key
    return acc, dec, akey, dkey


def _pivot_caps(drive: DriveModel, lim: Limits) -> tuple[float, str]:
    caps = {}
    if lim.max_yaw_rate_radps is not None:
        caps["max_yaw_rate_dps"] = lim.max_yaw_rate_radps
    if lim.max_wheel_rate_radps is not None:
        caps["max_wheel_rate_radps"] = drive.max_pivot_yaw_rate(lim.max_wheel_rate_radps)
    if not caps:
        caps["max_speed_mps"] = lim.max_speed_mps / drive.pivot_lever_m()
    key = min(caps, key=caps.get)
    return caps[key], key


def _pivot_accel(drive: DriveModel, lim: Limits) -> tuple[float, float, str, str]:
    """Yaw acceleration and deceleration limits of a pivot (rad/s^2) and the keys."""
    lever = drive.pivot_lever_m()
    acc, dec = lim.max_accel_mps2 / lever, lim.max_decel_mps2 / lever
    akey, dkey = "max_accel_mps2", "max_decel_mps2"
    lims = []
    if lim.max_wheel_accel_radps2 is not None:
        lims.append((drive.max_pivot_yaw_rate(lim.max_wheel_accel_radps2),
                     "max_wheel_accel_radps2"))
    if lim.max_yaw_accel_radps2 is not None:
        lims.append((lim.max_yaw_accel_radps2, "max_yaw_accel_dps2"))
    for v, key in lims:
        if v < acc:
            acc, akey = v, key
        if v < dec:
            dec, dkey = v, key
    return acc, dec, akey, dkey


def _end_curvature(seg: Segment, end: bool) -> float:
    if seg.kind == "clothoid":
        return seg.kappa1 if end else seg.kappa0
    if seg.kind == "line" and seg.length_m > 0.0:
        return seg.turn_rad / seg.length_m  # a holonomic line's yaw per metre
    return seg.curvature


def joint_angles(drive: DriveModel, seg: Segment, end: bool) -> dict:
    """Steered-wheel angles (rad) at the start or end of a line, arc or clothoid, from its
    direction of travel and curvature (a wheel at rest points where it must go)."""
    k = _end_curvature(seg, end)
    if seg.kind == "line" and (seg.course_rad is not None or seg.turn_rad != 0.0):
        phi = seg.course - (seg.start[2] + (seg.turn_rad if end else 0.0))
        return drive.inverse(np.cos(phi), np.sin(phi), k).angle_rad
    d = float(seg.direction)
    return drive.inverse(d, 0.0, d * k).angle_rad


def _steer_step(drive: DriveModel, a: Segment, b: Segment) -> float:
    """Largest steered-wheel angle change (rad) across the joint of ``a`` and ``b``."""
    if not drive.steered_wheels or a.kind == "pivot" or b.kind == "pivot":
        return 0.0
    ea, sb = joint_angles(drive, a, True), joint_angles(drive, b, False)
    return max(abs(float(ea[w]) - float(sb[w])) for w in drive.steered_wheels)


def _curvature_step(a: Segment, b: Segment) -> bool:
    if a.kind == "pivot" or b.kind == "pivot":
        return False
    return abs(_end_curvature(a, True) - _end_curvature(b, False)) > _STEP_PER_M


def _course_at(seg: Segment, end: bool) -> float:
    if seg.kind == "line":
        return seg.course
    th = seg.end[2] if end else seg.start[2]
    return th + (0.0 if seg.direction > 0 else math.pi)


def _must_rest(a: Segment, b: Segment) -> bool:
    if a.kind == "pivot" or b.kind == "pivot":
        return True
    return abs(math.remainder(_course_at(a, True) - _course_at(b, False), 2 * math.pi)) > _CUSP_RAD


# -- the profile ----------------------------------------------------------------------------
def speed_profile(segments: Sequence[Segment], drive: DriveModel,
                  limits: Limits, caps: Sequence[tuple[float, str] | None] | None = None,
                  rest_before: frozenset[int] = frozenset(),
                  dwell_s: Sequence[float] | None = None) -> SpeedProfile:
    """The fastest speed profile along ``segments`` within ``limits``.

    Parameters
    ----------
    segments : sequence of Segment
        The route, joints continuous.
    drive : DriveModel
        Gives every wheel's rate for the wheel-rate limit.
    limits : Limits
        See :meth:`Limits.from_chassis`.
    caps : sequence, optional
        Per segment, a further speed cap ``(m/s, binding name)`` or ``None`` (slow zones,
        :mod:`kinematics.timing.zones`).
    rest_before : set of int
        Segments before which the chassis comes to rest (stops).
    dwell_s : sequence of float, optional
        Per segment, time standing still before it (s), on top of any steering hold.

    Returns
    -------
    SpeedProfile

    Raises
    ------
    ValidationError
        A pivot on a drive that cannot pivot (bad input: the segments came from elsewhere).

    Examples
    --------
    >>> from kinematics.motion.drives import DifferentialDrive
    >>> from kinematics.motion.segments import line
    >>> p = speed_profile([line((0, 0, 0), 5.0)], DifferentialDrive(0.1, 0.5),
    ...                   Limits(1.0, 0.5, 0.5))
    >>> round(p.total_time_s, 9)  # 5 m at 1 m/s after ramps of 0.5 m/s^2: d/v + v/a
    7.0
    """
    segs = tuple(segments)
    n = len(segs)
    amount = np.zeros(n)
    cap = np.zeros(n)
    acc = np.zeros(n)
    dec = np.zeros(n)
    yaw_per = np.zeros(n)
    binding = []
    akeys, dkeys = [], []
    for i, s in enumerate(segs):
        if s.kind == "pivot":
            if not drive.can_pivot:
                raise ValidationError("<route>", f"segment {i}",
                                      f"a turn on the spot, which {a_drive(drive.name)} drive "
                                      "cannot make; plan the route with a turn radius")
            c, key = _pivot_caps(drive, limits)
            amount[i] = abs(s.turn_rad)
            acc[i], dec[i], ak, dk = _pivot_accel(drive, limits)
            yaw_per[i] = math.copysign(1.0, s.turn_rad)
        else:
            c, key = _travel_caps(drive, s, limits)
            amount[i] = s.length_m
            acc[i], dec[i], ak, dk = _travel_accel(drive, s, limits)
            yaw_per[i] = s.turn_rad / s.length_m if s.length_m > 0 else 0.0
            if caps is not None and caps[i] is not None and caps[i][0] < c:
                c, key = caps[i]
        cap[i] = c
        binding.append(key)
        akeys.append(ak)
        dkeys.append(dk)

    # Joint speeds: rest at the ends, cusps, pivots and watched curvature steps; else the
    # lower neighbour cap. A steer angle step also waits while the wheels steer.
    node = np.zeros(n + 1)
    hold = np.zeros(n)
    watch_rates = limits.max_wheel_accel_radps2 is not None or \
        limits.max_yaw_accel_radps2 is not None
    for j in range(1, n):
        a, b = segs[j - 1], segs[j]
        rest = _must_rest(a, b) or (watch_rates and _curvature_step(a, b)) or \
            j in rest_before
        if limits.max_steer_rate_radps is not None:
            step = _steer_step(drive, a, b)
            if step > _STEER_STEP_RAD:
                rest = True
                hold[j] = step / limits.max_steer_rate_radps
        node[j] = 0.0 if rest else min(cap[j - 1], cap[j])
    if dwell_s is not None:
        hold = hold + np.asarray(dwell_s, dtype=float)
    for i in range(n):  # forward: what acceleration allows
        node[i + 1] = min(node[i + 1], math.sqrt(node[i] ** 2 + 2.0 * acc[i] * amount[i]))
    for i in range(n - 1, -1, -1):  # backward: what deceleration allows
        node[i] = min(node[i], math.sqrt(node[i + 1] ** 2 + 2.0 * dec[i] * amount[i]))

    dur = np.zeros(n)
    peak = np.zeros(n)
    for i in range(n):
        dur[i], peak[i] = trapezoid_duration(amount[i], node[i], node[i + 1], cap[i], acc[i],
                                             dec[i])
    t0 = np.cumsum(np.concatenate([[0.0], dur[:-1]]) + hold) if n else np.zeros(0)
    real = _real_binding(binding, akeys, dkeys, cap, peak, node)
    return SpeedProfile(segs, t0, dur, amount, node[:-1].copy(), peak, node[1:].copy(), acc, dec,
                        cap, tuple(real), yaw_per, segment_stations(segs)[:-1], limits,
                        tuple(binding), hold)


def _real_binding(cap_keys: list[str], akeys: list[str], dkeys: list[str],
                  cap: NDArray[np.float64], peak: NDArray[np.float64],
                  node: NDArray[np.float64]) -> list[str]:
    """The limit that really sets each piece's fastest speed (module docstring)."""
    out = []
    n = len(cap_keys)
    for i in range(n):
        rel = 1e-9 * max(1.0, float(cap[i]))
        v0, v1 = float(node[i]), float(node[i + 1])
        if peak[i] >= cap[i] - rel:
            out.append(cap_keys[i])
        elif peak[i] > v0 + rel and peak[i] > v1 + rel:
            # A triangle: it speeds up as fast as it may, then slows down as fast as it may;
            # the lower of the two is the one that cost time.
            out.append(akeys[i])
        elif peak[i] > v1 + rel:
            out.append(dkeys[i])   # entered at its fastest, slows for what follows
        elif peak[i] > v0 + rel:
            out.append(akeys[i])   # speeds up all the way to its end
        else:
            # Constant below its cap: a neighbour's cap held the joints.
            j = i + 1 if i + 1 < n and v1 >= cap[i + 1] - rel else i - 1
            out.append(cap_keys[j] if 0 <= j < n else akeys[i])
    return out


def profile_for(segments: Sequence[Segment], chassis) -> SpeedProfile:
    """:func:`speed_profile` with the drive and limits of a chassis."""
    return speed_profile(segments, drive_for(chassis), Limits.from_chassis(chassis))
