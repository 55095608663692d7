"""Redraw docs/find_before.png and docs/find_after.png: a door turn on the invented clinic plan
as sketched (it hits the jamb of room 207) and after Route > Repair route.

Usage: ``QT_QPA_PLATFORM=offscreen python docs/make_find_pictures.py [--out DIR]``
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from kinematics.files.loader import load_floorplan  # noqa: E402
from kinematics.files.project import Chassis, Project, Route, Waypoint  # noqa: E402
from kinematics.plan.search import FindSettings, RouteFinder, replace_route  # noqa: E402

CART = Chassis(name="cart", drive="ackermann", wheelbase_m=0.8, track_m=0.5,
               max_steer_deg=35.0, margin_m=0.05,
               footprint=((-0.25, -0.3), (1.05, -0.3), (1.05, 0.3), (-0.25, 0.3)))
SKETCH = Route("pharmacy-to-room-207", (Waypoint(3.1, 5.0, 90.0), Waypoint(6.0, 10.0, 0.0),
                                        Waypoint(17.75, 14.0, 90.0)))


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", default=str(HERE))
    out = Path(ap.parse_args().out)
    from PySide6.QtWidgets import QApplication

    from app.render import render_project_png

    _app = QApplication.instance() or QApplication([])
    fp = load_floorplan(HERE.parent / "sample_floorplans" / "clinic.floor.json")
    before = Project(fp, CART, (SKETCH,))
    res = RouteFinder(before, settings=FindSettings(time_limit_s=10.0)).repair(SKETCH)
    if not res.found:
        print(res.reason)
        return 1
    after = replace_route(before, res.route)
    render_project_png(before, out / "find_before.png", size=(1400, 700))
    render_project_png(after, out / "find_after.png", size=(1400, 700))
    print(f"legs searched {res.legs}, least clearance {res.check.min_clearance_m:.3f} m, "
          f"{res.time_s:.2f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
