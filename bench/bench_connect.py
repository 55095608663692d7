"""Connection throughput: Dubins and Reeds-Shepp shortest paths per second.

Swathe connects a whole batch of random pose pairs in one vectorised call
(:func:`~kinematics.plan.dubins.shortest`, :func:`~kinematics.plan.reeds_shepp.shortest`).
The baselines,
timed on the same pairs in the same run, interleaved: OMPL's ``DubinsStateSpace`` /
``ReedsSheppStateSpace`` ``distance`` called from Python one pair per call (what a user of
OMPL writes; none without OMPL), and for Dubins a lean numpy reference written here
(:func:`lean_dubins`). Targets: >= 3x OMPL's rate, and within 1.3x of the lean reference.
"""

from __future__ import annotations

import math
import os
import statistics
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import scenes  # noqa: E402

from kinematics.plan import dubins, reeds_shepp  # noqa: E402

TWO_PI = 2.0 * math.pi

RADIUS_M = 1.0


def _pairs(n: int, seed: int = 0, near_m: float | None = None
           ) -> tuple[np.ndarray, np.ndarray]:
    """Random start/goal pairs on a 20 m square; goals within ``near_m`` per axis if given."""
    rng = np.random.default_rng(seed)
    a = np.c_[rng.uniform(-10, 10, (n, 2)), rng.uniform(-np.pi, np.pi, n)]
    b = np.c_[rng.uniform(-10, 10, (n, 2)), rng.uniform(-np.pi, np.pi, n)]
    if near_m is not None:
        b[:, :2] = a[:, :2] + rng.uniform(-near_m, near_m, (n, 2))
    return a, b


def lean_dubins(a: np.ndarray, b: np.ndarray, r: float) -> tuple[np.ndarray, np.ndarray]:
    """A lean numpy Dubins as a user would write it: six words and a min.

    The word formulas of Shkel & Lumelsky (2001), sec. 2 (as in LaValle, *Planning
    Algorithms*, 2006, sec. 15.3.1), each word's total length over all pairs at once, then
    the shortest; lengths in metres and the word index (in ``dubins.WORDS`` order).
    """
    dx, dy = b[:, 0] - a[:, 0], b[:, 1] - a[:, 1]
    d = np.hypot(dx, dy) / r
    th = np.arctan2(dy, dx)
    al = np.mod(a[:, 2] - th, TWO_PI)
    be = np.mod(b[:, 2] - th, TWO_PI)
    sa, ca, sb, cb = np.sin(al), np.cos(al), np.sin(be), np.cos(be)
    cab = np.cos(al - be)
    d2 = d * d
    out = np.empty((6, len(d)))
    p2 = 2 + d2 - 2 * cab + 2 * d * (sa - sb)  # LSL
    t = np.arctan2(cb - ca, d + sa - sb)
    out[0] = np.where(p2 >= 0, np.mod(t - al, TWO_PI) + np.sqrt(np.abs(p2))
                      + np.mod(be - t, TWO_PI), np.inf)
    p2 = 2 + d2 - 2 * cab + 2 * d * (sb - sa)  # RSR
    t = np.arctan2(ca - cb, d - sa + sb)
    out[1] = np.where(p2 >= 0, np.mod(al - t, TWO_PI) + np.sqrt(np.abs(p2))
                      + np.mod(t - be, TWO_PI), np.inf)
    p2 = d2 - 2 + 2 * cab + 2 * d * (sa + sb)  # LSR
    p = np.sqrt(np.abs(p2))
    t = np.arctan2(-ca - cb, d + sa + sb) - np.arctan2(-2.0, p)
    out[2] = np.where(p2 >= 0, np.mod(t - al, TWO_PI) + p + np.mod(t - be, TWO_PI), np.inf)
    p2 = d2 - 2 + 2 * cab - 2 * d * (sa + sb)  # RSL
    p = np.sqrt(np.abs(p2))
    t = np.arctan2(ca + cb, d - sa - sb) - np.arctan2(2.0, p)
    out[3] = np.where(p2 >= 0, np.mod(al - t, TWO_PI) + p + np.mod(be - t, TWO_PI), np.inf)
    c = (6 - d2 + 2 * cab + 2 * d * (sa - sb)) / 8  # RLR
    p = np.mod(TWO_PI - np.arccos(np.clip(c, -1, 1)), TWO_PI)
    t = np.mod(al - np.arctan2(ca - cb, d - sa + sb) + p / 2, TWO_PI)
    out[4] = np.where(np.abs(c) <= 1, t + p + np.mod(al - be - t + p, TWO_PI), np.inf)
    c = (6 - d2 + 2 * cab - 2 * d * (sa - sb)) / 8  # LRL
    p = np.mod(TWO_PI - np.arccos(np.clip(c, -1, 1)), TWO_PI)
    t = np.mod(-al + np.arctan2(cb - ca, d + sa - sb) + p / 2, TWO_PI)
    out[5] = np.where(np.abs(c) <= 1, t + p + np.mod(be - al - t + p, TWO_PI), np.inf)
    w = np.argmin(out, axis=0)
    return out[w, np.arange(len(d))] * r, w


def _ompl_loop(space_name: str, a: np.ndarray, b: np.ndarray):
    """OMPL's state space ``distance`` called from Python one pair per call (None without
    OMPL)."""
    try:
        from ompl import base as ob
    except ImportError:
        return None
    space = getattr(ob, space_name)(RADIUS_M)
    s0, s1 = space.allocState(), space.allocState()
    rows = [(tuple(p), tuple(q)) for p, q in zip(a.tolist(), b.tolist())]

    def loop() -> None:
        for (x0, y0, t0), (x1, y1, t1) in rows:
            s0.setX(x0)
            s0.setY(y0)
            s0.setYaw(t0)
            s1.setX(x1)
            s1.setY(y1)
            s1.setYaw(t1)
            space.distance(s0, s1)

    return loop


def run(quick: bool) -> list[dict]:
    """Connections per second: Swathe's one batch call against OMPL's per-pair loop and, for
    Dubins, the lean numpy reference; medians of interleaved runs, pinned to one CPU.

    Pairs spread over a 20 m square (radius 1 m). Targets: >= 3x OMPL and (Dubins) no more
    than 1.3x the lean reference's time, at N = 1,000, 10,000 and 100,000.
    """
    sizes = (1_000, 10_000) if quick else (1_000, 10_000, 100_000)
    try:
        was = os.sched_getaffinity(0)
        os.sched_setaffinity(0, {sorted(was)[-1]})
    except (AttributeError, OSError):
        was = None
    rows = []
    try:
        for n in sizes:
            a, b = _pairs(n)
            lean_len, _ = lean_dubins(a, b, RADIUS_M)
            assert np.allclose(lean_len, dubins.shortest(a, b, RADIUS_M).length_m, atol=1e-9)
            fns = {"dubins": lambda a=a, b=b: dubins.shortest(a, b, RADIUS_M),
                   "lean": lambda a=a, b=b: lean_dubins(a, b, RADIUS_M),
                   "reeds-shepp": lambda a=a, b=b: reeds_shepp.shortest(a, b, RADIUS_M)}
            for label, space in (("ompl dubins", "DubinsStateSpace"),
                                 ("ompl reeds-shepp", "ReedsSheppStateSpace")):
                loop = _ompl_loop(space, a, b)
                if loop is not None:
                    fns[label] = loop
            rounds = 3 if n >= 100_000 else (7 if quick else 11)
            t = scenes.interleaved(fns, rounds)
            med = {k: statistics.median(v) for k, v in t.items()}
            for label in ("dubins", "reeds-shepp"):
                rate = n / med[label]
                o = med.get(f"ompl {label}")
                ratio = None if o is None else o / med[label]
                rows.append(scenes.row(
                    f"{label} connections, N = {n:,} (vs OMPL per pair)", rate, "1/s",
                    None if o is None else n / o, ratio, ">= 3",
                    None if ratio is None else ratio >= 3.0,
                    scenes.spread(t[label], 1e3) + " ms"))
            ratio = med["dubins"] / med["lean"]
            rows.append(scenes.row(f"dubins time / lean numpy reference, N = {n:,}",
                                   med["dubins"] * 1e3, "ms", med["lean"] * 1e3, ratio,
                                   "<= 1.3", ratio <= 1.3,
                                   scenes.spread(t["lean"], 1e3) + " ms (lean)"))
        # The planner's case: a few legs per drag step.
        a, b = _pairs(3)
        t = scenes.interleaved({"dubins": lambda: dubins.shortest(a, b, RADIUS_M),
                                "lean": lambda: lean_dubins(a, b, RADIUS_M)}, 200)
        ratio = statistics.median(t["dubins"]) / statistics.median(t["lean"])
        rows.append(scenes.row("dubins time / lean, N = 3 (a drag step's legs)",
                               statistics.median(t["dubins"]) * 1e6, "us",
                               statistics.median(t["lean"]) * 1e6, ratio, None, None,
                               scenes.spread(t["dubins"], 1e6) + " us"))
    finally:
        if was is not None:
            os.sched_setaffinity(0, was)
    return rows


if __name__ == "__main__":
    quick = "--quick" in sys.argv[1:]
    for row in run(quick):
        print(row)
