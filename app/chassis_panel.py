"""The chassis editor panel: the fleet, drive, dimensions, footprint, margin, limits, trailers.

Owns :class:`ChassisPanel`: it edits one vehicle of the fleet at a time (chosen in its Fleet
box, :mod:`app.fleet_panel`, with the towed trailers below the form); each accepted change is
one undoable ``doc.set_vehicle``. A value
the core would refuse (a footprint that crosses itself, a size of zero) is shown as a message
under the form and the document keeps its last good chassis. The form's fields, presets and
preview are in :mod:`app.chassis_form`.
"""

from __future__ import annotations

import dataclasses
import math
import time
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QComboBox,
    QDoubleSpinBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QScrollArea,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from kinematics.errors import SwatheInputError
from kinematics.files.project import DRIVES, Chassis, a_drive

from .chassis_form import (
    DIMENSION_FIELDS,
    DRIVE_TIPS,
    DRIVE_WORDS,
    FIELD_TIPS,
    LIMIT_FIELDS,
    PRESETS,
    USES,
    FootprintPreview,
    _spin,
    chassis_from_form,
    friendly_message,
    stale_words,
)
from .document import new_drag_token
from .fleet_panel import FleetBox, TrailerBox
from .qstyle import MESSAGE_STYLE


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
        #: Which vehicle of ``doc.project.fleet`` the form edits (0: the default one).
        self.member = 0

        inner = QWidget(self)
        lay = QVBoxLayout(inner)
        lay.setContentsMargins(6, 6, 6, 6)

        self.fleet_box = FleetBox(doc, lambda: self.member, inner)
        self.fleet_box.memberChosen.connect(self.choose_member)
        lay.addWidget(self.fleet_box)

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

        self.trailer_box = TrailerBox(doc, lambda: self.member, self._burst_key, inner)
        lay.addWidget(self.trailer_box)

        self.message = QLabel()
        self.message.setWordWrap(True)
        self.message.setStyleSheet(MESSAGE_STYLE)
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.message.hide()
        lay.addStretch(1)

        scroll = QScrollArea(self)
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
    @property
    def vehicle(self) -> Chassis:
        """The fleet member the form edits."""
        fleet = self.doc.project.fleet
        self.member = min(max(self.member, 0), len(fleet) - 1)
        return fleet[self.member]

    def choose_member(self, i: int) -> None:
        """Edit vehicle ``i`` of the fleet (drops any refused edit of the one shown)."""
        self.member = i
        self._burst = None
        self.load()

    def load(self) -> None:
        """Show the vehicle being edited (drops any refused edit)."""
        c = self.vehicle
        self.fleet_box.load()
        self.trailer_box.load()
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
        c = chassis_from_form(self.form_values(), self.footprint_rows(), self.vehicle.extra)
        # The form edits the tug; the trailers it tows are the trailer box's.
        return dataclasses.replace(c, trailers=self.vehicle.trailers)

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
        if c != self.vehicle:
            self._pushing = True
            try:
                self.doc.set_vehicle(self.member, c, burst=self._burst_key())
            except ValueError as exc:  # a name another vehicle has
                self._show_message(f"\u26a0 Name: {exc}")
                self.doc.set_stale(f"Name: {exc}")
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
        self.preview.set_data(pts, self.fields["margin_m"].value(), self.vehicle, valid)

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
        old = self.vehicle
        # The example's name (unless another vehicle has it; the routes that named this one
        # follow), drive and sizes; this vehicle's trailers.
        others = set(self.doc.vehicle_names()) - {old.name}
        name = c.name if c.name not in others else self.doc.unique_vehicle_name(c.name)
        self.doc.set_vehicle(self.member, dataclasses.replace(
            c, name=name, trailers=old.trailers, extra=dict(old.extra)),
            text=f"Use example chassis {c.name!r}")
