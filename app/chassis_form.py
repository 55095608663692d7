"""The chassis form's vocabulary: which dimensions each drive uses, field labels, limits and
tips, example vehicles, reading the form into a :class:`~kinematics.files.project.Chassis`,
the one-line words for a refused value, and the footprint preview drawing.

Shared by :mod:`app.chassis_panel` (the editor) and its tests; no document here.
"""

from __future__ import annotations

import dataclasses
import math
import re
from typing import Any

from PySide6.QtCore import QPointF, QRectF, QSize, Qt
from PySide6.QtGui import QBrush, QColor, QPainter, QPolygonF
from PySide6.QtWidgets import (
    QDoubleSpinBox,
    QSizePolicy,
    QWidget,
)

from kinematics.errors import SwatheInputError
from kinematics.files.project import Chassis, chassis_from_dict

from .render import (
    BAND_RGBA,
    BLUE,
    FAINT_INK,
    INK,
    VERMILLION,
    pen,
)

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
