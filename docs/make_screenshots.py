"""Redraw the README's screenshots of the workbench, offscreen, on the bundled demo.

Run from the repository root: ``QT_QPA_PLATFORM=offscreen python docs/make_screenshots.py``
(``--out DIR`` writes elsewhere, to look before replacing the committed pictures).
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _settle(app, rounds: int = 10) -> None:
    for _ in range(rounds):
        app.processEvents()
        time.sleep(0.01)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=str(ROOT / "docs" / "screenshots"))
    args = ap.parse_args(argv)
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    sys.path.insert(0, str(ROOT))
    from PySide6.QtCore import QSettings
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance() or QApplication(sys.argv[:1])
    from app.main_window import DEMO_PROJECT, MainWindow

    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix="swathe-shots-"))
    w = MainWindow(settings=QSettings(str(tmp / "s.ini"), QSettings.Format.IniFormat),
                   autosave_dir=tmp / "autosave")
    w.resize(1600, 1000)
    w.open_project_file(DEMO_PROJECT)
    w.show()
    _settle(app)
    w.canvas.fit()
    _settle(app)
    w.grab().save(str(out / "main_window.png"))
    names = w.doc.route_names()
    w.doc.set_current_route(names.index("corridor-to-sluice"))
    _settle(app)
    chk = w.doc.check("corridor-to-sluice")
    if chk is not None and chk.violations:
        v = chk.violations[0]
        w.canvas.center_on(v.x, v.y)
    _settle(app)
    w.grab().save(str(out / "route_violation.png"))
    w.results_dock.grab().save(str(out / "results.png"))
    w.chassis_dock.grab().save(str(out / "chassis_panel.png"))
    w.plots_dock.raise_()
    _settle(app)
    w.plots_dock.grab().save(str(out / "plots.png"))
    w.schedule_dock.raise_()
    _settle(app)
    w.schedule_dock.grab().save(str(out / "schedule.png"))
    w.doc.undo_stack.setClean()
    w.close()
    # The README's zoned plan: the picture `swathe render` draws of the zoned corridor.
    from app.cli import main as swathe

    swathe(["render", str(ROOT / "docs" / "examples" / "zoned_corridor.swathe.json"),
            "-o", str(out / "zoned_plan.png"), "--width", "1600", "--height", "1000"])
    print(f"screenshots written to {out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
