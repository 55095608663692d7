"""Speed and wheel-rate plots of the current route, over time or over distance.

Two linked pyqtgraph plots: the speed of the reference point, and every wheel's rate. Each
limit of the chassis is a dashed horizontal line labelled with its name (max speed, max wheel
rate), and each segment's own speed cap is drawn dotted and named by the limit that sets it
(lateral-accel cap, yaw-rate cap, max wheel rate), so a user sees at a glance which limit
binds where. Data from :func:`kinematics.timing.schedule.schedule_series`.

Wheels differ by line style as well as colour (Okabe-Ito palette, Okabe & Ito 2008).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt, QTimer
from PySide6.QtWidgets import (
    QButtonGroup,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QRadioButton,
    QSizePolicy,
    QVBoxLayout,
    QWidget,
)

from .qstyle import MESSAGE_STYLE
from .render import BLUE, FAINT_INK, LIMIT_WORDS, VERMILLION, WHEEL_COLOURS, WHEEL_STYLES

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


class PlotsPanel(QWidget):
    """Speed and wheel rates of the document's current route.

    Attributes
    ----------
    x_axis : str
        ``"time"`` or ``"distance"``.
    limit_lines : list of pyqtgraph.InfiniteLine
        The dashed limit lines now shown (their labels name the limits).
    cap_labels : list of str
        The binding-limit names written over the segment caps.
    """

    def __init__(self, doc: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        self.x_axis = "time"
        self.limit_lines: list[pg.InfiniteLine] = []
        self.cap_labels: list[str] = []
        self.cap_items: list[pg.TextItem] = []
        self._extra_items: list[tuple[pg.PlotItem, Any]] = []

        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        bar = QHBoxLayout()
        bar.addWidget(QLabel("Plot against:"))
        self.by_time = QRadioButton("time (s)")
        self.by_distance = QRadioButton("distance (m)")
        self.by_time.setChecked(True)
        group = QButtonGroup(self)
        group.addButton(self.by_time)
        group.addButton(self.by_distance)
        self.by_time.toggled.connect(self._axis_toggled)
        bar.addWidget(self.by_time)
        bar.addWidget(self.by_distance)
        # The plots' own fit control (pyqtgraph's "A" buttons are hidden: that letter is the
        # add-waypoints key on the plan).
        self.fit_button = QPushButton("Fit")
        self.fit_button.setToolTip("Show the whole route in both plots again")
        self.fit_button.clicked.connect(self.fit)
        self.fit_button.setSizePolicy(QSizePolicy.Policy.Maximum, QSizePolicy.Policy.Fixed)
        bar.addWidget(self.fit_button)
        bar.addStretch(1)
        self.status = QLabel()
        self.status.setStyleSheet(f"color: {FAINT_INK};")
        bar.addWidget(self.status)
        lay.addLayout(bar)
        # Shown while the chassis form holds a refused value: the plots are greyed under it.
        self.stale_label = QLabel()
        self.stale_label.setWordWrap(True)
        self.stale_label.setStyleSheet(MESSAGE_STYLE)
        self.stale_label.hide()
        lay.addWidget(self.stale_label)

        self.graphics = pg.GraphicsLayoutWidget()
        self.graphics.setBackground("w")
        self.speed_plot = self.graphics.addPlot(row=0, col=0)
        self.rate_plot = self.graphics.addPlot(row=1, col=0)
        self.rate_plot.setXLink(self.speed_plot)
        # A train's hitch angles, each trailer to the body ahead; shown only for trains.
        self.hitch_plot = self.graphics.addPlot(row=2, col=0)
        self.hitch_plot.setXLink(self.speed_plot)
        self.hitch_plot.showGrid(x=True, y=True, alpha=0.25)
        self.hitch_plot.setLabel("left", "hitch angle", units="deg")
        self.hitch_plot.getAxis("left").enableAutoSIPrefix(False)
        self.hitch_plot.getAxis("bottom").enableAutoSIPrefix(False)
        for ax in ("left", "bottom"):
            self.hitch_plot.getAxis(ax).setPen(pg.mkPen("#555555"))
            self.hitch_plot.getAxis(ax).setTextPen(pg.mkPen("#222222"))
        self.hitch_legend = self.hitch_plot.addLegend(offset=(8, 4), labelTextColor="#222222",
                                                      brush=(255, 255, 255, 90), colCount=4)
        self.hitch_plot.hide()
        for plot in (self.speed_plot, self.rate_plot, self.hitch_plot):
            plot.hideButtons()
        for plot, label, unit in ((self.speed_plot, "speed", "m/s"),
                                  (self.rate_plot, "wheel rate", "rad/s")):
            plot.showGrid(x=True, y=True, alpha=0.25)
            plot.setLabel("left", label, units=unit)
            plot.getAxis("left").enableAutoSIPrefix(False)
            plot.getAxis("bottom").enableAutoSIPrefix(False)
            for ax in ("left", "bottom"):
                plot.getAxis(ax).setPen(pg.mkPen("#555555"))
                plot.getAxis(ax).setTextPen(pg.mkPen("#222222"))
        self.speed_legend = self.speed_plot.addLegend(offset=(8, 4), labelTextColor="#222222",
                                                      brush=(255, 255, 255, 90), colCount=4)
        self.rate_legend = self.rate_plot.addLegend(offset=(8, 4), labelTextColor="#222222",
                                                    brush=(255, 255, 255, 90), colCount=4)
        # Legends at the top centre, in the headroom above the curves and left of the limit
        # labels, so they cover no data.
        for legend in (self.speed_legend, self.rate_legend):
            legend.anchor(itemPos=(0.5, 0.0), parentPos=(0.5, 0.0), offset=(0, 2))
        lay.addWidget(self.graphics, 1)
        vb = self.speed_plot.getViewBox()
        vb.sigRangeChanged.connect(self.place_cap_labels)
        vb.sigResized.connect(self.place_cap_labels)
        self.side_by_side = False

        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(0)  # coalesce bursts of signals into one redraw
        self._timer.timeout.connect(self.refresh)
        for sig in ("resultsChanged", "projectReplaced"):
            getattr(doc, sig).connect(self._timer.start)
        doc.currentRouteChanged.connect(lambda _i: self._timer.start())
        doc.staleChanged.connect(self.set_stale)
        self._ranges: list[tuple[pg.PlotItem, tuple[float, float], tuple[float, float] | None]] = []
        self.refresh()
        self.set_stale(doc.stale_reason)

    STALE_OPACITY = 0.3

    @property
    def stale(self) -> bool:
        """True while the curves are of an older chassis than the form shows."""
        return self.graphics.ci.opacity() < 1.0

    def set_stale(self, reason: str) -> None:
        """Grey the plots and say why (the chassis form holds a refused value), or undo it."""
        self.stale_label.setText(reason)
        self.stale_label.setVisible(bool(reason))
        self.graphics.ci.setOpacity(self.STALE_OPACITY if reason else 1.0)

    def fit(self) -> None:
        """Back to the ranges the last refresh chose (the whole route, room for the labels)."""
        for plot, yr, xr in self._ranges:
            plot.setYRange(*yr, padding=0)
            if xr is not None:
                plot.setXRange(*xr, padding=0.01)

    def resizeEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        super().resizeEvent(ev)
        # A wide, short dock (under the plan) shows the plots side by side, else stacked.
        self.set_side_by_side(self.width() > 2.6 * max(self.height(), 1))

    def set_side_by_side(self, side: bool) -> None:
        if side == self.side_by_side:
            return
        self.side_by_side = side
        layout = self.graphics.ci
        layout.removeItem(self.rate_plot)
        if side:
            layout.addItem(self.rate_plot, row=0, col=1)
        else:
            layout.addItem(self.rate_plot, row=1, col=0)

    def _axis_toggled(self, _checked: bool) -> None:
        self.set_x_axis("time" if self.by_time.isChecked() else "distance")

    def set_x_axis(self, which: str) -> None:
        """Plot against ``"time"`` or ``"distance"``."""
        if which not in ("time", "distance"):
            raise ValueError("x axis is 'time' or 'distance'")
        self.x_axis = which
        (self.by_time if which == "time" else self.by_distance).setChecked(True)
        self.refresh()

    def _clear(self) -> None:
        for plot in (self.speed_plot, self.rate_plot, self.hitch_plot):
            plot.clear()
        for legend in (self.speed_legend, self.rate_legend, self.hitch_legend):
            legend.clear()
        self.limit_lines = []
        self.cap_labels = []
        self.cap_items = []
        self._ranges = []

    def _set_range(self, plot: pg.PlotItem, y: tuple[float, float],
                   x: tuple[float, float] | None = None) -> None:
        """Set ``plot``'s range and keep it for :meth:`fit`."""
        self._ranges.append((plot, y, x))
        plot.setYRange(*y, padding=0)
        if x is not None:
            plot.setXRange(*x, padding=0.01)

    def refresh(self) -> None:
        self._clear()
        r = self.doc.route()
        s = self.doc.schedule(r.name) if r is not None else None
        xlabel = ("time", "s") if self.x_axis == "time" else ("distance along the route", "m")
        for plot in (self.speed_plot, self.rate_plot, self.hitch_plot):
            plot.setLabel("bottom", xlabel[0], units=xlabel[1])
        if s is None:
            self.hitch_plot.hide()
            err = self.doc.error(r.name) if r is not None else None
            self.status.setText("No route." if r is None else
                                f"{r.name}: no schedule" + (f" \u2014 {err}" if err else ""))
            return
        from kinematics.timing.schedule import schedule_series

        series = schedule_series(s)
        xs = series["t_s"] if self.x_axis == "time" else series["station_m"]
        lim = series["limits"]
        self.status.setText(f"{s.route}: {s.profile.total_time_s:.1f} s, "
                            f"{float(series['station_m'][-1]) if xs.size else 0.0:.2f} m")

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
        self._draw_hitches(xs, series, s)
        self.place_cap_labels()

    def _draw_hitches(self, xs: np.ndarray, series: dict, s: Any) -> None:
        """Each trailer's hitch angle, with its jackknife limit (trains only)."""
        hitch = series.get("hitch_deg") or {}
        self.hitch_plot.setVisible(bool(hitch))
        if not hitch:
            return
        r = self.doc.route()
        chassis = self.doc.vehicle(r.name) if r is not None else None
        limits = {t.name: t.max_hitch_deg for t in getattr(chassis, "trailers", ())}
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

    def place_cap_labels(self, *_args) -> None:
        """Put each cap's name above its dotted line, else below it, where it covers no other
        name (a cap label or the limit lines' labels); a name with no free place is hidden
        (its dotted line stays). Redone when the view or its size changes."""
        taken = []
        for line in self.limit_lines:
            if line.getViewBox() is self.speed_plot.getViewBox():
                line.label.updateTransform(force=True)
                taken.append(line.label.sceneBoundingRect())
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
