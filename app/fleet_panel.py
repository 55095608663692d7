"""The fleet and the towed trailers, edited in the chassis panel.

Two boxes the chassis panel (:mod:`app.chassis_panel`) shows around its form:

- :class:`FleetBox`: which vehicle the form edits, add or remove a vehicle (its name is the
  form's Name field, so renaming is typing there: the routes that named it follow), and which
  vehicle drives the current route;
- :class:`TrailerBox`: the trailers the vehicle tows, one table row each (name, hitch offset,
  drawbar, margin, jackknife limit; the selected one's footprint in a line under the table),
  added and removed with buttons.

Every accepted change is one undoable edit through the document (:mod:`app.document`); a
value the core refuses (a negative drawbar, a footprint not around the trailer's axle) is
shown as one line under the box and the document keeps its last good vehicle. Tables are
never rebuilt inside their own signals: the box that pushed an edit skips reloading itself.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QComboBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from kinematics.errors import SwatheInputError
from kinematics.files.project import MAX_TRAILERS, Trailer, trailer_from_dict

from .qstyle import MESSAGE_STYLE

#: The trailer table's columns: (key, header, tooltip); the footprint of the selected
#: trailer is edited in the line under the table.
TRAILER_COLUMNS = (
    ("name", "Name", "The trailer's name (violations name it)"),
    ("hitch_x_m", "Hitch x\n(m)",
     "Where the trailer hitches on the body ahead, along its x axis from its reference "
     "point (negative: behind it, 0: on its axle)"),
    ("drawbar_m", "Drawbar\n(m)", "From the hitch back to the trailer's axle midpoint"),
    ("margin_m", "Margin\n(m)", "Clearance the trailer keeps; blank: the vehicle's margin"),
    ("max_hitch_deg", "Max hitch\n(\u00b0)",
     "Jackknife limit: the largest angle between the trailer and the body ahead"),
)
FOOTPRINT_TIP = ("Corners in the trailer's own frame (origin at its axle midpoint, x forward, "
                 "y left), metres: 'x y' pairs separated by ';'")
KEY_WORDS = {"name": "name", "hitch_x_m": "hitch x", "drawbar_m": "drawbar",
             "margin_m": "margin", "max_hitch_deg": "max hitch angle",
             "footprint": "footprint"}


def _message_label(parent: QWidget) -> QLabel:
    lab = QLabel(parent)
    lab.setWordWrap(True)
    lab.setStyleSheet(MESSAGE_STYLE)
    lab.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    lab.hide()
    return lab


def _show(label: QLabel, text: str | None) -> None:
    if text:
        label.setText(text)
        label.show()
    else:
        label.clear()
        label.hide()


def footprint_text(points: Any) -> str:
    """A footprint as the table shows it: ``"x y; x y; ..."`` (4 significant digits)."""
    return "; ".join(f"{x:.4g} {y:.4g}" for x, y in points)


def parse_footprint(text: str) -> list[list[float]]:
    """``"x y; x y; ..."`` (or ``x,y`` pairs) as corner lists; raises ``ValueError`` naming
    the corner that is not two numbers."""
    pts = []
    for i, part in enumerate(p for p in text.split(";") if p.strip()):
        bits = part.replace(",", " ").split()
        try:
            if len(bits) != 2:
                raise ValueError
            pts.append([float(bits[0]), float(bits[1])])
        except ValueError:
            raise ValueError(f"corner {i + 1} should be two numbers 'x y', got "
                             f"{part.strip()!r}") from None
    return pts


def trailer_message(exc: SwatheInputError) -> str:
    """The panel's wording of a refused trailer value: "Trailer 2, drawbar: expected ..."."""
    place = exc.place
    head = "Trailer"
    if place.startswith("trailers["):
        k = int(place[len("trailers["):place.index("]")])
        rest = place[place.index("]") + 1:].lstrip(".")
        key = rest.split(".")[0].split("[")[0]
        head = f"Trailer {k + 1}" + (f", {KEY_WORDS.get(key, key)}" if key else "")
    return f"\u26a0 {head}: {exc.expected}"


def trailers_from_rows(rows: list[dict[str, str]]) -> tuple[Trailer, ...]:
    """Build and check the trailers from the table's cells (text), as the project file
    would (:func:`kinematics.files.project.trailer_from_dict`).

    Raises
    ------
    SwatheInputError
        ``place`` naming the cell (``trailers[1].drawbar_m``), ``expected`` what is wrong.
    """
    if len(rows) > MAX_TRAILERS:
        raise SwatheInputError("chassis panel", "trailers",
                               f"expected at most {MAX_TRAILERS} trailers, got {len(rows)}")
    out: list[Trailer] = []
    seen: set[str] = set()
    for k, row in enumerate(rows):
        place = f"trailers[{k}]"
        d: dict[str, Any] = {"name": row["name"].strip()}
        if not d["name"]:
            raise SwatheInputError("chassis panel", f"{place}.name", "needs a name")
        for key in ("hitch_x_m", "drawbar_m", "margin_m", "max_hitch_deg"):
            txt = row[key].strip().replace(",", ".")
            if not txt and key == "margin_m":
                continue  # blank: the vehicle's margin
            try:
                v = float(txt)
            except ValueError:
                raise SwatheInputError("chassis panel", f"{place}.{key}",
                                       f"expected a number, got {row[key]!r}") from None
            if not math.isfinite(v):
                raise SwatheInputError("chassis panel", f"{place}.{key}",
                                       "expected a finite number")
            d[key] = v
        try:
            d["footprint"] = parse_footprint(row["footprint"])
        except ValueError as exc:
            raise SwatheInputError("chassis panel", f"{place}.footprint", str(exc)) from None
        t = trailer_from_dict(d, "chassis panel", place)
        if t.name in seen:
            raise SwatheInputError("chassis panel", f"{place}.name",
                                   f"another trailer of this vehicle is named {t.name!r}")
        seen.add(t.name)
        out.append(t)
    return tuple(out)


class FleetBox(QGroupBox):
    """Choose the vehicle the chassis form edits, add or remove one, and say which vehicle
    drives the current route.

    ``memberChosen(i)`` asks the chassis panel to show vehicle ``i``.
    """

    memberChosen = Signal(int)

    def __init__(self, doc: Any, member: Callable[[], int], parent: QWidget | None = None
                 ) -> None:
        super().__init__("Fleet", parent)
        self.doc = doc
        self._member = member
        lay = QVBoxLayout(self)
        form = QFormLayout()
        form.setRowWrapPolicy(QFormLayout.RowWrapPolicy.WrapAllRows)
        self.vehicle = QComboBox(self)
        self.vehicle.setToolTip("The vehicle the fields below describe")
        self.vehicle.activated.connect(self._vehicle_chosen)
        form.addRow("Edit vehicle", self.vehicle)
        row = QHBoxLayout()
        self.add_button = QPushButton("Add vehicle", self)
        self.add_button.setToolTip("Add a vehicle to the fleet: a copy of the default one "
                                   "without trailers; rename it in Name below")
        self.add_button.clicked.connect(self._add)
        self.remove_button = QPushButton("Remove vehicle", self)
        self.remove_button.setToolTip("Remove the vehicle shown (not one that drives a route)")
        self.remove_button.clicked.connect(self._remove)
        row.addWidget(self.add_button)
        row.addWidget(self.remove_button)
        form.addRow(row)
        self.route_vehicle = QComboBox(self)
        self.route_vehicle.setToolTip("The vehicle that drives the current route")
        self.route_vehicle.activated.connect(self._route_vehicle_chosen)
        form.addRow("Current route driven by", self.route_vehicle)
        for combo in (self.vehicle, self.route_vehicle):
            combo.setSizeAdjustPolicy(
                QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
            combo.setMinimumContentsLength(14)
        lay.addLayout(form)
        self.message = _message_label(self)
        lay.addWidget(self.message)
        for sig in ("chassisChanged", "projectReplaced", "routesChanged"):
            getattr(doc, sig).connect(self.load)
        doc.currentRouteChanged.connect(self.load)

    def load(self, *_args: Any) -> None:
        """Show the fleet's names, the vehicle being edited and the current route's one."""
        names = self.doc.vehicle_names()
        i = min(max(self._member(), 0), len(names) - 1)
        for combo in (self.vehicle, self.route_vehicle):
            combo.blockSignals(True)
            combo.clear()
            combo.addItems(names)
            combo.blockSignals(False)
        self.vehicle.setItemText(0, f"{names[0]} (default)")
        self.vehicle.setCurrentIndex(i)
        self.remove_button.setEnabled(len(names) > 1)
        route = self.doc.route()
        self.route_vehicle.setEnabled(route is not None)
        if route is not None:
            shown = route.chassis if route.chassis in names else names[0]
            self.route_vehicle.setCurrentIndex(names.index(shown))

    def _vehicle_chosen(self, i: int) -> None:
        _show(self.message, None)
        self.memberChosen.emit(i)

    def _add(self) -> None:
        _show(self.message, None)
        i = self.doc.add_vehicle()
        self.memberChosen.emit(i)

    def _remove(self) -> None:
        i = self._member()
        try:
            self.doc.remove_vehicle(i)
        except ValueError as exc:
            _show(self.message, f"\u26a0 {exc}")
            return
        _show(self.message, None)
        self.memberChosen.emit(max(0, i - 1))

    def _route_vehicle_chosen(self, i: int) -> None:
        names = self.doc.vehicle_names()
        if self.doc.route() is None or not 0 <= i < len(names):
            return
        try:
            self.doc.set_route_vehicle(self.doc.current_route, names[i])
        except ValueError as exc:
            _show(self.message, f"\u26a0 {exc}")
            return
        _show(self.message, None)


class TrailerBox(QGroupBox):
    """The trailers of the vehicle being edited: one row each, every accepted edit one undo
    step (typing into one cell several times in a row merges, see ``burst``)."""

    def __init__(self, doc: Any, member: Callable[[], int], burst: Callable[[], int],
                 parent: QWidget | None = None) -> None:
        super().__init__("Towed trailers", parent)
        self.doc = doc
        self._member = member
        self._burst = burst
        self._loading = False
        self._pushing = False
        self._footprints: list[str] = []
        lay = QVBoxLayout(self)
        self.table = QTableWidget(0, len(TRAILER_COLUMNS), self)
        self.table.setHorizontalHeaderLabels([h for _k, h, _t in TRAILER_COLUMNS])
        for col, (_k, _h, tip) in enumerate(TRAILER_COLUMNS):
            self.table.horizontalHeaderItem(col).setToolTip(tip)
        head = self.table.horizontalHeader()
        head.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        head.setStretchLastSection(True)
        self.table.verticalHeader().setDefaultSectionSize(22)
        self.table.setMinimumHeight(96)
        self.table.setSelectionBehavior(QTableWidget.SelectionBehavior.SelectRows)
        self.table.cellChanged.connect(self._cell_changed)
        self.table.currentCellChanged.connect(self._show_footprint)
        lay.addWidget(self.table)
        self.footprint_label = QLabel("Footprint", self)
        lay.addWidget(self.footprint_label)
        self.footprint = QLineEdit(self)
        self.footprint.setToolTip(FOOTPRINT_TIP)
        self.footprint.setPlaceholderText("x y; x y; x y")
        self.footprint.editingFinished.connect(self._footprint_edited)
        lay.addWidget(self.footprint)
        row = QHBoxLayout()
        self.add_button = QPushButton("Add trailer", self)
        self.add_button.setToolTip("Hitch another trailer behind the last body")
        self.add_button.clicked.connect(self._add)
        self.remove_button = QPushButton("Remove trailer", self)
        self.remove_button.setToolTip("Unhitch the selected trailer (the last if none is)")
        self.remove_button.clicked.connect(self._remove)
        row.addWidget(self.add_button)
        row.addWidget(self.remove_button)
        lay.addLayout(row)
        self.message = _message_label(self)
        lay.addWidget(self.message)

    def vehicle(self) -> Any:
        fleet = self.doc.project.fleet
        return fleet[min(max(self._member(), 0), len(fleet) - 1)]

    def load(self) -> None:
        """Show the vehicle's trailers (not while this box's own edit is being pushed: the
        table already shows it, and a table is not rebuilt inside its own signal)."""
        if self._pushing:
            return
        c = self.vehicle()
        self._loading = True
        try:
            self.table.setRowCount(len(c.trailers))
            self._footprints = [footprint_text(t.footprint) for t in c.trailers]
            for r, t in enumerate(c.trailers):
                cells = (t.name, f"{t.hitch_x_m:.4g}", f"{t.drawbar_m:.4g}",
                         "" if t.margin_m is None else f"{t.margin_m:.4g}",
                         f"{t.max_hitch_deg:.4g}")
                for col, text in enumerate(cells):
                    self.table.setItem(r, col, QTableWidgetItem(text))
        finally:
            self._loading = False
        self._show_footprint(self.table.currentRow())
        self.remove_button.setEnabled(bool(c.trailers))
        self.add_button.setEnabled(len(c.trailers) < MAX_TRAILERS)
        _show(self.message, None)

    def _selected(self) -> int:
        """The trailer whose footprint the line edits (the current row, else the first)."""
        r = self.table.currentRow()
        return r if 0 <= r < self.table.rowCount() else (0 if self.table.rowCount() else -1)

    def _show_footprint(self, *_args: Any) -> None:
        r = self._selected()
        self.footprint.setEnabled(r >= 0)
        if r < 0:
            self.footprint_label.setText("Footprint")
            self.footprint.clear()
            return
        it = self.table.item(r, 0)
        self.footprint_label.setText(f"Footprint of {it.text() if it else 'trailer'!s} "
                                     "(x y; \u2026, metres)")
        self.footprint.setText(self._footprints[r] if r < len(self._footprints) else "")

    def _footprint_edited(self) -> None:
        r = self._selected()
        if r < 0 or r >= len(self._footprints) or \
                self.footprint.text().strip() == self._footprints[r]:
            return
        self._footprints[r] = self.footprint.text().strip()
        self._cell_changed(r, -1)

    def rows(self) -> list[dict[str, str]]:
        """The table's cells as text, each row with its trailer's footprint text."""
        out = []
        for r in range(self.table.rowCount()):
            row = {}
            for col, (key, _h, _t) in enumerate(TRAILER_COLUMNS):
                it = self.table.item(r, col)
                row[key] = it.text() if it is not None else ""
            row["footprint"] = self._footprints[r] if r < len(self._footprints) else ""
            out.append(row)
        return out

    def _push(self, trailers: tuple[Trailer, ...], text: str | None = None,
              burst: int | None = None) -> None:
        c = self.vehicle()
        if trailers == c.trailers:
            return
        extras = {t.name: t.extra for t in c.trailers}
        trailers = tuple(dataclasses.replace(t, extra=dict(extras.get(t.name, {})))
                         for t in trailers)
        self._pushing = True
        try:
            self.doc.set_vehicle(self._member(), dataclasses.replace(c, trailers=trailers),
                                 burst=burst, text=text)
        finally:
            self._pushing = False

    def _cell_changed(self, _r: int, _c: int) -> None:
        if self._loading:
            return
        try:
            trailers = trailers_from_rows(self.rows())
        except SwatheInputError as exc:
            text = trailer_message(exc)
            _show(self.message, text)
            self.doc.set_stale(f"{text.lstrip(chr(0x26a0)).strip()} (the results are of the "
                               "last valid trailers)")
            return
        _show(self.message, None)
        self.doc.set_stale(None)
        self._push(trailers, burst=self._burst())

    def _add(self) -> None:
        c = self.vehicle()
        names = {t.name for t in c.trailers}
        n = len(c.trailers) + 1
        while f"cart {n}" in names:
            n += 1
        ahead = c.trailers[-1].footprint if c.trailers else c.footprint
        rear = min(x for x, _y in ahead)
        fp = c.trailers[-1].footprint if c.trailers else \
            ((-0.3, -0.25), (0.3, -0.25), (0.3, 0.25), (-0.3, 0.25))
        t = Trailer(f"cart {n}", round(rear - 0.05, 3), 0.6, tuple(fp))
        self._push((*c.trailers, t), text=f"Hitch trailer {t.name!r} to {c.name!r}")
        self.load()

    def _remove(self) -> None:
        c = self.vehicle()
        if not c.trailers:
            return
        r = self.table.currentRow()
        r = r if 0 <= r < len(c.trailers) else len(c.trailers) - 1
        trailers = c.trailers[:r] + c.trailers[r + 1:]
        self._push(trailers, text=f"Unhitch trailer {c.trailers[r].name!r} from {c.name!r}")
        self.load()


__all__ = ["FleetBox", "TrailerBox", "footprint_text", "parse_footprint", "trailer_message",
           "trailers_from_rows"]
