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
from numpy.typing import ArrayLike, NDArray

from kinematics.motion.drives import DriveModel, drive_for
from kinematics.motion.segments import Segment, arc, clothoid, line

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


def cc_turn(start: Sequence[float], deflection_rad: float, radius_m: float, sigma: float,
            direction: int = 1) -> list[Segment]:
    """A continuous-curvature turn from ``start`` (curvature 0) changing the heading by
    ``deflection_rad`` (signed) with arcs no tighter than ``radius_m`` and clothoids of
    sharpness ``sigma``, driven forward (``direction`` 1) or in reverse (-1); it ends with
    curvature 0 again (see the module docstring).

    Public: the route finder smooths found paths with it.

    Examples
    --------
    >>> segs = cc_turn((0.0, 0.0, 0.0), math.pi / 2, 1.0, 1.0)
    >>> [s.kind for s in segs], round(sum(s.turn_rad for s in segs), 12)
    (['clothoid', 'arc', 'clothoid'], 1.570796326795)
    """
    a = float(deflection_rad)
    d = int(direction)
    sgn = math.copysign(1.0, a)
    sk = sgn * d  # sign of the body curvature (reverse: heading change -curvature * length)
    k = 1.0 / float(radius_m)
    lc = k / sigma
    if k * k / sigma <= abs(a):
        c1 = clothoid(start, 0.0, sk * k, lc, d)
        mid_turn = a - sgn * k * k / sigma
        segs = [c1]
        pose = c1.end
        if abs(mid_turn) > 1e-12:
            m = arc(pose, radius_m, mid_turn, d)
            segs.append(m)
            pose = m.end
        segs.append(clothoid(pose, sk * k, 0.0, lc, d))
        return segs
    kp = math.sqrt(abs(a) * sigma)
    lp = kp / sigma
    c1 = clothoid(start, 0.0, sk * kp, lp, d)
    return [c1, clothoid(c1.end, sk * kp, 0.0, lp, d)]


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
    end = cc_turn_ends(a, radius_m, sigma)[0]  # the end of cc_turn's turn, in closed form
    return abs(float(end[1])) / math.sin(a)


# -- continuous-curvature connections between poses (car-like drives) ----------------------------
def cc_turn_ends(deflection_rad: ArrayLike, radius_m: float, sigma: float
                 ) -> NDArray[np.float64]:
    """End points ``(n, 2)`` of left CC turns of deflections ``>= 0`` from ``(0, 0, 0)``,
    vectorised: the same turns as :func:`cc_turn`, in closed form through the Fresnel
    integrals (a right turn is the mirror image, ``y -> -y``).

    A clothoid from curvature 0 to ``k`` at sharpness ``sigma`` ends at
    ``sqrt(pi / sigma) (C(t), S(t))``, ``t = k / sqrt(pi sigma)``, heading ``k^2 / (2 sigma)``
    (DLMF 7.2); the clothoid easing out is its mirror, so from the pose where it starts it adds
    ``R(theta_end) (a, -b)`` where ``(a, b)`` is the first one's displacement.
    """
    from scipy.special import fresnel

    d = np.atleast_1d(np.asarray(deflection_rad, dtype=float))
    k = 1.0 / radius_m
    dmin = k * k / sigma
    full = d >= dmin
    kk = np.where(full, k, np.sqrt(np.maximum(d, 0.0) * sigma))
    # The full turns share one clothoid: its Fresnel integrals are taken once.
    t = kk / math.sqrt(math.pi * sigma)
    s_, c_ = np.empty_like(t), np.empty_like(t)
    s_[full], c_[full] = (float(v) for v in fresnel(k / math.sqrt(math.pi * sigma)))
    if not full.all():
        s_[~full], c_[~full] = fresnel(t[~full])
    a = math.sqrt(math.pi / sigma) * c_
    b = math.sqrt(math.pi / sigma) * s_
    h = kk * kk / (2.0 * sigma)
    # The arc (full turns only) rotates the first clothoid's end about the arc's centre.
    phi = np.where(d >= dmin, d - dmin, 0.0)
    ox, oy = a - radius_m * np.sin(h), b + radius_m * np.cos(h)
    px = ox + np.cos(phi) * (a - ox) - np.sin(phi) * (b - oy)
    py = oy + np.sin(phi) * (a - ox) + np.cos(phi) * (b - oy)
    cd, sd = np.cos(d), np.sin(d)
    return np.stack([px + cd * a + sd * b, py + sd * a - cd * b], axis=-1)


def _cc_turn_length(d: float, radius_m: float, sigma: float) -> float:
    k = 1.0 / radius_m
    if d >= k * k / sigma:
        return 2.0 * k / sigma + radius_m * (d - k * k / sigma)
    return 2.0 * math.sqrt(d / sigma)


def _csc_gap(theta: NDArray[np.float64], start: Sequence[float], goal: Sequence[float],
             s1: ArrayLike, s2: ArrayLike, radius_m: float, sigma: float, e1: ArrayLike = 1.0,
             e2: ArrayLike = 1.0):
    """For line directions ``theta``: the deflections, and the cross and dot products of the
    line direction with the vector from the first turn's end to the second turn's start.

    ``s1``, ``s2`` are the sides of the turns' centres (+1 left), ``e1``, ``e2`` their
    directions of travel (-1 reverse: the mirror image ``x -> -x`` of the forward turn, whose
    heading changes by ``-s d``); all broadcast against ``theta`` (one word per element)."""
    two_pi = 2.0 * math.pi
    d1 = np.mod(s1 * e1 * (theta - start[2]), two_pi)
    d2 = np.mod(s2 * e2 * (goal[2] - theta), two_pi)
    t1 = cc_turn_ends(d1, radius_m, sigma)
    t2 = cc_turn_ends(d2, radius_m, sigma)
    ax, ay = e1 * t1[..., 0], s1 * t1[..., 1]
    bx, by = e2 * t2[..., 0], s2 * t2[..., 1]
    c0, s0 = math.cos(start[2]), math.sin(start[2])
    x1 = start[0] + c0 * ax - s0 * ay
    y1 = start[1] + s0 * ax + c0 * ay
    ct, st = np.cos(theta), np.sin(theta)
    x2 = goal[0] - (ct * bx - st * by)
    y2 = goal[1] - (st * bx + ct * by)
    dx, dy = x2 - x1, y2 - y1
    return d1, d2, ct * dy - st * dx, ct * dx + st * dy


#: Line directions scanned for each CC word before the roots are refined by bisection.
_SCAN = 720


def cc_connect(start: Sequence[float], goal: Sequence[float], radius_m: float, sigma: float,
               reverse: bool = False, small_turns_only: bool = False) -> list[Segment] | None:
    """The shortest continuous-curvature path of the four turn-line-turn words (LSL, RSR,
    LSR, RSL; each turn a CC turn of :func:`cc_turn`, its arcs of ``radius_m``) from
    ``start`` to ``goal`` (poses ``(x, y, heading_rad)``), or ``None`` where none joins them.
    With ``reverse`` each of the three parts may also be driven backwards (the turn-line-turn
    words of the CC Reeds-Shepp family, cusps where a part ends, at curvature 0).

    The CC version of the Dubins turn-line-turn family (Fraichard & Scheuer 2004, sec. V): the
    line's direction ``theta`` fixes both deflections, and the one equation left (the line
    from the first turn's end to the second turn's start points along ``theta``) is solved by
    scanning ``theta`` and refining each sign change (bisection, then false position), every
    word in the same array pass. Unlike the closed forms of :mod:`kinematics.plan.cc_words`
    this covers turns too small for an arc (two clothoids). The turn-turn-turn words are in
    :mod:`kinematics.plan.cc_words`.

    ``small_turns_only``: only the words where a turn is too small for an arc (deflection
    below ``kappa^2 / sigma``) are looked for, scanning only the line directions that give
    one (a window of that width after the start heading and one before the goal's, at the
    same density); :func:`kinematics.plan.cc_words.cc_shortest` finds the others in closed
    form.

    Public: the route finder smooths found paths with it.
    """
    words = _WORDS_REV if reverse else _WORDS_FWD
    dmin = 1.0 / (radius_m * radius_m * sigma)
    if small_turns_only and dmin < math.pi:
        n = max(16, math.ceil(_SCAN * dmin / (2.0 * math.pi))) + 1
        f = np.linspace(0.0, dmin, n)[None, :]
        rows = np.repeat(words, 2, axis=0)  # each word: the first turn's window, the second's
        first = (np.arange(len(rows)) % 2 == 0)[:, None]
        th = np.where(first, start[2] + rows[:, 0:1] * rows[:, 2:3] * f,
                      goal[2] - rows[:, 1:2] * rows[:, 4:5] * f)
        s1, s2, e1, el, e2 = (rows[:, i:i + 1] for i in range(5))
        _, _, cr, _ = _csc_gap(th, start, goal, s1, s2, radius_m, sigma, e1, e2)
        wi, ji = np.nonzero(np.sign(cr[:, :-1]) != np.sign(cr[:, 1:]))
        if wi.size == 0:
            return None
        w = rows[wi]
        lo, hi = th[wi, ji].copy(), th[wi, ji + 1].copy()
        flo, fhi = cr[wi, ji], cr[wi, ji + 1]
    elif small_turns_only:
        return cc_connect(start, goal, radius_m, sigma, reverse)
    else:
        s1, s2, e1, el, e2 = (words[:, i:i + 1] for i in range(5))
        th = start[2] + np.linspace(0.0, 2.0 * math.pi, _SCAN, endpoint=False)[None, :]
        th = np.broadcast_to(th, (len(words), _SCAN))
        _, _, cr, _ = _csc_gap(th, start, goal, s1, s2, radius_m, sigma, e1, e2)
        # A deflection wrapping from 2 pi to 0 moves no turn end (a full CC turn closes on
        # its start), so the gap is continuous there and every sign change brackets a root;
        # the check on the refined root below drops any that is not.
        nxt = np.roll(np.arange(_SCAN), -1)
        wi, ji = np.nonzero(np.sign(cr) != np.sign(cr[:, nxt]))
        if wi.size == 0:
            return None
        w = words[wi]
        lo = th[wi, ji].copy()
        hi = lo + 2.0 * math.pi / _SCAN
        flo, fhi = cr[wi, ji], cr[wi, nxt[ji]]
    s1, s2, e1, el, e2 = (w[:, i] for i in range(5))
    # Four bisections (a bracket of 5e-4 rad), then the Illinois variant of false position
    # (superlinear on the smooth gap; halving the kept end's value stops one end sticking)
    # until every root's gap is below 1e-12 m or 10 steps.
    side = np.zeros(lo.shape, dtype=np.int8)
    for it in range(14):
        if it < 4:
            mid = 0.5 * (lo + hi)
        else:
            with np.errstate(divide="ignore", invalid="ignore"):
                mid = np.where(fhi != flo, lo - flo * (hi - lo) / (fhi - flo), 0.5 * (lo + hi))
            mid = np.clip(mid, np.minimum(lo, hi), np.maximum(lo, hi))
        _, _, fm, _ = _csc_gap(mid, start, goal, s1, s2, radius_m, sigma, e1, e2)
        left = np.sign(fm) == np.sign(flo)
        lo = np.where(left, mid, lo)
        flo = np.where(left, fm, flo)
        hi = np.where(left, hi, mid)
        fhi = np.where(left, fhi, fm)
        if it >= 4:
            # Illinois: the end kept twice running has its value halved.
            fhi = np.where(left & (side == 1), 0.5 * fhi, fhi)
            flo = np.where(~left & (side == -1), 0.5 * flo, flo)
            side = np.where(left, 1, -1).astype(np.int8)
            if float(np.max(np.abs(fm))) < 1e-12:
                break
    root = mid  # the last point evaluated: the best estimate of each root
    r1, r2, cr_r, dot_r = _csc_gap(root, start, goal, s1, s2, radius_m, sigma, e1, e2)
    run = el * dot_r
    ok = (np.abs(cr_r) <= 1e-9) & (run >= -1e-9)
    if not ok.any():
        return None
    length = (_cc_turn_lengths(r1, radius_m, sigma) + np.maximum(run, 0.0)
              + _cc_turn_lengths(r2, radius_m, sigma))
    j = int(np.flatnonzero(ok)[np.argmin(length[ok])])
    a1, a2, run_j = s1[j] * e1[j] * r1[j], s2[j] * e2[j] * r2[j], max(float(run[j]), 0.0)
    segs: list[Segment] = []
    pose = tuple(float(v) for v in start)
    if abs(a1) > 1e-12:
        segs += cc_turn(pose, float(a1), radius_m, sigma, int(e1[j]))
        pose = segs[-1].end
    if run_j > 1e-12:
        segs.append(line(pose, run_j, int(el[j])))
        pose = segs[-1].end
    if abs(a2) > 1e-12:
        segs += cc_turn(pose, float(a2), radius_m, sigma, int(e2[j]))
    return segs


def _cc_turn_lengths(d: NDArray[np.float64], radius_m: float, sigma: float
                     ) -> NDArray[np.float64]:
    """:func:`_cc_turn_length` of many deflections ``d >= 0``."""
    k = 1.0 / radius_m
    dmin = k * k / sigma
    return np.where(d >= dmin, 2.0 * k / sigma + radius_m * (d - dmin),
                    2.0 * np.sqrt(np.maximum(d, 0.0) / sigma))


def _word_table(reverse: bool) -> NDArray[np.float64]:
    """Rows ``(s1, s2, e1, e_line, e2)`` of every turn-line-turn word."""
    dirs = [(1.0, 1.0, 1.0)] if not reverse else [
        (a, b, c) for a in (1.0, -1.0) for b in (1.0, -1.0) for c in (1.0, -1.0)]
    return np.array([(s1, s2, a, b, c) for s1 in (1.0, -1.0) for s2 in (1.0, -1.0)
                     for a, b, c in dirs])


_WORDS_FWD = _word_table(False)
_WORDS_REV = _word_table(True)
