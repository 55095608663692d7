"""The workbench Document: edits, undo/redo, merging drags, save/reopen, autosave recovery."""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from kinematics.errors import SwatheInputError  # noqa: E402
from kinematics.files.project import Route, Waypoint, load_project  # noqa: E402

CHASSIS = {"name": "test tug", "drive": "differential",
           "footprint": [[-0.3, -0.3], [0.6, -0.3], [0.6, 0.3], [-0.3, 0.3]],
           "margin_m": 0.05, "wheel_radius_m": 0.1, "track_m": 0.5,
           "max_speed_mps": 1.0, "max_accel_mps2": 0.5, "max_wheel_rate_radps": 15.0,
           "max_lateral_accel_mps2": 0.5}
# Invented test geometry: a 2 m corridor along y = 0..2 with a parked cart near the top wall.
FLOOR = {"swathe_floorplan": 1, "name": "test corridor",
         "walls": [{"points": [[0, 0], [12, 0]], "thickness_m": 0.1},
                   {"points": [[0, 2], [12, 2]], "thickness_m": 0.1}],
         "obstacles": [{"points": [[6, 1.3], [6.4, 1.3], [6.4, 1.95], [6, 1.95]],
                        "label": "parked cart"}],
         "doors": [{"a": [10, 0], "b": [10, 2], "label": "D-1"}]}
ROUTES = [{"name": "clear", "waypoints": [[1, 0.6, 0], [11, 0.6, 0]], "turn_radius_m": 0.0},
          {"name": "second", "waypoints": [[1, 1.0], [5, 1.0], [11, 1.0]],
           "turn_radius_m": 0.5, "reverse": False, "colour_note": "kept"}]


def write_project(tmp: Path, routes: list[dict] | None = None) -> Path:
    (tmp / "corridor.floor.json").write_text(json.dumps(FLOOR))
    proj = {"swathe_project": 1, "floorplan": "corridor.floor.json", "chassis": CHASSIS,
            "routes": ROUTES if routes is None else routes, "my_tool_key": {"a": 1}}
    path = tmp / "t.swathe.json"
    path.write_text(json.dumps(proj))
    return path


@pytest.fixture
def doc(qtbot, tmp_path):
    from app.document import Document

    d = Document()
    d.open_project(write_project(tmp_path))
    return d


def test_open_sets_state(doc, tmp_path):
    # Source: shared/contract.md, project file; common practice for a freshly opened document.
    assert doc.route_names() == ["clear", "second"]
    assert doc.current_route == 0
    assert not doc.dirty
    assert doc.path == tmp_path / "t.swathe.json"


def test_edits_undo_redo_restore_exact_trees(doc, qtbot):
    # Source: Qt QUndoStack documentation (undo restores the state before the command).
    original = doc.project
    with qtbot.waitSignal(doc.routesChanged):
        doc.add_waypoint(1, 3, Waypoint(11.5, 1.2))
    doc.move_waypoint(1, 1, 5.5, 1.1)
    doc.set_waypoint_heading(1, 0, 45.0)
    assert doc.undo_stack.count() == 3
    assert doc.undo_stack.undoText() == "Set heading of waypoint 1"
    assert doc.dirty
    after = doc.project
    assert after.routes[1].waypoints[1] == Waypoint(5.5, 1.1, None)
    assert after.routes[1].waypoints[0].heading_deg == 45.0
    for _ in range(3):
        doc.undo_stack.undo()
    assert doc.project == original
    assert not doc.dirty
    for _ in range(3):
        doc.undo_stack.redo()
    assert doc.project == after


def test_drag_moves_merge_into_one_step(doc):
    # Source: Qt QUndoCommand::id / mergeWith documentation (compression of commands).
    from app.document import new_drag_token

    token = new_drag_token()
    for k in range(20):
        doc.move_waypoint(1, 1, 5.0 + 0.05 * k, 1.0, drag=token)
    assert doc.undo_stack.count() == 1
    assert doc.undo_stack.undoText() == "Move waypoint 2"
    # A second drag of the same waypoint is its own undo step.
    doc.move_waypoint(1, 1, 4.0, 1.0, drag=new_drag_token())
    assert doc.undo_stack.count() == 2
    doc.undo_stack.undo()
    assert doc.project.routes[1].waypoints[1].x == pytest.approx(5.95)
    doc.undo_stack.undo()
    assert doc.project.routes[1].waypoints[1].x == 5.0


def test_drag_holds_panel_results_until_release_and_plain_edits_do_not(doc, qtbot):
    # Source: Qt QTimer documentation (start() on an active timer restarts it), which is how
    # the panels' refresh waits for the drag to rest; common practice: a one-shot edit shows
    # its results at once.
    from app.document import new_drag_token

    seen: list[int] = []
    doc.resultsChanged.connect(lambda: seen.append(len(seen)))
    token = new_drag_token()
    for k in range(5):
        doc.move_waypoint(1, 1, 5.0 + 0.05 * k, 1.0, drag=token)
    assert seen == [] and doc.results_pending
    doc.finish_drag()
    assert len(seen) == 1 and not doc.results_pending
    doc.finish_drag()  # nothing held back any more: no second signal
    assert len(seen) == 1
    # A drag that stops without a release still gets its results once it has rested.
    doc.move_waypoint(1, 1, 4.0, 1.0, drag=new_drag_token())
    qtbot.waitUntil(lambda: len(seen) == 2, timeout=2000)
    # A plain edit (not a drag step) and undo report their results straight away.
    doc.move_waypoint(1, 1, 4.5, 1.0)
    assert len(seen) == 3 and not doc.results_pending
    doc.undo_stack.undo()
    assert len(seen) == 4


def test_drag_holds_the_garbage_collector_off_until_it_ends_or_rests(doc, qtbot):
    # Source: Python gc module documentation (gc.disable / gc.enable / gc.isenabled; a full
    # collection examines every tracked object). A drag step must not wait on one, so the
    # collector is off during a drag, back on at release or rest, and never switched on when
    # the caller had switched it off.
    import gc

    from app.document import new_drag_token

    assert gc.isenabled()
    try:
        token = new_drag_token()
        doc.move_waypoint(1, 1, 5.0, 1.0, drag=token)
        assert not gc.isenabled()
        doc.move_waypoint(1, 1, 5.1, 1.0, drag=token)
        assert not gc.isenabled()
        doc.finish_drag()
        assert gc.isenabled()
        doc.move_waypoint(1, 1, 5.2, 1.0, drag=new_drag_token())
        assert not gc.isenabled()
        qtbot.waitUntil(gc.isenabled, timeout=2000)  # rested: no release came
        doc.move_waypoint(1, 1, 5.3, 1.0)  # a plain edit leaves it on
        assert gc.isenabled()
        gc.disable()
        doc.move_waypoint(1, 1, 5.4, 1.0, drag=new_drag_token())
        doc.finish_drag()
        assert not gc.isenabled()
    finally:
        gc.enable()


def test_delete_refuses_below_two_waypoints(doc):
    # Source: kinematics.files.project.route_from_dict (a route file needs at least 2 waypoints).
    assert doc.delete_waypoint(1, 1)
    assert len(doc.project.routes[1].waypoints) == 2
    assert not doc.delete_waypoint(1, 0)
    assert len(doc.project.routes[1].waypoints) == 2


def test_routes_add_rename_remove_and_current(doc):
    # Source: shared/contract.md (route names identify routes on the command line: unique).
    doc.add_route(Route("third", (Waypoint(1, 1), Waypoint(3, 1))))
    assert doc.current_route == 2
    with pytest.raises(ValueError):
        doc.add_route(Route("third", (Waypoint(1, 1), Waypoint(3, 1))))
    import dataclasses

    doc.set_route(2, dataclasses.replace(doc.project.routes[2], name="renamed"))
    assert doc.undo_stack.undoText() == "Rename route 'third' to 'renamed'"
    with pytest.raises(ValueError):
        doc.set_route(2, dataclasses.replace(doc.project.routes[2], name="clear"))
    doc.remove_route(0)
    assert doc.route_names() == ["second", "renamed"]
    assert doc.current_route == 1
    doc.undo_stack.undo()
    assert doc.route_names() == ["clear", "second", "renamed"]
    assert doc.current_route == 2


def test_save_and_reopen_keeps_everything(doc, tmp_path):
    # Source: shared/contract.md ("add keys freely"; unknown keys survive a round trip).
    doc.move_waypoint(1, 1, 5.25, 1.125)
    doc.set_waypoint_heading(1, 2, -90.0)
    sub = tmp_path / "elsewhere"
    sub.mkdir()
    saved = doc.save(sub / "copy.swathe.json")
    assert not doc.dirty
    again = load_project(saved)
    assert again.routes == doc.project.routes
    assert again.chassis == doc.project.chassis
    assert again.floorplan.walls == doc.project.floorplan.walls
    assert again.extra == {"my_tool_key": {"a": 1}}
    assert again.routes[1].extra == {"colour_note": "kept"}
    # The relative floor plan reference was rewritten for the new folder.
    raw = json.loads(saved.read_text())
    assert raw["floorplan"] == "../corridor.floor.json"


def test_bad_file_keeps_document(doc, tmp_path):
    # Source: shared/contract.md (bad input names file and place); common practice (no loss).
    bad = tmp_path / "bad.swathe.json"
    bad.write_text('{"swathe_project": 1, "floorplan": "corridor.floor.json",\n "chassis": }')
    before = doc.project
    doc.move_waypoint(0, 0, 1.5, 0.6)
    with pytest.raises(SwatheInputError) as info:
        doc.open_project(bad)
    assert "bad.swathe.json" in info.value.message and "line 2" in info.value.message
    assert doc.project.routes[0].waypoints[0].x == 1.5
    assert doc.project.chassis == before.chassis
    assert doc.dirty


def test_autosave_recover_after_crash(doc, tmp_path):
    # Source: common practice (an autosave survives the process; recovery offers it once).
    from app.autosave import Autosaver, discard, pending_autosaves, recover_into
    from app.document import Document

    store = tmp_path / "autosave"
    saver = Autosaver(doc, directory=store, interval_ms=60_000)
    doc.move_waypoint(1, 1, 6.5, 0.8)
    saver.save_now()
    # The process dies here: no clean shutdown, nothing removes the file.
    del saver
    found = pending_autosaves(store)
    assert len(found) == 1
    entry = found[0]
    assert entry.original_path == doc.path
    fresh = Document()
    recover_into(fresh, entry)
    assert fresh.project.routes == doc.project.routes
    assert fresh.path == doc.path
    assert fresh.dirty
    # Recovered work saves back to the project with the floor plan still a reference.
    fresh.save()
    assert json.loads(doc.path.read_text())["floorplan"] == "corridor.floor.json"
    discard(entry)
    assert pending_autosaves(store) == []


def test_clean_save_removes_autosave(doc, tmp_path):
    # Source: common practice (nothing to recover once the work is saved).
    from app.autosave import Autosaver, pending_autosaves

    store = tmp_path / "autosave"
    saver = Autosaver(doc, directory=store, interval_ms=60_000)
    doc.move_waypoint(1, 1, 6.5, 0.8)
    saver.save_now()
    assert len(pending_autosaves(store)) == 1
    doc.save()
    assert pending_autosaves(store) == []


def test_none_guard_leaves_a_sound_binding_alone():
    # Source: CPython documentation, sys.getrefcount ("generally one higher than you might
    # expect, because it includes the (temporary) reference as an argument").
    import sys

    from app.document import _refcount_field, guard_none_refcount

    if sys.version_info >= (3, 12):
        assert guard_none_refcount() is False  # None is immortal there (PEP 683)
        return
    field = _refcount_field(None)
    assert field is not None
    assert abs(field.value - (sys.getrefcount(None) - 1)) <= 16
    before = sys.getrefcount(None)
    assert guard_none_refcount() is False  # this environment's PySide6 does not leak
    assert abs(sys.getrefcount(None) - before) < 1000
    assert sys.getrefcount(True) < 1 << 40 and sys.getrefcount(False) < 1 << 40
