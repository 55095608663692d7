"""Connection throughput: Dubins and Reeds-Shepp shortest paths per second.

Swathe connects a whole batch of random pose pairs in one vectorised call
(:func:`~kinematics.plan.dubins.shortest`, :func:`~kinematics.plan.reeds_shepp.shortest`).
The baseline
is OMPL's ``DubinsStateSpace`` / ``ReedsSheppStateSpace`` ``distance`` called from Python one
pair per call, timed on the same pairs in the same run (baseline ``None`` without OMPL).
Target: Swathe's batch throughput at least OMPL's.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

if __name__ == "__main__":
    sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from kinematics.plan import dubins, reeds_shepp

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


def _best_of(fn, repeats: int) -> float:
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def _ompl_seconds(space_name: str, a: np.ndarray, b: np.ndarray, repeats: int
                  ) -> float | None:
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

    return _best_of(loop, repeats)


def run(quick: bool) -> list[dict]:
    """Connections per second for Swathe (one batch call) and OMPL (one call per pair).

    Pairs spread over a 20 m square (radius 1 m) give the headline rows; a second set with
    goals within 3 radii of their start, where more Reeds-Shepp families are feasible and
    have to be evaluated, is reported beside them.
    """
    n = 2_000 if quick else 10_000
    repeats = 3 if quick else 5
    rows = []
    for suffix, near in (("", None), (", goals within 3 r", 3.0 * RADIUS_M)):
        a, b = _pairs(n, seed=0 if near is None else 1, near_m=near)
        for label, mod, space in (("dubins", dubins, "DubinsStateSpace"),
                                  ("reeds-shepp", reeds_shepp, "ReedsSheppStateSpace")):
            mod.shortest(a[:10], b[:10], RADIUS_M)  # warm caches and imports
            ours = n / _best_of(lambda mod=mod, a=a, b=b: mod.shortest(a, b, RADIUS_M),
                                repeats)
            t_ompl = _ompl_seconds(space, a, b, repeats)
            base = None if t_ompl is None else n / t_ompl
            rows.append({"name": f"{label} connections{suffix}", "value": ours, "unit": "1/s",
                         "baseline": base, "ratio": None if base is None else ours / base,
                         "target": ">= 1"})
    return rows


if __name__ == "__main__":
    quick = "--quick" in sys.argv[1:]
    for row in run(quick):
        print(row)
