"""Transition curves: continuous-curvature (CC) turns of clothoid, arc and clothoid.

A turn that jumps from a straight line onto an arc asks the drive for a step: every wheel's
rate (and a car's steer angle) would have to change in no time. A CC turn (Fraichard &
Scheuer, "From Reeds and Shepp's to continuous-curvature paths", IEEE T-RO 20(6), 2004) eases
into the arc with a clothoid whose curvature grows linearly with distance, at the sharpness
``sigma`` (1/m^2), keeps the arc's curvature ``kappa = 1 / R`` in between, and eases out with
the mirror clothoid. Each clothoid turns the heading by ``kappa^2 / (2 sigma)``; where the
corner turns less than the two together (``|a| < kappa^2 / sigma``) the turn is two clothoids
meeting at the peak curvature ``sqrt(|a| sigma)`` (an "elementary path"), which is gentler
than ``1 / R``. So a CC turn never reaches a radius below ``R``: the route's turn radius stays
the smallest radius of the route.

**Which sharpness, and why.** The planner chooses ``sigma`` from the chassis's rate limits at
the design speed ``v_d`` of the turn (the fastest speed its arc allows: ``max_speed_mps``, the
wheel-rate, lateral-acceleration and yaw-rate caps on the arc), so that half of each limit is
left for speeding up and slowing down on the clothoid:

- ``max_wheel_accel_radps2``: at speed ``v`` a wheel's rate is ``v rho(kappa)``, changing at
  ``v^2 sigma rho'(kappa) + a rho(kappa)`` on a clothoid; ``sigma <= alpha_w / (2 v_d^2
  max|rho'|)``;
- ``max_yaw_accel_dps2``: yaw rate ``kappa v`` changes at ``sigma v^2 + kappa a``;
  ``sigma <= alpha_yaw / (2 v_d^2)``;
- ``max_steer_rate_dps`` (bicycle, Ackermann): the steer angle ``atan(L kappa)`` changes at
  ``L sigma v / (1 + L^2 kappa^2) <= L sigma v``; ``sigma <= rate / (2 L v_d)``.

With none of those limits given (transitions asked for explicitly), ``sigma`` keeps the lateral
jerk ``sigma v^3`` at the design speed to ``COMFORT_JERK_MPS3`` (common practice for rail and
road transition curves: 0.3 to 0.6 m/s^3). The speed profile (:mod:`kinematics.timing.profile`)
then lowers the speed wherever the limits need it: the planner fixes the geometry once, the
profile makes it drivable.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from kinematics.motion.drives import DriveModel, drive_for
from kinematics.motion.segments import Segment, arc, clothoid

#: Lateral jerk used when the chassis gives no rate limit, m/s^3 (common practice).
COMFORT_JERK_MPS3 = 0.5
#: Share of each rate limit the planner spends on the curvature change (the rest is left for
#: the speed to change on the clothoid).
CURVATURE_SHARE = 0.5
#: Curvature samples used to bound a wheel's rate and its derivative along a clothoid.
_KAPPA_SAMPLES = 33


def wheel_rate_bounds(drive: DriveModel, kappa0: float, kappa1: float, direction: int = 1
                      ) -> tuple[float, float]:
    """``(max |rho|, max |d rho / d kappa|)`` over every wheel and every curvature between
    ``kappa0`` and ``kappa1``, where ``rho(kappa)`` is a wheel's rate per unit speed.

    Every drive's wheel rate per unit speed is a norm of an affine function of ``kappa`` (a
    contact point's velocity ``(1 - kappa y_i, kappa x_i)``), so it is convex in ``kappa``
    and its largest value is at an end; the derivative is taken by central differences at
    ``_KAPPA_SAMPLES`` points, its largest magnitude also at an end for the same reason
    (a norm's derivative is monotone along a line), and both ends are included.
    """
    ks = np.linspace(kappa0, kappa1, _KAPPA_SAMPLES)
    d = float(direction)
    h = 1e-6 * max(1.0, float(np.max(np.abs(ks))))
    up = drive.inverse(d * np.ones_like(ks), np.zeros_like(ks), d * (ks + h)
                       ).rates(drive.wheel_names)
    dn = drive.inverse(d * np.ones_like(ks), np.zeros_like(ks), d * (ks - h)
                       ).rates(drive.wheel_names)
    # inverse takes the yaw rate per unit speed: omega = kappa * v for forward travel and
    # omega = kappa * (signed distance rate) in reverse; the rates above use v = 1.
    rho = drive.inverse(d * np.ones_like(ks), np.zeros_like(ks), d * ks).rates(drive.wheel_names)
    grad = np.abs(up - dn) / (2.0 * h)
    return float(np.max(np.abs(rho))), float(np.max(grad))


def design_speed(chassis, radius_m: float, drive: DriveModel | None = None) -> float:
    """The fastest speed on an arc of ``radius_m`` within the chassis's speed caps, m/s."""
    drive = drive or drive_for(chassis)
    v = float(chassis.max_speed_mps)
    k = 1.0 / radius_m if radius_m > 0.0 else 0.0
    if chassis.max_wheel_rate_radps is not None:
        per = float(drive.max_rate_per_unit(1.0, 0.0, k))
        if per > 0.0:
            v = min(v, chassis.max_wheel_rate_radps / per)
    if k > 0.0 and chassis.max_lateral_accel_mps2 is not None:
        v = min(v, math.sqrt(chassis.max_lateral_accel_mps2 / k))
    if k > 0.0 and chassis.max_yaw_rate_dps is not None:
        v = min(v, math.radians(chassis.max_yaw_rate_dps) / k)
    return v


def transition_sharpness(chassis, radius_m: float) -> float:
    """The sharpness ``sigma`` (1/m^2) of the clothoids easing into an arc of ``radius_m``
    (see the module docstring)."""
    drive = drive_for(chassis)
    v = max(design_speed(chassis, radius_m, drive), 1e-3)
    k = 1.0 / radius_m
    caps = []
    if chassis.max_wheel_accel_radps2 is not None:
        _, grad = wheel_rate_bounds(drive, 0.0, k)
        if grad > 0.0:
            caps.append(CURVATURE_SHARE * chassis.max_wheel_accel_radps2 / (v * v * grad))
    if chassis.max_yaw_accel_dps2 is not None:
        caps.append(CURVATURE_SHARE * math.radians(chassis.max_yaw_accel_dps2) / (v * v))
    if chassis.max_steer_rate_dps is not None and chassis.wheelbase_m and \
            drive.name in ("bicycle", "ackermann"):
        caps.append(CURVATURE_SHARE * math.radians(chassis.max_steer_rate_dps)
                    / (chassis.wheelbase_m * v))
    if not caps:
        caps.append(COMFORT_JERK_MPS3 / v ** 3)
    return float(min(caps))


def cc_turn(start: Sequence[float], deflection_rad: float, radius_m: float, sigma: float
            ) -> list[Segment]:
    """A continuous-curvature turn from ``start`` (curvature 0) by ``deflection_rad``
    (signed) with arcs no tighter than ``radius_m`` and clothoids of sharpness ``sigma``;
    it ends with curvature 0 again (see the module docstring).

    Public: the route finder smooths found paths with it.

    Examples
    --------
    >>> segs = cc_turn((0.0, 0.0, 0.0), math.pi / 2, 1.0, 1.0)
    >>> [s.kind for s in segs], round(sum(s.turn_rad for s in segs), 12)
    (['clothoid', 'arc', 'clothoid'], 1.570796326795)
    """
    a = float(deflection_rad)
    sgn = math.copysign(1.0, a)
    k = 1.0 / float(radius_m)
    lc = k / sigma
    if k * k / sigma <= abs(a):
        c1 = clothoid(start, 0.0, sgn * k, lc)
        mid_turn = a - sgn * k * k / sigma
        segs = [c1]
        pose = c1.end
        if abs(mid_turn) > 1e-12:
            m = arc(pose, radius_m, mid_turn)
            segs.append(m)
            pose = m.end
        segs.append(clothoid(pose, sgn * k, 0.0, lc))
        return segs
    kp = math.sqrt(abs(a) * sigma)
    lp = kp / sigma
    c1 = clothoid(start, 0.0, sgn * kp, lp)
    return [c1, clothoid(c1.end, sgn * kp, 0.0, lp)]


def cc_tangent_length(deflection_rad: float, radius_m: float, sigma: float) -> float:
    """Distance from a corner to where its CC turn leaves (and, by symmetry, rejoins) the legs.

    The turn from ``(0, 0, 0)`` ends at ``(x, y)`` on the second leg, which passes through the
    corner ``(T, 0)`` at angle ``a``; so ``y = T sin a`` (and ``x = T + T cos a``).
    """
    a = abs(float(deflection_rad))
    if a >= math.pi - 1e-9:
        return math.inf
    if a < 1e-12:
        return 0.0
    end = cc_turn((0.0, 0.0, 0.0), a, radius_m, sigma)[-1].end
    return abs(end[1]) / math.sin(a)
