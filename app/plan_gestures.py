"""Mouse gestures that edit the floor plan on the canvas, and the measuring tools.

The canvas (:mod:`app.canvas`) offers each click and drag here first. In a drawing mode a
click adds a point; every finished shape is one undoable edit through
``Document.edit_floorplan`` with the pure edits of :mod:`kinematics.files.plan_edits`:

- ``wall``: click points, double-click or Enter to finish (thickness :attr:`thickness_m`);
- ``rect``: two opposite corners; ``polygon``: click corners, double-click or Enter;
- ``circle``: the centre, then a point on the rim; ``door``: two jambs (snap to wall ends);
- ``zone``: click corners, double-click or Enter, then its kind, number and label in the zone
  dialog (:mod:`app.zone_dialog`; a one-way zone starts with the direction of its first edge);
  :meth:`PlanGestures.edit_zone` changes a selected zone's rule later;
- ``measure``: two clicks give the distance; ``gap``: two elements give their least gap;
- in ``select`` mode, a click off the route selects a plan element, a drag on one of its
  vertices moves it (one undo step), a double-click on one of its edges inserts a vertex,
  Delete removes the selected vertex (or the element when none is), Relabel renames it.

Points snap as :func:`kinematics.files.plan_edits.snap` says (wall ends and corners within the
pick radius, right angles from the previous point, the grid when it is on). Escape drops the
shape being drawn.
"""

from __future__ import annotations

import math
from typing import Any

import pyqtgraph as pg
from PySide6.QtCore import QObject, Qt
from PySide6.QtGui import QBrush, QColor, QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsPathItem, QInputDialog

from kinematics.files import plan_edits
from kinematics.files.floorplan import Door, Obstacle, Wall

from .document import new_drag_token
from .palette import BLUE, VERMILLION
from .plan_tools import element_at

DRAW_MODES = ("wall", "rect", "polygon", "circle", "door", "zone")
#: Modes drawn as a run of clicked points ended by a double-click or Enter.
_OPEN_ENDED = ("wall", "polygon", "zone")
MEASURE_MODES = ("measure", "gap")
PLAN_MODES = DRAW_MODES + MEASURE_MODES
_NAMES = {"wall": "wall", "rect": "rectangle", "polygon": "polygon obstacle",
          "circle": "circle obstacle", "door": "door", "zone": "zone"}


def _cosmetic(colour: str, width: float, style: Qt.PenStyle = Qt.PenStyle.SolidLine) -> QPen:
    pen = QPen(QColor(colour))
    pen.setWidthF(width)
    pen.setCosmetic(True)
    pen.setStyle(style)
    return pen


def vertices_of(el: object) -> list[tuple[float, float]]:
    """The handles of an element: a door's jambs, a circle's centre, an outline's corners (a
    closed wall's repeated last point left out)."""
    if isinstance(el, Door):
        return [el.a, el.b]
    if isinstance(el, Obstacle) and el.is_circle:
        return [el.centre]
    pts = list(el.points)
    if isinstance(el, Wall) and el.closed:
        pts = pts[:-1]
    return pts


def _edges_of(kind: str, el: object) -> list[tuple[int, tuple, tuple]]:
    """``(insert_before, a, b)`` for every edge a vertex can be inserted on."""
    if kind == "door" or (isinstance(el, Obstacle) and el.is_circle):
        return []
    pts = list(el.points)
    out = [(k + 1, pts[k], pts[k + 1]) for k in range(len(pts) - 1)]
    if kind in ("obstacle", "zone") and pts[0] != pts[-1]:
        out.append((len(pts), pts[-1], pts[0]))
    return out


def _seg_dist(p: tuple, a: tuple, b: tuple) -> float:
    ax, ay = a
    dx, dy = b[0] - ax, b[1] - ay
    L2 = dx * dx + dy * dy
    t = 0.0 if L2 == 0 else max(0.0, min(1.0, ((p[0] - ax) * dx + (p[1] - ay) * dy) / L2))
    return math.hypot(ax + t * dx - p[0], ay + t * dy - p[1])


class PlanGestures(QObject):
    """The plan-editing and measuring part of a :class:`~app.canvas.PlanCanvas`."""

    def __init__(self, canvas: Any) -> None:
        super().__init__(canvas)
        self.canvas = canvas
        self.doc = canvas.doc
        self.thickness_m = 0.1
        self.points: list[tuple[float, float]] = []  # the shape being drawn
        self.picked: list[dict] = []  # gap tool: the elements clicked so far
        self.selection: tuple[str, int] | None = None
        self.vertex: int | None = None  # selected vertex of the selection
        self.highlighted: str | None = None
        self.last_distance_m: float | None = None
        self.last_gap_m: float | None = None
        self._drag: tuple | None = None
        plot = canvas.plot
        self.preview = QGraphicsPathItem()
        self.preview.setPen(_cosmetic(BLUE, 2.0, Qt.PenStyle.DashLine))
        self.preview.setZValue(12)
        plot.addItem(self.preview, ignoreBounds=True)
        self.selection_item = QGraphicsPathItem()
        self.selection_item.setPen(_cosmetic(BLUE, 3.0))
        self.selection_item.setZValue(6)
        plot.addItem(self.selection_item, ignoreBounds=True)
        self.highlight_item = QGraphicsPathItem()
        self.highlight_item.setPen(_cosmetic(VERMILLION, 4.0))
        self.highlight_item.setBrush(QBrush(QColor(213, 94, 0, 70)))
        self.highlight_item.setZValue(6)
        plot.addItem(self.highlight_item, ignoreBounds=True)
        # The highlighted element's name on the plan, as the message cites it ("wall 23").
        self.highlight_text = pg.TextItem("", color="#5A1E00",
                                          fill=pg.mkBrush(255, 255, 255, 225), anchor=(0.5, 1.1))
        self.highlight_text.setZValue(13)
        self.highlight_text.setVisible(False)
        plot.addItem(self.highlight_text, ignoreBounds=True)
        self.measure_item = QGraphicsPathItem()
        self.measure_item.setPen(_cosmetic("#222222", 2.0))
        self.measure_item.setZValue(12)
        plot.addItem(self.measure_item, ignoreBounds=True)
        self.measure_text = pg.TextItem("", color="#111111", fill=pg.mkBrush(255, 255, 255, 220),
                                        anchor=(0.5, 1.2))
        self.measure_text.setZValue(13)
        plot.addItem(self.measure_text, ignoreBounds=True)
        self.doc.floorplanChanged.connect(self._plan_changed)
        self.doc.projectReplaced.connect(self.clear)

    # -- state ------------------------------------------------------------------------------
    @property
    def fp(self):
        return self.doc.project.floorplan

    def _radius(self) -> float:
        from .canvas import HIT_PX

        return HIT_PX * self.canvas.px_m()

    def snap(self, x: float, y: float, fp: Any = None) -> tuple[float, float]:
        prev = self.points[-1] if self.points else None
        p = plan_edits.snap(self.fp if fp is None else fp, (x, y), self._radius(),
                            self.canvas.snap_m or 0.0, prev)
        return (round(p[0], 6), round(p[1], 6))

    def clear(self) -> None:
        self.points = []
        self.picked = []
        self.selection = None
        self.vertex = None
        self._drag = None
        self.preview.setPath(QPainterPath())
        self.selection_item.setPath(QPainterPath())
        self.highlight(None)

    def mode_changed(self, _mode: str) -> None:
        self.points = []
        self.picked = []
        self.preview.setPath(QPainterPath())

    def _plan_changed(self) -> None:
        sel = self.selection
        if sel is not None and sel[1] >= len(plan_edits._items(self.fp, sel[0])):
            self.selection = None
            self.vertex = None
        self._draw_selection()
        if self.highlighted:
            self.highlight(self.highlighted)

    # -- drawing ----------------------------------------------------------------------------
    def _path(self, pts: list, closed: bool = False) -> QPainterPath:
        path = QPainterPath()
        if pts:
            path.moveTo(*pts[0])
            for p in pts[1:]:
                path.lineTo(*p)
            if closed:
                path.closeSubpath()
        return path

    def _draw_preview(self, cursor: tuple[float, float] | None = None) -> None:
        mode = self.canvas.mode
        pts = list(self.points)
        path = QPainterPath()
        if pts and cursor is not None:
            if mode == "rect":
                (x0, y0), (x1, y1) = pts[0], cursor
                path = self._path([(x0, y0), (x1, y0), (x1, y1), (x0, y1)], True)
            elif mode == "circle":
                r = math.dist(pts[0], cursor)
                path.addEllipse(pts[0][0] - r, pts[0][1] - r, 2 * r, 2 * r)
            else:
                path = self._path(pts + [cursor], mode in ("polygon", "zone"))
        elif pts:
            path = self._path(pts)
        r = 3.0 * self.canvas.px_m()
        for p in pts:
            path.addEllipse(p[0] - r, p[1] - r, 2 * r, 2 * r)
        self.preview.setPath(path)

    def _draw_selection(self) -> None:
        sel = self.selection
        if sel is None:
            self.selection_item.setPath(QPainterPath())
            return
        from .canvas import polygons_path

        kind, i = sel
        geom = plan_edits.element_geometry(self.fp, kind, i)
        if kind == "door":
            path = self._path(list(geom.coords))
        else:
            path = polygons_path([geom])
        r = 4.0 * self.canvas.px_m()
        for k, p in enumerate(vertices_of(plan_edits._items(self.fp, kind)[i])):
            rr = 1.8 * r if k == self.vertex else r
            path.addRect(p[0] - rr, p[1] - rr, 2 * rr, 2 * rr)
        self.selection_item.setPath(path)

    def highlight(self, name: str | None) -> bool:
        """Outline the wall or obstacle called ``name`` ("wall 23", "obstacle 4 (rack)");
        ``None`` or an unknown name clears it. True when something was outlined."""
        from .canvas import polygons_path

        self.highlighted = name or None
        geoms = [s.geometry for s in self.doc.obstacle_index().solids if name and s.name == name]
        self.highlight_item.setPath(polygons_path(geoms))
        if geoms:
            x0, y0, x1, y1 = geoms[0].bounds
            for g in geoms[1:]:
                b = g.bounds
                x0, y0, x1, y1 = min(x0, b[0]), min(y0, b[1]), max(x1, b[2]), max(y1, b[3])
            self.highlight_text.setText(name)
            self.highlight_text.setPos((x0 + x1) / 2, y1)  # just above the element
        self.highlight_text.setVisible(bool(geoms))
        return bool(geoms)

    def _show_measure(self, a: tuple, b: tuple, text: str) -> None:
        self.measure_item.setPath(self._path([a, b]))
        self.measure_text.setText(text)
        self.measure_text.setPos((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
        self.canvas.message.emit(text)

    # -- events from the canvas --------------------------------------------------------------
    def moved(self, x: float, y: float) -> None:
        if self.canvas.mode in DRAW_MODES and self.points:
            self._draw_preview(self.snap(x, y))

    def click(self, x: float, y: float, double: bool) -> bool:
        """A left click at plan ``(x, y)``; True when it was a plan gesture."""
        mode = self.canvas.mode
        if mode in DRAW_MODES:
            if double:
                if mode in _OPEN_ENDED:
                    self.finish()
                return True
            self._draw_point(mode, self.snap(x, y))
            return True
        if mode == "measure":
            p = self.snap(x, y)
            if len(self.points) != 1:
                self.points = [p]
                self._show_measure(p, p, "Distance: click the second point.")
            else:
                a = self.points[0]
                self.points = []
                d = math.dist(a, p)
                self.last_distance_m = d
                self._show_measure(a, p, f"Distance {d:.3f} m (dx {p[0] - a[0]:+.3f}, "
                                         f"dy {p[1] - a[1]:+.3f})")
            return True
        if mode == "gap":
            el = element_at(self.doc.obstacle_index(), x, y, self._radius())
            if el is None:
                self.canvas.message.emit("Gap: click on a wall, obstacle, door or zone.")
                return True
            self.picked.append(el)
            if len(self.picked) == 1:
                self.canvas.message.emit(f"Gap from {el['name']}: click the second element.")
                return True
            a, b = self.picked[:2]
            self.picked = []
            g = plan_edits.gap_m(self.fp, (a["kind"], a["index"]), (b["kind"], b["index"]))
            self.last_gap_m = g
            from shapely.ops import nearest_points

            pa, pb = nearest_points(plan_edits.element_geometry(self.fp, a["kind"], a["index"]),
                                    plan_edits.element_geometry(self.fp, b["kind"], b["index"]))
            self._show_measure((pa.x, pa.y), (pb.x, pb.y),
                               f"Gap between {a['name']} and {b['name']}: {g:.3f} m")
            return True
        # select (or add) mode: plan elements, after the route had its chance
        if mode != "select":
            return False
        if double and self.selection is not None:
            return self._insert_at(x, y)
        if double:
            return False
        el = element_at(self.doc.obstacle_index(), x, y, self._radius())
        if el is None:
            if self.selection is not None:
                self.selection = None
                self.vertex = None
                self._draw_selection()
            return False
        self.select_element(el["kind"], el["index"])
        self.vertex = self._vertex_at(x, y)
        self._draw_selection()
        self.canvas.message.emit(f"Selected {el['text']}")
        return True

    def select_element(self, kind: str, index: int) -> None:
        self.selection = (kind, index)
        self.vertex = None
        self.canvas.select(-1)
        self._draw_selection()

    def _draw_point(self, mode: str, p: tuple[float, float]) -> None:
        fp = self.fp
        self.points.append(p)
        try:
            if mode == "rect" and len(self.points) == 2:
                self._commit(plan_edits.add_rectangle(fp, *self.points), mode)
            elif mode == "circle" and len(self.points) == 2:
                c = self.points[0]
                self._commit(plan_edits.add_circle(fp, c, round(math.dist(c, p), 6)), mode)
            elif mode == "door" and len(self.points) == 2:
                self._commit(plan_edits.add_door(fp, *self.points, snap_m=self._radius()),
                             mode)
        except ValueError as exc:
            self.points = []
            self.canvas.message.emit(str(exc))
        self._draw_preview()

    def finish(self) -> None:
        """End the wall, polygon or zone being drawn (double-click or Enter)."""
        mode = self.canvas.mode
        pts = [p for k, p in enumerate(self.points) if k == 0 or p != self.points[k - 1]]
        if mode not in _OPEN_ENDED or not pts:
            return
        try:
            if mode == "wall":
                fp = plan_edits.add_wall(self.fp, pts, self.thickness_m)
            elif mode == "zone":
                # The outline first (a bad one is refused before any question is asked).
                plan_edits.make_zone("keep_out", pts)
                first = math.degrees(math.atan2(pts[1][1] - pts[0][1], pts[1][0] - pts[0][0]))
                rule = self.ask_zone_rule(None, first, "New zone")
                if rule is None:
                    self.canvas.message.emit("Zone not drawn.")
                    self.points = []
                    self._draw_preview()
                    return
                kind, value, label = rule
                fp = plan_edits.add_zone(self.fp, plan_edits.make_zone(kind, pts, label, value))
            else:
                fp = plan_edits.add_obstacle(self.fp, pts)
            self._commit(fp, mode)
        except ValueError as exc:
            self.canvas.message.emit(str(exc))
            self.points = []
        self._draw_preview()

    def cancel(self) -> None:
        self.points = []
        self.picked = []
        self._draw_preview()

    def _commit(self, fp, mode: str) -> None:
        self.points = []
        self.doc.edit_floorplan(fp, f"Draw {_NAMES[mode]}")
        self.canvas.message.emit(f"Drew a {_NAMES[mode]}.")

    def _vertex_at(self, x: float, y: float) -> int | None:
        if self.selection is None:
            return None
        el = plan_edits._items(self.fp, self.selection[0])[self.selection[1]]
        tol = self._radius()
        best = None
        for k, p in enumerate(vertices_of(el)):
            d = math.hypot(p[0] - x, p[1] - y)
            if d <= tol and (best is None or d < best[0]):
                best = (d, k)
        return None if best is None else best[1]

    def _insert_at(self, x: float, y: float) -> bool:
        kind, i = self.selection
        el = plan_edits._items(self.fp, kind)[i]
        tol = self._radius()
        near = [(_seg_dist((x, y), a, b), before) for before, a, b in _edges_of(kind, el)]
        near = [n for n in near if n[0] <= tol]
        if not near:
            return False
        before = min(near)[1]
        p = self.canvas._snap(x, y)
        try:
            fp = plan_edits.insert_vertex(self.fp, kind, i, before, p)
        except ValueError as exc:
            self.canvas.message.emit(str(exc))
            return True
        self.doc.edit_floorplan(fp, f"Insert vertex in {kind} {i}")
        self.vertex = before
        self._draw_selection()
        return True

    def drag(self, ev: Any, x0: float, y0: float, x: float, y: float) -> bool:
        """A left drag from ``(x0, y0)`` now at ``(x, y)``: moves a vertex of the selection."""
        if ev.isStart():
            self._drag = None
            if self.canvas.mode != "select" or self.selection is None:
                return False
            k = self._vertex_at(x0, y0)
            if k is None:
                return False
            self.vertex = k
            # Snap to everything but the element being moved (else it sticks to itself).
            others = plan_edits.delete(self.fp, *self.selection)
            self._drag = (self.selection, k, new_drag_token(), others)
        if self._drag is None:
            return False
        ev.accept()
        (kind, i), k, token, others = self._drag
        items = plan_edits._items(self.fp, kind)
        if i < len(items):
            p = self.snap(x, y, others)
            if p != vertices_of(items[i])[k]:
                try:
                    fp = plan_edits.move_vertex(self.fp, kind, i, k, p)
                except ValueError as exc:  # a zone outline crossing itself: not moved there
                    self.canvas.message.emit(str(exc))
                    fp = None
                if fp is not None:
                    self.doc.edit_floorplan(fp, f"Move {kind} {i} vertex", drag=token)
        if ev.isFinish():
            self._drag = None
            self.doc.finish_drag()
        return True

    def delete_selected(self) -> bool:
        """Delete the selected vertex (or, when none or too few would be left, the element)."""
        if self.selection is None:
            return False
        kind, i = self.selection
        fp = None
        if self.vertex is not None:
            el = plan_edits._items(self.fp, kind)[i]
            if not (isinstance(el, Obstacle) and el.is_circle):
                try:
                    fp = plan_edits.delete_vertex(self.fp, kind, i, self.vertex)
                    text = f"Delete vertex of {kind} {i}"
                except ValueError:
                    fp = None
        if fp is None:
            fp = plan_edits.delete(self.fp, kind, i)
            text = f"Delete {kind} {i}"
            self.selection = None
        self.vertex = None
        self.doc.edit_floorplan(fp, text)
        self._draw_selection()
        return True

    def ask_zone_rule(self, zone: Any, direction_deg: float = 0.0, title: str = "Zone rule"
                      ) -> tuple[str, float | None, str] | None:
        """The zone dialog's ``(kind, value, label)``, or ``None`` when cancelled."""
        from .zone_dialog import ZoneDialog

        dialog = ZoneDialog(self.canvas, zone, direction_deg, title)
        try:
            if dialog.exec() != ZoneDialog.DialogCode.Accepted:
                return None
            return dialog.rule()
        finally:
            dialog.deleteLater()

    def edit_zone(self, rule: tuple[str, float | None, str] | None = None) -> bool:
        """Change the selected zone's kind, number and label (asks when ``rule`` is None):
        one undo step."""
        if self.selection is None or self.selection[0] != "zone":
            self.canvas.message.emit("Select a zone (click inside it) to edit its rule.")
            return False
        i = self.selection[1]
        zone = self.fp.zones[i]
        if rule is None:
            rule = self.ask_zone_rule(zone, zone.direction_deg or 0.0, f"Zone {i} rule")
            if rule is None:
                return False
        kind, value, label = rule
        try:
            fp = plan_edits.set_zone_rule(self.fp, i, kind, value, label)
        except ValueError as exc:
            self.canvas.message.emit(str(exc))
            return False
        if fp == self.fp:
            return False
        self.doc.edit_floorplan(fp, f"Edit zone {i}")
        return True

    def relabel(self, label: str | None = None) -> bool:
        """Give the selected obstacle, door or zone a new label (asks when ``label`` is None)."""
        if self.selection is None or self.selection[0] == "wall":
            self.canvas.message.emit("Select an obstacle, door or zone to relabel.")
            return False
        kind, i = self.selection
        if label is None:
            old = plan_edits._items(self.fp, kind)[i].label
            label, ok = QInputDialog.getText(self.canvas, "Relabel", f"Label of {kind} {i}:",
                                             text=old)
            if not ok:
                return False
        self.doc.edit_floorplan(plan_edits.relabel(self.fp, kind, i, label.strip()),
                                f"Relabel {kind} {i}")
        return True


__all__ = ["PLAN_MODES", "PlanGestures", "vertices_of"]
