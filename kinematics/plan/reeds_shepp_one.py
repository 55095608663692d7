"""The shortest Reeds-Shepp path of one pose pair in plain Python floats.

:func:`kinematics.plan.reeds_shepp.shortest` evaluates the 48 words as array operations, which
pays numpy's fixed cost per operation (several hundred of them) even for one pair; the route
finder's heuristic asks for a handful of pairs at a time, thousands of times.
:func:`shortest_one` is the same problem solved for one pair with the ``math`` module: the
closed-form piece lengths of Reeds & Shepp (1990), "Optimal paths for a car that goes both
forwards and backwards", *Pacific J. Math.* 145(2), section 8 (formulas 8.1-8.11, the
families CSC, CCC, CCCC, CCSC, CCSCC), with the same time-flip, reflection and backwards
symmetries as :mod:`kinematics.plan.reeds_shepp`. Its lengths agree with the array version to
rounding (``tests/test_reeds_shepp_one.py``); the route finder uses it for its heuristic and
for a quick proof that a connection collides, while the connection itself is always the
planner's.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

PI = math.pi
TWO_PI = 2.0 * math.pi
HALF_PI = 0.5 * math.pi
_ZERO = 10.0 * 2.220446049250313e-16

_Word = tuple[float, str, tuple[float, ...]]


def _m2(x: float) -> float:
    """Angle in ``[-pi, pi]``."""
    return x - TWO_PI * round(x / TWO_PI)


def _polar(x: float, y: float) -> tuple[float, float]:
    return math.hypot(x, y), math.atan2(y, x)


def _tau_omega(u: float, v: float, xi: float, eta: float, phi: float) -> tuple[float, float]:
    delta = _m2(u - v)
    a = math.sin(u) - math.sin(delta)
    b = math.cos(u) - math.cos(delta) - 1.0
    t1 = math.atan2(eta * a - xi * b, xi * a + eta * b)
    t2 = 2.0 * (math.cos(delta) - math.cos(v) - math.cos(u)) + 3.0
    tau = _m2(t1 + PI) if t2 < 0.0 else _m2(t1)
    return tau, _m2(tau - u + v - phi)


# -- the base words (formula numbers of Reeds & Shepp 1990, section 8) ----------------------
def _lsl(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.1
    u, t = _polar(x - math.sin(phi), y - 1.0 + math.cos(phi))
    if t >= -_ZERO:
        v = _m2(phi - t)
        if v >= -_ZERO:
            return t, u, v
    return None


def _lsr(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.2
    u1, t1 = _polar(x + math.sin(phi), y - 1.0 - math.cos(phi))
    u1 *= u1
    if u1 >= 4.0:
        u = math.sqrt(u1 - 4.0)
        t = _m2(t1 + math.atan2(2.0, u))
        v = _m2(t - phi)
        if t >= -_ZERO and v >= -_ZERO:
            return t, u, v
    return None


def _lrl(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.3 / 8.4
    xi, eta = x - math.sin(phi), y - 1.0 + math.cos(phi)
    u1, theta = _polar(xi, eta)
    if u1 <= 4.0:
        u = -2.0 * math.asin(0.25 * u1)
        t = _m2(theta + 0.5 * u + PI)
        v = _m2(phi - t + u)
        if t >= -_ZERO and u <= _ZERO:
            return t, u, v
    return None


def _lrlr_a(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.7
    xi, eta = x + math.sin(phi), y - 1.0 - math.cos(phi)
    rho = 0.25 * (2.0 + math.hypot(xi, eta))
    if rho <= 1.0:
        u = math.acos(rho)
        t, v = _tau_omega(u, -u, xi, eta, phi)
        if t >= -_ZERO and v <= _ZERO:
            return t, u, -u, v
    return None


def _lrlr_b(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.8
    xi, eta = x + math.sin(phi), y - 1.0 - math.cos(phi)
    rho = (20.0 - xi * xi - eta * eta) / 16.0
    if 0.0 <= rho <= 1.0:
        u = -math.acos(rho)
        if u >= -HALF_PI:
            t, v = _tau_omega(u, u, xi, eta, phi)
            if t >= -_ZERO and v >= -_ZERO:
                return t, u, u, v
    return None


def _lrsl(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.9
    xi, eta = x - math.sin(phi), y - 1.0 + math.cos(phi)
    rho, theta = _polar(xi, eta)
    if rho >= 2.0:
        r = math.sqrt(rho * rho - 4.0)
        u = 2.0 - r
        t = _m2(theta + math.atan2(r, -2.0))
        v = _m2(phi - HALF_PI - t)
        if t >= -_ZERO and u <= _ZERO and v <= _ZERO:
            return t, -HALF_PI, u, v
    return None


def _lrsr(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.10
    xi, eta = x + math.sin(phi), y - 1.0 - math.cos(phi)
    rho, theta = _polar(-eta, xi)
    if rho >= 2.0:
        t = theta
        u = 2.0 - rho
        v = _m2(t + HALF_PI - phi)
        if t >= -_ZERO and u <= _ZERO and v <= _ZERO:
            return t, -HALF_PI, u, v
    return None


def _lrslr(x: float, y: float, phi: float) -> tuple[float, ...] | None:  # 8.11
    xi, eta = x + math.sin(phi), y - 1.0 - math.cos(phi)
    rho, _theta = _polar(xi, eta)
    if rho >= 2.0:
        u = 4.0 - math.sqrt(rho * rho - 4.0)
        if u <= _ZERO:
            t = _m2(math.atan2((4.0 - u) * xi - 2.0 * eta, -2.0 * xi + (u - 4.0) * eta))
            v = _m2(t - phi)
            if t >= -_ZERO and v >= -_ZERO:
                return t, -HALF_PI, u, -HALF_PI, v
    return None


#: Base word, its letters, whether it is read backwards too.
_BASES = ((_lsl, "LSL", False), (_lsr, "LSR", False), (_lrl, "LRL", True),
          (_lrlr_a, "LRLR", False), (_lrlr_b, "LRLR", False), (_lrsl, "LRSL", True),
          (_lrsr, "LRSR", True), (_lrslr, "LRSLR", False))
_SWAP = str.maketrans("LR", "RL")


def shortest_one(start: Sequence[float], goal: Sequence[float], radius_m: float
                 ) -> tuple[float, str, tuple[float, ...]]:
    """Length (m), steering letters and signed piece lengths (m; negative: reverse) of the
    shortest forward-and-reverse path of turn radius ``radius_m`` from ``start`` to ``goal``
    (poses ``(x_m, y_m, heading_rad)``); an ``L`` piece of signed length ``s`` turns the
    heading by ``s / radius_m``, an ``R`` by ``-s / radius_m``.

    Examples
    --------
    >>> length, letters, pieces = shortest_one((0, 0, 0), (-2, 0, 0), 1.0)   # straight back
    >>> round(length, 9), letters, [round(p, 9) + 0.0 for p in pieces]
    (2.0, 'LSL', [0.0, -2.0, 0.0])
    """
    r = float(radius_m)
    dx, dy = float(goal[0]) - float(start[0]), float(goal[1]) - float(start[1])
    c, s = math.cos(float(start[2])), math.sin(float(start[2]))
    x, y = (c * dx + s * dy) / r, (-s * dx + c * dy) / r
    phi = float(goal[2]) - float(start[2])
    cp, sp = math.cos(phi), math.sin(phi)
    xb, yb = x * cp + y * sp, x * sp - y * cp
    best: _Word = (math.inf, "", ())
    for fn, letters, back_too in _BASES:
        for backwards in ((False, True) if back_too else (False,)):
            gx, gy = (xb, yb) if backwards else (x, y)
            for tf in (False, True):
                for rf in (False, True):
                    # Time-flip (x, y, phi) -> (-x, y, -phi); reflection -> (x, -y, -phi).
                    px = -gx if tf else gx
                    py = -gy if rf else gy
                    pphi = -phi if tf != rf else phi
                    got = fn(px, py, pphi)
                    if got is None:
                        continue
                    total = sum(abs(v) for v in got)
                    if total >= best[0]:
                        continue
                    pieces = tuple(-v for v in got) if tf else got
                    word = letters.translate(_SWAP) if rf else letters
                    if backwards:
                        pieces, word = pieces[::-1], word[::-1]
                    best = (total, word, pieces)
    total, word, pieces = best
    return total * r, word, tuple(v * r for v in pieces)


__all__ = ["shortest_one"]
