"""Check of a 3-trailer train on the clinic plan against the tug alone (target: within 3x).

Every route of ``clinic.swathe.json``, driven with 1.2 m turns (a tug train does not turn on
the spot), checked for the clinic's delivery cart alone (baseline) and for the same cart
towing three invented 0.75 x 0.56 m carts; the two are timed in turn in the same run
(interleaved), and the median of each is compared. The spread gives min/median/max of each
and of the ratio of each interleaved pair.
"""

from __future__ import annotations

import dataclasses
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))

TARGET = 3.0
CART = ((-0.4, -0.28), (0.35, -0.28), (0.35, 0.28), (-0.4, 0.28))


def _check_all(routes, chassis, index) -> float:
    from kinematics.check.train import check_train
    from kinematics.plan.planner import plan_route

    plans = [plan_route(r, chassis) for r in routes]
    t = time.perf_counter()
    for r, pl in zip(routes, plans):
        check_train(pl, chassis, index, route_name=r.name, route=r)
    return time.perf_counter() - t


def run(quick: bool = False) -> list[dict]:
    from kinematics.check.clearance import ObstacleIndex
    from kinematics.files.project import Trailer, load_project

    proj = load_project(ROOT / "sample_floorplans" / "clinic.swathe.json")
    routes = [dataclasses.replace(r, turn_radius_m=1.2) for r in proj.routes]
    tug = proj.chassis
    train = dataclasses.replace(tug, trailers=tuple(
        Trailer(f"cart {k + 1}", -0.4 if k == 0 else -0.45, 0.7, CART) for k in range(3)))
    index = ObstacleIndex(proj.floorplan)
    _check_all(routes, train, index)  # warm imports
    reps = 3 if quick else 9
    alone, towed = [], []
    for _ in range(reps):
        alone.append(_check_all(routes, tug, index))
        towed.append(_check_all(routes, train, index))
    a, w = statistics.median(alone), statistics.median(towed)
    pairs = sorted(t / b for t, b in zip(towed, alone))
    return [{"name": "check of a 3-trailer train, clinic routes", "value": w * 1000,
             "unit": "ms", "baseline": a * 1000, "ratio": w / a, "target": TARGET,
             "ok": w / a <= TARGET,
             "spread": f"train {_spread(towed)} ms, tug {_spread(alone)} ms, "
                       f"ratio per pair {pairs[0]:.2f}/{statistics.median(pairs):.2f}/"
                       f"{pairs[-1]:.2f}"}]


def _spread(xs: list[float]) -> str:
    """min/median/max of run times, milliseconds."""
    return f"{min(xs) * 1000:.0f}/{statistics.median(xs) * 1000:.0f}/{max(xs) * 1000:.0f}"


if __name__ == "__main__":
    for row in run("--quick" in sys.argv):
        print(f"{row['name']}: median {row['value']:.1f} ms against the tug alone "
              f"{row['baseline']:.1f} ms = {row['ratio']:.2f}x (target {row['target']:g}x: "
              f"{'PASS' if row['ok'] else 'MISS'}); {row['spread']} (min/median/max of "
              f"interleaved runs)")
