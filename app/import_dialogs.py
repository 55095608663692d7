"""The floor-plan import dialogs: which role each DXF layer or SVG group plays.

Owns :class:`DxfImportDialog` (layer roles, drawing units, wall thickness) and
:class:`SvgImportDialog` (group roles, scale), and the role names both offer (``ROLES``,
``ZONE_ROLES``). :mod:`app.main_window` shows them when a drawing is opened or imported.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from PySide6.QtWidgets import (
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QDoubleSpinBox,
    QFormLayout,
    QHBoxLayout,
    QLabel,
    QVBoxLayout,
    QWidget,
)

ROLES = ("ignore", "walls", "obstacles", "doors", "keep-out zone", "slow zone",
         "margin zone", "one-way zone")
#: A zone role's kind, and its number's ``(key, suffix, minimum, maximum, default)``.
ZONE_ROLES = {"keep-out zone": ("keep_out", None), "slow zone": ("slow", ("speed_mps", " m/s",
                                                                        0.01, 1000.0, 0.5)),
              "margin zone": ("margin", ("margin_m", " m", 0.0, 100.0, 0.3)),
              "one-way zone": ("one_way", ("direction_deg", " deg", -360.0, 360.0, 0.0))}


class DxfImportDialog(QDialog):
    """Pick the role of each DXF layer, the drawing units and the wall thickness."""

    def __init__(self, path: Path, layers: list[str], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        from kinematics.files.dxf_import import guess_role

        self.setWindowTitle(f"Import {path.name}")
        lay = QVBoxLayout(self)
        lay.addWidget(QLabel("What does each layer of the drawing hold?"))
        form = QFormLayout()
        self.combos: dict[str, QComboBox] = {}
        self.values: dict[str, QDoubleSpinBox] = {}  # a zone layer's speed, margin, direction
        for name in layers:
            cb = QComboBox()
            cb.addItems(ROLES)
            guess = guess_role(name)
            cb.setCurrentText(guess if guess in ROLES else "walls")
            spin = QDoubleSpinBox()
            spin.setDecimals(2)
            row = QWidget()
            hl = QHBoxLayout(row)
            hl.setContentsMargins(0, 0, 0, 0)
            hl.addWidget(cb, 1)
            hl.addWidget(spin)
            form.addRow(name, row)
            self.combos[name] = cb
            self.values[name] = spin
            cb.currentTextChanged.connect(lambda role, sp=spin: self._role_changed(role, sp))
            self._role_changed(cb.currentText(), spin)
        self.units = QComboBox()
        self.units.addItems(["from the file", "mm", "cm", "m", "in", "ft"])
        form.addRow("Drawing units", self.units)
        self.thickness = QDoubleSpinBox()
        self.thickness.setRange(0.01, 2.0)
        self.thickness.setDecimals(3)
        self.thickness.setSingleStep(0.05)
        self.thickness.setValue(0.1)
        self.thickness.setSuffix(" m")
        form.addRow("Thickness of open wall lines", self.thickness)
        lay.addLayout(form)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)

    @staticmethod
    def _role_changed(role: str, spin: QDoubleSpinBox) -> None:
        """Show the number a zone layer needs (speed cap, margin, direction) beside it."""
        field = ZONE_ROLES.get(role, (None, None))[1]
        spin.setVisible(field is not None)
        if field is not None:
            _key, suffix, lo, hi, default = field
            spin.setRange(lo, hi)
            spin.setSuffix(suffix)
            spin.setValue(default)

    def options(self) -> dict[str, Any]:
        """Options for :func:`kinematics.files.loader.load_floorplan`, as a project file's
        import object holds them (zone layers as ``{"layer", "kind", ...}``)."""
        roles: dict[str, list[str]] = {"walls": [], "obstacles": [], "doors": []}
        zones: list[dict[str, Any]] = []
        for name, cb in self.combos.items():
            role = cb.currentText()
            if role in roles:
                roles[role].append(name)
            elif role in ZONE_ROLES:
                kind, field = ZONE_ROLES[role]
                z: dict[str, Any] = {"layer": name, "kind": kind}
                if field is not None:
                    z[field[0]] = self.values[name].value()
                zones.append(z)
        opts: dict[str, Any] = {"layers": roles, "wall_thickness_m": self.thickness.value()}
        if zones:
            opts["zones"] = zones
        if self.units.currentIndex() > 0:
            opts["units"] = self.units.currentText()
        return opts


class SvgImportDialog(QDialog):
    """The SVG drawing's scale, and which of its groups (layers) are zones."""

    def __init__(self, path: Path, groups: list[str], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle(f"Import {path.name}")
        lay = QVBoxLayout(self)
        form = QFormLayout()
        self.scale = QDoubleSpinBox()
        self.scale.setDecimals(6)
        self.scale.setRange(1e-6, 1000.0)
        self.scale.setValue(0.01)
        self.scale.setSuffix(" m")
        form.addRow("Metres per SVG unit (0.01: drawn in cm)", self.scale)
        if groups:
            form.addRow(QLabel("Groups read as zones (the rest as drawn):"))
        self.combos: dict[str, QComboBox] = {}
        self.values: dict[str, QDoubleSpinBox] = {}
        for name in groups:
            cb = QComboBox()
            cb.addItems(["as drawn", *ZONE_ROLES])
            spin = QDoubleSpinBox()
            spin.setDecimals(2)
            row = QWidget()
            hl = QHBoxLayout(row)
            hl.setContentsMargins(0, 0, 0, 0)
            hl.addWidget(cb, 1)
            hl.addWidget(spin)
            form.addRow(name, row)
            self.combos[name] = cb
            self.values[name] = spin
            cb.currentTextChanged.connect(
                lambda role, sp=spin: DxfImportDialog._role_changed(role, sp))
            DxfImportDialog._role_changed(cb.currentText(), spin)
        lay.addLayout(form)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)

    def options(self) -> dict[str, Any]:
        """Options for :func:`kinematics.files.loader.load_floorplan`, as a project file's
        import object holds them."""
        opts: dict[str, Any] = {"metres_per_unit": self.scale.value()}
        zones = []
        for name, cb in self.combos.items():
            if cb.currentText() in ZONE_ROLES:
                kind, field = ZONE_ROLES[cb.currentText()]
                z: dict[str, Any] = {"layer": name, "kind": kind}
                if field is not None:
                    z[field[0]] = self.values[name].value()
                zones.append(z)
        if zones:
            opts["zones"] = zones
        return opts
