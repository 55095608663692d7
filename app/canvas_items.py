"""The canvas's graphics items and drawing helpers (no document, no view).

Owns what :mod:`app.canvas` and its drawing parts place on the plot: painter paths of shapely
polygons and footprint outlines, sampled route poses, constant-pixel markers (:class:`_Markers`)
and labels (:class:`_Label`), the plan-box grid that keeps labels apart (:class:`_Boxes`), the
band item painted rough during a drag, and the canvas's pixel sizes. Styles come from
:mod:`app.scene` through :mod:`app.qstyle`; nothing here reads the Document.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
import pyqtgraph as pg
import shapely
from pyqtgraph.graphicsItems.ScatterPlotItem import Symbols
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QImage,
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
)

from .palette import ORANGE
from .qstyle import marker_path, pivot_paths, qbrush
from .scene import (
    STYLES,
    VIOLATION_R_PX,
    sample_segments,  # noqa: F401 - the canvas's old import place
)

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


class _ViewCachedPath(QGraphicsPathItem):
    """A path item that repaints from a picture of its last full paint while the view and
    the path are unchanged (the floor plan's hatch: a 20,000-edge path filled with a
    pattern brush on every repaint cost most of a drag step's paint on a big plan).

    Qt's own item caches paint into a pixmap placed at the item's bounding box, which lays a
    pattern brush at another phase than a paint on the viewport; this picture is the whole
    viewport, painted with the viewport painter's own transform, so its pixels are the ones
    a direct paint lays, and a repaint of part of the view copies that part."""

    def __init__(self, parent: QGraphicsItem | None = None) -> None:
        super().__init__(parent)
        self._picture: QImage | None = None
        self._picture_key: tuple | None = None

    def setPath(self, path: QPainterPath) -> None:  # noqa: N802 - Qt's name
        self._picture_key = None
        super().setPath(path)

    def setBrush(self, brush: QBrush) -> None:  # noqa: N802 - Qt's name
        self._picture_key = None
        super().setBrush(brush)

    def setPen(self, pen: QPen) -> None:  # noqa: N802 - Qt's name
        self._picture_key = None
        super().setPen(pen)

    def paint(self, painter: QPainter, option, widget=None) -> None:  # noqa: D102 - Qt's
        dev = painter.device()
        tf = painter.deviceTransform()
        ratio = dev.devicePixelRatioF() if hasattr(dev, "devicePixelRatioF") else 1.0
        key = (tf.m11(), tf.m12(), tf.m21(), tf.m22(), tf.dx(), tf.dy(), dev.width(),
               dev.height(), ratio, int(painter.renderHints().value), self.opacity())
        if self._picture is None or key != self._picture_key:
            img = QImage(max(1, round(dev.width() * ratio)), max(1, round(dev.height() * ratio)),
                         QImage.Format.Format_ARGB32_Premultiplied)
            img.fill(0)
            p = QPainter(img)
            p.setRenderHints(painter.renderHints())
            p.setTransform(tf)
            super().paint(p, option, widget)
            p.end()
            img.setDevicePixelRatio(ratio)
            self._picture, self._picture_key = img, key
        painter.save()
        painter.resetTransform()
        painter.drawImage(QPointF(0.0, 0.0), self._picture)
        painter.restore()


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
        elif symbol.startswith("pivot_"):  # "pivot_ring+", "pivot_head-": a turn on the spot
            ring, head = pivot_paths(1.0 if symbol.endswith("+") else -1.0, size_px / 2.0)
            path = ring if symbol.startswith("pivot_ring") else head
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


#: Where a door's label may sit, as the anchor of its box on the door's middle: just below the
#: door line, else a row further down (neighbouring doors' labels then alternate rows), else
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
