"""One Dormand-Prince 5(4) step of the trailer headings, as straight-line code per chain.

:func:`kinematics.motion.trailers.integrate_segment` spends most of its time in Python's
bookkeeping rather than in arithmetic: every stage built a list from ``zip`` of the previous
stages and called the right-hand side through two functions. Here the step for a chain of
``n`` trailers is written out once per ``n`` and kind of tug motion (its source generated and
compiled, then kept), every heading a local variable, so a step does the same floating-point
operations in the same order as the list form -- the results are identical to the last bit --
in about half the time.

The tableau is Dormand & Prince's (J. Comp. Appl. Math. 6, 1980; Hairer, Norsett & Wanner,
Solving ODEs I, sec. II.5, table 5.2); the right-hand side is the n-trailer chain of
:func:`kinematics.motion.trailers._trailer_rates` (Altafini, Int. J. Control 74, 2001).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable, Sequence

_C = (0.0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1.0, 1.0)
_A = ((),
      (1 / 5,),
      (3 / 40, 9 / 40),
      (44 / 45, -56 / 15, 32 / 9),
      (19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729),
      (9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656),
      (35 / 384, 0.0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84))
_B5 = (35 / 384, 0.0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84, 0.0)
_B4 = (5179 / 57600, 0.0, 7571 / 16695, 393 / 640, -92097 / 339200, 187 / 2100, 1 / 40)
_E = tuple(a - b for a, b in zip(_B5, _B4))

#: The kinds of tug motion on a segment: along its heading without turning, along its
#: heading turning (arcs, clothoids, pivots of a differential drive), or with a fixed
#: plan-frame velocity (holonomic lines and pivots).
KINDS = ("line", "free", "fixed")


def _source(n: int, kind: str) -> str:
    """The factory's source: ``make(...)`` returns ``step(p, h, y, k0) -> (y5, k6, err)``."""
    T = [f"t{i}" for i in range(n)]
    hn = [f"hn{i}" for i in range(n)]
    inv = [f"inv{i}" for i in range(n)]
    L = ["def make(th0, w0, wd, fx, fy, direction, h1, " + ", ".join(inv + hn) + "):",
         "    def rates(p, " + ", ".join(T) + "):"]
    if kind == "line":
        L += ["        hx = fx", "        hy = fy"]
    else:
        L += ["        t_prev = th0 + (w0 + 0.5 * wd * p) * p",
              "        cp, sp = cos(t_prev), sin(t_prev)"]
        if kind == "free":
            L += ["        vx, vy = direction * cp, direction * sp"]
        else:
            L += ["        vx, vy = fx, fy"]
        L += ["        w_prev = w0 + wd * p",
              "        hx = vx - w_prev * h1 * sp",
              "        hy = vy + w_prev * h1 * cp"]
    for i in range(n):
        L += [f"        c, s = cos(t{i}), sin(t{i})",
              f"        r{i} = (hy * c - hx * s) * inv{i}"]
        if i < n - 1:
            L += ["        along = hx * c + hy * s",
                  f"        hx = along * c - r{i} * hn{i} * s",
                  f"        hy = along * s + r{i} * hn{i} * c"]
    L += ["        return (" + "".join(f"r{i}, " for i in range(n)) + ")"]
    y = [f"y{i}" for i in range(n)]

    def q(stage: int) -> list[str]:
        return [f"q{stage}_{i}" for i in range(n)]

    L += ["    def step(p, h, y, k0):",
          "        " + "".join(f"{v}, " for v in y) + "= y",
          "        " + "".join(f"{v}, " for v in q(0)) + "= k0"]
    combos = {1: "h * a10 * q0_{i}",
              2: "h * (a20 * q0_{i} + a21 * q1_{i})",
              3: "h * (a30 * q0_{i} + a31 * q1_{i} + a32 * q2_{i})",
              4: "h * (a40 * q0_{i} + a41 * q1_{i} + a42 * q2_{i} + a43 * q3_{i})",
              5: "h * (a50 * q0_{i} + a51 * q1_{i} + a52 * q2_{i} + a53 * q3_{i}"
                 " + a54 * q4_{i})"}
    at = {1: "p + c1 * h", 2: "p + c2 * h", 3: "p + c3 * h", 4: "p + c4 * h", 5: "p + h"}
    for k in range(1, 6):
        args = ", ".join(f"y{i} + " + combos[k].format(i=i) for i in range(n))
        L += ["        " + "".join(f"{v}, " for v in q(k)) + f"= rates({at[k]}, {args})"]
    for i in range(n):
        L += [f"        z{i} = y{i} + h * (a60 * q0_{i} + a62 * q2_{i} + a63 * q3_{i}"
              f" + a64 * q4_{i} + a65 * q5_{i})"]
    z = [f"z{i}" for i in range(n)]
    L += ["        k6 = rates(p + h, " + ", ".join(z) + ")",
          "        " + "".join(f"q6_{i}, " for i in range(n)) + "= k6"]
    errs = [f"abs(h * (e0 * q0_{i} + e2 * q2_{i} + e3 * q3_{i} + e4 * q4_{i} + e5 * q5_{i}"
            f" + e6 * q6_{i}))" for i in range(n)]
    L += ["        err = " + (f"max({', '.join(errs)})" if n > 1 else errs[0]),
          "        return (" + "".join(f"{v}, " for v in z) + "), k6, err",
          "    return step"]
    return "\n".join(L) + "\n"


@functools.lru_cache(maxsize=64)
def _factory(n: int, kind: str) -> Callable:
    (a10,), (a20, a21), (a30, a31, a32), (a40, a41, a42, a43), \
        (a50, a51, a52, a53, a54), (a60, _a61, a62, a63, a64, a65) = _A[1:]
    e0, _e1, e2, e3, e4, e5, e6 = _E
    c1, c2, c3, c4 = _C[1:5]
    ns = {"cos": math.cos, "sin": math.sin, "abs": abs, "max": max,
          "a10": a10, "a20": a20, "a21": a21, "a30": a30, "a31": a31, "a32": a32,
          "a40": a40, "a41": a41, "a42": a42, "a43": a43, "a50": a50, "a51": a51,
          "a52": a52, "a53": a53, "a54": a54, "a60": a60, "a62": a62, "a63": a63,
          "a64": a64, "a65": a65, "e0": e0, "e2": e2, "e3": e3, "e4": e4, "e5": e5,
          "e6": e6, "c1": c1, "c2": c2, "c3": c3, "c4": c4}
    exec(compile(_source(n, kind), f"<dp_step n={n} {kind}>", "exec"), ns)  # noqa: S102
    return ns["make"]


def make_step(kind: str, th0: float, w0: float, wd: float, velocity: tuple[float, float],
              direction: float, h1: float, inv_d: Sequence[float],
              h_next: Sequence[float]) -> Callable:
    """The step function of one segment's motion: ``step(p, h, y, k0)`` returns the
    5th-order headings at ``p + h``, the rates there (the next step's first stage, FSAL) and
    the embedded error estimate (largest over the trailers), from headings ``y`` and rates
    ``k0`` at ``p``. ``velocity`` is the tug's fixed velocity (``"fixed"``) or its constant
    velocity (``"line"``); unused for ``"free"``."""
    if kind not in KINDS:
        raise ValueError(f"unknown motion kind {kind!r}")
    fx, fy = velocity
    return _factory(len(inv_d), kind)(th0, w0, wd, fx, fy, direction, h1, *inv_d, *h_next)
