"""The shortest Dubins path of one pose pair in plain Python floats.

:func:`kinematics.plan.dubins.shortest` evaluates the six words as array operations, which
pays numpy's fixed cost per operation (about 80 of them) even for one pair; the route finder's
heuristic asks for a handful of pairs at a time, thousands of times. :func:`shortest_one` is
the same closed form for one pair with the ``math`` module: Shkel & Lumelsky (2001),
"Classification of the Dubins set", *Robotics and Autonomous Systems* 34, sec. 2, with
``d = D / r`` and the headings ``alpha``, ``beta`` measured from the line joining the two
positions (as :mod:`kinematics.plan.dubins`). Its lengths agree with the array version to
rounding (``tests/test_dubins_one.py``); the route finder uses it for its heuristic and for a
quick proof that a connection collides, while the connection itself is always the planner's.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

TWO_PI = 2.0 * math.pi
# Arc angles within this of a full turn are no turn (as kinematics.plan.dubins).
_SNAP = 1e-12


def _m2(x: float) -> float:
    m = x - TWO_PI * math.floor(x / TWO_PI)
    return 0.0 if (m > TWO_PI - _SNAP or m < 0.0) else m


def shortest_one(start: Sequence[float], goal: Sequence[float], radius_m: float
                 ) -> tuple[float, int, tuple[float, float, float]]:
    """Length (m), word index into :data:`kinematics.plan.dubins.WORDS` and the three piece
    lengths (m) of the shortest forward path of turn radius ``radius_m`` from ``start`` to
    ``goal`` (poses ``(x_m, y_m, heading_rad)``).

    Examples
    --------
    >>> from kinematics.plan.dubins import WORDS
    >>> length, w, _ = shortest_one((0, 0, 0), (0, 2, math.pi), 1.0)   # a U-turn
    >>> round(length, 9), WORDS[w]
    (3.141592654, 'LSL')
    """
    r = float(radius_m)
    dx, dy = (float(goal[0]) - float(start[0])) / r, (float(goal[1]) - float(start[1])) / r
    d = math.hypot(dx, dy)
    th = math.atan2(dy, dx) if d > 0.0 else 0.0
    a = _m2(float(start[2]) - th)
    b = _m2(float(goal[2]) - th)
    if d < 1e-12 and abs(math.remainder(b - a, TWO_PI)) < 1e-12:
        return 0.0, 0, (0.0, 0.0, 0.0)
    sa, ca, sb, cb = math.sin(a), math.cos(a), math.sin(b), math.cos(b)
    cab = math.cos(a - b)
    d2 = d * d
    tol = 4.0 * 2.220446049250313e-16 * (d2 + 8.0)
    best = (math.inf, 0, (0.0, 0.0, 0.0))

    def keep(k: int, t: float, p: float, q: float) -> None:
        nonlocal best
        total = t + p + q
        if total < best[0]:
            best = (total, k, (t, p, q))

    # LSL
    p2 = 2.0 + d2 - 2.0 * cab + 2.0 * d * (sa - sb)
    if p2 >= -tol:
        t0 = math.atan2(cb - ca, d + sa - sb)
        keep(0, _m2(t0 - a), math.sqrt(max(p2, 0.0)), _m2(b - t0))
    # RSR
    p2 = 2.0 + d2 - 2.0 * cab + 2.0 * d * (sb - sa)
    if p2 >= -tol:
        t0 = math.atan2(ca - cb, d - sa + sb)
        keep(1, _m2(a - t0), math.sqrt(max(p2, 0.0)), _m2(t0 - b))
    # LSR
    p2 = -2.0 + d2 + 2.0 * cab + 2.0 * d * (sa + sb)
    if p2 >= -tol:
        p = math.sqrt(max(p2, 0.0))
        t0 = math.atan2(-ca - cb, d + sa + sb) - math.atan2(-2.0, p)
        keep(2, _m2(t0 - a), p, _m2(t0 - b))
    # RSL
    p2 = d2 - 2.0 + 2.0 * cab - 2.0 * d * (sa + sb)
    if p2 >= -tol:
        p = math.sqrt(max(p2, 0.0))
        t0 = math.atan2(ca + cb, d - sa - sb) - math.atan2(2.0, p)
        keep(3, _m2(a - t0), p, _m2(b - t0))
    # RLR and LRL: the middle arc is longer than pi (Dubins 1957).
    for k, sgn in ((4, 1.0), (5, -1.0)):
        c = (6.0 - d2 + 2.0 * cab + sgn * 2.0 * d * (sa - sb)) / 8.0
        if abs(c) > 1.0 + tol:
            continue
        p = _m2(TWO_PI - math.acos(max(-1.0, min(1.0, c))))
        if sgn > 0:
            t0 = math.atan2(ca - cb, d - sa + sb)
            t = _m2(a - t0 + 0.5 * p)
            q = _m2(a - b - t + p)
        else:
            t0 = math.atan2(cb - ca, d + sa - sb)
            t = _m2(t0 - a + 0.5 * p)
            q = _m2(b - a - t + p)
        keep(k, t, p, q)
    total, k, (t, p, q) = best
    return total * r, k, (t * r, p * r, q * r)


__all__ = ["shortest_one"]
