"""The floor-plan canvas: the plan at true scale, route sketching and the live check.

A pyqtgraph plot with its aspect locked, so one metre is as long across as up; axes, grid and
a scale bar in metres. It draws the Document (walls, obstacles, doors, every route's path, the
current route's swept band, footprint outlines and violations) and turns mouse gestures into
Document edits:

- drag a waypoint to move it; drag its heading handle (the purple knob) to fix its heading;
- click in *add* mode, or Ctrl+click in any mode, to append a waypoint;
- double-click a leg to insert a waypoint there;
- Delete / Backspace or the context menu removes the selected waypoint;
- drag empty space to pan, the wheel zooms.

It is one of the two painters of the plan scene (:mod:`app.scene`). Over 600 lines because it
is also the editor (gestures, hit tests, hover read-out) and keeps the drag-time item caches
beside the drawing; the styles, shapes and layers it draws are in :mod:`app.scene`.

Colours are from the Okabe-Ito colour-blind-safe palette (Okabe & Ito 2008), and nothing is
told by colour alone: reverse travel is dashed, each violation kind has its own marker shape
and a text label with its amount.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
import pyqtgraph as pg
import shapely
from pyqtgraph.graphicsItems.ScatterPlotItem import Symbols
from PySide6.QtCore import QEvent, QPoint, QPointF, QRectF, Qt, QTimer, Signal
from PySide6.QtGui import (
    QAction,
    QBrush,
    QColor,
    QKeySequence,
    QPainter,
    QPainterPath,
    QPen,
    QTransform,
)
from PySide6.QtWidgets import (
    QGraphicsItem,
    QGraphicsPathItem,
    QGraphicsRectItem,
    QGraphicsSimpleTextItem,
    QInputDialog,
    QLabel,
    QMenu,
    QVBoxLayout,
    QWidget,
)

from kinematics.analysis.results import VIOLATION_WORDS, violation_label  # noqa: F401
from kinematics.files.project import Waypoint
from kinematics.motion.segments import Segment

from .document import Document, new_drag_token
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
from .plan_tools import element_at
from .qstyle import MESSAGE_STYLE, hatch_brush, marker_path, qbrush, qpen
from .scene import (
    HANDLE_R_PX,
    HANDLE_SHAPE,
    JAMB_R_PX,
    STYLES,
    VIOLATION_R_PX,
    VIOLATION_SHAPES,
    WAYPOINT_R_PX,
    ZONE_ARROW_R_PX,
    ZONE_ARROW_STEP_PX,
    ZONE_KINDS,
    floorplan_layer,
    route_style,
    violation_layer,
    zone_layer,
)

# Marker shape per violation kind: the scene's (app.scene.VIOLATION_SHAPES, drawn by
# app.qstyle.marker_path), as in the picture; the words beside them are the analysis's.
VIOLATION_SYMBOLS = VIOLATION_SHAPES

HIT_PX = 9.0  # how close (pixels) a press must be to grab a waypoint or handle
HANDLE_PX = 42.0  # length of a heading handle on screen
MAX_LABELS = 80  # violation labels drawn at most (the results panel lists every one)


def _pen(colour: str, width: float = 1.0, style: Qt.PenStyle = Qt.PenStyle.SolidLine,
         alpha: int = 255) -> QPen:
    c = QColor(colour)
    c.setAlpha(alpha)
    pen = QPen(c, width)
    pen.setCosmetic(True)
    pen.setStyle(style)
    return pen


def _brush(colour: str, alpha: int = 255) -> QBrush:
    c = QColor(colour)
    c.setAlpha(alpha)
    return QBrush(c)


def _rings_path(rings: Sequence[np.ndarray]) -> QPainterPath:
    """One painter path of closed rings, built in one vectorised call (no per-vertex Python)."""
    rings = [r for r in rings if len(r) >= 3]
    if not rings:
        return QPainterPath()
    xy = np.vstack(rings)
    connect = np.ones(len(xy), dtype=np.int32)
    ends = np.cumsum([len(r) for r in rings]) - 1
    connect[ends] = 0
    return pg.arrayToQPath(xy[:, 0], xy[:, 1], connect=connect)


def polygons_path(geoms: Sequence, fill_rule: Qt.FillRule = Qt.FillRule.OddEvenFill
                  ) -> QPainterPath:
    """A painter path of shapely polygons (holes included; multi-part geometries exploded,
    anything not a polygon skipped), built with shapely's array functions, no per-polygon
    Python."""
    arr = np.asarray(list(geoms), dtype=object).ravel()
    if arr.size:
        arr = arr[~shapely.is_missing(arr)]
    if arr.size:
        arr = shapely.get_parts(shapely.get_parts(arr))  # collections of multi-parts too
        arr = arr[(shapely.get_type_id(arr) == 3) & ~shapely.is_empty(arr)]
    if not arr.size:
        path = QPainterPath()
        path.setFillRule(fill_rule)
        return path
    xy, ring = shapely.get_coordinates(shapely.get_rings(arr), return_index=True)
    connect = np.ones(len(xy), dtype=np.int32)
    connect[np.flatnonzero(np.diff(ring))] = 0
    connect[-1] = 0
    path = pg.arrayToQPath(xy[:, 0], xy[:, 1], connect=connect)
    path.setFillRule(fill_rule)
    return path


def sample_segments(segments: Sequence[Segment], step_m: float = 0.05,
                    cache: dict | None = None
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Poses along a path for drawing and hover: ``(xy, station_m, seg_index, direction)``.

    Lines get their two ends, arcs a point every ``step_m`` (at most every 3 degrees);
    pivots one point. ``cache`` (a dict the caller keeps) holds each segment's points by
    segment value, so a drag samples only the segments that moved.
    """
    xy, st, idx, dirs = [], [], [], []
    s0 = 0.0
    for seg in segments:
        hit = cache.get((seg, step_m)) if cache is not None else None
        if hit is None:
            if seg.kind in ("arc", "clothoid"):
                n = max(2, int(math.ceil(max(seg.length_m / step_m,
                                             abs(seg.turn_rad) / math.radians(3.0)))) + 1)
            elif seg.kind == "line":
                n = max(2, int(math.ceil(seg.length_m / 0.5)) + 1)
            else:
                n = 1
            f = np.linspace(0.0, 1.0, n)
            hit = (seg.poses_at_fraction(f)[:, :2], f * seg.length_m)
            if cache is not None:
                cache[(seg, step_m)] = hit
        pts, ds = hit
        xy.append(pts)
        st.append(ds)
        idx.append(s0)  # the segment's start station, spread over its points below
        dirs.append(seg.direction)
        s0 += seg.length_m
    if not xy:
        z = np.zeros((0,))
        return np.zeros((0, 2)), z, z.astype(int), z.astype(int)
    # Per-point columns in a few array operations over the whole route (not per segment).
    counts = np.fromiter((len(p) for p in xy), dtype=np.int64, count=len(xy))
    stations = np.concatenate(st) + np.repeat(np.asarray(idx, dtype=float), counts)
    return (np.vstack(xy), stations, np.repeat(np.arange(len(xy)), counts),
            np.repeat(np.asarray(dirs), counts))


def _broken_line(xy: np.ndarray, dirs: np.ndarray, idx: np.ndarray, want: int
                 ) -> tuple[np.ndarray, np.ndarray]:
    """x, y arrays with NaN breaks keeping only the pieces travelled in direction ``want``."""
    on = np.asarray(dirs) == want
    # A break (NaN) stands where a run travelled in ``want`` gives way to the other direction.
    brk = np.zeros(len(on), dtype=bool)
    brk[1:] = ~on[1:] & on[:-1]
    keep = on | brk
    pts = np.where(on[:, None], np.asarray(xy, dtype=float).reshape(-1, 2), np.nan)[keep]
    return pts[:, 0].copy(), pts[:, 1].copy()


def footprint_outlines(footprint: Sequence[tuple[float, float]], poses: np.ndarray
                       ) -> QPainterPath:
    """The footprint outline placed at each pose ``(x, y, heading_rad)``, one path."""
    fp = np.asarray(footprint, dtype=float)
    if len(poses) == 0:
        return QPainterPath()
    fp = np.vstack([fp, fp[:1]])  # closed ring
    c, s = np.cos(poses[:, 2])[:, None], np.sin(poses[:, 2])[:, None]
    X = poses[:, 0:1] + c * fp[None, :, 0] - s * fp[None, :, 1]
    Y = poses[:, 1:2] + s * fp[None, :, 0] + c * fp[None, :, 1]
    return _rings_path(list(np.stack([X, Y], axis=-1)))


def _nice_length(target: float) -> float:
    """The 1-2-5 series value nearest below ``target`` (for the scale bar)."""
    if target <= 0 or not math.isfinite(target):
        return 1.0
    e = math.floor(math.log10(target))
    for m in (5.0, 2.0, 1.0):
        if m * 10**e <= target:
            return m * 10**e
    return 10**e


class _RoughWhileDragging(QGraphicsPathItem):
    """A path item painted without antialiasing while ``rough()`` is true (a drag in
    progress): an antialiased fill of the swept band costs about ten times a plain one
    (3.7 ms against 0.4 ms on the 20,000-edge warehouse, bench/bench_gui.py). Once the drag
    rests or ends, :meth:`polish` repaints it antialiased, so every picture at rest is as
    before."""

    def __init__(self, rough: Callable[[], bool], parent: QGraphicsItem | None = None) -> None:
        super().__init__(parent)
        self._rough = rough
        self.painted_rough = False

    def paint(self, painter: QPainter, option, widget=None) -> None:  # noqa: D102 - Qt's
        if self._rough():
            painter.save()
            painter.setRenderHint(QPainter.RenderHint.Antialiasing, False)
            super().paint(painter, option, widget)
            painter.restore()
            self.painted_rough = True
        else:
            super().paint(painter, option, widget)
            self.painted_rough = False

    def polish(self) -> None:
        """Repaint antialiased if the last paint was rough."""
        if self.painted_rough:
            self.update()


class _Polyline(QGraphicsPathItem):
    """A polyline (NaN breaks it) as one path item; ``setData(x, y)`` like a plot curve."""

    def __init__(self, pen: QPen) -> None:
        super().__init__()
        self.setPen(pen)
        self.setBrush(QBrush(Qt.BrushStyle.NoBrush))

    def setData(self, x, y) -> None:  # noqa: N802 - the plot items' name
        x = np.asarray(x, dtype=float)
        y = np.asarray(y, dtype=float)
        self.setPath(pg.arrayToQPath(x, y, connect="finite") if len(x) else QPainterPath())

    def getData(self) -> tuple[np.ndarray, np.ndarray]:  # noqa: N802 - the plot items' name
        """The polyline's points (breaks left out)."""
        path = self.path()
        pts = [path.elementAt(k) for k in range(path.elementCount())]
        return (np.array([e.x for e in pts], dtype=float),
                np.array([e.y for e in pts], dtype=float))


def _set_text(item: _Label, text: str) -> None:
    """Set a label's text only when it changed."""
    item.setText(text)


_NO_PEN = QPen(Qt.PenStyle.NoPen)
_NO_BRUSH = QBrush(Qt.BrushStyle.NoBrush)
_IGNORES_VIEW = QGraphicsItem.GraphicsItemFlag.ItemIgnoresTransformations


def _symbol_path(symbol: str, size_px: float) -> QPainterPath:
    """A marker ``size_px`` across: one of the scene's shapes (:func:`app.qstyle.marker_path`,
    as the picture draws it) or else pyqtgraph's ``symbol`` (unit size, screen orientation)."""
    key = (symbol, size_px)
    path = _SYMBOL_PATHS.get(key)
    if path is None:
        if symbol in _SCENE_SHAPES:
            path = marker_path(symbol, QPointF(0.0, 0.0), size_px / 2.0)
        else:
            path = QTransform.fromScale(size_px, size_px).map(Symbols[symbol])
        _SYMBOL_PATHS[key] = path
    return path


_SCENE_SHAPES = {"cross", "triangle", "square", "star", "diamond", "hexagon", "chevron",
                 "circle", "arrow"}


_SYMBOL_PATHS: dict[tuple[str, float], QPainterPath] = {}


class _Markers(QGraphicsItem):
    """Markers of a constant pixel size at plan points, like a scatter plot but painted by Qt.

    Each marker is a child path item that ignores the view's scaling, so Qt places, bounds
    and paints it without Python; a drag moves only the markers whose point changed.
    ``setData(x, y, symbol=, brush=, size=)`` takes one value or one per point.
    """

    def __init__(self, symbol: str, size: float, pen: QPen, brush: QBrush | None) -> None:
        super().__init__()
        self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemHasNoContents)
        self.setAcceptedMouseButtons(Qt.MouseButton.NoButton)
        self._symbol, self._size = symbol, float(size)
        pen = QPen(pen)
        pen.setCosmetic(True)
        self._pen = pen
        self._brush = brush if brush is not None else _NO_BRUSH
        self._items: list[QGraphicsPathItem] = []
        self.data: list[tuple[float, float]] = []  # the points shown, in plan metres

    def boundingRect(self) -> QRectF:  # noqa: N802 - Qt's name
        return QRectF()

    def paint(self, *_args) -> None:
        pass

    def setPen(self, pen: QPen) -> None:  # noqa: N802 - Qt's name
        """The outline of every marker, now and later."""
        pen = QPen(pen)
        pen.setCosmetic(True)
        self._pen = pen
        for it in self._items:
            it.setPen(pen)

    def setData(self, x, y, symbol=None, brush=None, size=None, angle=None  # noqa: N802
                ) -> None:
        """Show markers at plan points ``x``, ``y``; ``angle`` (radians, counter-clockwise on
        the plan) turns each one."""
        n = len(x)

        def each(v, default):
            if v is None:
                return [default] * n
            if isinstance(v, (str, QBrush, int, float)):
                return [v] * n
            return list(v)

        syms, brushes = each(symbol, self._symbol), each(brush, self._brush)
        sizes = each(size, self._size)
        angles = each(angle, 0.0)
        while len(self._items) < n:
            it = QGraphicsPathItem(self)
            it.setFlag(_IGNORES_VIEW)
            it.setAcceptedMouseButtons(Qt.MouseButton.NoButton)
            it.setPen(self._pen)
            self._items.append(it)
        for k, it in enumerate(self._items):
            if k >= n:
                it.setVisible(False)
                continue
            it.setPos(float(x[k]), float(y[k]))
            it.setPath(_symbol_path(syms[k], float(sizes[k])))
            it.setRotation(-math.degrees(angles[k]))
            it.setBrush(brushes[k] if brushes[k] is not None else _NO_BRUSH)
            it.setVisible(True)
        self.data = [(float(x[k]), float(y[k])) for k in range(n)]


#: Where a violation's label may sit, in order of preference, as the anchor of its box on the
#: marker: right and below, left and below, right and above, left and above (clear of a
#: marker of MARKER_PX).
MARKER_PX = int(2 * VIOLATION_R_PX)
_LABEL_PLACES = ((-0.12, -0.1), (1.12, -0.1), (-0.12, 1.1), (1.12, 1.1))


#: Where a door's name may sit, as the anchor of its box on the door's middle: just below the
#: door line, else a row further down (neighbouring doors' names then alternate rows), else
#: just above it.
_DOOR_LABEL_PLACES = ((0.5, -0.3), (0.5, -1.45), (0.5, 1.3))


class _Boxes:
    """Plan boxes ``(x0, y0, x1, y1)`` taken by labels and markers, bucketed on a square grid
    of ``cell`` metres, so a new box is tested against its neighbours only (a plan with
    hundreds of doors re-places its names on every zoom step)."""

    def __init__(self, cell: float) -> None:
        self.cell = max(float(cell), 1e-9)
        self.cells: dict[tuple[int, int], list] = {}

    def _keys(self, b: tuple[float, float, float, float]):
        c = self.cell
        for i in range(math.floor(b[0] / c), math.floor(b[2] / c) + 1):
            for j in range(math.floor(b[1] / c), math.floor(b[3] / c) + 1):
                yield (i, j)

    def hits(self, b: tuple[float, float, float, float]) -> list:
        """The payloads of the boxes that overlap ``b`` (each once)."""
        out: dict[int, Any] = {}
        for k in self._keys(b):
            for o, item in self.cells.get(k, ()):
                if not (b[2] <= o[0] or b[0] >= o[2] or b[3] <= o[1] or b[1] >= o[3]):
                    out[id(o)] = item
        return list(out.values())

    def free(self, b: tuple[float, float, float, float]) -> bool:
        return not self.hits(b)

    def add(self, b: tuple[float, float, float, float], item: Any = None) -> None:
        for k in self._keys(b):
            self.cells.setdefault(k, []).append((b, item))

    def remove(self, item: Any) -> None:
        for lst in self.cells.values():
            lst[:] = [e for e in lst if e[1] is not item]


#: Grid cell of :class:`_Boxes`, in screen pixels (about a label's width).
_BOX_CELL_PX = 128.0


def _plan_box(label: _Label, px: float) -> tuple[float, float, float, float]:
    """The plan box ``(x0, y0, x1, y1)`` a constant-pixel label covers at ``px`` metres per
    pixel (screen y runs down, plan y up)."""
    r = label.rect()
    x, y = label.pos().x(), label.pos().y()
    return (x + r.left() * px, y - r.bottom() * px, x + r.right() * px, y - r.top() * px)


class _Label(QGraphicsRectItem):
    """A text label of constant pixel size at a plan point, on an optional filled box.

    ``anchor`` says which point of the box sits on the plan point: (0, 0) its top-left,
    (1, 1) its bottom-right. Plain text painted by Qt (no rich-text layout, no Python paint).
    """

    PAD_PX = 4.0  # space between the text and the edge of its box

    def __init__(self, colour: str, fill: QBrush | None, anchor: tuple[float, float],
                 border: QPen | None = None) -> None:
        super().__init__()
        self.setFlag(_IGNORES_VIEW)
        self.setAcceptedMouseButtons(Qt.MouseButton.NoButton)
        self.setPen(border if border is not None else _NO_PEN)
        self.setBrush(fill if fill is not None else _NO_BRUSH)
        self.text_item = QGraphicsSimpleTextItem(self)
        self.text_item.setPen(_NO_PEN)
        self.text_item.setBrush(QColor(colour))
        self._anchor = (float(anchor[0]), float(anchor[1]))
        self._text: str | None = None

    def text(self) -> str:
        return self._text or ""

    def setText(self, text: str) -> None:  # noqa: N802 - Qt's name
        if text != self._text:
            self._text = text
            self.text_item.setText(text)
            self._layout()

    def setColor(self, colour: QColor) -> None:  # noqa: N802 - pyqtgraph's name
        self.text_item.setBrush(QColor(colour))

    def setFill(self, brush: QBrush | None) -> None:  # noqa: N802
        self.setBrush(brush if brush is not None else _NO_BRUSH)

    def setAnchor(self, anchor: tuple[float, float]) -> None:  # noqa: N802 - pyqtgraph's name
        a = (float(anchor[0]), float(anchor[1]))
        if a != self._anchor:
            self._anchor = a
            self._layout()

    def _layout(self) -> None:
        r = self.text_item.boundingRect()
        w, h = r.width() + 2 * self.PAD_PX, r.height() + 2 * self.PAD_PX
        x, y = -self._anchor[0] * w, -self._anchor[1] * h
        self.setRect(QRectF(x, y, w, h))
        self.text_item.setPos(x + self.PAD_PX, y + self.PAD_PX)


_WAYPOINT_BRUSH = qbrush(STYLES["waypoint"].fill)
_SELECTED_BRUSH = pg.mkBrush(ORANGE)
_FIXED_BRUSH = pg.mkBrush(PURPLE)  # a heading the user fixed
# The planner's choice, to grab: the handle's purple, pale (a white disc would read as a
# small waypoint).
_FREE_BRUSH = pg.mkBrush(QColor(PURPLE).lighter(150))


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


class PlanCanvas(QWidget):
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
        self.hatch_item = QGraphicsPathItem()
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

        self.others_item = _Polyline(_pen("#8C8C8C", 1.5, Qt.PenStyle.DashDotLine))
        self.others_item.setZValue(2)
        self.others_item.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        add(self.others_item)
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
        self.chords_item = _Polyline(_pen("#777777", 1.0, Qt.PenStyle.DotLine))
        self.chords_item.setZValue(3.5)
        add(self.chords_item)
        self.handles_line = _Polyline(_pen(PURPLE, 2.0))
        self.handles_line.setZValue(6)
        add(self.handles_line)
        # Markers and labels keep their pixel size at any zoom; they are plain Qt items
        # (see _Markers, _Label), which a drag moves without per-paint Python.
        self.handles_item = _Markers(HANDLE_SHAPE, 2 * HANDLE_R_PX, _pen(BLACK, 1.0),
                                     _brush(PURPLE))
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

    # -- drawing ----------------------------------------------------------------------------
    def refresh_plan(self) -> None:
        fp = self.doc.project.floorplan
        # The checker's index of the same plan: its solids and tree, not a second build.
        index = self.doc.obstacle_index()
        sol = index.solids
        walls = [s.geometry for s in sol if s.kind == "wall"]
        obst = [s.geometry for s in sol if s.kind == "obstacle"]
        # Oriented alike and filled by winding: where two walls overlap (a T-junction) the
        # overlap is filled once, not left empty as an odd-even fill would (holes, oriented
        # the other way, stay open).
        wind = Qt.FillRule.WindingFill
        self.walls_item.setPath(polygons_path(shapely.orient_polygons(walls), wind)
                                if walls else polygons_path([]))
        self.obstacles_item.setPath(polygons_path(shapely.orient_polygons(obst), wind)
                                    if obst else polygons_path([]))
        self.hatch_item.setPath(self.obstacles_item.path())
        zones = zone_layer(fp.zones)
        geoms = {pg_.role[5:]: pg_.geoms for pg_ in zones.polygons}
        for kind, parts in self.zone_items.items():
            path = polygons_path(geoms.get(kind, []))
            for it in parts:
                it.setPath(path)
        self._zone_arrow_px = None
        self._draw_zone_arrows()
        self._solid_geoms = [s.geometry for s in sol]
        self._solids_tree = index.tree if sol else None
        layer = floorplan_layer(fp, solids_list=sol)
        for role, item in (("door_gap", self.door_gaps_item), ("door", self.doors_item)):
            lines = [ln.xy for ln in layer.lines if ln.role == role]
            xy = (np.vstack([np.vstack([a, [np.nan, np.nan]]) for a in lines]) if lines
                  else np.zeros((0, 2)))
            item.setData(xy[:, 0], xy[:, 1])
        jambs = [m for m in layer.markers if m.role == "jamb"]
        self.jambs_item.setData([m.x for m in jambs], [m.y for m in jambs])
        named = [(d.midpoint, d.label, "door", 0.0) for d in fp.doors if d.label]
        first: dict[int, object] = {}  # each obstacle's first solid (one pass, not one each)
        for s in sol:
            if s.kind == "obstacle":
                first.setdefault(s.index, s.geometry)
        for i, o in enumerate(fp.obstacles):
            if o.label:
                g = [first[i]] if i in first else []
                if g:
                    c = g[0].representative_point()
                    x0, y0, x1, y1 = g[0].bounds
                    named.append(((c.x, c.y), o.label, "obstacle", x1 - x0))
        labels = self._labels(self.plan_labels, len(named), "#111111", None, (0.5, 0.5))
        for t in labels:
            # Names of the plan sit under the routes: a waypoint is never hidden by a door's
            # name.
            t.setZValue(1.5)
        self._obstacle_labels = []
        self._zone_labels = []
        self._door_labels: list[_Label] = []
        for t, (pos, text, kind, size_m) in zip(labels, named):
            st = STYLES["door_label" if kind == "door" else "obstacle_label"]
            t.setColor(QColor(st.ink))
            t.setFill(qbrush(st.fill))
            t.setPen(qpen(st.stroke, cosmetic=True))
            t.setAnchor((0.5, -0.3) if kind == "door" else (0.5, 0.5))
            t.setText(text)
            t.setPos(*pos)
            if kind == "obstacle":
                self._obstacle_labels.append((t, size_m, t.boundingRect().width()))
            else:
                self._door_labels.append(t)
        # Each zone's name and number, as the picture places it (app.scene.zone_layer).
        zst = STYLES["zone_label"]
        zlabels = self._labels(self.zone_labels, len(zones.labels), zst.ink, None, (0.5, 0.0))
        for t, lb in zip(zlabels, zones.labels):
            # Under the solids (over the zones and the band): a zone's name never hides a
            # wall or an obstacle, such as a pillar near the zone's top edge.
            t.setZValue(-0.5)
            t.setColor(QColor(lb.ink or zst.ink))
            t.setFill(qbrush(zst.fill))
            t.setText(lb.text)
            self._zone_labels.append((t, lb))
        self._fit_obstacle_labels()
        self._drawn.pop("violations", None)  # placed anew round the names shown now

    def _fit_obstacle_labels(self) -> None:
        """Name an obstacle only where its name fits across it on screen (no pile-ups),
        put each door's name by the door where it covers no other name: in the first row
        under it, else the second, else above it, else (zoomed far out) not at all; a
        zone's name goes under its top edge where the zone is tall enough, else in its
        middle."""
        px = self.px_m()
        taken = _Boxes(_BOX_CELL_PX * px)
        for t, size_m, text_px in getattr(self, "_obstacle_labels", []):
            t.setVisible(size_m / px >= 0.9 * text_px)
            if t.isVisible():
                taken.add(_plan_box(t, px))
        for t in getattr(self, "_door_labels", []):
            for anchor in _DOOR_LABEL_PLACES:
                t.setAnchor(anchor)
                box = _plan_box(t, px)
                if taken.free(box):
                    t.setVisible(True)
                    taken.add(box)
                    break
            else:
                t.setVisible(False)
        for t, lb in getattr(self, "_zone_labels", []):
            h = t.rect().height()
            if (lb.inside_m or 0.0) / px > 2 * h or lb.centre is None:
                t.setAnchor((0.5, -0.15))
                t.setPos(lb.x, lb.y)
            else:
                t.setAnchor((0.5, 0.5))
                t.setPos(*lb.centre)

    def _draw_zone_arrows(self) -> None:
        """The one-way arrows, spaced in screen pixels as the picture spaces them: drawn anew
        only when the zoom changed by more than a third."""
        px = self.px_m()
        was = self._zone_arrow_px
        if was is not None and 0.75 < px / was < 1.33:
            return
        self._zone_arrow_px = px
        fp = self.doc.project.floorplan
        marks = zone_layer([z for z in fp.zones if z.kind == "one_way"],
                           ZONE_ARROW_STEP_PX * px).markers if fp.zones else []
        self.zone_arrows_item.setData([m.x for m in marks], [m.y for m in marks],
                                      angle=[m.angle_rad for m in marks])

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

    def refresh_routes(self) -> None:
        """Redraw every route, the current one with its band, outlines and violations.

        Called on every drag step, so each part is redrawn only when what it shows changed
        (the other routes, labels, violations), and unchanged segments come from caches.
        """
        doc = self.doc
        cur = doc.route()
        self._set_route_colour(doc.current_route)
        self._draw_other_routes()
        pending = self._pending
        if pending != self._drawn.get("pending"):
            self._drawn["pending"] = pending
            self.pending_item.setData([pending[0]] if pending else [],
                                      [pending[1]] if pending else [])
        if cur is None:
            for it in (self.path_fwd, self.path_rev, self.chords_item, self.waypoints_item,
                       self.handles_item, self.handles_line, self.violations_item):
                it.setData([], [])
            self.band_item.setPath(QPainterPath())
            self._draw_outlines([], self.doc.project.chassis.footprint)
            self._labels(self.wp_labels, 0, BLACK, None, (0, 0))
            self._labels(self.violation_labels, 0, BLACK, None, (0, 0))
            self._samples = sample_segments([])
            self._drawn.pop("violations", None)
            return
        plan = doc.plan(cur.name)
        segs = list(plan.segments) if plan is not None else []
        self._samples = sample_segments(segs, cache=self._sample_cache)
        if len(self._sample_cache) > 4 * len(segs) + 64:  # forget segments dragged away
            live = {(g, 0.05) for g in segs}
            self._sample_cache = {k: v for k, v in self._sample_cache.items() if k in live}
        xy, _st, idx, dirs = self._samples
        self.path_fwd.setData(*_broken_line(xy, dirs, idx, 1))
        self.path_rev.setData(*_broken_line(xy, dirs, idx, -1))
        wx = np.array([w.x for w in cur.waypoints])
        wy = np.array([w.y for w in cur.waypoints])
        self.chords_item.setData(wx, wy)
        sel = np.arange(len(wx)) == self.selected
        self.waypoints_item.setData(wx, wy, brush=[_SELECTED_BRUSH if s else _WAYPOINT_BRUSH
                                                   for s in sel],
                                    size=np.where(sel, 2 * WAYPOINT_R_PX + 3, 2 * WAYPOINT_R_PX))
        labels = self._labels(self.wp_labels, len(wx), BLACK, None, (-0.35, 1.15))
        for k, t in enumerate(labels):
            _set_text(t, str(k + 1))
            t.setPos(wx[k], wy[k])
        self._draw_handles()
        self._draw_band_and_outlines(segs)
        self._draw_violations(cur.name)

    def _set_route_colour(self, k: int) -> None:
        """The current route in its colour from its place in the project, as the picture
        draws it (app.scene.route_style)."""
        if self._drawn.get("route_colour") == k:
            return
        self._drawn["route_colour"] = k
        self.path_fwd.setPen(qpen(route_style(max(k, 0), 1), cosmetic=True))
        self.path_rev.setPen(qpen(route_style(max(k, 0), -1), cosmetic=True))
        wp = qpen(route_style(max(k, 0), 1), cosmetic=True)
        wp.setWidthF(2.0)
        wp.setStyle(Qt.PenStyle.SolidLine)
        self.waypoints_item.setPen(wp)

    def _draw_other_routes(self) -> None:
        """Other routes: faint dash-dot paths so the user sees what else shares the floor."""
        doc = self.doc
        if not self.painted:
            # The first picture shows the route being edited; the others are planned and
            # drawn right after it (see _after_first_paint).
            self.others_item.setData([], [])
            self._drawn.pop("others", None)
            return
        others = [(r, doc.plan(r.name)) for i, r in enumerate(doc.project.routes)
                  if i != doc.current_route]
        # The key holds the objects themselves: compared by identity, never a reused id().
        key = [x for pair in others for x in pair]
        was = self._drawn.get("others")
        if was is not None and len(was) == len(key) and all(a is b for a, b in zip(was, key)):
            return  # dragging the current route leaves the others as they are
        self._drawn["others"] = key
        ox, oy = [], []
        for r, plan in others:
            if plan is None or not plan.segments:
                pts = np.array([[w.x, w.y] for w in r.waypoints])
            else:
                pts = sample_segments(plan.segments, 0.15)[0]
            ox += list(pts[:, 0]) + [np.nan]
            oy += list(pts[:, 1]) + [np.nan]
        self.others_item.setData(np.asarray(ox, float), np.asarray(oy, float))

    def _draw_handles(self) -> None:
        cur = self.doc.route()
        if cur is None:
            return
        L = HANDLE_PX * self.px_m()
        hx, hy, lx, ly, brushes = [], [], [], [], []
        for i, w in enumerate(cur.waypoints):
            if w.heading_deg is None and i != self.selected:
                continue
            h = math.radians(w.heading_deg if w.heading_deg is not None
                             else self._free_heading_deg(i))
            ex, ey = w.x + L * math.cos(h), w.y + L * math.sin(h)
            hx.append(ex)
            hy.append(ey)
            brushes.append(_FIXED_BRUSH if w.heading_deg is not None else _FREE_BRUSH)
            if w.heading_deg is not None:
                lx += [w.x, ex, np.nan]
                ly += [w.y, ey, np.nan]
        key = (hx, hy, lx, ly, [b is _FIXED_BRUSH for b in brushes])
        if key == self._drawn.get("handles"):
            return
        self._drawn["handles"] = key
        self.handles_item.setData(hx, hy, brush=brushes)
        self.handles_line.setData(np.asarray(lx, float), np.asarray(ly, float))

    def _free_heading_deg(self, i: int) -> float:
        """Heading the planner chose at waypoint ``i`` (or the chord direction)."""
        cur = self.doc.route()
        plan = self.doc.plan(cur.name) if cur is not None else None
        ch = getattr(plan, "chosen_headings", None) if plan is not None else None
        if ch and ch.get(i) is not None:
            return float(ch[i])
        wps = cur.waypoints
        j = i + 1 if i + 1 < len(wps) else i - 1
        a, b = (wps[i], wps[j]) if j > i else (wps[j], wps[i])
        return math.degrees(math.atan2(b.y - a.y, b.x - a.x))

    def _train(self, segs: list[Segment]) -> tuple[Any, Any]:
        """The current route's vehicle and, when it tows trailers, the check's trace of
        their headings along ``segs`` (else ``None``)."""
        cur = self.doc.route()
        if cur is None:
            return self.doc.project.chassis, None
        chassis = self.doc.vehicle(cur.name)
        if not getattr(chassis, "trailers", ()) or not segs:
            return chassis, None
        chk = self.doc.check(cur.name)
        trace = getattr(getattr(chk, "train", None), "trace", None)
        if trace is None or len(trace.segments) != len(segs):
            return chassis, None
        return chassis, trace

    def _draw_band_and_outlines(self, segs: list[Segment]) -> None:
        chassis, trace = self._train(segs)
        if self.show_band and segs:
            self.band_item.setPath(self._swept_path(segs, chassis, trace))
        else:
            self.band_item.setPath(QPainterPath())
        self._draw_outlines(segs if self.outline_spacing_m else [], chassis.footprint, chassis,
                            trace)

    def _polish(self) -> None:
        """The drag rested or ended: the band and outlines drawn antialiased again."""
        self.band_item.polish()
        for it in self._outline_items.values():
            it.polish()

    def _draw_outlines(self, segs: list[Segment], footprint: Sequence, chassis: Any = None,
                       trace: Any = None) -> None:
        """Footprint outlines every ``outline_spacing_m`` along each segment from its start
        (and at the route's end), one child item per segment kept by the segment's value: a
        drag step makes and repaints only the outlines of the segments that moved.

        A towing vehicle's trailers are outlined at the same stations, each at its own pose
        from the check's trace (kept by the trailers' headings where the segment starts,
        which is all that an edit earlier on the route changes for them)."""
        spacing = self.outline_spacing_m
        items: dict = self._outline_items
        trailers = tuple(getattr(chassis, "trailers", ()) or ()) if trace is not None else ()
        shapes = tuple(tuple(map(tuple, t.footprint)) for t in trailers)
        want = {}
        for k, seg in enumerate(segs):
            if seg.length_m <= 0.0:
                continue  # a turn on the spot: the next segment's first outline shows it
            state = (tuple(trace.traces[k].th[0].tolist()), shapes, k) if trailers else None
            want[(seg, k == len(segs) - 1, spacing, tuple(map(tuple, footprint)), state)] = \
                (k, seg)
        for key in [key for key in items if key not in want]:
            it = items.pop(key)
            it.hide()
            self._outline_pool.append(it)
        for key, (k, seg) in want.items():
            if key in items:
                continue
            local = np.arange(0.0, seg.length_m, spacing)
            if key[1]:
                local = np.append(local, seg.length_m)
            it = self._outline_pool.pop() if self._outline_pool else \
                _RoughWhileDragging(self.band_item._rough, self.outlines_item)
            it.setPen(self.outlines_item.pen())
            path = footprint_outlines(footprint, seg.poses_at(local))
            if trailers:
                # The trace's progress on a line or arc is its length along the segment.
                poses = trace.poses(k, local * (trace.amount(k) / seg.length_m))
                for j, t in enumerate(trailers):
                    path.addPath(footprint_outlines(t.footprint, poses[:, j + 1]))
            it.setPath(path)
            it.show()
            items[key] = it

    def _swept_path(self, segs: list[Segment], chassis: Any = None, trace: Any = None
                    ) -> QPainterPath:
        """The swept band as one winding-filled path of per-segment pieces.

        Pieces are oriented alike (exteriors counter-clockwise), so the non-zero winding rule
        fills their union once without computing it; pieces of unchanged segments come from
        a cache, so a drag re-sweeps only the segments that moved.
        """
        from kinematics.check.sweep import swept_parts

        chassis = chassis if chassis is not None else self.doc.project.chassis
        fp = chassis.footprint
        # A train's band holds its trailers' pieces too (the check's parts per segment).
        train_key = tuple((t.hitch_x_m, t.drawbar_m, tuple(map(tuple, t.footprint)))
                          for t in getattr(chassis, "trailers", ()) or ()) \
            if trace is not None else ()
        if self._sweep_cache_key != (fp, train_key):
            self._sweep_cache = {}
            self._sweep_cache_key = (fp, train_key)
        old = self._sweep_cache
        new: dict = {}
        path = QPainterPath()
        checked = None
        for k, seg in enumerate(segs):
            if trace is not None:
                seg_key: Any = (seg, tuple(trace.traces[k].th[0].tolist()))
            else:
                seg_key = seg
            piece = old.get(seg_key)
            if piece is None:
                if checked is None:
                    # The check swept these segments already; ask it only on a cache miss.
                    # Its parts are filled as they are: their union is never made here.
                    cur = self.doc.route()
                    chk = self.doc.check(cur.name) if cur is not None else None
                    checked = getattr(chk, "piece_parts", ()) or ()
                raw = checked[k] if len(checked) == len(segs) else swept_parts(fp, seg)
                piece = polygons_path(shapely.orient_polygons(raw))
            new[seg_key] = piece
            path.addPath(piece)
        self._sweep_cache = new
        path.setFillRule(Qt.FillRule.WindingFill)
        return path

    def _draw_violations(self, name: str) -> None:
        chk = self.doc.check(name)
        vs = list(getattr(chk, "violations", []) or []) if chk is not None else []
        # A drag step that leaves the violations as they were (the usual case) and the same
        # zoom redraws nothing here.
        (vx0, vx1), (vy0, vy1) = self.view.viewRange()
        key = (tuple((v.kind, v.x, v.y, v.amount_m) for v in vs), self.px_m(),
               (vx0, vx1, vy0, vy1))
        if key == self._drawn.get("violations"):
            return
        self._drawn["violations"] = key
        layer = violation_layer({name: chk})
        self.violations_item.setData([m.x for m in layer.markers], [m.y for m in layer.markers],
                                     symbol=[m.shape for m in layer.markers])
        # Labels the worst first, as the picture places them.
        shown = layer.labels[:MAX_LABELS]
        lst = STYLES["violation_label"]
        labels = self._labels(self.violation_labels, len(shown), lst.ink,
                              None, _LABEL_PLACES[0])
        px = self.px_m()
        # What a label must not cover, as plan boxes (x0, y0, x1, y1): every violation marker,
        # the names of doors and obstacles shown, and the labels already placed.
        half = 0.5 * MARKER_PX * px
        taken = _Boxes(_BOX_CELL_PX * px)
        for v in vs:
            taken.add((v.x - half, v.y - half, v.x + half, v.y + half))
        names = _Boxes(_BOX_CELL_PX * px)
        for n in self.plan_labels:
            if n.isVisible():
                names.add(_plan_box(n, px), n)
        for t, v in zip(labels, shown):
            t.setOpacity(self.band_item.opacity())  # greyed with the band while stale
            t.setFill(qbrush(lst.fill))
            t.setPen(qpen(lst.stroke, cosmetic=True))
            _set_text(t, v.text)
            t.setPos(v.x, v.y)
            # The first of four places round the marker that covers nothing above and lies
            # inside the view; else the first free one slid inside the view (at the edge of
            # the plot a label is never cut off); else the same over the plan's names (a
            # violation matters more than a door's name, which shows again zoomed in). A
            # label with no free place is hidden (its marker stays; the results list it).
            inset = 3 * px
            view = (vx0 + inset, vy0 + inset, vx1 - inset, vy1 - inset)
            seen = vx0 <= v.x <= vx1 and vy0 <= v.y <= vy1  # else nothing to keep in view
            places = [(a, False, True) for a in _LABEL_PLACES]
            places += [(a, True, True) for a in _LABEL_PLACES] if seen else []
            places += [(a, slide, False) for a, slide, _ in places]
            for anchor, slide, avoid_names in places:
                t.setAnchor(anchor)
                t.setPos(v.x, v.y)
                box = _plan_box(t, px)
                if slide:
                    dx = max(0.0, view[0] - box[0]) - max(0.0, box[2] - view[2])
                    dy = max(0.0, view[1] - box[1]) - max(0.0, box[3] - view[3])
                    t.setPos(v.x + dx, v.y + dy)
                    box = (box[0] + dx, box[1] + dy, box[2] + dx, box[3] + dy)
                inside = not seen or (view[0] <= box[0] and box[2] <= view[2]
                                      and view[1] <= box[1] and box[3] <= view[3])
                if inside and taken.free(box) and (not avoid_names or names.free(box)):
                    t.setVisible(True)
                    taken.add(box)
                    if not avoid_names:  # the names it would cover give way
                        for n in names.hits(box):
                            n.setVisible(False)
                            names.remove(n)
                    break
            else:
                t.setVisible(False)

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
