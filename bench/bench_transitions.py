"""Transition curves: plan + check time of routes with clothoids against the same routes
without them, interleaved in one run (target: at most 1.5x)."""

from __future__ import annotations

import dataclasses
import statistics
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TARGET = 1.5
CASES = (  # (project, extra chassis limits so that transitions apply)
    ("clinic_smooth.swathe.json", {}),
    ("depot_ackermann_smooth.swathe.json", {}),
    ("depot.swathe.json", {"max_wheel_accel_radps2": 6.0}),
    ("clinic.swathe.json", {"max_wheel_accel_radps2": 6.0}),
)


def _plan_and_check(project, index, transitions: str) -> float:
    from kinematics.check.clearance import check_route
    from kinematics.plan.planner import plan_route

    t0 = time.perf_counter()
    for r in project.routes:
        route = dataclasses.replace(r, transitions=transitions)
        plan = plan_route(route, project.chassis)
        check_route(plan, project.chassis, index, route_name=route.name, route=route)
    return time.perf_counter() - t0


def run(quick: bool = False) -> list[dict]:
    from kinematics.check import sweep
    from kinematics.check.clearance import ObstacleIndex
    from kinematics.files.project import load_project
    from kinematics.plan import planner

    rows = []
    reps = 5 if quick else 21
    for name, extra in CASES:
        proj = load_project(ROOT / "sample_floorplans" / name)
        proj = dataclasses.replace(proj, chassis=dataclasses.replace(proj.chassis, **extra))
        index = ObstacleIndex(proj.floorplan)
        _plan_and_check(proj, index, "clothoid")  # warm imports and the sharpness cache
        with_t, without_t = [], []
        for _ in range(reps):
            # Cold caches each run: only what one plan and check reuses within itself counts.
            planner._sharpness.cache_clear()
            sweep.clear_caches()
            with_t.append(_plan_and_check(proj, index, "clothoid"))
            without_t.append(_plan_and_check(proj, index, "none"))
        w, wo = statistics.median(with_t), statistics.median(without_t)
        # Each run's ratio against the run without transitions next to it: the median ratio
        # and its spread (min-max over the interleaved pairs).
        pair = sorted(a / b for a, b in zip(with_t, without_t))
        rows.append({"name": f"plan+check with transitions: {name}", "value": w * 1000,
                     "unit": "ms", "baseline": wo * 1000, "ratio": w / wo, "target": TARGET,
                     "ok": w / wo <= TARGET,
                     "spread": f"ms {min(with_t) * 1000:.1f}/{w * 1000:.1f}/"
                               f"{max(with_t) * 1000:.1f}; pair ratio median "
                               f"{statistics.median(pair):.2f} ({pair[0]:.2f}-{pair[-1]:.2f})"})
    return rows
