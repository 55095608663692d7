"""The plots of one schedule: speed, every wheel's rate and (for a train) hitch angles.

Owns :class:`SchedulePlots`, the pyqtgraph plots that the window's panel shows and that
:func:`app.plots.draw_plots` renders offscreen for pictures and the report (one plotting
path): the curves, each chassis limit as a dashed line with its name, each segment's speed cap
dotted and named by the limit that sets it, and the placement that keeps those names off each
other, off the legends and off the limit lines.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt, QTimer
from PySide6.QtWidgets import (
    QWidget,
)

from .palette import BLUE, GREEN, ORANGE, PURPLE, VERMILLION
from .scene import FAINT_INK

#: Line styles per wheel, so wheels differ by dash as well as by colour.
WHEEL_STYLES = (Qt.PenStyle.SolidLine, Qt.PenStyle.DashLine, Qt.PenStyle.DotLine,
                Qt.PenStyle.DashDotLine)
WHEEL_COLOURS = (BLUE, ORANGE, PURPLE, GREEN)
#: Words for the limit that binds, by the profile's key.
LIMIT_WORDS = {"max_speed_mps": "max speed", "slow_zone": "slow zone",
               "max_wheel_rate_radps": "max wheel rate",
               "max_lateral_accel_mps2": "lateral-accel cap", "max_yaw_rate_dps": "yaw-rate cap",
               "max_wheel_accel_radps2": "wheel-accel cap", "max_yaw_accel_dps2": "yaw-accel cap",
               "max_steer_rate_dps": "steer-rate cap"}

HEADROOM = 1.65  # y range above the largest value: room for the legend and limit labels
NEG_FOOTROOM = 1.75  # below the most negative rate: room for the lower limit's label


def _limit_line(plot: pg.PlotItem, y: float, text: str) -> pg.InfiniteLine:
    # The label sits just above a positive limit (in the headroom) and below a negative one,
    # at the right end, so it never covers the curve it limits.
    above = y >= 0
    line = pg.InfiniteLine(pos=y, angle=0, movable=False,
                           pen=pg.mkPen(VERMILLION, width=1.5, style=Qt.PenStyle.DashLine),
                           label=text,
                           labelOpts={"position": 0.99, "color": "#7A2E00",
                                      "fill": (255, 255, 255, 220),
                                      "anchors": [(1, 1), (1, 1)] if above
                                      else [(1, 0), (1, 0)]})
    plot.addItem(line)
    return line




def _style_plot(plot: pg.PlotItem, label: str, unit: str) -> None:
    plot.hideButtons()
    plot.showGrid(x=True, y=True, alpha=0.25)
    plot.setLabel("left", label, units=unit)
    plot.getAxis("left").enableAutoSIPrefix(False)
    plot.getAxis("bottom").enableAutoSIPrefix(False)
    for ax in ("left", "bottom"):
        plot.getAxis(ax).setPen(pg.mkPen("#555555"))
        plot.getAxis(ax).setTextPen(pg.mkPen("#222222"))


class SchedulePlots(pg.GraphicsLayoutWidget):
    """The speed, wheel-rate and (for a train) hitch-angle plots of one schedule.

    Attributes
    ----------
    speed_plot, rate_plot, hitch_plot : pyqtgraph.PlotItem
    limit_lines : list of pyqtgraph.InfiniteLine
        The dashed limit lines now shown (their labels name the limits).
    cap_labels : list of str
        The binding-limit names written over the segment caps.
    """

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setBackground("w")
        self.limit_lines: list[pg.InfiniteLine] = []
        self.cap_labels: list[str] = []
        self.cap_items: list[pg.TextItem] = []
        self.speed_plot = self.addPlot(row=0, col=0)
        self.rate_plot = self.addPlot(row=1, col=0)
        self.rate_plot.setXLink(self.speed_plot)
        # A train's hitch angles, each trailer to the body ahead; shown only for trains.
        self.hitch_plot = self.addPlot(row=2, col=0)
        self.hitch_plot.setXLink(self.speed_plot)
        for plot, label, unit in ((self.speed_plot, "speed", "m/s"),
                                  (self.rate_plot, "wheel rate", "rad/s"),
                                  (self.hitch_plot, "hitch angle", "deg")):
            _style_plot(plot, label, unit)
        self.hitch_legend = self.hitch_plot.addLegend(offset=(8, 4), labelTextColor="#222222",
                                                      brush=(255, 255, 255, 90), colCount=4)
        self.hitch_plot.hide()
        self.speed_legend = self.speed_plot.addLegend(offset=(8, 4), labelTextColor="#222222",
                                                      brush=(255, 255, 255, 90), colCount=4)
        self.rate_legend = self.rate_plot.addLegend(offset=(8, 4), labelTextColor="#222222",
                                                    brush=(255, 255, 255, 90), colCount=4)
        # Legends at the top left, in the headroom above the curves, and the limit labels at
        # the right end of their lines: side by side they share a narrow plot's headroom
        # (centred, a legend ran into the limit's name in the window's side-by-side plots).
        for legend in (self.speed_legend, self.rate_legend):
            legend.anchor(itemPos=(0.0, 0.0), parentPos=(0.0, 0.0), offset=(8, 2))
        vb = self.speed_plot.getViewBox()
        vb.sigRangeChanged.connect(self.place_cap_labels)
        vb.sigResized.connect(self.place_cap_labels)
        for plot in (self.rate_plot, self.hitch_plot):
            plot.getViewBox().sigRangeChanged.connect(self.keep_limit_labels_inside)
            plot.getViewBox().sigResized.connect(self.keep_limit_labels_inside)
        # Names placed again once a new layout has settled: a view's resize signal comes
        # while the labels still map through the old geometry (a train's hitch plot shown
        # late left its limit's name cut at the plot's top).
        self._relabel = QTimer(self)
        self._relabel.setSingleShot(True)
        self._relabel.setInterval(0)
        self._relabel.timeout.connect(self.place_cap_labels)
        for plot in (self.speed_plot, self.rate_plot, self.hitch_plot):
            plot.getViewBox().sigResized.connect(self._relabel.start)
            plot.getViewBox().sigRangeChanged.connect(self._relabel.start)
        self.side_by_side = False
        self._ranges: list[tuple[pg.PlotItem, tuple[float, float], tuple[float, float] | None]] = []
        self._room: dict[int, float] = {}

    def fit(self) -> None:
        """Back to the ranges the last drawing chose (the whole route, room for the labels)."""
        for plot, yr, xr in self._ranges:
            plot.setYRange(*yr, padding=0)
            if xr is not None:
                plot.setXRange(*xr, padding=0.01)

    def set_side_by_side(self, side: bool) -> None:
        if side == self.side_by_side:
            return
        self.side_by_side = side
        layout = self.ci
        # Side by side, a train's hitch angles take a third column rather than a row under
        # the speed: a short dock split into two rows left each plot too low to read.
        layout.removeItem(self.rate_plot)
        layout.removeItem(self.hitch_plot)
        if side:
            layout.addItem(self.rate_plot, row=0, col=1)
            layout.addItem(self.hitch_plot, row=0, col=2)
        else:
            layout.addItem(self.rate_plot, row=1, col=0)
            layout.addItem(self.hitch_plot, row=2, col=0)

    def clear_plots(self) -> None:
        for plot in (self.speed_plot, self.rate_plot, self.hitch_plot):
            plot.clear()
        for legend in (self.speed_legend, self.rate_legend, self.hitch_legend):
            legend.clear()
        self.limit_lines = []
        self.cap_labels = []
        self.cap_items = []
        self._ranges = []
        self._room: dict[int, float] = {}  # a plot's top raised to hold legend and name

    def set_x_axis_label(self, x_axis: str) -> None:
        xlabel = ("time", "s") if x_axis == "time" else ("distance along the route", "m")
        for plot in (self.speed_plot, self.rate_plot, self.hitch_plot):
            plot.setLabel("bottom", xlabel[0], units=xlabel[1])

    def _set_range(self, plot: pg.PlotItem, y: tuple[float, float],
                   x: tuple[float, float] | None = None) -> None:
        """Set ``plot``'s range and keep it for :meth:`fit`."""
        self._ranges.append((plot, y, x))
        plot.setYRange(*y, padding=0)
        if x is not None:
            plot.setXRange(*x, padding=0.01)

    def show_schedule(self, s: Any, x_axis: str = "time",
                      hitch_limits: dict[str, float] | None = None) -> dict:
        """Draw schedule ``s`` against ``x_axis`` (``"time"`` or ``"distance"``);
        ``hitch_limits`` (jackknife limit in degrees by trailer name) adds a train's limit
        lines. Returns the series drawn (:func:`kinematics.timing.schedule.schedule_series`)."""
        from kinematics.timing.schedule import schedule_series

        self.clear_plots()
        self.set_x_axis_label(x_axis)
        series = schedule_series(s)
        xs = series["t_s"] if x_axis == "time" else series["station_m"]
        lim = series["limits"]
        self.speed_plot.plot(xs, series["v_mps"], pen=pg.mkPen(BLUE, width=2), name="speed")
        self._draw_caps(xs, series, s)
        if lim["max_speed_mps"] is not None:
            self.limit_lines.append(_limit_line(
                self.speed_plot, lim["max_speed_mps"],
                f"max speed {lim['max_speed_mps']:.2f} m/s"))

        rates = series["rate_radps"]
        for k, (name, a) in enumerate(rates.items()):
            self.rate_plot.plot(xs, a, name=name.replace("_", " "),
                                pen=pg.mkPen(WHEEL_COLOURS[k % 4], width=2,
                                             style=WHEEL_STYLES[k % 4]))
        wmax = lim["max_wheel_rate_radps"]
        if wmax is not None:
            self.limit_lines.append(_limit_line(self.rate_plot, wmax,
                                                f"max wheel rate {wmax:.1f} rad/s"))
            if any(np.nanmin(a) < -1e-9 for a in rates.values() if a.size):
                self.limit_lines.append(_limit_line(self.rate_plot, -wmax,
                                                    f"max wheel rate -{wmax:.1f} rad/s"))
        vtop = max(float(np.nanmax(series["v_mps"])) if xs.size else 0.0,
                   lim["max_speed_mps"] or 0.0) or 1.0
        self._set_range(self.speed_plot, (0.0, vtop * HEADROOM))
        hi = max([float(np.nanmax(np.abs(a))) for a in rates.values() if a.size]
                 + [wmax or 0.0]) or 1.0
        neg = any(np.nanmin(a) < -1e-9 for a in rates.values() if a.size)
        if neg:
            # Same share of headroom above the top limit as the speed plot has (its legend and
            # label live there), and just room for the lower limit's label below.
            lo = -hi * NEG_FOOTROOM
            share = (HEADROOM - 1.0) / HEADROOM
            top = (hi - share * lo) / (1.0 - share)
            self._set_range(self.rate_plot, (lo, top))
        else:
            self._set_range(self.rate_plot, (0.0, hi * HEADROOM))
        if xs.size:
            self._set_range(self.speed_plot, self._ranges[0][1],
                            (float(xs.min()), float(xs.max())))
        self._draw_hitches(xs, series, hitch_limits or {})
        self.place_cap_labels()
        return series

    def _draw_hitches(self, xs: np.ndarray, series: dict, limits: dict[str, float]) -> None:
        """Each trailer's hitch angle, with its jackknife limit (trains only)."""
        hitch = series.get("hitch_deg") or {}
        self.hitch_plot.setVisible(bool(hitch))
        if not hitch:
            return
        top = 0.0
        for k, (name, a) in enumerate(hitch.items()):
            self.hitch_plot.plot(xs, a, name=name, pen=pg.mkPen(
                WHEEL_COLOURS[k % 4], width=2, style=WHEEL_STYLES[k % 4]))
            top = max(top, float(np.nanmax(np.abs(a))) if a.size else 0.0)
        if limits:
            # The tightest limit (labels of several would sit on top of one another).
            who, lim = min(limits.items(), key=lambda kv: kv[1])
            self.limit_lines.append(_limit_line(self.hitch_plot, lim,
                                                f"jackknife limit {lim:g} deg ({who})"))
            self.limit_lines.append(_limit_line(self.hitch_plot, -lim,
                                                f"jackknife limit -{lim:g} deg"))
            top = max(top, lim)
        self._set_range(self.hitch_plot, (-top * HEADROOM, top * HEADROOM))

    def legend_rect(self, vb: pg.ViewBox) -> QRectF | None:
        """The scene box of the legend of the plot whose view is ``vb`` (``None`` if empty)."""
        for plot, legend in ((self.speed_plot, self.speed_legend),
                             (self.rate_plot, self.rate_legend),
                             (self.hitch_plot, self.hitch_legend)):
            if plot.getViewBox() is vb:
                # What the legend shows (its samples and names), not its padded box, which
                # in a short plot reaches past the limit line under it.
                rects = [it.sceneBoundingRect() for pair in legend.items for it in pair]
                if not rects:
                    return None
                r = rects[0]
                for o in rects[1:]:
                    r = r.united(o)
                return r
        return None

    @staticmethod
    def limit_label_rect(line: pg.InfiniteLine, anchors: list | None = None) -> QRectF:
        """Where ``line``'s name lies in the scene with ``anchors`` (default: its own), from
        the view's mapping now (the label's own position catches up only later)."""
        vb = line.getViewBox()
        box = vb.sceneBoundingRect()
        lab = line.label
        size = lab.sceneBoundingRect()
        w, h = size.width(), size.height()
        y = vb.mapViewToScene(QPointF(0.0, float(line.value()))).y()
        right = box.left() + lab.orthoPos * box.width()
        above = (anchors or lab.anchors)[0][1] == 1  # the name's bottom on the line
        return QRectF(right - w, y - h if above else y, w, h)

    def make_room(self, plot: pg.PlotItem) -> bool:
        """Raise the top of ``plot``'s range, as drawn (not zoomed by the user), until its
        legend and the top limit's name fit one above the other in the headroom where the
        plot is too narrow to hold them side by side; True if the range changed."""
        vb = plot.getViewBox()
        legend = self.legend_rect(vb)
        lines = [ln for ln in self.limit_lines if ln.getViewBox() is vb and ln.value() >= 0]
        base = [yr for pl, yr, _xr in self._ranges if pl is plot]
        if legend is None or not lines or not base or not plot.isVisible():
            return False
        y0, y1 = vb.viewRange()[1]
        if abs(y0 - base[-1][0]) > 1e-9 or y1 < base[-1][1] - 1e-9 or \
                y1 > self._room.get(id(plot), base[-1][1]) + 1e-9:
            return False  # the user's zoom, left as it is
        line = max(lines, key=lambda ln: float(ln.value()))
        lab = self.limit_label_rect(line, [(1, 1), (1, 1)])
        if lab.left() >= legend.right():
            return False  # side by side they fit
        box = vb.sceneBoundingRect()
        need = legend.bottom() - box.top() + lab.height() + 2.0
        H = box.height()
        v = float(line.value())
        if H <= need + 1.0 or (y1 - v) * H / (y1 - y0) >= need - 0.5:
            return False
        top = (v * H - need * y0) / (H - need)
        if top <= y1:
            return False
        self._room[id(plot)] = top
        plot.setYRange(y0, top, padding=0)
        return True

    def keep_limit_labels_inside(self, *_args) -> None:
        """A limit's name sits on its own side of its line (above a positive limit, below a
        negative one) unless it would be cut at the plot's edge there or cover the plot's
        legend; then on the other side, where that is free."""
        for plot in (self.speed_plot, self.rate_plot, self.hitch_plot):
            if self.make_room(plot):
                return  # the range change placed the names again
        for line in self.limit_lines:
            vb = line.getViewBox()
            if vb is None:
                continue
            box = vb.sceneBoundingRect()
            legend = self.legend_rect(vb)
            above = line.value() >= 0
            sides = ([(1, 1), (1, 1)], [(1, 0), (1, 0)])[:: 1 if above else -1]
            # A few pixels of the name's box may pass the edge: its text has padding round it.
            edge = box.adjusted(0, -4, 0, 4)
            inside = [a for a in sides if edge.top() <= self.limit_label_rect(line, a).top()
                      and self.limit_label_rect(line, a).bottom() <= edge.bottom()]
            free = [a for a in inside if legend is None
                    or not self.limit_label_rect(line, a).intersects(legend)]
            choice = (free or inside or sides[-1:])[0]
            lab = line.label
            lab.anchors = choice
            lab.updatePosition()
            lab.updateTransform(force=True)

    def place_cap_labels(self, *_args) -> None:
        """Put each cap's name above its dotted line, else below it, where it covers no other
        name (a cap label, the limit lines' labels, the legend) and crosses no limit line; a
        name with no free place is hidden (its dotted line stays). Redone when the view or
        its size changes."""
        self.keep_limit_labels_inside()
        vb = self.speed_plot.getViewBox()
        box = vb.sceneBoundingRect()
        taken = []
        for line in self.limit_lines:
            if line.getViewBox() is vb:
                taken.append(self.limit_label_rect(line))
                # The dashed line itself, a few pixels thick: a name across it reads badly.
                y = vb.mapViewToScene(QPointF(0.0, float(line.value()))).y()
                taken.append(QRectF(box.left(), y - 1.5, box.width(), 3.0))
        legend = self.legend_rect(vb)
        if legend is not None:
            taken.append(legend)
        for t in self.cap_items:
            t.show()
            for anchor in ((0.5, 1.0), (0.5, 0.0)):
                t.setAnchor(anchor)
                t.updateTransform(force=True)
                r = t.sceneBoundingRect()
                if not any(r.intersects(o) for o in taken):
                    taken.append(r)
                    break
            else:
                t.hide()

    def _draw_caps(self, xs: np.ndarray, series: dict, s: Any) -> None:
        """Each segment's speed cap, dotted, named by the limit that sets it."""
        seg = series["segment"]
        cap = series["limits"]["speed_cap_mps"]
        vmax = series["limits"]["max_speed_mps"]
        bx, by = [], []
        runs: list[list] = []  # [x0, x1, cap, word, last segment]: neighbours with one cap
        for i in np.unique(seg):
            m = seg == i
            c = cap[m]
            if not c.size or not np.all(np.isfinite(c)):
                continue
            if vmax is not None and float(c[0]) >= vmax * 0.999:
                continue
            x0, x1 = float(xs[m].min()), float(xs[m].max())
            if x1 <= x0:
                continue
            bx += [x0, x1, math.nan]
            by += [float(c[0]), float(c[0]), math.nan]
            key = s.profile.cap_binding[int(i)]
            word = LIMIT_WORDS.get(key, key)
            last = runs[-1] if runs else None
            # A CC turn's clothoids and arc often share one cap: label the run once.
            if last is not None and last[3] == word and last[4] == int(i) - 1 and \
                    abs(last[2] - float(c[0])) <= 1e-6 * max(1.0, last[2]):
                last[1], last[4] = x1, int(i)
            else:
                runs.append([x0, x1, float(c[0]), word, int(i)])
        for x0, x1, c0, word, _ in runs:
            self.cap_labels.append(word)
            t = pg.TextItem(word, color=FAINT_INK, anchor=(0.5, 1.0))
            t.setPos((x0 + x1) / 2, c0)
            self.speed_plot.addItem(t)
            self.cap_items.append(t)
        if bx:
            self.speed_plot.plot(np.array(bx), np.array(by), connect="finite",
                                 pen=pg.mkPen(FAINT_INK, width=1.3, style=Qt.PenStyle.DotLine),
                                 name="segment cap")

    def contents(self) -> dict:
        """What the plots show, for tests and comparisons: ``"curves"`` (plot name -> list of
        ``(curve name, x, y)``) and ``"limits"`` (list of ``(plot name, y, label)``)."""
        plots = {"speed": self.speed_plot, "rate": self.rate_plot, "hitch": self.hitch_plot}
        curves = {k: [(c.name(), *c.getData()) for c in p.listDataItems()]
                  for k, p in plots.items()}
        which = {id(p.getViewBox()): k for k, p in plots.items()}
        limits = [(which.get(id(ln.getViewBox())), float(ln.value()), ln.label.format)
                  for ln in self.limit_lines]
        return {"curves": curves, "limits": limits}
