"""Every writer survives a SIGKILL: the file is the old or the new one, complete, never a
partial one, and the temporary files killed writes leave do not pile up.

Each writer (project save, autosave, ``schedule -o``, ``render -o``, the report) runs in a
child process that first writes its two possible outputs to reference files, then rewrites
the target again and again, alternating them. The child is killed at seeded random moments;
the target must equal one reference byte for byte. Source: POSIX rename(2) atomicity, which
the writers rely on (temporary file beside the target, fsync, rename).
"""

from __future__ import annotations

import json
import os
import random
import re
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent

CHILD = textwrap.dedent('''
    import os, sys, shutil
    from pathlib import Path
    kind, work = sys.argv[1], Path(sys.argv[2])
    os.environ["QT_QPA_PLATFORM"] = "offscreen"
    from kinematics.files.project import load_project, save_project
    proj = work / "p.swathe.json"
    target = work / sys.argv[3]
    project = load_project(proj)
    import dataclasses
    if kind == "save":
        r = project.routes[0]
        variants = [dataclasses.replace(project, routes=(dataclasses.replace(r, turn_radius_m=t),))
                    for t in (0.0, 0.5)]
        def write(i, path):
            save_project(variants[i], path)
    elif kind == "autosave":
        from PySide6.QtCore import QCoreApplication
        app = QCoreApplication([])
        from app.document import Document
        from app.autosave import Autosaver
        docs = []
        for t in (0.0, 0.5):
            r = project.routes[0]
            p = dataclasses.replace(project, routes=(dataclasses.replace(r, turn_radius_m=t),))
            docs.append(Document(p))
        def write(i, path):
            a = Autosaver(docs[i], directory=path.parent)
            a._file = path
            from app import autosave as m
            m.file_for = lambda d, p, _path=path: _path
            a.save_now()
    elif kind == "schedule":
        from app.cli import main
        def write(i, path):
            fmt = ("csv", "json")[i]
            # The route scrapes a wall: the schedule is still written and exits 1 (contract).
            assert main(["schedule", str(proj), "--route", "along", "--format", fmt,
                         "-o", str(path)]) == 1
    elif kind == "render":
        from app.cli import main
        def write(i, path):
            assert main(["render", str(proj), "-o", str(path), "--width", ("400", "420")[i],
                         "--height", "300"]) == 0
    else:
        from app.report import export_report
        def write(i, path):
            # A fixed time on the page: "Generated" is to the minute, so a write after the
            # minute turned was neither reference although it was complete.
            export_report(project, path, route_name=("along", None)[i],
                          when="2026-01-01 00:00")
    for i in (0, 1):
        write(i, work / f"ref{i}{target.suffix}")
    shutil.copy(work / f"ref0{target.suffix}", target)  # the old file
    (work / "ready").write_text("1")
    i = 1
    while True:
        write(i, target)
        i = 1 - i
''')

CHASSIS = {"name": "test cart", "drive": "differential",
           "footprint": [[-0.3, -0.3], [0.6, -0.3], [0.6, 0.3], [-0.3, 0.3]],
           "margin_m": 0.05, "wheel_radius_m": 0.1, "track_m": 0.5,
           "max_speed_mps": 1.0, "max_accel_mps2": 0.5}
FLOOR = {"swathe_floorplan": 1, "name": "test hall",
         "walls": [{"points": [[0, 0], [12, 0]], "thickness_m": 0.1},
                   {"points": [[0, 3], [12, 3]], "thickness_m": 0.1}]}


def _norm(data: bytes) -> bytes:
    """The bytes with what differs between two writes of the same content blanked: the
    autosave's time of saving, a PDF's creation date and random file identifier."""
    data = re.sub(rb'"saved_at": "[^"]*"', b'"saved_at": ""', data)
    data = re.sub(rb"/ID \[[^\]]*\]", b"/ID []", data)
    return re.sub(rb"/(CreationDate|ModDate) \([^)]*\)", rb"/\1 ()", data)


@pytest.mark.parametrize("kind, name", [("save", "out.swathe.json"),
                                        ("autosave", "auto.swathe.json"),
                                        ("schedule", "s.out"), ("render", "r.png"),
                                        ("report", "report.png")])
def test_sigkill_leaves_old_or_new_file_and_no_temp_files(tmp_path, kind, name):
    (tmp_path / "hall.floor.json").write_text(json.dumps(FLOOR))
    (tmp_path / "p.swathe.json").write_text(json.dumps({
        "swathe_project": 1, "floorplan": "hall.floor.json", "chassis": CHASSIS,
        "routes": [{"name": "along", "waypoints": [[1, 1.5, 0], [6, 1.5], [6, 2.5]]}]}))
    script = tmp_path / "child.py"
    script.write_text(CHILD)
    env = dict(os.environ, PYTHONPATH=str(ROOT), QT_QPA_PLATFORM="offscreen")
    target = tmp_path / name
    rng = random.Random(f"kill-{kind}")  # fixed seed: the same kill moments every run
    refs: list[bytes] = []
    for k in range(3):
        (tmp_path / "ready").unlink(missing_ok=True)
        child = subprocess.Popen([sys.executable, str(script), kind, str(tmp_path), name],
                                 env=env, cwd=tmp_path, stderr=subprocess.PIPE)
        deadline = time.monotonic() + 60
        while not (tmp_path / "ready").exists():
            assert child.poll() is None, child.stderr.read().decode()
            assert time.monotonic() < deadline
            time.sleep(0.01)
        refs = [(tmp_path / f"ref{i}{target.suffix}").read_bytes() for i in (0, 1)]
        assert refs[0] != refs[1] and min(map(len, refs)) > 0
        time.sleep(rng.uniform(0.02, 0.4))
        child.send_signal(signal.SIGKILL)
        child.wait()
        child.stderr.close()
        data = target.read_bytes()
        # The autosave header holds the time of saving; all else must match byte for byte.
        assert _norm(data) in [_norm(r) for r in refs], \
            f"kill {k}: {len(data)} bytes, neither old nor new"
    # A write after the kills sweeps away what they left behind.
    from kinematics.files.jsonio import atomic_write_bytes

    atomic_write_bytes(target, refs[1])
    left = [f.name for f in tmp_path.iterdir() if f.name.endswith(".tmp")]
    assert left == []
