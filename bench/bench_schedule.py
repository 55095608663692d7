"""``swathe schedule -o`` of a schedule near the sample budget: time and peak memory.

An invented parcel hall (40 x 16 m, walls only) with two routes: a swerve cart's loop and a
tug towing two carts. Each route is scheduled at the time step that gives just under
:data:`kinematics.timing.schedule.MAX_SAMPLES` samples (the same ``--dt`` for both ways):

- figure: ``python -m app.cli schedule ... --dt DT -o FILE`` (JSON, and ``--format csv
  --samples``), the samples written a block at a time;
- baseline: a child that builds the same schedule and writes the row-at-a-time text
  (``jsonio.dumps(schedule_to_dict(s))``, every sample a dict through ``json``; for CSV a
  csv-module row per sample), the encoders the block writer replaced.

Both are fresh processes, run in turn; time is wall clock, memory the child's peak resident
set (``os.wait4``). The figure and baseline files are compared byte for byte. Targets: JSON
within 0.33x the baseline's time and under 0.5 GB peak.

Usage: ``nice -n 5 python bench/bench_schedule.py [--quick]`` (or ``bench/run.py --only
schedule``).
"""

from __future__ import annotations

import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))

TIME_TARGET = 0.33
PEAK_TARGET_MB = 500.0

_BASELINE = r"""
import csv, io, math, sys
from kinematics.files.jsonio import dumps
from kinematics.files.project import load_project
from kinematics.plan.planner import plan_route
from kinematics.timing.schedule import (build_schedule, sample_curvature, schedule_to_dict,
    trailer_sample_cells)
proj, route, dt, fmt, out = sys.argv[1:6]
p = load_project(proj)
r = p.route(route)
c = p.chassis_for(r)
s = build_schedule(r.name, list(plan_route(r, c).segments), c, dt_s=float(dt),
                   zones=p.floorplan.zones, route=r)
if fmt == "json":
    text = dumps(schedule_to_dict(s))
else:  # the rows only, one csv-module row per sample as they were written before
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    sm = s.samples
    curv = sample_curvature(s)
    for k in range(sm.t_s.size):
        cells = [float(sm.t_s[k]), int(sm.segment[k]), float(sm.station_m[k]),
                 float(sm.x[k]), float(sm.y[k]), math.degrees(float(sm.heading_rad[k])),
                 float(sm.v_mps[k]), math.degrees(float(sm.omega_radps[k])), float(curv[k])]
        cells += [float(sm.rate_radps[n][k]) for n in s.drive.wheel_names]
        cells += [math.degrees(float(sm.angle_rad[n][k])) for n in s.drive.steered_wheels]
        cells += trailer_sample_cells(s, k)
        w.writerow([f"{v:.9g}" if isinstance(v, float) else str(v) for v in cells])
    text = buf.getvalue()
with open(out, "w", encoding="utf-8", newline="") as fh:
    fh.write(text)
"""


def _hall() -> dict:
    wall = {"points": [[0, 0], [40, 0], [40, 16], [0, 16], [0, 0]], "thickness_m": 0.3}
    return {"swathe_floorplan": 1, "name": "parcel hall (invented)", "walls": [wall]}


def _project(tmp: Path, kind: str) -> Path:
    (tmp / "hall.floor.json").write_text(json.dumps(_hall()))
    loop = [[4, 4, 0], [34, 4], [34, 12], [6, 12], [6, 6]]
    if kind == "swerve":
        chassis = {"name": "swerve cart", "drive": "swerve", "wheel_radius_m": 0.1,
                   "wheelbase_m": 0.9, "track_m": 0.6, "max_speed_mps": 1.0,
                   "max_accel_mps2": 0.5, "max_wheel_rate_radps": 12.0,
                   "footprint": [[-0.65, -0.4], [0.65, -0.4], [0.65, 0.4], [-0.65, 0.4]]}
        route = {"name": "loop", "waypoints": loop, "turn_radius_m": 1.5}
    else:
        cart = [[-0.45, -0.3], [0.4, -0.3], [0.4, 0.3], [-0.45, 0.3]]
        chassis = {"name": "tug", "drive": "differential", "wheel_radius_m": 0.1,
                   "track_m": 0.46, "max_speed_mps": 0.8, "max_accel_mps2": 0.3,
                   "max_wheel_rate_radps": 10.0,
                   "footprint": [[-0.25, -0.28], [0.55, -0.28], [0.55, 0.28], [-0.25, 0.28]],
                   "trailers": [{"name": "cart a", "hitch_x_m": -0.35, "drawbar_m": 0.75,
                                 "footprint": cart},
                                {"name": "cart b", "hitch_x_m": -0.55, "drawbar_m": 0.7,
                                 "footprint": cart}]}
        route = {"name": "loop", "waypoints": loop, "turn_radius_m": 1.5}
    p = tmp / f"{kind}.swathe.json"
    p.write_text(json.dumps({"swathe_project": 1, "floorplan": "hall.floor.json",
                             "chassis": chassis, "routes": [route]}))
    return p


def _dt_for(project: Path, samples: int) -> float:
    """The time step that gives about ``samples`` samples on the project's route."""
    from kinematics.files.project import load_project
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule

    p = load_project(project)
    r = p.routes[0]
    c = p.chassis_for(r)
    s = build_schedule(r.name, list(plan_route(r, c).segments), c, dt_s=0.1)
    return s.profile.total_time_s / (samples - 2 * len(s.profile.segments) - 2)


# A small process between the bench and the measured child: Linux counts the resident set a
# process had when it forked or exec'd in its peak, so the bench's own memory must not be the
# measured child's parent.
_SHIM = (
    "import os, subprocess, sys\n"
    "p = subprocess.Popen(sys.argv[2:], stdout=subprocess.DEVNULL)\n"
    "_, st, ru = os.wait4(p.pid, 0)\n"
    "open(sys.argv[1], 'w').write(f'{ru.ru_maxrss} {os.waitstatus_to_exitcode(st)}')\n"
)


def _child(args: list[str], report: Path) -> tuple[float, float]:
    """Wall time (s) and peak resident set (MB) of one child process."""
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    t0 = time.perf_counter()
    out = subprocess.run([sys.executable, "-c", _SHIM, str(report), *args], env=env,
                         cwd=str(ROOT), capture_output=True, text=True)
    dt = time.perf_counter() - t0
    kb, code = (int(v) for v in report.read_text().split())
    if out.returncode or code not in (0, 1):
        raise RuntimeError(f"{args[:4]}: exit {code}: {out.stderr.strip()[-300:]}")
    return dt, kb / 1024.0  # Linux: kilobytes


def run(quick: bool = False) -> list[dict]:
    from kinematics.timing.schedule import MAX_SAMPLES

    samples = 40_000 if quick else int(0.975 * MAX_SAMPLES)
    rounds = 1 if quick else 2
    tmp = Path(tempfile.mkdtemp(prefix="swathe-bench-schedule-"))
    py = sys.executable
    rows: list[dict] = []
    for kind in ("swerve", "train"):
        proj = _project(tmp, kind)
        dt = f"{_dt_for(proj, samples):.12g}"
        for fmt in ("json", "csv"):
            fast_out, slow_out = tmp / f"{kind}.fast.{fmt}", tmp / f"{kind}.slow.{fmt}"
            extra = ["--format", "csv", "--samples"] if fmt == "csv" else []
            fast, slow = [], []
            for _ in range(rounds):
                fast.append(_child([py, "-m", "app.cli", "schedule", str(proj), "--route",
                                    "loop", "--dt", dt, *extra, "-o", str(fast_out)], tmp / "rss"))
                slow.append(_child([py, "-c", _BASELINE, str(proj), "loop", dt, fmt,
                                    str(slow_out)], tmp / "rss"))
            if fmt == "json":
                same = fast_out.read_bytes() == slow_out.read_bytes()
            else:  # the baseline wrote rows only: compare them with the file's rows
                body = [x for x in fast_out.read_text(encoding="utf-8").split("\n")
                        if x and not x.startswith("#")][1:]
                same = body == [x for x in slow_out.read_text(encoding="utf-8").split("\n")
                                if x]
            n_rows = sum(1 for _ in open(fast_out, encoding="utf-8"))
            t_f = statistics.median(t for t, _ in fast)
            t_s = statistics.median(t for t, _ in slow)
            m_f = max(m for _, m in fast)
            m_s = max(m for _, m in slow)
            name = f"schedule {fmt} {kind} ~{samples // 1000}k samples"
            rows.append({"name": f"{name}: time", "value": t_f, "unit": "s", "baseline": t_s,
                         "ratio": t_f / t_s, "target": TIME_TARGET if fmt == "json" else None,
                         "ok": (t_f / t_s <= TIME_TARGET and same) if fmt == "json" else None,
                         "spread": f"same bytes: {same}; {n_rows} lines"})
            rows.append({"name": f"{name}: peak RSS", "value": m_f, "unit": "MB",
                         "baseline": m_s, "ratio": m_f / m_s,
                         "target": PEAK_TARGET_MB if fmt == "json" else None,
                         "ok": m_f <= PEAK_TARGET_MB if fmt == "json" else None})
    return rows


if __name__ == "__main__":
    for row in run(quick="--quick" in sys.argv):
        print(row)
