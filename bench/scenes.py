"""Invented benchmark scenes: a big generated warehouse, and the timing helpers every bench uses.

The warehouse is an invented 100 x 60 m hall (common practice for a mid-size distribution
building): a 0.3 m outer wall, narrow aisles of 1.9 m between back-to-back pallet racking
(rows 1.1 m deep, bays 0.8 m wide), a 5 m cross aisle along y = 30 m that the benchmark route
drives, and octagonal upright guards on the aisle side of every third upright. That makes
3,000 rack bays and ~20,000 solid edges. The "small" plan keeps only the walls and the bays
and guards next to the cross aisle (the clutter the route sees); the "annex" plan adds a
second hall of the same racking east of the first (~50,000 edges). All three share the route.

Timing: every figure is the median of runs interleaved with its baseline (``interleaved``),
reported with min and max, so load on a shared machine hits both sides alike.
"""

from __future__ import annotations

import json
import math
import statistics
import time
from collections.abc import Callable
from pathlib import Path

HALL_X_M, HALL_Y_M = 100.0, 60.0
WALL_M = 0.3
ROW_DEPTH_M = 1.1
BAY_M = 0.8
AISLE_M = 1.9
CROSS_Y0_M, CROSS_Y1_M = 27.5, 32.5  # the cross aisle the route drives
GUARD_R_M = 0.12

CHASSIS = {"name": "bench tug", "drive": "differential",
           "footprint": [[-0.3, -0.3], [0.6, -0.3], [0.6, 0.3], [-0.3, 0.3]],
           "margin_m": 0.05, "wheel_radius_m": 0.1, "track_m": 0.5,
           "max_speed_mps": 1.2, "max_accel_mps2": 0.5, "max_wheel_rate_radps": 14.0,
           "max_lateral_accel_mps2": 0.5}


def _rect(x0: float, y0: float, x1: float, y1: float) -> list[list[float]]:
    return [[round(x0, 4), round(y0, 4)], [round(x1, 4), round(y0, 4)],
            [round(x1, 4), round(y1, 4)], [round(x0, 4), round(y1, 4)]]


def _octagon(cx: float, cy: float, r: float) -> list[list[float]]:
    return [[round(cx + r * math.cos(math.pi / 8 + k * math.pi / 4), 4),
             round(cy + r * math.sin(math.pi / 8 + k * math.pi / 4), 4)] for k in range(8)]


def _racking(x_from: float, x_to: float, near_only: bool) -> list[dict]:
    """Back-to-back rack rows running in y, in the two halves either side of the cross aisle."""
    out: list[dict] = []
    pitch = 2 * ROW_DEPTH_M + AISLE_M
    halves = ((1.2, CROSS_Y0_M), (CROSS_Y1_M, HALL_Y_M - 1.2))
    x = x_from
    pair = 0
    while x + 2 * ROW_DEPTH_M <= x_to:
        for side, xr in enumerate((x, x + ROW_DEPTH_M)):
            for h, (ya, yb) in enumerate(halves):
                n = int((yb - ya) / BAY_M)
                for k in range(n):
                    y0 = ya + k * BAY_M
                    near = (h == 0 and k == n - 1) or (h == 1 and k == 0)
                    if near_only and not near:
                        continue
                    label = f"rack {pair:02d}{'AB'[side]}{'SN'[h]}-{k:02d}"
                    out.append({"points": _rect(xr, y0, xr + ROW_DEPTH_M, y0 + BAY_M - 0.02),
                                "label": label})
                    # Upright guards on the aisle face, every third upright.
                    if k % 3 == 0:
                        gx = xr - GUARD_R_M - 0.02 if side == 0 else \
                            xr + ROW_DEPTH_M + GUARD_R_M + 0.02
                        out.append({"points": _octagon(gx, y0 + 0.05, GUARD_R_M),
                                    "label": "upright guard"})
        x += pitch
        pair += 1
    return out


def warehouse_dict(kind: str = "full") -> dict:
    """The ``*.floor.json`` object of the generated warehouse.

    ``kind``: ``"small"`` (walls and the cross-aisle clutter only), ``"full"`` (the 100 x 60 m
    hall) or ``"annex"`` (the hall and a 150 m annex of the same racking to the east).
    """
    x_end = HALL_X_M if kind != "annex" else HALL_X_M + 150.0
    walls = [{"points": [[0, 0], [x_end, 0], [x_end, HALL_Y_M], [0, HALL_Y_M], [0, 0]],
              "thickness_m": WALL_M}]
    obstacles = _racking(2.0, x_end - 2.0, near_only=(kind == "small"))
    return {"swathe_floorplan": 1, "name": f"generated warehouse ({kind})", "walls": walls,
            "obstacles": obstacles, "doors": []}


def cross_aisle_waypoints(n: int = 40) -> list[list[float]]:
    """A gentle meander along the cross aisle from x = 4 m to x = 96 m."""
    yc = 0.5 * (CROSS_Y0_M + CROSS_Y1_M)
    return [[round(4.0 + 92.0 * k / (n - 1), 4), round(yc + 0.6 * math.sin(0.9 * k), 4)]
            for k in range(n)]


def project_dict(floor_file: str, waypoints: list[list[float]], turn_radius_m: float = 1.0
                 ) -> dict:
    return {"swathe_project": 1, "floorplan": floor_file, "chassis": dict(CHASSIS),
            "routes": [{"name": "cross aisle", "waypoints": waypoints,
                        "turn_radius_m": turn_radius_m}]}


def write_scene(folder: Path, kind: str, waypoints: list[list[float]] | None = None) -> Path:
    """Write ``<kind>.floor.json`` and ``<kind>.swathe.json`` into ``folder``; the project."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / f"{kind}.floor.json").write_text(json.dumps(warehouse_dict(kind)))
    proj = folder / f"{kind}.swathe.json"
    proj.write_text(json.dumps(project_dict(f"{kind}.floor.json",
                                            waypoints or cross_aisle_waypoints())))
    return proj


def edge_count(fp_dict: dict) -> int:
    """Solid edges of a floor-plan object: polygon sides of obstacles and of wall outlines."""
    from kinematics.files.floorplan import floorplan_from_dict, solids

    fp = floorplan_from_dict(fp_dict, "<scene>")
    n = 0
    for s in solids(fp):
        g = s.geometry
        n += len(g.exterior.coords) - 1 + sum(len(r.coords) - 1 for r in g.interiors)
    return n


# -- timing ---------------------------------------------------------------------------------
def interleaved(fns: dict[str, Callable[[], object]], rounds: int, warm: int = 1
                ) -> dict[str, list[float]]:
    """Seconds of each function over ``rounds`` rounds, the functions taking turns in every
    round (so a burst of load on the machine hits all of them)."""
    for _ in range(warm):
        for fn in fns.values():
            fn()
    out: dict[str, list[float]] = {k: [] for k in fns}
    for _ in range(rounds):
        for k, fn in fns.items():
            t0 = time.perf_counter()
            fn()
            out[k].append(time.perf_counter() - t0)
    return out


def spread(xs: list[float], scale: float = 1.0) -> str:
    """``min/median/max`` of ``xs`` times ``scale``, for the spread column."""
    return (f"{min(xs) * scale:.4g}/{statistics.median(xs) * scale:.4g}/"
            f"{max(xs) * scale:.4g}")


def row(name: str, value: float, unit: str, baseline: float | None = None,
        ratio: float | None = None, target: str | None = None, ok: bool | None = None,
        spread_txt: str = "") -> dict:
    """One result row for ``bench/run.py``; ``ok`` is the verdict against ``target``."""
    return {"name": name, "value": value, "unit": unit, "baseline": baseline, "ratio": ratio,
            "target": target, "ok": ok, "spread": spread_txt}
