"""Long routes: plan + check per waypoint at 100 and 3,000 waypoints, and peak memory.

A serpentine patrol through an invented rack field (rows of 50 waypoints 2 m apart, rows
3 m apart, a rack bay beside every other waypoint), planned and checked with waypoint checks
(``route=``) from scratch, as ``swathe check`` does. Each size runs in a fresh process (so
its peak resident memory is its own), the sizes interleaved; the figure is the median time
per waypoint, the target the ratio 3,000 / 100 (<= 1.5) and the peak at 3,000 (<= 200 MB,
the whole process: interpreter, numpy, shapely and the check).
"""

from __future__ import annotations

import json
import os
import statistics
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))

import scenes  # noqa: E402

_CHILD = r"""
import json, math, resource, sys, time
sys.path.insert(0, sys.argv[1])
from kinematics.check.clearance import ObstacleIndex, RouteChecker
from kinematics.files.floorplan import FloorPlan, Obstacle
from kinematics.files.project import Chassis, Route, Waypoint
from kinematics.plan.planner import plan_route
n = int(sys.argv[2])
per_row = 50
pts, obs = [], []
for k in range(n):
    row, j = divmod(k, per_row)
    x = 2.0 * j if row % 2 == 0 else 2.0 * (per_row - 1 - j)
    pts.append((x, 3.0 * row + 0.3 * math.sin(0.8 * k)))
    if j % 2 == 0:
        obs.append(Obstacle(((x - 0.4, 3.0 * row + 1.1), (x + 0.4, 3.0 * row + 1.1),
                             (x + 0.4, 3.0 * row + 1.9), (x - 0.4, 3.0 * row + 1.9)), "bay"))
ch = Chassis(name="bench tug", footprint=((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3)),
             margin_m=0.05, track_m=0.5)
route = Route("patrol", tuple(Waypoint(x, y) for x, y in pts), turn_radius_m=0.6)
idx = ObstacleIndex(FloorPlan("rack field", (), tuple(obs), ()))
t0 = time.perf_counter()
plan = plan_route(route, ch)
chk = RouteChecker(ch, idx).check(plan, route=route)
dt = time.perf_counter() - t0
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
print(json.dumps({"s": dt, "peak_mb": peak, "violations": len(chk.violations)}))
"""


def _pin() -> None:
    try:
        cpus = sorted(os.sched_getaffinity(0))
        os.sched_setaffinity(0, {cpus[-1]})
    except (AttributeError, OSError):
        pass


def _child(n: int) -> dict:
    out = subprocess.run([sys.executable, "-c", _CHILD, str(ROOT), str(n)], capture_output=True,
                         text=True, preexec_fn=_pin, timeout=600)
    if out.returncode:
        raise RuntimeError(out.stderr.strip()[-400:])
    return json.loads(out.stdout.strip().splitlines()[-1])


def run(quick: bool) -> list[dict]:
    rounds = 2 if quick else 5
    sizes = (100, 1000 if quick else 3000)
    got: dict[int, list[dict]] = {n: [] for n in sizes}
    for _ in range(rounds):
        for n in sizes:
            got[n].append(_child(n))
    per = {n: [g["s"] / n for g in got[n]] for n in sizes}
    med = {n: statistics.median(v) for n, v in per.items()}
    small, big = sizes
    ratio = med[big] / med[small]
    peak = max(g["peak_mb"] for g in got[big])
    return [
        scenes.row(f"plan + check per waypoint, {small} waypoints", med[small] * 1e3, "ms",
                   spread_txt=scenes.spread(per[small], 1e3)),
        scenes.row(f"plan + check per waypoint, {big} / {small} waypoints", med[big] * 1e3,
                   "ms", med[small] * 1e3, ratio, "<= 1.5", ratio <= 1.5,
                   scenes.spread(per[big], 1e3)),
        scenes.row(f"peak memory, {big} waypoints (whole process)", peak, "MB", None, None,
                   "<= 200", peak <= 200.0 if big >= 3000 else None,
                   scenes.spread([g["peak_mb"] for g in got[big]])),
    ]


if __name__ == "__main__":
    for r in run(quick="--quick" in sys.argv):
        print(r)
