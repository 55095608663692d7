"""``swathe check`` end to end, as a user runs it: building size and start-up.

(a) The same 40-waypoint cross-aisle route checked on three generated warehouse plans
    (:mod:`bench.scenes`): the small plan (walls and the clutter next to the route), the
    100 x 60 m hall (~3,000 rack bays, ~20,000 solid edges) and the hall with its annex
    (~50,000 edges). A fresh process each run, the three interleaved; the ratio of medians
    against the small plan (targets <= 1.2 and <= 1.5).
(b) ``swathe check`` on the clinic sample against ``python -c "import numpy, shapely"``, both
    fresh processes, interleaved (target <= 2): the command imports only what it needs.

Every child is pinned to one CPU (the same one) where the system allows it.
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(ROOT))

import scenes  # noqa: E402


def _pin() -> None:
    try:
        cpus = sorted(os.sched_getaffinity(0))
        os.sched_setaffinity(0, {cpus[-1]})
    except (AttributeError, OSError):
        pass


def _run_s(args: list[str]) -> float:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    t0 = time.perf_counter()
    out = subprocess.run(args, capture_output=True, text=True, env=env, preexec_fn=_pin,
                         cwd=str(ROOT))
    dt = time.perf_counter() - t0
    if out.returncode not in (0, 1):
        raise RuntimeError(f"{args}: exit {out.returncode}: {out.stderr.strip()[-300:]}")
    return dt


def run(quick: bool) -> list[dict]:
    rounds = 5 if quick else 15
    tmp = Path(tempfile.mkdtemp(prefix="swathe-bench-cli-"))
    projects = {kind: scenes.write_scene(tmp, kind) for kind in ("small", "full", "annex")}
    edges = {kind: scenes.edge_count(scenes.warehouse_dict(kind)) for kind in projects}
    bays = sum(1 for o in scenes.warehouse_dict("full")["obstacles"]
               if o["label"].startswith("rack"))
    py = sys.executable
    fns = {kind: (lambda p=p: _run_s([py, "-m", "app.cli", "check", str(p)]))
           for kind, p in projects.items()}
    clinic = str(ROOT / "sample_floorplans" / "clinic.swathe.json")
    fns["clinic"] = lambda: _run_s([py, "-m", "app.cli", "check", clinic])
    fns["imports"] = lambda: _run_s([py, "-c", "import numpy, shapely"])
    # Each call returns its own wall time (the child's); interleaved rounds.
    times: dict[str, list[float]] = {k: [] for k in fns}
    for fn in fns.values():
        fn()
    for _ in range(rounds):
        for k, fn in fns.items():
            times[k].append(fn())
    med = {k: statistics.median(v) for k, v in times.items()}
    rows = [scenes.row(f"cli check, small plan ({edges['small']} edges)", med["small"] * 1e3,
                       "ms", spread_txt=scenes.spread(times["small"], 1e3))]
    for kind, limit in (("full", 1.2), ("annex", 1.5)):
        ratio = med[kind] / med["small"]
        label = (f"cli check, {edges[kind]}-edge hall ({bays} bays)" if kind == "full" else
                 f"cli check, {edges[kind]}-edge hall + annex")
        rows.append(scenes.row(label + " / small", med[kind] * 1e3, "ms", med["small"] * 1e3,
                               ratio, f"<= {limit}", ratio <= limit,
                               scenes.spread(times[kind], 1e3)))
    ratio = med["clinic"] / med["imports"]
    rows.append(scenes.row("cli check clinic / import numpy, shapely", med["clinic"] * 1e3,
                           "ms", med["imports"] * 1e3, ratio, "<= 2", ratio <= 2.0,
                           scenes.spread(times["clinic"], 1e3)))
    return rows


if __name__ == "__main__":
    for r in run(quick="--quick" in sys.argv):
        print(r)
