"""Workbench responsiveness: startup to a painted window, and one drag step on the demo.

- Startup: a fresh process from launch to the first paint of the workbench on the bundled demo,
  against a bare QMainWindow started the same way in the same run (the Qt floor).
- Drag: one waypoint move as a drag produces it, through the event loop as a mouse move does:
  Document edit -> replan -> incremental recheck -> canvas redraw -> the one viewport paint the
  edit schedules (Qt repaints only the changed region). Every waypoint of every demo route is
  dragged in turn. Median, 95th percentile and worst over all moves, wall clock, plus the CPU
  time of this process (steadier when other processes load the machine), and the worst step
  of each route; against a full repaint of the same view with no edit. Target: one 60 Hz frame,
  16.7 ms. The side panels (results, plots, schedule) follow once the drag ends: their one
  refresh on release is reported too, against a 100 ms target (a response within 0.1 s feels
  immediate: Nielsen, Usability Engineering, 1993, section 5.5, from memory).
"""

from __future__ import annotations

import math
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(Path(__file__).resolve().parent))
FRAME_MS = 1000.0 / 60.0

_CHILD_BARE = r"""
import sys, time
from PySide6.QtCore import QEvent, QObject
from PySide6.QtWidgets import QApplication, QLabel, QMainWindow
app = QApplication(sys.argv[:1])
w = QMainWindow(); w.setCentralWidget(QLabel("bare")); w.resize(1400, 900)
class F(QObject):
    def eventFilter(self, o, e):
        if e.type() == QEvent.Type.Paint:
            print(f"PAINTED {time.time():.6f}", flush=True); app.quit()
        return False
f = F(); w.centralWidget().installEventFilter(f)
w.show(); app.exec()
"""

_CHILD_WORKBENCH = r"""
import sys, time
from pathlib import Path
sys.path.insert(0, sys.argv[1])
from PySide6.QtCore import QEvent, QObject, QSettings
from PySide6.QtWidgets import QApplication
app = QApplication(sys.argv[:1])
from app.main_window import DEMO_PROJECT, MainWindow
tmp = Path(sys.argv[2])
w = MainWindow(settings=QSettings(str(tmp / "s.ini"), QSettings.Format.IniFormat),
               autosave_dir=tmp / "autosave")
w.resize(1400, 900)
w.open_project_file(DEMO_PROJECT)
class F(QObject):
    def eventFilter(self, o, e):
        if e.type() == QEvent.Type.Paint:
            print(f"PAINTED {time.time():.6f}", flush=True); app.quit()
        return False
f = F(); w.canvas.plot.viewport().installEventFilter(f)
w.show(); app.exec()
"""


def _startup_s(code: str, tmp: str) -> float:
    env = dict(os.environ, QT_QPA_PLATFORM=os.environ.get("QT_QPA_PLATFORM", "offscreen"))
    t0 = time.time()
    out = subprocess.run([sys.executable, "-c", code, str(ROOT), tmp], capture_output=True,
                         text=True, env=env, timeout=120)
    for line in out.stdout.splitlines():
        if line.startswith("PAINTED "):
            return float(line.split()[1]) - t0
    raise RuntimeError(f"no first paint: {out.stderr.strip()[-400:]}")


def _settle(app, rounds: int = 8) -> None:
    """Let queued work (timers, layouts, pending paints) run out before timing."""
    for _ in range(rounds):
        app.processEvents()
        time.sleep(0.01)


def _drag_ms(moves: int, project: Path | None = None) -> dict[str, object]:
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    sys.path.insert(0, str(ROOT))
    from PySide6.QtCore import QEvent, QObject, QSettings
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance() or QApplication(sys.argv[:1])
    from app.document import new_drag_token
    from app.main_window import DEMO_PROJECT, MainWindow

    tmp = Path(tempfile.mkdtemp(prefix="swathe-bench-"))
    w = MainWindow(settings=QSettings(str(tmp / "s.ini"), QSettings.Format.IniFormat),
                   autosave_dir=tmp / "autosave")
    w.resize(1400, 900)
    w.open_project_file(project or DEMO_PROJECT)
    w.show()
    doc = w.doc
    vp = w.canvas.plot.viewport()
    _settle(app)

    class Paints(QObject):
        count = 0

        def eventFilter(self, obj, ev):  # noqa: N802 - Qt's name
            if obj is vp and ev.type() == QEvent.Type.Paint:
                self.count += 1
            return False

    paints = Paints()
    vp.installEventFilter(paints)
    base = []
    for _ in range(max(10, moves // 2)):
        t = time.perf_counter()
        vp.repaint()
        app.processEvents()
        base.append((time.perf_counter() - t) * 1000.0)
    times, cpu, unpainted, per_route = [], [], 0, {}
    # Every waypoint of every demo route is dragged round a 0.3 m circle in turn, so the
    # worst covers the longest route's middle waypoints (two legs replanned) and the route
    # whose last leg fails at the sluice door.
    for ri, name in enumerate(doc.route_names()):
        doc.set_current_route(ri)
        _settle(app, 3)
        for wi in range(len(doc.route().waypoints)):
            x0, y0 = doc.route().waypoints[wi].x, doc.route().waypoints[wi].y
            token = new_drag_token()
            for k in range(moves):
                a = 2.0 * math.pi * k / moves
                paints.count = 0
                t, c = time.perf_counter(), time.process_time()
                doc.move_waypoint(ri, wi, round(x0 + 0.3 * math.cos(a), 4),
                                  round(y0 + 0.3 * math.sin(a), 4), drag=token)
                app.processEvents()
                if paints.count == 0:  # never time a step whose paint did not happen
                    unpainted += 1
                    vp.repaint()
                ms = (time.perf_counter() - t) * 1000.0
                times.append(ms)
                cpu.append((time.process_time() - c) * 1000.0)
                per_route[name] = max(per_route.get(name, 0.0), ms)
            if (ri, wi) != (len(doc.route_names()) - 1, len(doc.route().waypoints) - 1):
                doc.finish_drag()
                doc.undo_stack.undo()  # back where it was, so every drag starts from the demo
                _settle(app, 2)
    t = time.perf_counter()
    doc.finish_drag()
    app.processEvents()
    release = (time.perf_counter() - t) * 1000.0
    vp.removeEventFilter(paints)
    doc.undo_stack.setClean()
    w.close()
    return {"times": times, "cpu": cpu, "base": base, "release": release,
            "unpainted": unpainted, "per_route": per_route}


def run(quick: bool) -> list[dict]:
    """Startup and drag figures with same-run baselines (see the module docstring)."""
    reps = 1 if quick else 3
    tmp = tempfile.mkdtemp(prefix="swathe-bench-")
    bare = statistics.median(_startup_s(_CHILD_BARE, tmp) for _ in range(reps))
    bench = statistics.median(_startup_s(_CHILD_WORKBENCH, tmp) for _ in range(reps))
    d = _drag_ms(12 if quick else 30)
    times, cpu, base = d["times"], d["cpu"], d["base"]
    med, worst, bmed = statistics.median(times), max(times), statistics.median(base)
    cmed = statistics.median(cpu)
    rows = [
        {"name": "gui startup to first paint (demo)", "value": bench, "unit": "s",
         "baseline": bare, "ratio": bench / bare, "target": 1.5},
        {"name": "gui drag step median (replan+recheck+redraw)", "value": med, "unit": "ms",
         "baseline": bmed, "ratio": med / bmed if bmed > 0 else None, "target": FRAME_MS},
        {"name": "gui drag step worst", "value": worst, "unit": "ms", "baseline": bmed,
         "ratio": worst / bmed if bmed > 0 else None, "target": FRAME_MS},
        {"name": "gui drag step 95th percentile", "value": float(np.percentile(times, 95)),
         "unit": "ms", "baseline": bmed,
         "ratio": float(np.percentile(times, 95)) / bmed if bmed > 0 else None,
         "target": FRAME_MS},
        {"name": "gui drag step worst, CPU time", "value": max(cpu), "unit": "ms",
         "baseline": bmed, "ratio": max(cpu) / bmed if bmed > 0 else None,
         "target": FRAME_MS},
        {"name": "gui drag step median, CPU time", "value": cmed, "unit": "ms",
         "baseline": bmed, "ratio": cmed / bmed if bmed > 0 else None, "target": FRAME_MS},
        {"name": "gui drag release (panels refresh)", "value": d["release"], "unit": "ms",
         "baseline": bmed, "ratio": d["release"] / bmed if bmed > 0 else None,
         "target": 100.0},
    ]
    # The big warehouse (bench/scenes.py): ~20,000 solid edges, a 40-waypoint route, every
    # waypoint dragged round its circle (issue targets: median <= 8 ms, p95 <= 16.7 ms).
    import scenes

    big = scenes.write_scene(Path(tmp) / "warehouse", "full")
    dw = _drag_ms(6 if quick else 12, big)
    wt, wc = dw["times"], dw["cpu"]
    wmed, wp95 = statistics.median(wt), float(np.percentile(wt, 95))
    rows += [
        {"name": "gui drag on the big warehouse, median", "value": wmed, "unit": "ms",
         "baseline": None, "ratio": None, "target": "<= 8", "ok": wmed <= 8.0,
         "spread": f"{min(wt):.4g}/{wmed:.4g}/{max(wt):.4g}"},
        {"name": "gui drag on the big warehouse, 95th percentile", "value": wp95, "unit": "ms",
         "baseline": None, "ratio": None, "target": "<= 16.7", "ok": wp95 <= FRAME_MS},
        {"name": "gui drag on the big warehouse, median CPU time", "value":
         statistics.median(wc), "unit": "ms", "baseline": None, "ratio": None, "target": None},
    ]
    rows += transitions_rows(quick, tmp)
    for name, ms in d["per_route"].items():
        rows.append({"name": f"gui drag step worst, route {name}", "value": ms, "unit": "ms",
                     "baseline": bmed, "ratio": ms / bmed if bmed > 0 else None,
                     "target": FRAME_MS})
    if d["unpainted"]:
        rows.append({"name": "gui drag steps with no scheduled paint", "value": d["unpainted"],
                     "unit": "steps", "baseline": None, "ratio": None, "target": 0})
    return rows


def _demo_with_transitions(tmp: str) -> Path:
    """The demo with transitions on: its routes filleted at 0.6 m instead of pivoting, and a
    wheel-acceleration limit making "clothoid" their default, so every corner is a CC turn,
    swept and checked as clothoids."""
    import json
    import shutil

    demo = json.loads((ROOT / "sample_floorplans" / "demo.swathe.json").read_text("utf-8"))
    demo["chassis"]["max_wheel_accel_radps2"] = 6.0
    for r in demo["routes"]:
        r["turn_radius_m"] = 0.6
    cc_dir = Path(tmp) / "demo_cc"
    cc_dir.mkdir(exist_ok=True)
    shutil.copy(ROOT / "sample_floorplans" / demo["floorplan"], cc_dir / demo["floorplan"])
    (cc_dir / "demo_cc.swathe.json").write_text(json.dumps(demo), "utf-8")
    return cc_dir / "demo_cc.swathe.json"


def _demo_filleted(tmp: str) -> Path:
    """The same filleted demo with transitions "none": the same corners as plain arcs, the
    baseline for the drag with transitions."""
    import json

    cc = _demo_with_transitions(tmp)
    demo = json.loads(cc.read_text("utf-8"))
    for r in demo["routes"]:
        r["transitions"] = "none"
    out = cc.with_name("demo_arcs.swathe.json")
    out.write_text(json.dumps(demo), "utf-8")
    return out


def transitions_rows(quick: bool, tmp: str | None = None) -> list[dict]:
    """Drag on the demo with transitions against the same filleted demo without them,
    interleaved (rounds of one and then the other, times pooled): median, 95th percentile and
    CPU time of each, the target one 60 Hz frame for the run with transitions."""
    tmp = tmp or tempfile.mkdtemp(prefix="swathe-bench-")
    cc_path, arcs_path = _demo_with_transitions(tmp), _demo_filleted(tmp)
    moves, rounds = (12, 1) if quick else (24, 3)
    ct, cc, at, ac, worst_route = [], [], [], [], {}
    for _ in range(rounds):
        dc = _drag_ms(moves, cc_path)
        ct += dc["times"]
        cc += dc["cpu"]
        for name, ms in dc["per_route"].items():
            worst_route[name] = max(worst_route.get(name, 0.0), ms)
        da = _drag_ms(moves, arcs_path)
        at += da["times"]
        ac += da["cpu"]
    cmed, amed = statistics.median(ct), statistics.median(at)
    c95, a95 = float(np.percentile(ct, 95)), float(np.percentile(at, 95))
    rows = [
        {"name": "gui drag step median, demo with transitions", "value": cmed, "unit": "ms",
         "baseline": amed, "ratio": cmed / amed if amed > 0 else None, "target": "<= 16.7",
         "ok": cmed <= FRAME_MS, "spread": f"{min(ct):.4g}/{cmed:.4g}/{max(ct):.4g}"},
        {"name": "gui drag step 95th percentile, demo with transitions", "value": c95,
         "unit": "ms", "baseline": a95, "ratio": c95 / a95 if a95 > 0 else None,
         "target": "<= 16.7", "ok": c95 <= FRAME_MS},
        {"name": "gui drag step median CPU time, demo with transitions",
         "value": statistics.median(cc), "unit": "ms", "baseline": statistics.median(ac),
         "ratio": None, "target": None},
        {"name": "gui drag step 95th pct CPU time, demo with transitions",
         "value": float(np.percentile(cc, 95)), "unit": "ms",
         "baseline": float(np.percentile(ac, 95)), "ratio": None, "target": None},
    ]
    for name, ms in worst_route.items():
        rows.append({"name": f"gui drag step worst, transitions, route {name}", "value": ms,
                     "unit": "ms", "baseline": None, "ratio": None, "target": FRAME_MS})
    return rows


if __name__ == "__main__":
    if "--transitions" in sys.argv:  # only the demo drag with and without transitions
        for row in transitions_rows(quick="--quick" in sys.argv):
            print(row)
        sys.exit(0)
    for row in run(quick="--quick" in sys.argv):
        print(row)
