"""The floor-plan canvas: the plan at true scale, route sketching and the live check.

A pyqtgraph plot with its aspect locked, so one metre is as long across as up; axes, grid and
a scale bar in metres. It draws the Document (walls, obstacles, doors, every route's path, the
current route's swept band, footprint outlines and violations) and turns mouse gestures into
Document edits:

- drag a waypoint to move it; drag its heading handle (the knob in the route's colour) to
  fix its heading;
- click in *add* mode, or Ctrl+click in any mode, to append a waypoint;
- double-click a leg to insert a waypoint there;
- Delete / Backspace or the context menu removes the selected waypoint;
- drag empty space to pan, the wheel zooms.

It is one of the two painters of the plan scene (:mod:`app.scene`), in parts:

- :mod:`app.canvas` (this module): the widget, its plot and view, the items it builds, the
  plan/screen coordinates, fit and zoom, stale greying;
- :mod:`app.canvas_plan`: the floor plan and its names;
- :mod:`app.canvas_routes`: the routes, swept band, outlines and violations (the drag step);
- :mod:`app.canvas_editing`: hit tests, gestures, context menu, hover read-out;
- :mod:`app.canvas_items`: the graphics items and path helpers they share.

Names other modules and tests import from here (``polygons_path``, ``HIT_PX``, ``MARKER_PX``,
``_plan_box``, the palette) stay importable from :mod:`app.canvas`.

Colours are from the Okabe-Ito colour-blind-safe palette (Okabe & Ito 2008), and nothing is
told by colour alone: reverse travel is dashed, each violation kind has its own marker shape
and a text label with its amount.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import pyqtgraph as pg
import shapely
from PySide6.QtCore import QEvent, QPoint, QPointF, Qt, QTimer, Signal
from PySide6.QtGui import (
    QAction,
    QBrush,
    QColor,
    QKeySequence,
    QPen,
)
from PySide6.QtWidgets import (
    QGraphicsItem,
    QGraphicsPathItem,
    QLabel,
    QVBoxLayout,
    QWidget,
)

from kinematics.analysis.results import VIOLATION_WORDS, violation_label  # noqa: F401

from .canvas_editing import CanvasEditing
from .canvas_items import (  # noqa: F401 - also imported from here by others
    _BOX_CELL_PX,
    _DOOR_LABEL_PLACES,
    _IGNORES_VIEW,
    _LABEL_PLACES,
    _NO_BRUSH,
    _NO_PEN,
    _SELECTED_BRUSH,
    _WAYPOINT_BRUSH,
    HANDLE_PX,
    HIT_PX,
    MARKER_PX,
    MAX_LABELS,
    _Boxes,
    _broken_line,
    _brush,
    _Label,
    _Markers,
    _nice_length,
    _pen,
    _plan_box,
    _Polyline,
    _RoughWhileDragging,
    _set_text,
    _ViewCachedPath,
    footprint_outlines,
    polygons_path,
    sample_segments,
)
from .canvas_plan import PlanDrawing
from .canvas_routes import RouteDrawing
from .document import Document
from .palette import (  # noqa: F401 - the whole set, as other views import it from here
    BLACK,
    BLUE,
    GREEN,
    OBSTACLE_FILL,
    ORANGE,
    PURPLE,
    SKY,
    VERMILLION,
    WALL_FILL,
    YELLOW,
)
from .qstyle import MESSAGE_STYLE, hatch_brush, qbrush, qpen
from .scene import (
    HANDLE_R_PX,
    HANDLE_SHAPE,
    HEADING_WIDTH_PX,
    JAMB_R_PX,
    PIVOT_R_PX,
    PIVOT_WIDTH_PX,
    ROUTE_COLOURS,
    STYLES,
    VIOLATION_SHAPES,
    WAYPOINT_R_PX,
    ZONE_ARROW_R_PX,
    ZONE_KINDS,
    route_style,
)

# Marker shape per violation kind: the scene's (app.scene.VIOLATION_SHAPES, drawn by
# app.qstyle.marker_path), as in the picture; the words beside them are the analysis's.
VIOLATION_SYMBOLS = VIOLATION_SHAPES


class PlanViewBox(pg.ViewBox):
    """A view box that offers clicks and drags to the canvas before panning."""

    def __init__(self, canvas: PlanCanvas) -> None:
        super().__init__(lockAspect=True, enableMenu=False)
        self._canvas = canvas

    def mouseClickEvent(self, ev) -> None:  # noqa: N802 - pyqtgraph's name
        if not self._canvas._on_click(ev):
            super().mouseClickEvent(ev)

    def mouseDragEvent(self, ev, axis=None) -> None:  # noqa: N802 - pyqtgraph's name
        if not self._canvas._on_drag(ev):
            super().mouseDragEvent(ev, axis)


class PlanCanvas(PlanDrawing, RouteDrawing, CanvasEditing, QWidget):
    """Draws the document's floor plan and routes; edits waypoints with the mouse.

    Parameters
    ----------
    doc : Document
    """

    cursorMoved = Signal(float, float)
    hoverInfo = Signal(str)
    message = Signal(str)
    selectionChanged = Signal(int)
    modeChanged = Signal(str)
    # Once, soon after the plan was first painted: work that the first picture can do
    # without (the other routes, the window's bottom panels) starts then.
    firstPainted = Signal()

    def __init__(self, doc: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        self.mode = "select"  # or "add"
        self.snap_m: float | None = None
        self.show_band = True
        self.outline_spacing_m: float | None = 1.0
        self.selected = -1
        self._drag: tuple | None = None
        self._pending: tuple[float, float] | None = None  # first point of a new route
        self._samples = (np.zeros((0, 2)), np.zeros(0), np.zeros(0, int), np.zeros(0, int))
        self._solids_tree: shapely.STRtree | None = None
        self._solid_geoms: list = []
        self.last_hover: dict | None = None
        self._sweep_cache: dict = {}
        self._sweep_cache_key: object = None
        self._sample_cache: dict = {}
        self._drawn: dict = {}  # what some items show now, to skip redrawing the same
        self.painted = False  # the viewport has painted once (see firstPainted)

        self.view = PlanViewBox(self)
        self.plot = pg.PlotWidget(viewBox=self.view, background="w")
        self.plot.setAntialiasing(True)
        self.plot.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        pi = self.plot.getPlotItem()
        pi.showGrid(x=True, y=True, alpha=0.18)
        for side in ("left", "bottom"):
            ax = pi.getAxis(side)
            ax.setPen(_pen("#555555"))
            ax.setTextPen(_pen("#222222"))
            # Axes and grid change only with the view range; caching their pixels makes a
            # repaint during a drag several times cheaper.
            ax.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        pi.setLabel("bottom", "x", units="m")
        pi.setLabel("left", "y", units="m")
        # pyqtgraph's auto-range "A" button would sit beside the A (add waypoints) key's
        # meaning; View > Fit to plan (F) is the canvas's own fit control.
        pi.hideButtons()
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(0)
        # Shown while the chassis form holds a refused value: the band is greyed below it.
        self.stale_label = QLabel()
        self.stale_label.setWordWrap(True)
        self.stale_label.setStyleSheet(MESSAGE_STYLE)
        self.stale_label.hide()
        lay.addWidget(self.stale_label)
        lay.addWidget(self.plot)
        self._build_items()

        self.scale_bar = pg.ScaleBar(size=1.0, width=6, brush=pg.mkBrush(BLACK),
                                     pen=pg.mkPen(BLACK), suffix="m")
        self.scale_bar.setParentItem(self.view)
        self.scale_bar.anchor((1, 1), (1, 1), offset=(-24, -24))
        self.scale_bar.text.setColor(QColor(BLACK))

        self.view.sigRangeChanged.connect(self._range_changed)
        self.plot.scene().sigMouseMoved.connect(self._mouse_moved)
        doc.floorplanChanged.connect(self.refresh_plan)
        doc.edited.connect(self.refresh_routes)
        doc.currentRouteChanged.connect(self._current_changed)
        doc.projectReplaced.connect(self._project_replaced)
        doc.staleChanged.connect(self.set_stale)

        self._delete_action = QAction("Delete waypoint", self)
        self._delete_action.setShortcuts([QKeySequence.StandardKey.Delete,
                                          QKeySequence(Qt.Key.Key_Backspace)])
        self._delete_action.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
        self._delete_action.triggered.connect(self.delete_selected)
        self.addAction(self._delete_action)
        from .plan_gestures import PlanGestures

        self.plan_gestures = PlanGestures(self)  # plan drawing, editing and measuring
        for keys, slot, text in (
                ([Qt.Key.Key_Return, Qt.Key.Key_Enter], self.plan_gestures.finish,
                 "Finish the wall, polygon or zone being drawn"),
                ([Qt.Key.Key_Escape], self.plan_gestures.cancel,
                 "Cancel the drawing or measurement under way")):
            act = QAction(text, self)  # the text names it in Help > Guide
            act.setShortcuts([QKeySequence(k) for k in keys])
            act.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
            act.triggered.connect(slot)
            self.addAction(act)
        self.plot.viewport().installEventFilter(self)
        self.refresh_plan()
        self.refresh_routes()
        self.fit()

    def eventFilter(self, obj, ev) -> bool:  # noqa: N802 - Qt's name
        if ev.type() == QEvent.Type.Paint and obj is self.plot.viewport() and not self.painted:
            self.painted = True
            obj.removeEventFilter(self)
            QTimer.singleShot(0, self._after_first_paint)
        return False

    def _after_first_paint(self) -> None:
        self._draw_other_routes()
        self.firstPainted.emit()

    # -- items ------------------------------------------------------------------------------
    def _build_items(self) -> None:
        add = self.plot.addItem
        rough = lambda: self.doc.results_pending  # noqa: E731 - a drag step is on screen
        self.band_item = _RoughWhileDragging(rough)
        self.band_item.setPen(QPen(Qt.PenStyle.NoPen))
        self.band_item.setBrush(qbrush(STYLES["band"].fill))
        self.band_item.setZValue(-5)
        add(self.band_item)
        # The floor plan in the scene's styles (app.scene.STYLES), as the picture draws it.
        self.walls_item = QGraphicsPathItem()
        self.walls_item.setPen(qpen(STYLES["wall"].stroke, cosmetic=True))
        self.walls_item.setBrush(qbrush(STYLES["wall"].fill))
        self.walls_item.setZValue(0)
        add(self.walls_item)
        self.obstacles_item = QGraphicsPathItem()
        self.obstacles_item.setPen(qpen(STYLES["obstacle"].stroke, cosmetic=True))
        self.obstacles_item.setBrush(qbrush(STYLES["obstacle"].fill))
        self.obstacles_item.setZValue(0)
        add(self.obstacles_item)
        self.hatch_item = _ViewCachedPath()
        self.hatch_item.setPen(QPen(Qt.PenStyle.NoPen))
        self.hatch_item.setBrush(hatch_brush(STYLES["obstacle"].fill) or _NO_BRUSH)
        self.hatch_item.setZValue(0.1)
        add(self.hatch_item)
        # The floor plan does not change during a drag: its items repaint from cached pixels
        # (not the hatch: a pattern brush is laid in device pixels, which a cached item's
        # pixels would shift against a fresh paint).
        for it in (self.walls_item, self.obstacles_item):
            it.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        # Zones under the band and the solids, in the scene's zone styles as the picture
        # draws them: fill, hatch (laid in screen pixels, as the picture's) and outline.
        self.zone_items = {}
        for kind in ZONE_KINDS:
            st = STYLES["zone_" + kind]
            parts = []
            for z, (pen_, brush_) in enumerate(((_NO_PEN, qbrush(st.fill)),
                                                (_NO_PEN, hatch_brush(st.fill) or _NO_BRUSH),
                                                (qpen(st.stroke, cosmetic=True), _NO_BRUSH))):
                it = QGraphicsPathItem()
                it.setPen(pen_)
                it.setBrush(brush_)
                it.setZValue(-6 + 0.1 * z)
                add(it)
                parts.append(it)
            self.zone_items[kind] = parts
        ast = STYLES["zone_arrow"]
        self.zone_arrows_item = _Markers("arrow", 2 * ZONE_ARROW_R_PX, qpen(ast.stroke),
                                         qbrush(ast.fill))
        self.zone_arrows_item.setZValue(-5.5)
        add(self.zone_arrows_item, ignoreBounds=True)
        self._zone_arrow_px: float | None = None
        self.door_gaps_item = _Polyline(qpen(STYLES["door_gap"].stroke, cosmetic=True))
        self.doors_item = _Polyline(qpen(STYLES["door"].stroke, cosmetic=True))
        for it in (self.door_gaps_item, self.doors_item):
            it.setZValue(1)
            add(it)
            it.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        jst = STYLES["jamb"]
        self.jambs_item = _Markers("circle", 2 * JAMB_R_PX, qpen(jst.stroke), qbrush(jst.fill))
        self.jambs_item.setZValue(1)
        add(self.jambs_item, ignoreBounds=True)
        self.plan_labels: list[_Label] = []
        self.zone_labels: list[_Label] = []

        # The other routes' paths as the picture draws every route: in the route's colour,
        # dashed in reverse (app.scene.route_style); one item per colour and direction.
        self.others_items: dict[tuple[int, int], _Polyline] = {}
        for ci in range(len(ROUTE_COLOURS)):
            for direction in (1, -1):
                it = _Polyline(qpen(route_style(ci, direction), cosmetic=True))
                it.setZValue(2)
                it.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
                add(it)
                self.others_items[(ci, direction)] = it
        # The outlines' parent: one child per segment (_draw_outlines), none of its own path.
        self.outlines_item = QGraphicsPathItem()
        self.outlines_item.setPen(qpen(STYLES["outline"].stroke, cosmetic=True))
        self.outlines_item.setZValue(3)
        add(self.outlines_item)
        self._outline_items: dict = {}
        self._outline_pool: list[QGraphicsPathItem] = []
        self.doc.resultsChanged.connect(self._polish)
        # The current route's lines change on every drag step: plain path items, which Qt
        # updates and paints without the per-item Python work of a plot curve.
        self.path_fwd = _Polyline(qpen(route_style(0, 1), cosmetic=True))
        self.path_rev = _Polyline(qpen(route_style(0, -1), cosmetic=True))
        for it in (self.path_fwd, self.path_rev):
            it.setZValue(4)
            add(it)
        # Turns on the spot: the picture's ring and arrow head (app.qstyle.pivot_paths) in
        # the route's colour, the ring stroked and the head filled.
        self.pivot_rings = _Markers("pivot_ring+", 2 * PIVOT_R_PX, _pen(BLACK, PIVOT_WIDTH_PX),
                                    None)
        self.pivot_heads = _Markers("pivot_head+", 2 * PIVOT_R_PX, _pen(BLACK, 1.0),
                                    _brush(BLACK))
        for it in (self.pivot_rings, self.pivot_heads):
            it.setZValue(4.5)
            add(it, ignoreBounds=True)
        self.chords_item = _Polyline(_pen("#777777", 1.0, Qt.PenStyle.DotLine))
        self.chords_item.setZValue(3.5)
        add(self.chords_item)
        self.handles_line = _Polyline(_pen(BLACK, HEADING_WIDTH_PX))  # route colour later
        self.handles_line.setZValue(6)
        add(self.handles_line)
        # Markers and labels keep their pixel size at any zoom; they are plain Qt items
        # (see _Markers, _Label), which a drag moves without per-paint Python.
        self.handles_item = _Markers(HANDLE_SHAPE, 2 * HANDLE_R_PX, _pen(BLACK, 1.0),
                                     _brush(BLACK))
        self.handles_item.setZValue(7)
        add(self.handles_item, ignoreBounds=True)
        self.waypoints_item = _Markers("circle", 2 * WAYPOINT_R_PX, _pen(BLACK, 2.0),
                                       _WAYPOINT_BRUSH)
        self.waypoints_item.setZValue(8)
        add(self.waypoints_item, ignoreBounds=True)
        self.pending_item = _Markers("o", 13, _pen(BLUE, 2.0), None)
        self.pending_item.setZValue(8)
        add(self.pending_item, ignoreBounds=True)
        self.wp_labels: list[_Label] = []
        vst = STYLES["violation"]
        self.violations_item = _Markers("circle", MARKER_PX, qpen(vst.stroke), qbrush(vst.fill))
        self.violations_item.setZValue(9)
        add(self.violations_item, ignoreBounds=True)
        self.violation_labels: list[_Label] = []
        self.hover_item = _Markers("o", 16, _pen(BLACK, 2.0), None)
        self.hover_item.setZValue(10)
        add(self.hover_item, ignoreBounds=True)

    def _labels(self, pool: list[_Label], n: int, colour: str, fill: str | None,
                anchor: tuple[float, float]) -> list[_Label]:
        while len(pool) < n:
            t = _Label(colour, QBrush(QColor(fill)) if fill else None, anchor)
            t.setZValue(11)
            self.plot.addItem(t, ignoreBounds=True)
            pool.append(t)
        for k, t in enumerate(pool):
            t.setVisible(k < n)
        return pool[:n]

    # -- coordinates ------------------------------------------------------------------------
    def px_m(self) -> float:
        """Size of one screen pixel in plan metres."""
        w, h = self.view.viewPixelSize()
        v = max(w, h)
        return v if v > 0 and math.isfinite(v) else 0.01

    def plan_to_viewport(self, x: float, y: float) -> QPoint:
        """Viewport pixel of plan point ``(x, y)`` (for tests and tooltips)."""
        scene = self.view.mapViewToScene(QPointF(x, y))
        return self.plot.mapFromScene(scene)

    def viewport_to_plan(self, p: QPoint) -> tuple[float, float]:
        v = self.view.mapSceneToView(self.plot.mapToScene(p))
        return (v.x(), v.y())

    def _scene_to_plan(self, scene_pos: QPointF) -> tuple[float, float]:
        v = self.view.mapSceneToView(scene_pos)
        return (v.x(), v.y())

    def _snap(self, x: float, y: float) -> tuple[float, float]:
        """Grid snap when on; otherwise 0.1 mm, far finer than a sketch needs, so that files
        hold short numbers that survive a save exactly."""
        if self.snap_m:
            g = self.snap_m
            return (round(round(x / g) * g, 6), round(round(y / g) * g, 6))
        return (round(x, 4), round(y, 4))

    def fit(self) -> None:
        """Show the whole floor plan and every waypoint."""
        xs, ys = [], []
        x0, y0, x1, y1 = self.doc.project.floorplan.bounds()
        if (x0, y0, x1, y1) != (0.0, 0.0, 0.0, 0.0):
            xs += [x0, x1]
            ys += [y0, y1]
        for r in self.doc.project.routes:
            xs += [w.x for w in r.waypoints]
            ys += [w.y for w in r.waypoints]
        if not xs:
            xs, ys = [0.0, 10.0], [0.0, 10.0]
        self.view.setRange(xRange=(min(xs), max(xs)), yRange=(min(ys), max(ys)), padding=0.04)

    def highlight_place(self, geoms: Sequence) -> None:
        """Outline plan places (shapely polygons) in the highlight style; empty clears."""
        self.plan_gestures.highlight(None)
        self.plan_gestures.highlight_item.setPath(polygons_path(list(geoms)))

    def center_on(self, x: float, y: float, span_m: float = 5.0) -> None:
        """Centre the view on plan point ``(x, y)``, zooming in to about ``span_m`` if wider."""
        (x0, x1), (y0, y1) = self.view.viewRange()
        half = min(max(x1 - x0, y1 - y0), span_m) / 2.0
        self.view.setRange(xRange=(x - half, x + half), yRange=(y - half, y + half), padding=0)

    def clear_hover(self) -> None:
        """Forget the hover read-out and its ring (the route under them went away)."""
        self.last_hover = None
        self.hover_item.setData([], [])
        self.hoverInfo.emit("")
        self.plot.setToolTip("")

    def _project_replaced(self) -> None:
        self.selected = -1
        self._pending = None
        self._drag = None
        self.pending_item.setData([], [])
        self.clear_hover()
        self.refresh_routes()
        self.fit()

    #: Opacity of the band, outlines and violations while they are out of date.
    STALE_OPACITY = 0.3

    def set_stale(self, reason: str) -> None:
        """Grey the results drawn (band, outlines, violations) and say why, or undo that."""
        self.stale_label.setText(reason)
        self.stale_label.setVisible(bool(reason))
        op = self.STALE_OPACITY if reason else 1.0
        for it in (self.band_item, self.outlines_item, self.violations_item,
                   *self.violation_labels):
            it.setOpacity(op)

    @property
    def stale(self) -> bool:
        """True while the band and violations drawn are of an older chassis."""
        return self.band_item.opacity() < 1.0

    def _current_changed(self, _i: int) -> None:
        self.clear_hover()  # the ring sat on the previous route
        self.selected = -1
        self.selectionChanged.emit(-1)
        self.refresh_routes()

    def _range_changed(self, *_args) -> None:
        w = self.view.viewRange()[0]
        size = _nice_length((w[1] - w[0]) / 6.0)
        if size != self.scale_bar.size:
            self.scale_bar.size = size
            self.scale_bar.text.setText(f"{size:g} m")
            self.scale_bar.updateBar()
        self._draw_handles()
        self._fit_obstacle_labels()
        self._draw_zone_arrows()
        cur = self.doc.route()
        if cur is not None and "violations" in self._drawn:
            self._draw_violations(cur.name)  # labels placed anew at a new zoom only
