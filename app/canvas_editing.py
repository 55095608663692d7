"""The canvas's editing: hit tests, mouse gestures on waypoints and headings, the context
menu, and the hover read-out (station, clearance, speed, wheel rates).

Owns :class:`CanvasEditing`, the part of :class:`app.canvas.PlanCanvas` that turns mouse
events into Document edits (plan elements are edited by :mod:`app.plan_gestures`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import shapely
from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtWidgets import (
    QInputDialog,
    QMenu,
)

from kinematics.files.project import Waypoint

from .canvas_items import (
    HANDLE_PX,
    HIT_PX,
)
from .document import new_drag_token
from .plan_tools import element_at


class CanvasEditing:
    """Gestures, hit tests and hover of :class:`app.canvas.PlanCanvas` (a mixin:
    it uses the canvas's document and items)."""

    # -- hit testing ------------------------------------------------------------------------
    def hit(self, x: float, y: float) -> tuple[str, int] | None:
        """What is under plan point ``(x, y)``: ``("handle", i)``, ``("waypoint", i)``."""
        cur = self.doc.route()
        if cur is None:
            return None
        tol = HIT_PX * self.px_m()
        L = HANDLE_PX * self.px_m()
        best: tuple[float, str, int] | None = None
        for i, w in enumerate(cur.waypoints):
            d = math.hypot(w.x - x, w.y - y)
            if d <= tol and (best is None or d < best[0]):
                best = (d, "waypoint", i)
            if w.heading_deg is not None or i == self.selected:
                h = math.radians(w.heading_deg if w.heading_deg is not None
                                 else self._free_heading_deg(i))
                d = math.hypot(w.x + L * math.cos(h) - x, w.y + L * math.sin(h) - y)
                if d <= tol and (best is None or d < best[0] - 1e-12):
                    best = (d, "handle", i)
        return None if best is None else (best[1], best[2])

    def leg_at(self, x: float, y: float) -> int | None:
        """Index to insert at if ``(x, y)`` is on a leg (near the path or the chord)."""
        cur = self.doc.route()
        if cur is None or len(cur.waypoints) < 2:
            return None
        tol = HIT_PX * self.px_m()
        p = np.array([x, y])
        a = np.array([[w.x, w.y] for w in cur.waypoints[:-1]])
        b = np.array([[w.x, w.y] for w in cur.waypoints[1:]])
        ab = b - a
        t = np.clip(np.einsum("ij,ij->i", p - a, ab) / np.maximum(
            np.einsum("ij,ij->i", ab, ab), 1e-12), 0, 1)
        d_chord = np.hypot(*(a + t[:, None] * ab - p).T)
        leg = int(np.argmin(d_chord))
        xy = self._samples[0]
        near_path = len(xy) and float(np.min(np.hypot(*(xy - p).T))) <= tol
        if d_chord[leg] <= tol or near_path:
            return leg + 1
        return None

    # -- gestures ---------------------------------------------------------------------------
    def set_mode(self, mode: str) -> None:
        self.mode = mode
        self.plan_gestures.mode_changed(mode)
        if mode != "add":
            self._pending = None
            self.pending_item.setData([], [])
        self.modeChanged.emit(mode)

    def select(self, i: int) -> None:
        if i != self.selected:
            self.selected = i
            self.selectionChanged.emit(i)
            self.refresh_routes()

    def _on_click(self, ev) -> bool:
        x, y = self._scene_to_plan(ev.scenePos())
        btn = ev.button()
        mods = ev.modifiers()
        self.plot.setFocus()
        if btn == Qt.MouseButton.RightButton:
            ev.accept()
            self._context_menu(x, y, ev.screenPos().toPoint())
            return True
        if btn != Qt.MouseButton.LeftButton:
            return False
        target = self.hit(x, y)
        if self.mode not in ("select", "add") and self.plan_gestures.click(x, y, ev.double()):
            ev.accept()
            return True
        if ev.double():
            if target is None and self.plan_gestures.click(x, y, True):
                pass
            elif target is None:
                leg = self.leg_at(x, y)
                if leg is not None:
                    sx, sy = self._snap(x, y)
                    self.doc.add_waypoint(self.doc.current_route, leg, Waypoint(sx, sy))
                    self.select(leg)
            ev.accept()
            return True
        if target is not None:
            self.select(target[1])
            ev.accept()
            return True
        if self.mode == "add" or mods & Qt.KeyboardModifier.ControlModifier:
            self.append_point(*self._snap(x, y))
            ev.accept()
            return True
        self.select(-1)
        self.plan_gestures.click(x, y, False)  # select a wall, obstacle, door or zone
        ev.accept()
        return True

    def append_point(self, x: float, y: float) -> None:
        """Add a waypoint at the end of the current route (a new route needs two clicks)."""
        doc = self.doc
        cur = doc.route()
        if cur is None:
            if self._pending is None:
                self._pending = (x, y)
                self.pending_item.setData([x], [y])
                self.message.emit("First point of a new route; click again for the second.")
                return
            from kinematics.files.project import Route

            first = self._pending
            self._pending = None
            self.pending_item.setData([], [])
            name = doc.unique_route_name()
            doc.add_route(Route(name, (Waypoint(*first), Waypoint(x, y))))
            self.select(1)
            # Replaces "First point of a new route ...", which no longer holds.
            self.message.emit(f"Added route {name!r}; each click adds a waypoint.")
            return
        doc.add_waypoint(doc.current_route, len(cur.waypoints), Waypoint(x, y))
        self.select(len(cur.waypoints))

    def _on_drag(self, ev) -> bool:
        if ev.button() != Qt.MouseButton.LeftButton:
            return False
        x0, y0 = self._scene_to_plan(ev.buttonDownScenePos())
        if ev.isStart():
            target = self.hit(x0, y0)
            self._drag = None
            if target is None:
                # Off the route: a vertex of the selected plan element, else a pan.
                return self.plan_gestures.drag(ev, x0, y0, *self._scene_to_plan(ev.scenePos()))
            self._drag = (target[0], target[1], new_drag_token())
            self.select(target[1])
        elif self._drag is None:
            return self.plan_gestures.drag(ev, x0, y0, *self._scene_to_plan(ev.scenePos()))
        if self._drag is None:
            return False
        ev.accept()
        kind, i, token = self._drag
        x, y = self._scene_to_plan(ev.scenePos())
        cur = self.doc.route()
        if cur is None or i >= len(cur.waypoints):
            self._drag = None
            return True
        if kind == "waypoint":
            sx, sy = self._snap(x, y)
            w = cur.waypoints[i]
            if (sx, sy) != (w.x, w.y):
                self.doc.move_waypoint(self.doc.current_route, i, sx, sy, drag=token)
        else:
            w = cur.waypoints[i]
            h = math.degrees(math.atan2(y - w.y, x - w.x))
            if self.snap_m or ev.modifiers() & Qt.KeyboardModifier.ShiftModifier:
                h = round(h / 15.0) * 15.0
            self.doc.set_waypoint_heading(self.doc.current_route, i, round(h, 2), drag=token)
        if ev.isFinish():
            self._drag = None
            self.doc.finish_drag()
        return True

    def delete_selected(self) -> None:
        if self.selected < 0 and self.plan_gestures.delete_selected():
            return
        i = self.selected
        if i < 0 or self.doc.route() is None:
            return
        if self.doc.delete_waypoint(self.doc.current_route, i):
            self.selected = -1
            self.selectionChanged.emit(-1)
            self.refresh_routes()
        else:
            self.message.emit("A route needs at least two waypoints; remove the route instead.")

    def _context_menu(self, x: float, y: float, screen_pos: QPoint) -> None:
        menu = self.build_context_menu(x, y)
        menu.popup(screen_pos)

    def build_context_menu(self, x: float, y: float) -> QMenu:
        """The right-click menu for plan point ``(x, y)``."""
        menu = QMenu(self)
        target = self.hit(x, y)
        ri = self.doc.current_route
        if target is not None:
            i = target[1]
            self.select(i)
            menu.addAction(f"Delete waypoint {i + 1}", self.delete_selected)
            w = self.doc.route().waypoints[i]
            menu.addAction("Set heading...", lambda: self._ask_heading(i))
            act = menu.addAction("Clear heading",
                                 lambda: self.doc.set_waypoint_heading(ri, i, None))
            act.setEnabled(w.heading_deg is not None)
        else:
            leg = self.leg_at(x, y)
            if leg is not None:
                sx, sy = self._snap(x, y)
                menu.addAction(f"Insert waypoint here (before {leg + 1})",
                               lambda: self.doc.add_waypoint(ri, leg, Waypoint(sx, sy)))
            menu.addAction("Add waypoint here (at the end)",
                           lambda: self.append_point(*self._snap(x, y)))
        menu.addSeparator()
        menu.addAction("Fit to plan", self.fit)
        return menu

    def _ask_heading(self, i: int) -> None:
        cur = self.doc.route()
        if cur is None:
            return
        w = cur.waypoints[i]
        start = w.heading_deg if w.heading_deg is not None else self._free_heading_deg(i)
        val, ok = QInputDialog.getDouble(self, "Waypoint heading",
                                         f"Heading at waypoint {i + 1} (degrees, "
                                         "counter-clockwise from +x):", start, -360.0, 360.0, 1)
        if ok:
            self.doc.set_waypoint_heading(self.doc.current_route, i, val)

    # -- hover ------------------------------------------------------------------------------
    def _mouse_moved(self, scene_pos: QPointF) -> None:
        if not self.view.sceneBoundingRect().contains(scene_pos):
            return
        x, y = self._scene_to_plan(scene_pos)
        self.cursorMoved.emit(x, y)
        self.plan_gestures.moved(x, y)
        info = self.info_at(x, y)
        self.last_hover = info
        if info is None:
            self.hover_item.setData([], [])
            # Off the route: name the wall, obstacle, door or zone under the pointer.
            el = element_at(self.doc.obstacle_index(), x, y, HIT_PX * self.px_m())
            self.last_hover_element = el
            text = "" if el is None else el["text"]
            self.hoverInfo.emit(text)
            self.plot.setToolTip(text)
            return
        self.hover_item.setData([info["x"]], [info["y"]])
        self.hoverInfo.emit(info["text"])
        self.plot.setToolTip(info["text"].replace("; ", "\n"))

    def info_at(self, x: float, y: float) -> dict | None:
        """Station, clearance, speed and wheel rates where ``(x, y)`` is near the path."""
        xy, st, idx, _dirs = self._samples
        cur = self.doc.route()
        if cur is None or len(xy) == 0:
            return None
        d = np.hypot(xy[:, 0] - x, xy[:, 1] - y)
        k = int(np.argmin(d))
        if d[k] > HIT_PX * self.px_m():
            return None
        plan = self.doc.plan(cur.name)
        seg_i = int(idx[k])
        seg = plan.segments[seg_i]
        # Refine to the nearest station on the segment around the nearest sample.
        lo, hi = max(0, k - 1), min(len(xy) - 1, k + 1)
        cand = np.linspace(st[lo], st[hi], 21)
        from kinematics.motion.segments import poses_along

        poses = poses_along(plan.segments, cand)
        j = int(np.argmin(np.hypot(poses[:, 0] - x, poses[:, 1] - y)))
        s, pose = float(cand[j]), poses[j]
        # Segments are numbered from 0 here as in the check's messages, the results list, the
        # schedule table and the files; waypoints are numbered from 1 everywhere.
        parts = [f"{cur.name}: station {s:.2f} m", f"segment {seg_i} ({seg.kind}"
                 + (", reverse)" if seg.direction < 0 else ")")]
        local = min(max(s - float(sum(g.length_m for g in plan.segments[:seg_i])), 0.0),
                    seg.length_m)
        kappa = float(seg.curvature_at(local)) if seg.kind in ("arc", "clothoid") else 0.0
        if kappa != 0.0:
            parts.append(f"curvature {kappa:+.3f} /m (R {1.0 / abs(kappa):.2f} m)")
        elif seg.kind in ("line", "clothoid"):
            parts.append("curvature 0 /m")
        clear = self.clearance_at(pose)
        if clear is not None:
            parts.append(f"clearance {clear * 1000:.0f} mm")
        speed, wheels = self._motion_at(cur.name, seg_i, s)
        if speed is not None:
            parts.append(f"speed {speed:.2f} m/s")
        if wheels:
            parts.append("wheels " + ", ".join(f"{n} {r:+.1f} rad/s" for n, r in wheels))
        return {"x": float(pose[0]), "y": float(pose[1]), "station_m": s, "segment": seg_i,
                "curvature_per_m": kappa, "clearance_m": clear, "speed_mps": speed,
                "wheels": dict(wheels),
                "text": "; ".join(parts)}

    def clearance_at(self, pose: Sequence[float]) -> float | None:
        """Distance from the bare footprint at ``pose`` to the nearest solid, metres."""
        if self._solids_tree is None:
            return None
        fp = np.asarray(self.doc.project.chassis.footprint, float)
        c, s = math.cos(pose[2]), math.sin(pose[2])
        pts = np.column_stack([pose[0] + c * fp[:, 0] - s * fp[:, 1],
                               pose[1] + s * fp[:, 0] + c * fp[:, 1]])
        poly = shapely.Polygon(pts)
        hit = self._solids_tree.query_nearest(poly, return_distance=True)
        dist = hit[1]
        return float(np.min(dist)) if len(dist) else None

    def _motion_at(self, name: str, seg_i: int, s: float
                   ) -> tuple[float | None, list[tuple[str, float]]]:
        """Speed and wheel rates of the schedule's sample nearest station ``s``."""
        sched = self.doc.schedule(name)
        if sched is None:
            return None, []
        from kinematics.timing.schedule import schedule_series

        series = schedule_series(sched)
        st = np.asarray(series["station_m"], float)
        if st.size == 0:
            return None, []
        j = int(np.argmin(np.abs(st - s)))
        v = float(series["v_mps"][j])
        wheels = [(n, float(arr[j])) for n, arr in series["rate_radps"].items()]
        return v, wheels
