"""The zone rule dialog: a zone's kind, its number and its label, asked when a zone is drawn
and when its rule is edited later (Plan > Edit zone rule).

The number's meaning follows the kind, as in the floor-plan file (shared contract): a slow
zone's speed cap in m/s, a margin zone's clearance in m, a one-way zone's direction of travel
in degrees counter-clockwise from the plan's x axis (0 = towards +x, 90 = towards +y); a
keep-out zone has none. A drawn one-way zone starts with the direction of its first edge, so
the direction can be given by drawing the zone along it or typed.
"""

from __future__ import annotations

from PySide6.QtWidgets import (
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QDoubleSpinBox,
    QFormLayout,
    QLabel,
    QLineEdit,
    QWidget,
)

from kinematics.files.floorplan import ZONE_KINDS, Zone

#: Words for each kind in the dialog, in the file's order.
KIND_WORDS = {"keep_out": "Keep out (no part of the footprint may enter)",
              "slow": "Slow (speed cap while any part is inside)",
              "margin": "Margin (clearance rule inside replaces the chassis margin)",
              "one_way": "One way (driving against the direction is flagged)"}
#: ``(row label, suffix, minimum, maximum, decimals, step, default)`` of each kind's number.
VALUE_FIELD = {"slow": ("Speed cap", " m/s", 0.01, 1000.0, 2, 0.05, 0.5),
               "margin": ("Margin", " m", 0.0, 100.0, 3, 0.05, 0.3),
               "one_way": ("Direction", " deg", -360.0, 360.0, 1, 15.0, 0.0)}


class ZoneDialog(QDialog):
    """Asks a zone's kind, number and label; :meth:`rule` gives ``(kind, value, label)``."""

    def __init__(self, parent: QWidget | None = None, zone: Zone | None = None,
                 direction_deg: float = 0.0, title: str = "Zone rule") -> None:
        super().__init__(parent)
        self.setWindowTitle(title)
        self._values = {k: v[-1] for k, v in VALUE_FIELD.items()}
        self._values["one_way"] = round(float(direction_deg), 1)
        form = QFormLayout(self)
        self.kind_combo = QComboBox()
        for k in ZONE_KINDS:
            self.kind_combo.addItem(KIND_WORDS[k], k)
        form.addRow("Kind", self.kind_combo)
        self.value_label = QLabel()
        self.value_spin = QDoubleSpinBox()
        form.addRow(self.value_label, self.value_spin)
        self.label_edit = QLineEdit()
        self.label_edit.setPlaceholderText("e.g. ward corridor")
        form.addRow("Label", self.label_edit)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        self.buttons = buttons
        form.addRow(buttons)
        self._kind = None
        if zone is not None:
            if zone.value is not None:
                self._values[zone.kind] = float(zone.value)
            self.label_edit.setText(zone.label)
            self.kind_combo.setCurrentIndex(ZONE_KINDS.index(zone.kind))
        self.kind_combo.currentIndexChanged.connect(self._kind_changed)
        self._kind_changed()

    def _kind_changed(self) -> None:
        if self._kind in VALUE_FIELD:
            self._values[self._kind] = self.value_spin.value()
        kind = self.kind_combo.currentData()
        self._kind = kind
        field = VALUE_FIELD.get(kind)
        self.value_label.setVisible(field is not None)
        self.value_spin.setVisible(field is not None)
        if field is None:
            return
        label, suffix, lo, hi, decimals, step, _default = field
        self.value_label.setText(label)
        self.value_spin.setDecimals(decimals)
        self.value_spin.setRange(lo, hi)
        self.value_spin.setSingleStep(step)
        self.value_spin.setSuffix(suffix)
        self.value_spin.setValue(self._values[kind])

    def set_rule(self, kind: str, value: float | None = None, label: str | None = None) -> None:
        """Fill the dialog (as a user would pick and type)."""
        self.kind_combo.setCurrentIndex(ZONE_KINDS.index(kind))
        if value is not None and kind in VALUE_FIELD:
            self.value_spin.setValue(float(value))
        if label is not None:
            self.label_edit.setText(label)

    def rule(self) -> tuple[str, float | None, str]:
        kind = self.kind_combo.currentData()
        value = self.value_spin.value() if kind in VALUE_FIELD else None
        return kind, value, self.label_edit.text().strip()


__all__ = ["KIND_WORDS", "VALUE_FIELD", "ZoneDialog"]
