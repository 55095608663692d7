"""The workbench document: one project, its undo history and the latest results per route.

The :class:`Document` is the single source of truth of the window. The project is a tree of
frozen dataclasses (:mod:`kinematics.files.project`); every edit builds a new tree with
``dataclasses.replace`` and goes through one :class:`QUndoCommand` that holds the trees before
and after, so undo and redo are exact and cheap. Views subscribe to the signals and edit only
through the methods here.

Results (plan, check, schedule) are computed lazily on first request and cached against the
route, chassis and floor plan objects they came from, so an edit invalidates exactly what it
changed. The route check keeps one incremental checker per route, so dragging one waypoint
re-sweeps only the segments that moved.

Size: the one Document: its undo commands, its edits and its per-route result caches are one
state machine (an edit invalidates exactly what it changed), so they stay in one class.
"""

from __future__ import annotations

import ctypes
import dataclasses
import gc
import itertools
import os
import re
import sys
from pathlib import Path
from typing import Any

from PySide6.QtCore import QObject, QTimer, Signal
from PySide6.QtGui import QUndoCommand, QUndoStack

from kinematics.analysis.results import clearance_words  # noqa: F401 - the window imports it here
from kinematics.errors import SwatheInputError
from kinematics.files.floorplan import FloorPlan, save_floorplan
from kinematics.files.project import Chassis, Project, Route, Waypoint, load_project, save_project

_LEAK_PROBE_CALLS = 64  # void calls measured; a leaking binding loses one reference each


def _refcount_field(obj: object) -> ctypes.c_ssize_t | None:
    """``obj``'s reference count field, or ``None`` where it cannot be found for sure."""
    if hasattr(sys, "getobjects"):  # a trace-refs build puts list links before the count
        return None
    field = ctypes.c_ssize_t.from_address(id(obj))
    # The two readings differ by getrefcount's own argument and any reference the
    # interpreter holds on its stack meanwhile; anything else here (a pointer) is far off.
    return field if abs(field.value - (sys.getrefcount(obj) - 1)) <= 16 else None


def guard_none_refcount() -> bool:
    """Keep ``None`` alive under Qt bindings that drop a reference per void call.

    PySide6 6.12.0 on CPython 3.11 returns ``None`` from every C++ method returning ``void``
    without taking a reference, so each call lowers ``None``'s count by one; after a few
    thousand calls (a second of dragging) the interpreter aborts with "none_dealloc".
    pyproject.toml excludes that release, but an environment that already has it (a system
    package, an older lock file) would still crash, so the window keeps this guard.

    It does nothing on CPython 3.12 and later (``None`` is immortal there), on other
    interpreters, and on any binding that does not leak: it measures
    ``_LEAK_PROBE_CALLS`` void calls with the garbage collector paused and acts only if
    ``None`` lost at least one reference per call. It then raises the counts of ``None``,
    ``True`` and ``False`` (the same bindings drop those returned by Python overrides of
    C++ virtuals) far beyond any session's calls, after checking it writes the count field
    itself. These are static objects that are never freed, so a larger count is harmless.
    Returns True when the guard was applied.
    """
    if sys.implementation.name != "cpython" or sys.version_info >= (3, 12):
        return False
    import gc

    from PySide6.QtCore import QPointF

    p = QPointF()
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        before = sys.getrefcount(None)
        for _ in range(_LEAK_PROBE_CALLS):
            p.setX(1.0)
        lost = before - sys.getrefcount(None)
    finally:
        if was_enabled:
            gc.enable()
    if lost < _LEAK_PROBE_CALLS:
        return False
    fields = [_refcount_field(obj) for obj in (None, True, False)]
    if any(f is None for f in fields):
        return False
    for f in fields:
        f.value += 1 << 40
    return True


GUARDED = guard_none_refcount()
MIN_WAYPOINTS = 2  # a route file needs two waypoints (kinematics.files.project.route_from_dict)
_MERGE_ID = 0x5357  # one id for every mergeable drag command; mergeWith compares the keys
_drag_tokens = itertools.count(1)


def new_drag_token() -> int:
    """A fresh key for one mouse drag: moves with the same key merge into one undo step."""
    return next(_drag_tokens)


def chassis_field_words(key: str) -> str:
    """A chassis key as words for the undo history: ``track_m`` -> ``track``."""
    return re.sub(r"_(m|mps|mps2|dps|dps2|radps|radps2|deg)$", "", key).replace("_", " ")


def empty_project() -> Project:
    """A new project: no floor plan, the default chassis (with a track) and no routes."""
    chassis = Chassis(name="new chassis", drive="differential", track_m=0.5,
                      max_wheel_rate_radps=15.0)
    return Project(FloorPlan(name="empty plan"), chassis, (), None, None, {})


class _Edit(QUndoCommand):
    """Replace the project tree; undo puts the previous tree back."""

    def __init__(self, doc: Document, text: str, before: Project, after: Project,
                 what: frozenset[str], current: tuple[int, int],
                 merge_key: tuple | None = None, live: bool = True) -> None:
        super().__init__(text)
        self._doc = doc
        self._before = before
        self._after = after
        self._what = what
        self._current = current
        self.merge_key = merge_key
        self._live = live and merge_key is not None
        self._pushed = False

    def id(self) -> int:  # noqa: A003 - Qt's name
        return _MERGE_ID if self.merge_key is not None else -1

    def mergeWith(self, other: QUndoCommand) -> bool:  # noqa: N802 - Qt's name
        if not isinstance(other, _Edit) or other.merge_key != self.merge_key:
            return False
        self._after = other._after
        self._current = (self._current[0], other._current[1])
        return True

    def redo(self) -> None:
        # The first run of a drag step is "live": the canvas redraws at once, the panels a few
        # times a second (see Document._apply). A later redo from the history is not live.
        live = self._live and not self._pushed
        self._pushed = True
        self._doc._apply(self._after, self._what, self._current[1], live)

    def undo(self) -> None:
        self._doc._apply(self._before, self._what, self._current[0])


def _rebase_ref(ref: Any, old_base: Path, new_base: Path) -> Any:
    """A floor plan reference made relative to ``new_base`` (it was relative to ``old_base``)."""

    def rebase(name: str) -> str:
        p = Path(name)
        target = p if p.is_absolute() else (old_base / p)
        target = Path(os.path.normpath(target.resolve()))
        try:
            return Path(os.path.relpath(target, new_base.resolve())).as_posix()
        except ValueError:  # another drive on Windows
            return str(target)

    if isinstance(ref, str):
        return rebase(ref)
    if isinstance(ref, dict) and isinstance(ref.get("file"), str):
        out = dict(ref)
        out["file"] = rebase(ref["file"])
        return out
    return ref


class Document(QObject):
    """The open project, its undo stack, the current route and cached results.

    Parameters
    ----------
    project : Project, optional
        The project to start with; an empty one if omitted.
    """

    projectReplaced = Signal()
    routesChanged = Signal()
    chassisChanged = Signal()
    floorplanChanged = Signal()
    resultsChanged = Signal()
    currentRouteChanged = Signal(int)
    fileStateChanged = Signal()
    # The chassis form holds a value the core refuses (say an Ackermann drive with wheelbase
    # 0): the results shown are of the last valid chassis; the text says why ("" once valid).
    staleChanged = Signal(str)
    # After every edit, undo or redo, at once (the canvas and autosave listen). During a drag
    # resultsChanged waits until the pointer has rested LIVE_RESULTS_MS or the drag ends
    # (finish_drag), so the panels, plots and schedule (tens of milliseconds each) never
    # hold back the canvas inside a 60 Hz frame; the last drag step always gets its
    # resultsChanged.
    edited = Signal()
    LIVE_RESULTS_MS = 150

    def __init__(self, project: Project | None = None, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._project = project if project is not None else empty_project()
        self._saved_floorplan = self._project.floorplan
        self._current = 0 if self._project.routes else -1
        self._forced_dirty = False
        self.undo_stack = QUndoStack(self)
        self.undo_stack.cleanChanged.connect(self._clean_changed)
        self._plans: dict[str, tuple[Route, Chassis, Any]] = {}
        self._checks: dict[str, tuple[Any, FloorPlan, Any]] = {}
        self._schedules: dict[str, tuple[Any, Any, Any]] = {}
        self._checkers: dict[str, tuple[Chassis, FloorPlan, Any]] = {}
        self._errors: dict[str, str] = {}
        self._index: tuple[FloorPlan, Any] | None = None
        self._route_planner: Any = None
        self.schedule_dt_s = 0.1
        self._results_timer = QTimer(self)
        self._results_timer.setSingleShot(True)
        self._results_timer.setInterval(self.LIVE_RESULTS_MS)
        self._results_timer.timeout.connect(self._drag_rested)
        self._gc_held = False
        self._stale_reason = ""

    def _clean_changed(self, _clean: bool) -> None:
        self.fileStateChanged.emit()

    # -- state ------------------------------------------------------------------------------
    @property
    def project(self) -> Project:
        return self._project

    @property
    def path(self) -> Path | None:
        return self._project.path

    @property
    def dirty(self) -> bool:
        return self._forced_dirty or not self.undo_stack.isClean()

    @property
    def current_route(self) -> int:
        """Index of the route being edited, -1 when the project has none."""
        return self._current

    def set_current_route(self, i: int) -> None:
        i = max(-1, min(int(i), len(self._project.routes) - 1))
        if i == -1 and self._project.routes:
            i = 0
        if i != self._current:
            self._current = i
            self.currentRouteChanged.emit(i)

    def route(self, i: int | None = None) -> Route | None:
        """Route ``i`` (default the current one), ``None`` if there is no such route."""
        i = self._current if i is None else i
        if 0 <= i < len(self._project.routes):
            return self._project.routes[i]
        return None

    def route_names(self) -> list[str]:
        return [r.name for r in self._project.routes]

    def title(self) -> str:
        """File name for the window title, with ``*`` when there are unsaved changes."""
        name = self.path.name if self.path else "untitled"
        return name + (" *" if self.dirty else "")

    # -- results ----------------------------------------------------------------------------
    def _route_by_name(self, name: str) -> Route | None:
        for r in self._project.routes:
            if r.name == name:
                return r
        return None

    def error(self, name: str) -> str | None:
        """Why the route could not be planned or checked, ``None`` when it could."""
        self.plan(name)
        return self._errors.get(name)

    def obstacle_index(self) -> Any:
        """The spatial index of the floor plan's solids, built once per floor plan."""
        from kinematics.check.clearance import ObstacleIndex

        fp = self._project.floorplan
        if self._index is None or self._index[0] is not fp:
            self._index = (fp, ObstacleIndex(fp))
        return self._index[1]

    def plan(self, name: str) -> Any:
        """The :class:`kinematics.plan.planner.RoutePlan` of route ``name``, or ``None``."""
        route = self._route_by_name(name)
        if route is None:
            return None
        chassis = self.vehicle(name)
        hit = self._plans.get(name)
        if hit is not None and hit[0] == route and hit[1] is chassis:
            return hit[2]
        self._errors.pop(name, None)
        try:
            plan = self._planner().plan(route, chassis)
        except SwatheInputError as exc:
            self._errors[name] = exc.message
            plan = None
        except ValueError as exc:
            self._errors[name] = f"route {name!r}: {exc}"
            plan = None
        self._plans[name] = (route, chassis, plan)
        return plan

    def _planner(self) -> Any:
        """One :class:`kinematics.plan.planner.RoutePlanner` for the document: a drag step replans
        only the pieces next to the moved waypoint and hands the rest back as the same
        objects, which the incremental checker and the canvas then find in their caches."""
        if self._route_planner is None:
            from kinematics.plan.planner import RoutePlanner

            self._route_planner = RoutePlanner()
        return self._route_planner

    def vehicle(self, name: str) -> Any:
        """The chassis that drives route ``name`` (the fleet member it names, else the
        project's chassis)."""
        route = self._route_by_name(name)
        try:
            return self._project.chassis_for(route) if route is not None else \
                self._project.chassis
        except SwatheInputError:
            return self._project.chassis

    def _checker(self, name: str) -> Any:
        chassis, fp = self.vehicle(name), self._project.floorplan
        hit = self._checkers.get(name)
        if hit is not None and hit[0] is chassis and hit[1] is fp:
            return hit[2]
        try:
            from kinematics.check.clearance import RouteChecker
        except ImportError:
            return None
        if hit is not None and hit[0] is chassis and hasattr(hit[2], "rebased"):
            # The floor plan was edited: keep what the edit cannot reach.
            checker = hit[2].rebased(self.obstacle_index())
        else:
            checker = RouteChecker(chassis, self.obstacle_index())
        self._checkers[name] = (chassis, fp, checker)
        return checker

    def check(self, name: str) -> Any:
        """The :class:`kinematics.check.clearance.RouteCheck` of route ``name``, or ``None``."""
        plan = self.plan(name)
        if plan is None:
            return None
        fp = self._project.floorplan
        hit = self._checks.get(name)
        if hit is not None and hit[0] is plan and hit[1] is fp:
            return hit[2]
        checker = self._checker(name)
        try:
            route = self._route_by_name(name)
            if checker is not None:
                chk = checker.check(plan, route_name=name, route=route)
            else:
                from kinematics.check.clearance import check_route

                chk = check_route(plan, self.vehicle(name), self.obstacle_index(),
                                  route_name=name, route=route)
            if chk is not None:
                from kinematics.analysis.results import check_with_vehicle

                chk = check_with_vehicle(plan, self.vehicle(name), self.obstacle_index(),
                                         route=route, tug_check=chk)
        except SwatheInputError as exc:
            self._errors[name] = exc.message
            chk = None
        self._checks[name] = (plan, fp, chk)
        return chk

    def schedule(self, name: str) -> Any:
        """The :class:`kinematics.timing.schedule.Schedule` of route ``name``, or ``None``."""
        plan = self.plan(name)
        if plan is None or not plan.segments:
            return None
        hit = self._schedules.get(name)
        if hit is not None and hit[0] is plan and hit[2] is self._project.floorplan:
            return hit[1]
        from kinematics.timing.schedule import build_schedule

        try:
            sched = build_schedule(name, list(plan.segments), self.vehicle(name),
                                   dt_s=self.schedule_dt_s,
                                   zones=self._project.floorplan.zones,
                                   route=self._route_by_name(name))
        except SwatheInputError as exc:
            self._errors[name] = exc.message
            sched = None
        self._schedules[name] = (plan, sched, self._project.floorplan)
        return sched

    # -- applying a new tree ----------------------------------------------------------------
    def _apply(self, project: Project, what: frozenset[str], current: int,
               live: bool = False) -> None:
        self._project = project
        names = {r.name for r in project.routes}
        for cache in (self._plans, self._checks, self._schedules, self._checkers, self._errors):
            for k in [k for k in cache if k not in names]:
                del cache[k]
        if "floorplan" in what:
            self.floorplanChanged.emit()
        if "chassis" in what:
            self.chassisChanged.emit()
        if "routes" in what:
            self.routesChanged.emit()
        self.set_current_route(current)
        if live:
            self._hold_collector()
        self.edited.emit()
        if live:
            self._results_timer.start()  # restarts: the panels follow once the drag rests
        else:
            self._results_timer.stop()
            self._release_collector()
            self.resultsChanged.emit()

    # Python's cyclic garbage collector scans every tracked object in a full collection:
    # 15-40 ms with the window's objects, twice a frame, arriving every hundred or so drag
    # steps (measured with gc.callbacks, bench/bench_gui.py). Reference counting still frees
    # everything acyclic, so the collector is held off while drag steps come in (at most
    # LIVE_RESULTS_MS apart) and let go when the drag ends or rests; the cycles a drag leaves
    # are collected then, while nobody waits on a frame.
    def _hold_collector(self) -> None:
        if not self._gc_held and gc.isenabled():
            gc.disable()
            self._gc_held = True

    def _release_collector(self) -> None:
        if self._gc_held:
            self._gc_held = False
            gc.enable()

    def _drag_rested(self) -> None:
        self._release_collector()
        self.resultsChanged.emit()

    @property
    def results_pending(self) -> bool:
        """True while a drag's resultsChanged is being held back (see :meth:`finish_drag`)."""
        return self._results_timer.isActive()

    def finish_drag(self) -> None:
        """The drag ended: send the held-back resultsChanged now rather than after a rest."""
        self._release_collector()
        if self._results_timer.isActive():
            self._results_timer.stop()
            self.resultsChanged.emit()

    def _push(self, text: str, after: Project, what: str | set[str], current: int | None = None,
              merge_key: tuple | None = None, live: bool = True) -> None:
        what_set = frozenset({what} if isinstance(what, str) else what)
        cur_after = self._current if current is None else current
        self.undo_stack.push(_Edit(self, text, self._project, after, what_set,
                                   (self._current, cur_after), merge_key, live))

    def _check_route_index(self, route_i: int) -> Route:
        if not 0 <= route_i < len(self._project.routes):
            raise IndexError(f"no route {route_i}")
        return self._project.routes[route_i]

    def _with_route(self, route_i: int, route: Route) -> Project:
        routes = list(self._project.routes)
        routes[route_i] = route
        return dataclasses.replace(self._project, routes=tuple(routes))

    # -- edits ------------------------------------------------------------------------------
    def add_waypoint(self, route_i: int, index: int, wp: Waypoint) -> None:
        """Insert ``wp`` before position ``index`` (``len`` appends) of route ``route_i``."""
        rt = self._check_route_index(route_i)
        wps = list(rt.waypoints)
        index = max(0, min(index, len(wps)))
        wps.insert(index, wp)
        text = (f"Add waypoint {index + 1}" if index == len(wps) - 1
                else f"Insert waypoint {index + 1}")
        stops = tuple(dataclasses.replace(s, waypoint=s.waypoint + 1) if s.waypoint >= index
                      else s for s in rt.stops)
        self._push(text, self._with_route(route_i, dataclasses.replace(
            rt, waypoints=tuple(wps), stops=stops)), "routes")

    def move_waypoint(self, route_i: int, index: int, x: float, y: float,
                      drag: int | None = None) -> None:
        """Move waypoint ``index`` to ``(x, y)``; moves with the same ``drag`` key merge."""
        rt = self._check_route_index(route_i)
        wps = list(rt.waypoints)
        wps[index] = dataclasses.replace(wps[index], x=float(x), y=float(y))
        key = None if drag is None else ("move", route_i, index, drag)
        self._push(f"Move waypoint {index + 1}",
                   self._with_route(route_i, dataclasses.replace(rt, waypoints=tuple(wps))),
                   "routes", merge_key=key)

    def delete_waypoint(self, route_i: int, index: int) -> bool:
        """Remove waypoint ``index``; refused (returns False) if the route would be too short."""
        rt = self._check_route_index(route_i)
        if len(rt.waypoints) <= MIN_WAYPOINTS:
            return False
        wps = list(rt.waypoints)
        del wps[index]
        # A stop at the deleted waypoint goes with it; later ones keep their waypoints.
        stops = tuple(dataclasses.replace(s, waypoint=s.waypoint - (s.waypoint > index))
                      for s in rt.stops if s.waypoint != index)
        self._push(f"Delete waypoint {index + 1}",
                   self._with_route(route_i, dataclasses.replace(
                       rt, waypoints=tuple(wps), stops=stops)), "routes")
        return True

    def set_waypoint_heading(self, route_i: int, index: int, heading_deg: float | None,
                             drag: int | None = None) -> None:
        """Fix the heading of waypoint ``index`` (degrees), or free it with ``None``."""
        rt = self._check_route_index(route_i)
        wps = list(rt.waypoints)
        h = None if heading_deg is None else float(heading_deg)
        wps[index] = dataclasses.replace(wps[index], heading_deg=h)
        text = (f"Clear heading of waypoint {index + 1}" if h is None
                else f"Set heading of waypoint {index + 1}")
        key = None if drag is None else ("heading", route_i, index, drag)
        self._push(text, self._with_route(route_i, dataclasses.replace(rt, waypoints=tuple(wps))),
                   "routes", merge_key=key)

    def _check_name(self, name: str, skip: int | None = None) -> None:
        if not name.strip():
            raise ValueError("a route needs a name")
        for i, r in enumerate(self._project.routes):
            if i != skip and r.name == name:
                raise ValueError(f"a route named {name!r} already exists")

    def unique_route_name(self, base: str = "route") -> str:
        names = set(self.route_names())
        for n in itertools.count(1):
            cand = f"{base} {n}"
            if cand not in names:
                return cand
        raise AssertionError("unreachable")

    def add_route(self, route: Route) -> None:
        """Append ``route`` (at least two waypoints, a new name) and make it current."""
        self._check_name(route.name)
        if len(route.waypoints) < MIN_WAYPOINTS:
            raise ValueError(f"a route needs at least {MIN_WAYPOINTS} waypoints")
        after = dataclasses.replace(self._project, routes=self._project.routes + (route,))
        self._push(f"Add route {route.name!r}", after, "routes",
                   current=len(after.routes) - 1)

    def remove_route(self, i: int) -> None:
        rt = self._check_route_index(i)
        routes = list(self._project.routes)
        del routes[i]
        cur = min(self._current, len(routes) - 1)
        self._push(f"Remove route {rt.name!r}",
                   dataclasses.replace(self._project, routes=tuple(routes)), "routes",
                   current=cur)

    def set_route(self, i: int, route: Route, text: str | None = None) -> None:
        """Replace route ``i`` (rename, turn radius, reverse, waypoints) in one step;
        ``text`` names the step in the undo history (default: what changed)."""
        old = self._check_route_index(i)
        self._check_name(route.name, skip=i)
        if len(route.waypoints) < MIN_WAYPOINTS:
            raise ValueError(f"a route needs at least {MIN_WAYPOINTS} waypoints")
        if route.name != old.name:
            text = f"Rename route {old.name!r} to {route.name!r}"
        else:
            text = text or f"Change route {route.name!r}"
        self._push(text, self._with_route(i, route), "routes")

    def set_chassis(self, chassis: Chassis, burst: int | None = None,
                    text: str | None = None) -> None:
        """Use ``chassis``: one undo step named for the fields it changes.

        Edits with the same ``burst`` key (:func:`new_drag_token`) that change the same fields
        merge into one step: a number typed digit by digit, or a spin box stepped a few
        times, is one "Change chassis track" in the history, not one per keystroke.
        """
        old = self._project.chassis
        changed = tuple(f.name for f in dataclasses.fields(Chassis)
                        if getattr(old, f.name) != getattr(chassis, f.name))
        if text is None:
            text = ("Change chassis " + ", ".join(map(chassis_field_words, changed))
                    if 0 < len(changed) <= 2 else "Change chassis")
        key = None if burst is None or not changed else ("chassis", changed, burst)
        # Not live: the results follow each step at once (no drag frame to keep).
        self._push(text, dataclasses.replace(self._project, chassis=chassis), "chassis",
                   merge_key=key, live=False)

    # -- fleet -------------------------------------------------------------------------------
    def vehicle_names(self) -> list[str]:
        """The names of the project's vehicles, the default one (``project.chassis``) first."""
        return [c.name for c in self._project.fleet]

    def _vehicle_index(self, i: int) -> Chassis:
        fleet = self._project.fleet
        if not 0 <= i < len(fleet):
            raise IndexError(f"no vehicle {i}")
        return fleet[i]

    def routes_driven_by(self, i: int) -> list[str]:
        """Names of the routes vehicle ``i`` drives (those naming it; for the default vehicle
        also those naming none)."""
        name = self._vehicle_index(i).name
        return [r.name for r in self._project.routes
                if r.chassis == name or (i == 0 and r.chassis is None)]

    def _with_fleet(self, fleet: list[Chassis], routes: tuple[Route, ...] | None = None
                    ) -> Project:
        return dataclasses.replace(self._project, chassis=fleet[0], others=tuple(fleet[1:]),
                                   routes=self._project.routes if routes is None else routes)

    def unique_vehicle_name(self, base: str) -> str:
        names = set(self.vehicle_names())
        if base not in names:
            return base
        for n in itertools.count(2):
            cand = f"{base} {n}"
            if cand not in names:
                return cand
        raise AssertionError("unreachable")

    def set_vehicle(self, i: int, chassis: Chassis, burst: int | None = None,
                    text: str | None = None) -> None:
        """Use ``chassis`` as vehicle ``i`` of the fleet (0: the default one), one undo step.

        A new name must be free in the fleet; the routes that named the old one name the new
        one. Edits with the same ``burst`` key changing the same fields merge into one step
        (see :meth:`set_chassis`).
        """
        old = self._vehicle_index(i)
        name = chassis.name.strip()
        if not name:
            raise ValueError("a vehicle needs a name")
        if name in [c.name for k, c in enumerate(self._project.fleet) if k != i]:
            raise ValueError(f"another vehicle is already named {name!r}")
        fleet = list(self._project.fleet)
        fleet[i] = chassis
        routes = self._project.routes
        what = {"chassis"}
        changed = tuple(f.name for f in dataclasses.fields(Chassis)
                        if getattr(old, f.name) != getattr(chassis, f.name))
        if name != old.name:
            routes = tuple(dataclasses.replace(r, chassis=name) if r.chassis == old.name else r
                           for r in routes)
            what.add("routes")
            text = text or f"Rename vehicle {old.name!r} to {name!r}"
        elif text is None:
            words = ", ".join("trailers" if k == "trailers" else chassis_field_words(k)
                              for k in changed)
            # One vehicle: "Change chassis track", as before there was a fleet.
            who = "chassis" if len(fleet) == 1 else repr(name)
            text = (f"Change {who} {words}" if 0 < len(changed) <= 2
                    else f"Change {'chassis' if len(fleet) == 1 else 'vehicle ' + who}")
        key = None if burst is None or not changed else ("vehicle", i, changed, burst)
        self._push(text, self._with_fleet(fleet, routes), what, merge_key=key, live=False)

    def add_vehicle(self, chassis: Chassis | None = None) -> int:
        """Add a vehicle to the fleet (a copy of the default one without trailers when none is
        given, named so no other vehicle has its name); returns its index."""
        base = chassis if chassis is not None else dataclasses.replace(
            self._project.chassis, trailers=())
        c = dataclasses.replace(base, name=self.unique_vehicle_name(base.name.strip() or
                                                                    "vehicle"))
        fleet = [*self._project.fleet, c]
        self._push(f"Add vehicle {c.name!r}", self._with_fleet(fleet), "chassis", live=False)
        return len(fleet) - 1

    def remove_vehicle(self, i: int) -> None:
        """Remove vehicle ``i``: not the only one, nor one that still drives a route."""
        c = self._vehicle_index(i)
        if len(self._project.fleet) == 1:
            raise ValueError("a project needs at least one vehicle")
        users = self.routes_driven_by(i)
        if users:
            names = ", ".join(repr(n) for n in users)
            raise ValueError(f"{c.name!r} drives {names}: choose another vehicle for "
                             f"{'that route' if len(users) == 1 else 'those routes'} first")
        fleet = list(self._project.fleet)
        del fleet[i]
        self._push(f"Remove vehicle {c.name!r}", self._with_fleet(fleet), "chassis",
                   live=False)

    def set_route_vehicle(self, route_i: int, name: str | None) -> None:
        """Say which vehicle drives route ``route_i`` (``None``: the default one)."""
        rt = self._check_route_index(route_i)
        if name is not None and name not in self.vehicle_names():
            raise ValueError(f"no vehicle named {name!r}")
        if name == self._project.chassis.name and rt.chassis is None:
            return
        if name == rt.chassis:
            return
        shown = name if name is not None else self._project.chassis.name
        self._push(f"Drive {rt.name!r} with {shown!r}",
                   self._with_route(route_i, dataclasses.replace(rt, chassis=name)),
                   {"routes", "chassis"}, live=False)

    @property
    def stale_reason(self) -> str:
        """Why the results shown are not of the chassis being edited ("" when they are)."""
        return self._stale_reason

    def set_stale(self, reason: str | None) -> None:
        """Say the chassis form holds a refused value (``reason``), or no longer (``None``)."""
        reason = reason or ""
        if reason != self._stale_reason:
            self._stale_reason = reason
            self.staleChanged.emit(reason)

    def set_floorplan(self, fp: FloorPlan, ref: str | dict | None) -> None:
        """Use floor plan ``fp``; ``ref`` is how the project file names it (path or import)."""
        after = dataclasses.replace(self._project, floorplan=fp, floorplan_ref=ref)
        if isinstance(ref, str) and ref.lower().endswith(".floor.json"):
            self._saved_floorplan = fp  # read from that file: nothing to write back
        self._push(f"Use floor plan {fp.name or Path(fp.source).name!r}", after, "floorplan")

    def edit_floorplan(self, fp: FloorPlan, text: str, drag: int | None = None) -> None:
        """Replace the floor plan by an edited one (one undo step; steps with the same
        ``drag`` key merge). A plan imported from DXF or SVG is kept inline from then on: an
        edit cannot be written back into the drawing."""
        ref = self._project.floorplan_ref
        if isinstance(ref, dict) and "file" in ref:
            ref = None
        elif isinstance(ref, str) and not ref.lower().endswith(".floor.json"):
            ref = None
        after = dataclasses.replace(self._project, floorplan=fp, floorplan_ref=ref)
        key = None if drag is None else ("plan", drag)
        self._push(text, after, "floorplan", merge_key=key)

    # -- files ------------------------------------------------------------------------------
    def replace_project(self, project: Project, dirty: bool = False) -> None:
        """Start over on ``project`` (a fresh undo history); used by open, new and recover."""
        self._project = project
        self._saved_floorplan = project.floorplan  # as in its file: save rewrites it if edited
        self._plans.clear()
        self._checks.clear()
        self._schedules.clear()
        self._checkers.clear()
        self._errors.clear()
        self._index = None
        self._route_planner = None  # a new project starts with an empty piece cache
        self.undo_stack.clear()
        self.undo_stack.setClean()
        self._forced_dirty = dirty
        self._current = 0 if project.routes else -1
        self._results_timer.stop()
        self.set_stale(None)
        self.projectReplaced.emit()
        self.floorplanChanged.emit()
        self.chassisChanged.emit()
        self.routesChanged.emit()
        self.currentRouteChanged.emit(self._current)
        self.resultsChanged.emit()
        self.fileStateChanged.emit()

    def open_project(self, path: str | Path) -> None:
        """Load ``path``; on bad input raise :class:`SwatheInputError` and keep the document."""
        project = load_project(path)
        self.replace_project(project)

    def new_project(self) -> None:
        self.replace_project(empty_project())

    def save(self, path: str | Path | None = None) -> Path:
        """Write the project atomically to ``path`` (default where it came from)."""
        target = Path(path) if path is not None else self.path
        if target is None:
            raise ValueError("the project has no file yet; choose where to save it")
        target = target.resolve()
        old_base = self.path.parent if self.path is not None else Path.cwd()
        ref = _rebase_ref(self._project.floorplan_ref, old_base, target.parent)
        project = dataclasses.replace(self._project, floorplan_ref=ref, path=target)
        if isinstance(ref, str) and ref.lower().endswith(".floor.json"):
            # The floor plan lives in its own file: write it (atomically) when it differs.
            plan_path = (target.parent / ref)
            if project.floorplan != self._saved_floorplan or not plan_path.exists():
                save_floorplan(project.floorplan, plan_path)
        save_project(project, target)
        self._saved_floorplan = project.floorplan
        self._project = project
        self._forced_dirty = False
        self.undo_stack.setClean()
        self.fileStateChanged.emit()
        return target

