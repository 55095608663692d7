"""Speed and wheel-rate plots of a route, over time or over distance: the one plotting path.

:class:`SchedulePlots` draws one schedule; the window's :class:`PlotsPanel` shows one for the
current route, and :func:`draw_plots` renders one offscreen into any painter (``swathe render
--plots``, the report), so pictures and the window show the same curves, limit lines, cap
names and legends.

Two linked pyqtgraph plots (and a third, of hitch angles, for a train): the speed of the
reference point, and every wheel's rate. Each limit of the chassis is a dashed horizontal
line labelled with its name (max speed, max wheel rate), and each segment's own speed cap is
drawn dotted and named by the limit that sets it (lateral-accel cap, yaw-rate cap, max wheel
rate), so a user sees at a glance which limit binds where.
Data from :func:`kinematics.timing.schedule.schedule_series`.

Wheels differ by line style as well as colour (Okabe-Ito palette, Okabe & Ito 2008). The
plots themselves are :class:`app.schedule_plots.SchedulePlots` (importable from here too).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from PySide6.QtCore import QRectF, Qt, QTimer
from PySide6.QtGui import QColor, QImage, QPainter
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
from .scene import FAINT_INK, INK
from .schedule_plots import (  # noqa: F401 - also imported from here by others
    HEADROOM,
    LIMIT_WORDS,
    NEG_FOOTROOM,
    WHEEL_COLOURS,
    WHEEL_STYLES,
    SchedulePlots,
    _limit_line,
    _style_plot,
)


def hitch_limits_of(chassis: Any) -> dict[str, float]:
    """A train's jackknife limits (degrees) by trailer name; empty for a lone vehicle."""
    return {t.name: t.max_hitch_deg for t in getattr(chassis, "trailers", ()) or ()}


class PlotsPanel(QWidget):
    """Speed and wheel rates of the document's current route (a :class:`SchedulePlots`).

    Attributes
    ----------
    x_axis : str
        ``"time"`` or ``"distance"``.
    graphics : SchedulePlots
    """

    def __init__(self, doc: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        self.x_axis = "time"

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

        self.graphics = SchedulePlots()
        lay.addWidget(self.graphics, 1)

        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(0)  # coalesce bursts of signals into one redraw
        self._timer.timeout.connect(self.refresh)
        for sig in ("resultsChanged", "projectReplaced"):
            getattr(doc, sig).connect(self._timer.start)
        doc.currentRouteChanged.connect(lambda _i: self._timer.start())
        doc.staleChanged.connect(self.set_stale)
        self.refresh()
        self.set_stale(doc.stale_reason)

    # The plots' parts, as the panel's (older callers and tests read them here).
    speed_plot = property(lambda self: self.graphics.speed_plot)
    rate_plot = property(lambda self: self.graphics.rate_plot)
    hitch_plot = property(lambda self: self.graphics.hitch_plot)
    limit_lines = property(lambda self: self.graphics.limit_lines)
    cap_labels = property(lambda self: self.graphics.cap_labels)
    cap_items = property(lambda self: self.graphics.cap_items)
    side_by_side = property(lambda self: self.graphics.side_by_side)

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
        self.graphics.fit()

    def place_cap_labels(self, *_args) -> None:
        self.graphics.place_cap_labels()

    def resizeEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        super().resizeEvent(ev)
        # A wide, short dock (under the plan) shows the plots side by side, else stacked.
        self.set_side_by_side(self.width() > 2.6 * max(self.height(), 1))

    def set_side_by_side(self, side: bool) -> None:
        self.graphics.set_side_by_side(side)

    def _axis_toggled(self, _checked: bool) -> None:
        self.set_x_axis("time" if self.by_time.isChecked() else "distance")

    def set_x_axis(self, which: str) -> None:
        """Plot against ``"time"`` or ``"distance"``."""
        if which not in ("time", "distance"):
            raise ValueError("x axis is 'time' or 'distance'")
        self.x_axis = which
        (self.by_time if which == "time" else self.by_distance).setChecked(True)
        self.refresh()

    def refresh(self) -> None:
        r = self.doc.route()
        s = self.doc.schedule(r.name) if r is not None else None
        if s is None:
            self.graphics.clear_plots()
            self.graphics.set_x_axis_label(self.x_axis)
            self.graphics.hitch_plot.hide()
            err = self.doc.error(r.name) if r is not None else None
            self.status.setText("No route." if r is None else
                                f"{r.name}: no schedule" + (f" \u2014 {err}" if err else ""))
            return
        series = self.graphics.show_schedule(s, self.x_axis,
                                             hitch_limits_of(self.doc.vehicle(r.name)))
        xs = series["t_s"] if self.x_axis == "time" else series["station_m"]
        self.status.setText(f"{s.route}: {s.profile.total_time_s:.1f} s, "
                            f"{float(series['station_m'][-1]) if xs.size else 0.0:.2f} m")


# -- the same plots in a picture ------------------------------------------------------------
def draw_plots(p: QPainter, rect: QRectF, schedule: Any, x_axis: str = "time",
               title: str | None = None, scale: float | None = None,
               hitch_limits: dict[str, float] | None = None) -> SchedulePlots | None:
    """Paint the window's plots of ``schedule`` into ``rect`` of painter ``p``.

    A :class:`SchedulePlots` is laid out offscreen at ``rect`` divided by ``scale`` (the
    layout unit: 1 at 1200 x 700 pixels) and its scene rendered into ``rect``, scaled, so the
    picture keeps the window's text sizes in proportion. Returns the plots drawn (their
    :meth:`SchedulePlots.contents` say what they show), or ``None`` when nothing moves.
    """
    u = scale if scale is not None else max(0.45, min(rect.width() / 1200.0,
                                                     rect.height() / 700.0))
    p.save()
    try:
        p.setRenderHint(QPainter.RenderHint.Antialiasing, True)
        p.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
        p.fillRect(rect, QColor("#FFFFFF"))
        top = rect.top()
        if title:
            from .render import font

            p.setPen(QColor(INK))
            p.setFont(font(15 * u, bold=True))
            p.drawText(QRectF(rect.left() + 10 * u, top + 4 * u, rect.width(), 24 * u),
                       Qt.AlignmentFlag.AlignVCenter, title)
            top += 30 * u
        from kinematics.timing.schedule import schedule_series

        if schedule_series(schedule)["t_s"].size < 2:
            from .render import font

            p.setPen(QColor(FAINT_INK))
            p.setFont(font(14 * u))
            p.drawText(rect, Qt.AlignmentFlag.AlignCenter, "nothing moves on this route")
            return None
        target = QRectF(rect.left(), top, rect.width(), rect.bottom() - top)
        w, h = max(200, int(target.width() / u)), max(150, int(target.height() / u))
        plots = SchedulePlots()
        plots.setAttribute(Qt.WidgetAttribute.WA_DontShowOnScreen, True)
        plots.resize(w, h)
        plots.show_schedule(schedule, x_axis, hitch_limits)
        # Lay the plots out at that size without showing them (no event loop needed).
        source = QRectF(0, 0, w, h)
        plots.ci.setGeometry(source)
        plots.scene().setSceneRect(source)
        plots.ci.layout.activate()
        plots.place_cap_labels()
        # Through an image at the screen's resolution: pyqtgraph lays out its text for the
        # screen, and a page's painter (the report at 150 dpi) would draw that text larger
        # than the room it was given.
        img = QImage(max(1, round(target.width())), max(1, round(target.height())),
                     QImage.Format.Format_ARGB32)
        img.fill(QColor("#FFFFFF"))
        q = QPainter(img)
        try:
            q.setRenderHint(QPainter.RenderHint.Antialiasing, True)
            q.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
            plots.scene().render(q, QRectF(0, 0, img.width(), img.height()), source)
        finally:
            q.end()
        p.drawImage(target, img)
        plots.image = img
        return plots
    finally:
        p.restore()


def render_plot_image(schedule: Any, size: tuple[int, int] = (1200, 700),
                      x_axis: str = "time", title: str | None = None) -> QImage:
    """The speed and wheel-rate plots of ``schedule`` on a new image."""
    from .render import ensure_app, new_image

    ensure_app()
    img = new_image(size)
    p = QPainter(img)
    try:
        draw_plots(p, QRectF(0, 0, size[0], size[1]), schedule, x_axis,
                   title if title is not None else f"{schedule.route}: speed and wheel rates",
                   hitch_limits=hitch_limits_of(getattr(schedule, "chassis", None)))
    finally:
        p.end()
    return img


def render_plot_png(schedule: Any, path: str | Path, size: tuple[int, int] = (1200, 700),
                    x_axis: str = "time", title: str | None = None) -> None:
    """Write the speed and wheel-rate plots of ``schedule`` as a PNG (or JPEG, by suffix)
    file, atomically.

    Parameters
    ----------
    schedule : kinematics.timing.schedule.Schedule
    path : str or Path
    size : (int, int)
        Pixels.
    x_axis : {"time", "distance"}
    title : str, optional
        Default: the route name.
    """
    from kinematics.files.jsonio import atomic_write_bytes

    from .render import image_format_for, image_png_bytes

    fmt = image_format_for(path)
    if fmt is None:
        raise ValueError(f"cannot write a {Path(path).suffix} picture; expected .png or .jpg")
    atomic_write_bytes(path, image_png_bytes(render_plot_image(schedule, size, x_axis, title),
                                             fmt))
