"""Side panels of the workbench: the chassis editor, the check results and the schedule table.

Each panel draws the :class:`app.document.Document` and edits it only through its methods:

- :class:`ChassisPanel` edits the chassis (drive, dimensions, footprint, margin, limits); each
  accepted change is one undoable ``doc.set_chassis``. A value the core would refuse (a
  footprint that crosses itself, a size of zero) is shown as a message under the form and the
  document keeps its last good chassis.
- :class:`ResultsPanel` lists the violations (a click asks the canvas to zoom there), the door
  clearances, the least clearance, and on request the sizing answers (widest and longest
  footprint that clears, door widths needed), computed in the background with Cancel.
- :class:`ScheduleTable` shows the segment schedule and exports it as CSV or JSON, byte for
  byte what ``swathe schedule`` writes.
"""

from __future__ import annotations

import dataclasses
import math
import re
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

from PySide6.QtCore import QPointF, QRectF, QSize, Qt, QTimer, Signal
from PySide6.QtGui import QBrush, QColor, QIcon, QPainter, QPixmap, QPolygonF
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDoubleSpinBox,
    QFileDialog,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QProgressBar,
    QPushButton,
    QScrollArea,
    QSizePolicy,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from kinematics.analysis.results import (
    VIOLATION_WORDS,
    door_results,
    sizing_answers,
    sizing_lines,
    violation_label,
    violations_of,
)
from kinematics.errors import SwatheInputError
from kinematics.files.project import DRIVES, Chassis, a_drive, chassis_from_dict

from .document import clearance_words, new_drag_token
from .qstyle import MESSAGE_STYLE
from .render import (
    BAND_RGBA,
    BLUE,
    FAINT_INK,
    INK,
    VERMILLION,
    draw_marker,
    pen,
)
from .workers import Cancelled, CancelToken, Job, run_in_background

# -- chassis --------------------------------------------------------------------------------
#: Which dimensions each drive uses (others are kept but greyed out).
USES = {
    "differential": {"track_m", "effective_track_factor", "min_turn_radius_m"},
    "bicycle": {"wheelbase_m", "max_steer_deg", "min_turn_radius_m"},
    "ackermann": {"wheelbase_m", "track_m", "max_steer_deg", "min_turn_radius_m"},
    "mecanum": {"wheelbase_m", "track_m"},
    "swerve": {"wheelbase_m", "track_m"},
}
#: The drive's name in the list (short, so a narrow dock shows it whole) and what it means
#: (the item's tooltip).
DRIVE_WORDS = {
    "differential": "differential / skid-steer",
    "bicycle": "bicycle",
    "ackermann": "Ackermann (car-like)",
    "mecanum": "mecanum",
    "swerve": "swerve",
}
DRIVE_TIPS = {
    "differential": "Two driven wheels (or tracks) side by side, steered by their speed "
                    "difference; also tracked and skid-steer carts",
    "bicycle": "One steered wheel ahead of a driven rear axle",
    "ackermann": "Car-like: four wheels, the front pair steered",
    "mecanum": "Four mecanum wheels with rollers at 45 degrees: moves sideways too",
    "swerve": "Every wheel module steers and drives: moves in any direction",
}

#: (key, label with unit, minimum, maximum, decimals, step, optional)
DIMENSION_FIELDS = (
    ("track_m", "Track (m)", 0.0, 20.0, 3, 0.01, False),
    ("wheelbase_m", "Wheelbase (m)", 0.0, 30.0, 3, 0.01, False),
    ("wheel_radius_m", "Wheel radius (m)", 0.0, 5.0, 3, 0.005, False),
    ("max_steer_deg", "Max steer angle (deg)", 0.0, 89.0, 1, 1.0, False),
    ("min_turn_radius_m", "Min turn radius (m)", 0.0, 100.0, 3, 0.05, False),
    ("effective_track_factor", "Track factor (skid-steer)", 0.0, 10.0, 2, 0.05, False),
)
LIMIT_FIELDS = (
    ("margin_m", "Clearance margin (m)", 0.0, 5.0, 3, 0.01, False),
    ("max_speed_mps", "Max speed (m/s)", 0.0, 50.0, 2, 0.05, False),
    ("max_accel_mps2", "Max accel (m/s\u00b2)", 0.0, 50.0, 2, 0.05, False),
    ("max_decel_mps2", "Max decel (m/s\u00b2)", 0.0, 50.0, 2, 0.05, True),
    ("max_wheel_rate_radps", "Max wheel rate (rad/s)", 0.0, 1000.0, 1, 0.5, True),
    ("max_lateral_accel_mps2", "Max lateral accel (m/s\u00b2)", 0.0, 50.0, 2, 0.05, True),
    ("max_yaw_rate_dps", "Max yaw rate (deg/s)", 0.0, 3600.0, 1, 5.0, True),
    ("max_wheel_accel_radps2", "Max wheel accel (rad/s\u00b2)", 0.0, 10000.0, 1, 0.5, True),
    ("max_yaw_accel_dps2", "Max yaw accel (deg/s\u00b2)", 0.0, 100000.0, 1, 5.0, True),
    ("max_steer_rate_dps", "Max steer rate (deg/s)", 0.0, 7200.0, 1, 5.0, True),
)
FIELD_LABELS = {k: lab for k, lab, *_ in DIMENSION_FIELDS + LIMIT_FIELDS}
FIELD_TIPS = {
    "track_m": "Distance between the left and right wheel centres",
    "wheelbase_m": "Distance between the rear and front axles",
    "min_turn_radius_m": "The tightest turn the chassis may make; 0 takes it from the drive "
                         "(a differential drive then turns on the spot)",
    "effective_track_factor": "Skid-steer and tracked drives turn as if the track were this "
                              "many times wider",
    "margin_m": "The clearance every route must keep from walls and obstacles",
    "max_decel_mps2": "none: the same as the acceleration",
    "max_wheel_rate_radps": "none: no wheel-rate limit",
    "max_lateral_accel_mps2": "Caps the speed on arcs (v\u00b2 / R); none: no cap",
    "max_yaw_rate_dps": "Caps turning speed on arcs and pivots; none: no cap",
    "max_wheel_accel_radps2": "How fast any wheel's rate may change; with it routes get "
                              "transition curves (clothoids) unless a route says none",
    "max_yaw_accel_dps2": "How fast the yaw rate may change (turn-in and pivots); none: no cap",
    "max_steer_rate_dps": "Bicycle and Ackermann: how fast the steered wheels may turn; none: "
                          "instantaneous",
}
FIELD_LABELS.update({"footprint": "Footprint", "drive": "Drive", "name": "Name"})

#: Example vehicles to start from, named for what they are (plausible sizes, no real
#: product); the key is the menu text, the chassis name is what a project file stores.
PRESETS: dict[str, Chassis] = {
    "Small tug (differential)": Chassis(
        name="small tug", drive="differential",
        footprint=((-0.22, -0.24), (0.42, -0.24), (0.42, 0.24), (-0.22, 0.24)),
        margin_m=0.05, wheel_radius_m=0.075, track_m=0.40, max_speed_mps=1.2,
        max_accel_mps2=0.6, max_wheel_rate_radps=18.0, max_lateral_accel_mps2=0.6,
        max_yaw_rate_dps=90.0),
    "Ward cart (differential)": Chassis(
        name="ward cart", drive="differential",
        footprint=((-0.35, -0.30), (0.65, -0.30), (0.72, -0.22), (0.72, 0.22), (0.65, 0.30),
                   (-0.35, 0.30)),
        margin_m=0.08, wheel_radius_m=0.1, track_m=0.52, max_speed_mps=1.0,
        max_accel_mps2=0.4, max_wheel_rate_radps=12.0, max_lateral_accel_mps2=0.5,
        max_yaw_rate_dps=60.0),
    "Pallet mover (Ackermann)": Chassis(
        name="pallet mover", drive="ackermann",
        footprint=((-0.45, -0.45), (1.55, -0.45), (1.55, 0.45), (-0.45, 0.45)),
        margin_m=0.10, wheel_radius_m=0.15, track_m=0.75, wheelbase_m=1.10,
        max_steer_deg=40.0, max_speed_mps=1.5, max_accel_mps2=0.5,
        max_wheel_rate_radps=12.0, max_lateral_accel_mps2=0.8),
    "Flat carrier (mecanum)": Chassis(
        name="flat carrier", drive="mecanum",
        footprint=((-0.45, -0.33), (0.45, -0.33), (0.45, 0.33), (-0.45, 0.33)),
        margin_m=0.05, wheel_radius_m=0.076, track_m=0.52, wheelbase_m=0.62,
        max_speed_mps=0.8, max_accel_mps2=0.4, max_wheel_rate_radps=14.0,
        max_yaw_rate_dps=45.0),
}


def _spin(lo: float, hi: float, decimals: int, step: float, optional: bool) -> QDoubleSpinBox:
    s = QDoubleSpinBox()
    s.setRange(lo, hi)
    s.setDecimals(decimals)
    s.setSingleStep(step)
    s.setKeyboardTracking(False)  # one change per Enter / focus loss, not per keystroke
    s.setAccelerated(True)
    if optional:
        s.setSpecialValueText("none")  # shown at the minimum, 0: the limit is off
    s.setMinimumWidth(80)
    return s


def chassis_from_form(values: dict, footprint_rows: list[tuple[str, str]],
                      extra: dict | None = None) -> Chassis:
    """Build and check a :class:`Chassis` from the form's values, as the project file would.

    ``values`` maps chassis keys to numbers (0 or ``None`` on an optional field: absent),
    ``name`` and ``drive`` to text; ``footprint_rows`` are the table's cells as text.

    Raises
    ------
    SwatheInputError
        With ``place`` naming the field (``chassis.track_m``, ``chassis.footprint[2].y``)
        and ``expected`` saying what is wrong.
    """
    pts = []
    for i, (xs, ys) in enumerate(footprint_rows):
        row = []
        for axis, txt in (("x", xs), ("y", ys)):
            try:
                v = float(str(txt).strip().replace(",", "."))
            except ValueError:
                raise SwatheInputError("chassis panel", f"chassis.footprint[{i}].{axis}",
                                       f"expected a number in metres, got {txt!r}") from None
            if not math.isfinite(v):
                raise SwatheInputError("chassis panel", f"chassis.footprint[{i}].{axis}",
                                       "expected a finite number")
            row.append(v)
        pts.append(row)
    d: dict[str, Any] = {"name": values.get("name", "chassis"), "drive": values["drive"],
                         "footprint": pts}
    drive = values["drive"]
    optional = {k for k, *_rest, opt in DIMENSION_FIELDS + LIMIT_FIELDS if opt}
    for key, *_ in DIMENSION_FIELDS + LIMIT_FIELDS:
        v = values.get(key)
        if v is None:
            continue
        if key in optional and v == 0:
            continue
        if key in ("track_m", "wheelbase_m", "max_steer_deg") and v == 0 \
                and key not in USES[drive]:
            continue  # a dimension this drive does not use may stay empty
        d[key] = float(v)
    c = chassis_from_dict(d, "chassis panel", "chassis")
    from kinematics.motion.drives import drive_for

    drive_for(c, "chassis panel")
    return dataclasses.replace(c, extra=dict(extra or {}))


def stale_words(message: str) -> str:
    """What the results panels say while the chassis form holds a refused value."""
    reason = message.lstrip("\u26a0 ").strip().rstrip(".")
    return f"Out of date (chassis form: {reason}); showing the last valid chassis."


def friendly_message(exc: SwatheInputError) -> str:
    """The panel's wording of a refused value: the field's label, then what is wrong."""
    place = exc.place.removeprefix("chassis.")
    key = place.split(".")[0].split("[")[0]
    label = FIELD_LABELS.get(key, place)
    if key == "footprint" and place != "footprint":
        tail = place[len("footprint"):]
        # footprint[2].y -> "Footprint row 3, y"
        try:
            row = int(tail[1:tail.index("]")]) + 1
            axis = tail[tail.index("]") + 1:].lstrip(".").replace("[0]", "x").replace("[1]", "y")
            label = f"Footprint row {row}" + (f", {axis}" if axis else "")
        except ValueError:
            pass
    expected = exc.expected
    # shapely's explain_validity gives "Self-intersection[x y]": say it with rounded numbers.
    m = re.search(r"\(?Self-intersection\[([-\d.eE+]+) ([-\d.eE+]+)\]\)?", expected)
    if m:
        where = f"(near x {float(m.group(1)):.3f} m, y {float(m.group(2)):.3f} m)"
        expected = expected[:m.start()] + where + expected[m.end():]
    if expected.startswith("missing; "):
        expected = f"needs a value above 0 ({expected.removeprefix('missing; ')})"
    return f"\u26a0 {label}: {expected}"


class FootprintPreview(QWidget):
    """A small drawing of the footprint, its margin, the wheels and the reference point."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setMinimumSize(200, 150)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)
        self.points: list[tuple[float, float]] = []
        self.margin_m = 0.0
        self.chassis: Chassis | None = None
        self.valid = True

    def sizeHint(self) -> QSize:  # noqa: N802 - Qt's name
        return QSize(260, 170)

    def set_data(self, points: list[tuple[float, float]], margin_m: float,
                 chassis: Chassis | None, valid: bool) -> None:
        self.points, self.margin_m, self.chassis, self.valid = points, margin_m, chassis, valid
        self.update()

    def _wheels(self) -> list[tuple[float, float]]:
        c = self.chassis
        if c is None:
            return []
        t = (c.track_m or 0.0) / 2
        b = c.wheelbase_m or 0.0
        if c.drive == "differential":
            return [(0.0, t), (0.0, -t)]
        if c.drive == "bicycle":
            return [(0.0, 0.0), (b, 0.0)]
        if c.drive == "ackermann":
            return [(0.0, t), (0.0, -t), (b, t), (b, -t)]
        return [(b / 2, t), (b / 2, -t), (-b / 2, t), (-b / 2, -t)]

    def paintEvent(self, _ev) -> None:  # noqa: N802 - Qt's name
        import shapely
        from shapely.geometry import Polygon

        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing)
        p.fillRect(self.rect(), QColor("#FFFFFF"))
        p.setPen(pen("#C8C8C8", 1))
        p.drawRect(self.rect().adjusted(0, 0, -1, -1))
        pts = [pt for pt in self.points if all(map(math.isfinite, pt))]
        if len(pts) < 2:
            p.setPen(QColor(FAINT_INK))
            p.drawText(self.rect(), Qt.AlignmentFlag.AlignCenter, "no footprint")
            return
        margin_poly = None
        if self.valid and len(pts) >= 3:
            try:
                margin_poly = Polygon(pts).buffer(max(self.margin_m, 0.0), join_style="mitre")
            except (ValueError, shapely.errors.GEOSException):
                margin_poly = None
        xs = [q[0] for q in pts] + [0.0]
        ys = [q[1] for q in pts] + [0.0]
        if margin_poly is not None and not margin_poly.is_empty:
            b = margin_poly.bounds
            xs += [b[0], b[2]]
            ys += [b[1], b[3]]
        for wx, wy in self._wheels():
            xs.append(wx)
            ys.append(wy)
        pad = 22.0
        w, h = self.width() - 2 * pad, self.height() - 2 * pad
        # Body frame drawn with x forward pointing right and y left pointing up.
        span_x = max(max(xs) - min(xs), 1e-3)
        span_y = max(max(ys) - min(ys), 1e-3)
        k = min(w / span_x, h / span_y)
        cx, cy = (max(xs) + min(xs)) / 2, (max(ys) + min(ys)) / 2

        def P(x: float, y: float) -> QPointF:
            return QPointF(self.width() / 2 + (x - cx) * k, self.height() / 2 - (y - cy) * k)

        p.setPen(pen("#E0E0E0", 1))
        p.drawLine(P(min(xs), 0), P(max(xs), 0))
        p.drawLine(P(0, min(ys)), P(0, max(ys)))
        if margin_poly is not None and margin_poly.geom_type == "Polygon":
            p.setPen(pen(FAINT_INK, 1, Qt.PenStyle.DashLine))
            p.setBrush(Qt.BrushStyle.NoBrush)
            p.drawPolygon(QPolygonF([P(x, y) for x, y in margin_poly.exterior.coords]))
        poly = QPolygonF([P(x, y) for x, y in pts])
        if self.valid:
            p.setPen(pen(BLUE, 2))
            p.setBrush(QBrush(QColor(*BAND_RGBA)))
        else:
            p.setPen(pen(VERMILLION, 2, Qt.PenStyle.DashLine))
            p.setBrush(QBrush(QColor(VERMILLION), Qt.BrushStyle.BDiagPattern))
        p.drawPolygon(poly)
        c = self.chassis
        r = (c.wheel_radius_m if c is not None else 0.1) * k
        p.setPen(pen(INK, 1))
        p.setBrush(QBrush(QColor("#333333")))
        for wx, wy in self._wheels():
            q = P(wx, wy)
            p.drawRect(QRectF(q.x() - r, q.y() - max(2.0, r * 0.35), 2 * r,
                              2 * max(2.0, r * 0.35)))
        o = P(0, 0)
        p.setPen(pen(INK, 1.5))
        p.setBrush(QBrush(QColor("#FFFFFF")))
        p.drawEllipse(o, 4, 4)
        p.setPen(pen(INK, 1.5))
        tip = QPointF(o.x() + 30, o.y())
        p.drawLine(o, tip)
        p.setBrush(QBrush(QColor(INK)))
        p.drawPolygon(QPolygonF([tip + QPointF(6, 0), tip + QPointF(0, -4), tip + QPointF(0, 4)]))
        p.setPen(QColor(INK))
        f = p.font()
        f.setPixelSize(11)
        p.setFont(f)
        p.drawText(QPointF(6, self.height() - 6), "x forward \u2192, y left \u2191; "
                   "dashed: margin")
        if not self.valid:
            p.setPen(QColor("#5A1E00"))
            p.drawText(QPointF(6, 14), "\u26a0 not a usable outline")


class ChassisPanel(QWidget):
    """Edit the document's chassis; each accepted change is one undo step.

    Attributes
    ----------
    fields : dict of str to QDoubleSpinBox
        The numeric fields by chassis key.
    message : QLabel
        Why the last edit was refused (hidden while the form is valid).
    """

    #: Edits of the same fields less than this many seconds apart are one undo step.
    BURST_S = 1.5

    def __init__(self, doc: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        self._loading = False
        self.fields: dict[str, QDoubleSpinBox] = {}
        self.clock: Callable[[], float] = time.monotonic
        self._burst: int | None = None
        self._burst_at = -math.inf
        self._pushing = False

        inner = QWidget()
        lay = QVBoxLayout(inner)
        lay.setContentsMargins(6, 6, 6, 6)

        top = QFormLayout()
        self.preset = QComboBox()
        self.preset.addItem("Start from an example\u2026")
        for name in PRESETS:
            self.preset.addItem(name)
        self.preset.activated.connect(self._preset_chosen)
        for combo in (self.preset,):
            combo.setSizeAdjustPolicy(
                QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
            combo.setMinimumContentsLength(14)
        top.addRow("Example", self.preset)
        self.name_edit = QLineEdit()
        self.name_edit.editingFinished.connect(self._apply)
        top.addRow("Name", self.name_edit)
        self.drive = QComboBox()
        for d in DRIVES:
            self.drive.addItem(DRIVE_WORDS[d], d)
            self.drive.setItemData(self.drive.count() - 1, DRIVE_TIPS[d],
                                   Qt.ItemDataRole.ToolTipRole)
        self.drive.currentIndexChanged.connect(
            lambda i: self.drive.setToolTip(DRIVE_TIPS.get(self.drive.itemData(i), "")))
        self.drive.activated.connect(self._apply)
        self.drive.setSizeAdjustPolicy(
            QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
        self.drive.setMinimumContentsLength(14)
        top.addRow("Drive", self.drive)
        lay.addLayout(top)

        dims = QGroupBox("Dimensions")
        form = QFormLayout(dims)
        for key, label, lo, hi, dec, step, opt in DIMENSION_FIELDS:
            s = _spin(lo, hi, dec, step, opt)
            s.valueChanged.connect(self._apply)
            s.setToolTip(FIELD_TIPS.get(key, ""))
            self.fields[key] = s
            form.addRow(label, s)
        self._dim_form = form
        lay.addWidget(dims)

        fpbox = QGroupBox("Footprint (body frame, metres)")
        fl = QVBoxLayout(fpbox)
        self.table = QTableWidget(0, 2)
        self.table.setHorizontalHeaderLabels(["x (m, forward)", "y (m, left)"])
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
        self.table.verticalHeader().setDefaultSectionSize(22)
        self.table.setMinimumHeight(130)
        self.table.cellChanged.connect(self._cell_changed)
        fl.addWidget(self.table)
        row = QHBoxLayout()
        self.add_point = QPushButton("Add corner")
        self.add_point.setToolTip("Insert a corner after the selected one (halfway to the next)")
        self.add_point.clicked.connect(self._add_corner)
        self.remove_point = QPushButton("Remove corner")
        self.remove_point.clicked.connect(self._remove_corner)
        row.addWidget(self.add_point)
        row.addWidget(self.remove_point)
        fl.addLayout(row)
        self.preview = FootprintPreview()
        fl.addWidget(self.preview)
        lay.addWidget(fpbox)

        lim = QGroupBox("Margin and limits")
        form2 = QFormLayout(lim)
        for key, label, lo, hi, dec, step, opt in LIMIT_FIELDS:
            s = _spin(lo, hi, dec, step, opt)
            s.valueChanged.connect(self._apply)
            s.setToolTip(FIELD_TIPS.get(key, ""))
            self.fields[key] = s
            form2.addRow(label, s)
        lay.addWidget(lim)

        self.message = QLabel()
        self.message.setWordWrap(True)
        self.message.setStyleSheet(MESSAGE_STYLE)
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.message.hide()
        lay.addStretch(1)

        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setWidget(inner)
        scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        # The message sits outside the scroll area too, so it is seen without scrolling.
        outer.addWidget(scroll, 1)
        outer.addWidget(self.message)

        for sig in ("chassisChanged", "projectReplaced"):
            getattr(doc, sig).connect(self.load)
        self.load()

    # -- document -> form --------------------------------------------------------------------
    def load(self) -> None:
        """Show the document's chassis (drops any refused edit)."""
        c = self.doc.project.chassis
        self._loading = True
        try:
            self.name_edit.setText(c.name)
            i = self.drive.findData(c.drive)
            self.drive.setCurrentIndex(max(i, 0))
            for key, s in self.fields.items():
                v = getattr(c, key)
                s.setValue(0.0 if v is None else float(v))
            self.table.setRowCount(len(c.footprint))
            for r, (x, y) in enumerate(c.footprint):
                for col, v in enumerate((x, y)):
                    self.table.setItem(r, col, QTableWidgetItem(f"{v:.4g}"))
        finally:
            self._loading = False
        self._enable_for_drive(c.drive)
        self._show_message(None)
        self.preview.set_data(list(c.footprint), c.margin_m, c, True)
        if not self._pushing:
            self._burst = None  # undo, redo or another project: the next edit starts afresh
        self.doc.set_stale(None)  # the form shows the document's chassis again

    def _enable_for_drive(self, drive: str) -> None:
        for key, *_ in DIMENSION_FIELDS:
            used = key in USES[drive] or key == "wheel_radius_m"
            self.fields[key].setEnabled(used)
            lab = self._dim_form.labelForField(self.fields[key])
            if lab is not None:
                lab.setEnabled(used)
            self.fields[key].setToolTip(FIELD_TIPS.get(key, "") if used
                                        else f"not used by {a_drive(drive)} drive")

    # -- form -> document --------------------------------------------------------------------
    def form_values(self) -> dict:
        vals: dict[str, Any] = {"name": self.name_edit.text().strip() or "chassis",
                                "drive": self.drive.currentData()}
        for key, s in self.fields.items():
            vals[key] = s.value()
        return vals

    def footprint_rows(self) -> list[tuple[str, str]]:
        rows = []
        for r in range(self.table.rowCount()):
            cells = []
            for col in range(2):
                it = self.table.item(r, col)
                cells.append(it.text() if it is not None else "")
            rows.append((cells[0], cells[1]))
        return rows

    def _show_message(self, text: str | None) -> None:
        if text:
            self.message.setText(text)
            self.message.show()
        else:
            self.message.clear()
            self.message.hide()

    def candidate(self) -> Chassis:
        """The chassis the form describes (raises :class:`SwatheInputError` if invalid)."""
        c = chassis_from_form(self.form_values(), self.footprint_rows(),
                              self.doc.project.chassis.extra)
        # The form edits the tug; the trailers it tows are kept.
        return dataclasses.replace(c, trailers=self.doc.project.chassis.trailers)

    def _apply(self, *_args) -> None:
        if self._loading:
            return
        drive = self.drive.currentData()
        self._enable_for_drive(drive)
        try:
            c = self.candidate()
        except SwatheInputError as exc:
            text = friendly_message(exc)
            self._show_message(text)
            self._preview_rows(valid="footprint" not in exc.place)
            # The check, band and plots still show the last valid chassis: say so everywhere.
            self.doc.set_stale(stale_words(text))
            return
        self._show_message(None)
        self.doc.set_stale(None)
        self.preview.set_data(list(c.footprint), c.margin_m, c, True)
        if c != self.doc.project.chassis:
            self._pushing = True
            try:
                self.doc.set_chassis(c, burst=self._burst_key())
            finally:
                self._pushing = False

    def _burst_key(self) -> int:
        """The undo-merge key of this edit: kept while edits come less than BURST_S apart."""
        now = self.clock()
        if self._burst is None or now - self._burst_at > self.BURST_S:
            self._burst = new_drag_token()
        self._burst_at = now
        return self._burst

    def _preview_rows(self, valid: bool) -> None:
        pts = []
        for xs, ys in self.footprint_rows():
            try:
                pts.append((float(xs), float(ys)))
            except ValueError:
                continue
        self.preview.set_data(pts, self.fields["margin_m"].value(), self.doc.project.chassis,
                              valid)

    def _cell_changed(self, _r: int, _c: int) -> None:
        if not self._loading:
            self._apply()

    def _add_corner(self) -> None:
        rows = self.footprint_rows()
        r = self.table.currentRow()
        r = r if 0 <= r < len(rows) else len(rows) - 1
        try:
            a = tuple(map(float, rows[r]))
            b = tuple(map(float, rows[(r + 1) % len(rows)]))
            mid = ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
        except (ValueError, IndexError):
            mid = (0.0, 0.0)
        self._loading = True
        self.table.insertRow(r + 1)
        for col, v in enumerate(mid):
            self.table.setItem(r + 1, col, QTableWidgetItem(f"{v:.4g}"))
        self._loading = False
        self.table.setCurrentCell(r + 1, 0)
        self._apply()

    def _remove_corner(self) -> None:
        r = self.table.currentRow()
        if r < 0:
            r = self.table.rowCount() - 1
        if self.table.rowCount() <= 3:
            self._show_message("\u26a0 Footprint: a footprint needs at least 3 corners")
            return
        self.table.removeRow(r)
        self._apply()

    def _preset_chosen(self, i: int) -> None:
        if i <= 0:
            return
        name = self.preset.itemText(i)
        self.preset.setCurrentIndex(0)
        c = PRESETS[name]
        self.doc.set_chassis(dataclasses.replace(c, extra=dict(self.doc.project.chassis.extra)),
                             text=f"Use example chassis {c.name!r}")


# -- results --------------------------------------------------------------------------------
def marker_icon(kind: str, size: int = 16) -> QIcon:
    pm = QPixmap(size, size)
    pm.fill(QColor(0, 0, 0, 0))
    p = QPainter(pm)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    draw_marker(p, kind, QPointF(size / 2, size / 2), size * 0.42)
    p.end()
    return QIcon(pm)


def _item(text: str, align_right: bool = False, data: Any = None) -> QTableWidgetItem:
    it = QTableWidgetItem(text)
    it.setFlags(Qt.ItemFlag.ItemIsSelectable | Qt.ItemFlag.ItemIsEnabled)
    if align_right:
        it.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
    if data is not None:
        it.setData(Qt.ItemDataRole.UserRole, data)
    return it


_VERDICT_STYLE = "QLabel { color: %s; } QLabel:disabled { color: #9A9A9A; }"


def _table(headers: list[str]) -> QTableWidget:
    t = QTableWidget(0, len(headers))
    t.setHorizontalHeaderLabels(headers)
    t.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    t.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
    t.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
    t.verticalHeader().setVisible(False)
    t.verticalHeader().setDefaultSectionSize(22)
    t.setWordWrap(False)
    t.horizontalHeader().setStretchLastSection(True)
    t.setAlternatingRowColors(True)
    return t


def _numbers_whole(t: QTableWidget) -> None:
    """Number columns as wide as their header and values; the first (words) column takes
    what is left and elides, so a narrow dock never cuts a number (the words are also in
    the row's tooltip and the message under the table)."""
    hdr = t.horizontalHeader()
    hdr.setStretchLastSection(False)
    hdr.setMinimumSectionSize(28)  # the words column may shrink to its marker icon
    hdr.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
    for col in range(1, t.columnCount()):
        hdr.setSectionResizeMode(col, QHeaderView.ResizeMode.ResizeToContents)
    t.setTextElideMode(Qt.TextElideMode.ElideRight)
    t.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
    t.setMinimumHeight(t.horizontalHeader().sizeHint().height() + 22 + 6)  # a row at least


def compute_sizing(project: Any, route_name: str, token: CancelToken,
                   tolerance_m: float | None = None) -> dict:
    """The sizing answers for one route, in the background: the core's
    :func:`kinematics.analysis.results.sizing_answers` reporting to and cancelled by ``token``.
    """
    from kinematics.check.sizing import SizingCancelled

    try:
        return sizing_answers(project, route_name, progress=token.report, cancel=token,
                              tolerance_m=tolerance_m)
    except SizingCancelled:
        raise Cancelled() from None


class ResultsPanel(QWidget):
    """The current route's check: violations, doors, least clearance and sizing answers.

    Signals
    -------
    zoomRequested(float, float)
        A violation row was clicked: plan coordinates to centre the canvas on.
    """

    zoomRequested = Signal(float, float)
    # A violation row citing a wall or obstacle: its name ("wall 23"), "" for none.
    solidCited = Signal(str)
    sizingFinished = Signal(object)

    def __init__(self, doc: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        self.job: Job | None = None
        self.sizing: dict | None = None  # latest answers, with the inputs they belong to
        self._sizing_key: tuple | None = None
        self.sizing_compute: Callable[[Any, str, CancelToken], dict] = compute_sizing

        lay = QVBoxLayout(self)
        lay.setContentsMargins(6, 6, 6, 6)
        # Shown while the chassis form holds a refused value; the results below are greyed.
        self.stale_label = QLabel()
        self.stale_label.setWordWrap(True)
        self.stale_label.setStyleSheet(MESSAGE_STYLE)
        self.stale_label.hide()
        lay.addWidget(self.stale_label)
        self.verdict = QLabel()
        self.verdict.setWordWrap(True)
        self.verdict.setTextFormat(Qt.TextFormat.PlainText)
        f = self.verdict.font()
        f.setPointSizeF(f.pointSizeF() * 1.25)
        f.setBold(True)
        self.verdict.setFont(f)
        lay.addWidget(self.verdict)
        self.detail = QLabel()
        self.detail.setWordWrap(True)
        lay.addWidget(self.detail)

        lay.addWidget(QLabel("Violations (click one to show it on the plan)"))
        self.violations = _table(["Kind", "Seg.", "At (m)", "Amount (mm)"])
        for col, tip in enumerate(("What is wrong (the marker on the plan has this shape)",
                                   "Segment of the planned route, numbered from 0 as in "
                                   "the Schedule table and the exported files",
                                   "Distance along the route where it starts",
                                   "Overlap depth, missing clearance or missing radius")):
            self.violations.horizontalHeaderItem(col).setToolTip(tip)
        self.violations.cellClicked.connect(self._violation_clicked)
        self.violations.currentCellChanged.connect(
            lambda r, _c, _pr, _pc: self._violation_clicked(r, 0))
        _numbers_whole(self.violations)
        lay.addWidget(self.violations, 3)
        # The selected violation's full message, wrapped, where a narrow dock can show it.
        self.violation_message = QLabel()
        self.violation_message.setWordWrap(True)
        self.violation_message.setTextInteractionFlags(
            Qt.TextInteractionFlag.TextSelectableByMouse)
        lay.addWidget(self.violation_message)

        lay.addWidget(QLabel("Doors passed"))
        self.doors = _table(["Door", "Width (m)", "Clearance (mm)"])
        for col, tip in enumerate(("The door's label", "Width of the opening between its jambs",
                                   "Least clearance of the footprint while it passes the "
                                   "door")):
            self.doors.horizontalHeaderItem(col).setToolTip(tip)
        _numbers_whole(self.doors)
        lay.addWidget(self.doors, 1)

        box = QGroupBox("What would fit")
        bl = QVBoxLayout(box)
        row = QHBoxLayout()
        self.sizing_button = QPushButton("Find the sizes that fit")
        self.sizing_button.setToolTip("Widest and longest footprint that clears this route, and "
                                      "the door widths this chassis needs (may take a while)")
        self.sizing_button.clicked.connect(self.start_sizing)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setEnabled(False)
        self.cancel_button.clicked.connect(self.cancel_sizing)
        row.addWidget(self.sizing_button, 1)
        row.addWidget(self.cancel_button)
        bl.addLayout(row)
        self.progress = QProgressBar()
        self.progress.setRange(0, 1000)
        self.progress.setTextVisible(True)
        self.progress.setFormat("")
        self.progress.hide()
        bl.addWidget(self.progress)
        self.sizing_label = QLabel("Not computed yet.")
        self.sizing_label.setWordWrap(True)
        self.sizing_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        bl.addWidget(self.sizing_label)
        lay.addWidget(box)

        for sig in ("resultsChanged", "projectReplaced"):
            getattr(doc, sig).connect(self.refresh)
        doc.currentRouteChanged.connect(lambda _i: self.refresh())
        # The document throttles resultsChanged during drags; whether the sizing answers
        # still hold is cheap to tell, so say it at once on every edit.
        for sig in ("chassisChanged", "routesChanged", "floorplanChanged"):
            getattr(doc, sig).connect(self._refresh_sizing_label)
        self._violation_rows: list[Any] = []
        self.sizing_box = box
        self._results_widgets = (self.verdict, self.detail, self.violations,
                                 self.violation_message, self.doors, box)
        doc.staleChanged.connect(self._show_stale)
        self.refresh()
        self._show_stale(doc.stale_reason)

    @property
    def stale(self) -> bool:
        """True while the results shown are not of the chassis being edited."""
        return not self.stale_label.isHidden()

    def _show_stale(self, reason: str) -> None:
        self.stale_label.setText(reason)
        self.stale_label.setVisible(bool(reason))
        for w in self._results_widgets:
            w.setEnabled(not reason)  # greyed while out of date
        # Sizing would answer for the last valid chassis too; its room goes to the message.
        self.sizing_box.setVisible(not reason)

    def _route_name(self) -> str | None:
        r = self.doc.route()
        return r.name if r is not None else None

    def _inputs_key(self) -> tuple | None:
        r = self.doc.route()
        if r is None:
            return None
        pj = self.doc.project
        return (r.name, r, pj.chassis, pj.floorplan)

    def refresh(self) -> None:
        name = self._route_name()
        self._violation_rows = []
        self.violations.setRowCount(0)
        self.violation_message.clear()
        self.violation_message.hide()
        self.doors.setRowCount(0)
        if name is None:
            self.verdict.setText("No route")
            self.detail.setText("Add a route on the plan to see its check here.")
            self._refresh_sizing_label()
            return
        try:
            chk = self.doc.check(name)
        except ImportError:  # a build without the clearance check still shows the rest
            chk = None
        err = self.doc.error(name)
        if chk is None:
            self.verdict.setText(f"{name}: not checked")
            self.detail.setText(err or "The check is not available.")
            self._refresh_sizing_label()
            return
        vs = violations_of(chk)
        mc = getattr(chk, "min_clearance_m", None)
        mc_text = (clearance_words(mc) if mc is not None and math.isfinite(mc)
                   else "nothing nearby")
        if getattr(chk, "clear", False) and not vs:
            self.verdict.setText(f"\u2713 CLEAR \u2014 {mc_text}")
            self.verdict.setStyleSheet(_VERDICT_STYLE % "#004E7A")
        else:
            n = len(vs)
            self.verdict.setText(f"\u2717 {n} VIOLATION{'S' if n != 1 else ''} \u2014 {mc_text}")
            self.verdict.setStyleSheet(_VERDICT_STYLE % "#8A3300")
        margin = self.doc.project.chassis.margin_m
        self.detail.setText(f"Route {name}; margin kept from walls and obstacles: "
                            f"{margin * 1000:.0f} mm." + (f"\n{err}" if err else ""))
        self.violations.setRowCount(len(vs))
        for r, v in enumerate(vs):
            kind = _item(VIOLATION_WORDS.get(v.kind, v.kind), data=(v.x, v.y))
            kind.setIcon(marker_icon(v.kind))
            kind.setToolTip(f"{v.kind}: {violation_label(v)}")
            seg = getattr(v, "segment", None)
            self.violations.setItem(r, 0, kind)
            self.violations.setItem(r, 1, _item("" if seg is None else str(seg), True))
            self.violations.setItem(r, 2, _item(f"{v.station_m:.2f}", True))
            amt = getattr(v, "amount_m", None)
            self.violations.setItem(r, 3, _item("" if amt is None else f"{amt * 1000:.0f}",
                                                True))
            for col in range(4):
                self.violations.item(r, col).setToolTip(v.message)
        self._violation_rows = vs
        self.violation_message.setText(vs[0].message if len(vs) == 1 else
                                       (f"{len(vs)} violations; click one to read it." if vs
                                        else ""))
        self.violation_message.setVisible(bool(vs))  # its room to the tables when clear
        widths = {d.label: d.width_m for d in self.doc.project.floorplan.doors}
        doors = door_results(chk)
        self.doors.setRowCount(len(doors))
        for r, d in enumerate(doors):
            lab = d.get("label", "")
            w = widths.get(lab)
            c = d.get("min_clearance_m")
            self.doors.setItem(r, 0, _item(lab or "(no label)"))
            self.doors.setItem(r, 1, _item("" if w is None else f"{w:.3f}", True))
            self.doors.setItem(r, 2, _item("" if c is None else f"{c * 1000:.0f}", True))
        self._refresh_sizing_label()

    def _violation_clicked(self, row: int, _col: int) -> None:
        if 0 <= row < len(self._violation_rows):
            v = self._violation_rows[row]
            self.violation_message.setText(f"{row + 1}. {v.message}")
            self.violation_message.show()
            self.zoomRequested.emit(float(v.x), float(v.y))
            self.solidCited.emit(getattr(v, "solid", "") or "")

    # -- sizing ------------------------------------------------------------------------------
    def _refresh_sizing_label(self) -> None:
        if self.job is not None and self.job.running:
            return
        if self.sizing is None:
            self.sizing_label.setText("Not computed yet.")
        elif self._sizing_key != self._inputs_key():
            self.sizing_label.setText("The route, chassis or plan changed since the last "
                                      "answers; press the button again.")
        else:
            lines = sizing_lines(self.sizing)
            self.sizing_label.setText("\n".join(lines) if lines else "No answers.")

    def current_sizing(self) -> dict | None:
        """The sizing answers if they belong to the current route, chassis and plan."""
        if self.sizing is not None and self._sizing_key == self._inputs_key():
            return self.sizing
        return None

    def start_sizing(self) -> Job | None:
        name = self._route_name()
        if name is None or (self.job is not None and self.job.running):
            return None
        project = self.doc.project
        key = self._inputs_key()
        compute = self.sizing_compute
        self.sizing_button.setEnabled(False)
        self.cancel_button.setEnabled(True)
        self.progress.setValue(0)
        self.progress.setFormat("starting\u2026")
        self.progress.show()
        self.sizing_label.setText("Working\u2026 the window stays usable meanwhile.")

        def done(result: Any) -> None:
            self.sizing = result
            self._sizing_key = key
            self._end_sizing()
            self.sizingFinished.emit(result)

        def failed(text: str) -> None:
            self._end_sizing()
            self.sizing_label.setText(f"\u26a0 Could not size: {text}")

        def cancelled() -> None:
            self._end_sizing()
            self.sizing_label.setText("Cancelled." if self.sizing is None else
                                      "Cancelled; the earlier answers are kept above.")
            if self.sizing is not None:
                lines = sizing_lines(self.sizing)
                self.sizing_label.setText("Cancelled. Earlier answers:\n" + "\n".join(lines))

        self.job = run_in_background(lambda tok: compute(project, name, tok),
                                     progress_cb=self._progress, done_cb=done, error_cb=failed,
                                     cancelled_cb=cancelled, parent=self)
        return self.job

    def _progress(self, fraction: float, text: str) -> None:
        self.progress.setValue(int(max(0.0, min(1.0, fraction)) * 1000))
        if text:
            self.progress.setFormat(f"{text} \u2014 %p%")

    def cancel_sizing(self) -> None:
        if self.job is not None and self.job.running:
            self.job.cancel()
            self.cancel_button.setEnabled(False)
            self.progress.setFormat("cancelling\u2026")

    def _end_sizing(self) -> None:
        self.sizing_button.setEnabled(True)
        self.cancel_button.setEnabled(False)
        self.progress.hide()
        if self.job is not None:
            self.job.running = False
        self._refresh_sizing_label()


# -- schedule -------------------------------------------------------------------------------
class ScheduleTable(QWidget):
    """The current route's segment schedule, with CSV and JSON export."""

    def __init__(self, doc: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        lay = QVBoxLayout(self)
        lay.setContentsMargins(6, 6, 6, 6)
        row = QHBoxLayout()
        self.summary = QLabel()
        self.summary.setWordWrap(True)
        row.addWidget(self.summary, 1)
        self.csv_button = QPushButton("Export CSV\u2026")
        self.csv_button.clicked.connect(lambda: self._export_dialog("csv"))
        self.json_button = QPushButton("Export JSON\u2026")
        self.json_button.clicked.connect(lambda: self._export_dialog("json"))
        row.addWidget(self.csv_button)
        row.addWidget(self.json_button)
        lay.addLayout(row)
        self.table = _table([])
        self.table.horizontalHeader().setStretchLastSection(False)
        lay.addWidget(self.table, 1)
        self.message = QLabel()
        self.message.setWordWrap(True)
        self.message.hide()
        lay.addWidget(self.message)
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(0)
        self._timer.timeout.connect(self.refresh)
        for sig in ("resultsChanged", "projectReplaced"):
            getattr(doc, sig).connect(self._timer.start)
        doc.currentRouteChanged.connect(lambda _i: self._timer.start())
        self.refresh()

    def schedule(self) -> Any:
        r = self.doc.route()
        return self.doc.schedule(r.name) if r is not None else None

    def refresh(self) -> None:
        from kinematics.timing.schedule import SEGMENT_COLUMNS, csv_columns

        r = self.doc.route()
        s = self.schedule()
        self.table.setRowCount(0)
        for b in (self.csv_button, self.json_button):
            b.setEnabled(s is not None)
        if s is None:
            self.table.setColumnCount(0)
            err = self.doc.error(r.name) if r is not None else None
            self.summary.setText("No route." if r is None else f"{r.name}: no schedule.")
            self._say(err)
            return
        self._say(None)
        cols = csv_columns(s.drive)
        self.table.setColumnCount(len(cols))
        self.table.setHorizontalHeaderLabels(cols)
        rows = _schedule_rows(s)
        self.table.setRowCount(len(rows))
        for i, row in enumerate(rows):
            for j, col in enumerate(cols):
                v = row.get(col)
                text = _fmt(v)
                it = _item(text, align_right=isinstance(v, (int, float)))
                if col in SEGMENT_COLUMNS:
                    it.setToolTip(f"{col} = {text}")
                self.table.setItem(i, j, it)
        self.table.resizeColumnsToContents()
        p = s.profile
        length = sum(seg.length_m for seg in p.segments)
        self.summary.setText(f"{s.route}: {len(p.segments)} segments, {length:.2f} m in "
                             f"{p.total_time_s:.1f} s ({s.drive.name} drive)")

    def _say(self, text: str | None) -> None:
        if text:
            self.message.setText(f"\u26a0 {text}")
            self.message.setStyleSheet(MESSAGE_STYLE)
            self.message.show()
        else:
            self.message.hide()

    def export_csv(self, path: str | Path) -> None:
        """Write the schedule as :func:`~kinematics.timing.schedule.schedule_to_csv`, atomically."""
        from kinematics.files.jsonio import atomic_write_text
        from kinematics.timing.schedule import schedule_to_csv

        s = self.schedule()
        if s is None:
            raise ValueError("there is no schedule to export")
        atomic_write_text(path, schedule_to_csv(s))

    def export_json(self, path: str | Path) -> None:
        """Write the schedule as ``swathe schedule --format json`` does, atomically."""
        from kinematics.files.jsonio import atomic_write_text, dumps
        from kinematics.timing.schedule import schedule_to_dict

        s = self.schedule()
        if s is None:
            raise ValueError("there is no schedule to export")
        atomic_write_text(path, dumps(schedule_to_dict(s)))

    def _export_dialog(self, fmt: str) -> None:
        r = self.doc.route()
        if r is None:
            return
        base = self.doc.path.parent if self.doc.path is not None else Path.cwd()
        suggested = str(base / f"{r.name}.schedule.{fmt}")
        filt = "CSV files (*.csv)" if fmt == "csv" else "JSON files (*.json)"
        path, _ = QFileDialog.getSaveFileName(self, f"Export schedule as {fmt.upper()}",
                                              suggested, filt)
        if not path:
            return
        try:
            (self.export_csv if fmt == "csv" else self.export_json)(path)
        except (OSError, ValueError) as exc:
            self._say(f"Could not write {path}: {getattr(exc, 'strerror', None) or exc}")
            return
        self.summary.setText(self.summary.text() + f"\nWritten: {path}")


def _schedule_rows(s: Any) -> list[dict]:
    """The CSV's rows as dicts (same fields, unformatted)."""
    import csv
    import io

    from kinematics.timing.schedule import schedule_to_csv

    reader = csv.DictReader(io.StringIO(schedule_to_csv(s)))
    out = []
    for row in reader:
        conv: dict[str, Any] = {}
        for k, v in row.items():
            try:
                conv[k] = int(v) if k in ("index", "direction") else float(v)
            except (TypeError, ValueError):
                conv[k] = v
        out.append(conv)
    return out


def _fmt(v: Any) -> str:
    if isinstance(v, bool) or v is None:
        return "" if v is None else str(v)
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if not math.isfinite(v):
            return str(v)
        return f"{v:.3f}"
    return str(v)
