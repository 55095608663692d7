"""Where a route passes a door: the station at which the chassis reference point crosses the
door line, from jamb ``a`` to jamb ``b``.

Along a segment the reference point's signed distance to the door line changes sign where it
crosses; the poses come from the segment's closed form
(:meth:`kinematics.motion.segments.Segment.poses_at_fraction`), sampled every
:data:`SAMPLE_M` and the sign change refined by bisection to :data:`STATION_TOL_M`. A
crossing counts where it lies between the jambs (the door line, not its extension). A route
whose reference point never crosses the line (it ends in the doorway, or only a corner of the
body reaches through) is placed where the reference point comes nearest the door line.

Source: textbook plane geometry (signed distance of a point to a line, the cross product).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from kinematics.motion.segments import Segment

#: Spacing of the reference-point samples searched for a sign change, metres.
SAMPLE_M = 0.01
#: The crossing station is refined to this, metres.
STATION_TOL_M = 1e-9


def _side_along(poses: np.ndarray, a: Sequence[float], b: Sequence[float]
                ) -> tuple[np.ndarray, np.ndarray, float]:
    """Signed distance across the door line (left of a->b positive) and the fraction along it
    (0 at ``a``, 1 at ``b``) of each pose's reference point, and the door's width."""
    ax, ay = float(a[0]), float(a[1])
    dx, dy = float(b[0]) - ax, float(b[1]) - ay
    w = math.hypot(dx, dy)
    px, py = poses[:, 0] - ax, poses[:, 1] - ay
    return (dx * py - dy * px) / w, (dx * px + dy * py) / (w * w), w


def _fractions(seg: Segment) -> np.ndarray:
    n = int(min(20000, max(8, math.ceil(seg.length_m / SAMPLE_M))))
    return np.linspace(0.0, 1.0, n + 1)


def crossing_fraction(seg: Segment, a: Sequence[float], b: Sequence[float]) -> float | None:
    """Fraction of ``seg`` at which its reference point first crosses the door line between
    ``a`` and ``b`` (``None`` where it does not; pivots never move the reference point)."""
    if seg.kind == "pivot" or seg.length_m <= 0.0:
        return None
    if seg.kind == "line":
        # The reference point runs straight: the signed distance is linear in the fraction.
        side, along, _w = _side_along(seg.poses_at_fraction([0.0, 1.0]), a, b)
        s0, s1 = float(side[0]), float(side[1])
        if s0 == s1 or (s0 > 0.0) == (s1 > 0.0) and s0 != 0.0 and s1 != 0.0:
            return None
        f = s0 / (s0 - s1)
        t = float(along[0] + f * (along[1] - along[0]))
        return f if -1e-9 <= t <= 1.0 + 1e-9 else None
    fr = _fractions(seg)
    side, along, _w = _side_along(seg.poses_at_fraction(fr), a, b)
    sign = np.sign(side)
    change = np.flatnonzero(sign[:-1] * sign[1:] <= 0.0)
    for i in change.tolist():
        if sign[i] == 0.0 and sign[i + 1] == 0.0:
            continue  # running along the line is not crossing it
        lo, hi = float(fr[i]), float(fr[i + 1])
        s_lo = float(side[i])
        if s_lo == 0.0:
            f = lo
        else:
            # Bisection on the sign change (the sampled stretch is short, so one crossing).
            for _ in range(100):
                if (hi - lo) * seg.length_m <= STATION_TOL_M:
                    break
                mid = 0.5 * (lo + hi)
                s_mid = float(_side_along(seg.poses_at_fraction([mid]), a, b)[0][0])
                if s_mid == 0.0:
                    lo = hi = mid
                    break
                if (s_mid > 0.0) == (s_lo > 0.0):
                    lo, s_lo = mid, s_mid
                else:
                    hi = mid
            f = 0.5 * (lo + hi)
        t = float(_side_along(seg.poses_at_fraction([f]), a, b)[1][0])
        if -1e-9 <= t <= 1.0 + 1e-9:
            return f
    return None


def nearest_fraction(seg: Segment, a: Sequence[float], b: Sequence[float]
                     ) -> tuple[float, float]:
    """Fraction of ``seg`` where its reference point comes nearest the door line (the
    segment from ``a`` to ``b``), and that distance."""
    fr = _fractions(seg) if seg.length_m > 0.0 and seg.kind != "pivot" else np.zeros(1)
    side, along, w = _side_along(seg.poses_at_fraction(fr), a, b)
    beyond = np.clip(np.abs(along - 0.5) - 0.5, 0.0, None) * w
    d = np.hypot(side, beyond)
    k = int(np.argmin(d))
    return float(fr[k]), float(d[k])


def door_station(segs: Sequence[Segment], stations: np.ndarray, near: Sequence[int],
                 a: Sequence[float], b: Sequence[float],
                 memo: Sequence[dict] | None = None) -> tuple[int, float]:
    """Segment and route station where the reference point crosses the door line.

    Parameters
    ----------
    segs : sequence of Segment
    stations : ndarray
        Route station of each segment's start.
    near : sequence of int
        Segments whose swept footprint reaches the door line, searched first (in route
        order); then every other segment; where none crosses, the station of the nearest
        approach among ``near`` (all segments where ``near`` is empty).
    a, b : (x, y)
        The door's jambs.
    memo : sequence of dict, optional
        One dict per segment keeping its crossing fraction for this door line (a checker
        passes the ones it keeps with each segment's result, so an unchanged segment is not
        searched again).

    Examples
    --------
    >>> from kinematics.motion.segments import line, segment_stations
    >>> segs = [line((0, 0, 0), 2.0), line((2, 0, 0), 3.0)]
    >>> door_station(segs, segment_stations(segs), [1], (3.5, -0.5), (3.5, 0.5))
    (1, 3.5)
    """
    near = sorted(set(int(i) for i in near))
    rest = [i for i in range(len(segs)) if i not in set(near)]
    key = ("crossing", tuple(map(float, a)), tuple(map(float, b)))
    for i in near + rest:
        if memo is not None and key in memo[i]:
            f = memo[i][key]
        else:
            f = crossing_fraction(segs[i], a, b)
            if memo is not None:
                memo[i][key] = f
        if f is not None:
            return i, float(stations[i]) + f * segs[i].length_m
    best = (math.inf, 0, 0.0)
    for i in near or range(len(segs)):
        f, d = nearest_fraction(segs[i], a, b)
        if d < best[0]:
            best = (d, i, f)
    _d, i, f = best
    if not segs:
        return 0, 0.0
    return i, float(stations[i]) + f * segs[i].length_m
