"""Traffic panel: where two routes' swept bands overlap and whether vehicles meeting head-on
can pass, from :func:`kinematics.check.traffic.traffic` on the document's checks (each the
whole train's band, with the route's own vehicle).

The panel computes on request (the button), since it needs every route's check; an edit
after that greys the table and says so until the next computation. Clicking a row centres the
plan on the place and outlines it (the conflict area itself, or a circle round the narrowest
place of a shared corridor).
"""

from __future__ import annotations

from typing import Any

import shapely
from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QHBoxLayout,
    QLabel,
    QPushButton,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from .panels import MESSAGE_STYLE, _numbers_whole, _table

#: Radius of the circle outlining a corridor's narrowest place, metres.
PLACE_R_M = 0.4


def traffic_rows(report: dict) -> list[dict]:
    """One row per conflict area and per shared corridor: kind, routes, place, amount, text."""
    rows = []
    for c in report.get("conflicts", []):
        dirs = ", ".join(f"{d['route']} {d['travel_deg']:.0f} deg at {d['station_m']:.2f} m"
                         for d in c["directions"])
        rows.append({"kind": "conflict", "routes": " / ".join(c["routes"]), "x": c["x"],
                     "y": c["y"], "amount": f"{c['area_m2']:.2f} m2",
                     "message": f"Bands of {c['routes'][0]!r} and {c['routes'][1]!r} overlap "
                                f"over {c['area_m2']:.2f} m2 at ({c['x']:.2f}, {c['y']:.2f}); "
                                f"travel there: {dirs}", "routes_list": list(c["routes"])})
    for c in report.get("corridors", []):
        n = c["narrowest"]
        spare = n["spare_m"] * 1000.0
        rows.append({"kind": "passing" if c["verdict"] == "passing" else "single lane",
                     "routes": " / ".join(c["routes"]), "x": n["x"], "y": n["y"],
                     "amount": f"{spare:+.0f} mm",
                     "message": f"{c['message']} (width {n['width_m']:.3f} m, needed "
                                f"{n['need_m']:.3f} m)", "routes_list": list(c["routes"])})
    return rows


class TrafficPanel(QWidget):
    """Conflict areas and head-on passing verdicts between the project's routes.

    Signals
    -------
    zoomRequested(float, float)
        The plan point of the clicked row.
    """

    zoomRequested = Signal(float, float)
    placeShown = Signal(object)  # the shapely geometries outlining the clicked row's place

    def __init__(self, doc: Any, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        self.report: dict | None = None
        self.rows: list[dict] = []
        self._bands: dict[str, Any] = {}
        lay = QVBoxLayout(self)
        lay.setContentsMargins(6, 6, 6, 6)
        top = QHBoxLayout()
        self.compute_button = QPushButton("Check traffic between routes")
        self.compute_button.setToolTip("Overlaps of every two routes' swept bands, and whether "
                                       "vehicles meeting head-on pass side by side")
        self.compute_button.clicked.connect(self.compute)
        top.addWidget(self.compute_button)
        top.addStretch(1)
        lay.addLayout(top)
        self.state = QLabel("Not computed yet.")
        self.state.setWordWrap(True)
        lay.addWidget(self.state)
        self.stale_label = QLabel("Routes changed since: press the button to check again.")
        self.stale_label.setStyleSheet(MESSAGE_STYLE)
        self.stale_label.setWordWrap(True)
        self.stale_label.hide()
        lay.addWidget(self.stale_label)
        self.table = _table(["Kind", "Routes", "Amount"])
        for col, tip in enumerate(("conflict: the two bands overlap; passing / single lane: "
                                   "routes meeting head-on in a shared corridor",
                                   "The two routes",
                                   "Overlap area, or spare (+) / missing (-) width at the "
                                   "narrowest place")):
            self.table.horizontalHeaderItem(col).setToolTip(tip)
        _numbers_whole(self.table)
        self.table.cellClicked.connect(self.show_row)
        self.table.currentCellChanged.connect(lambda r, _c, _pr, _pc: self.show_row(r, 0))
        lay.addWidget(self.table, 1)
        self.message = QLabel()
        self.message.setWordWrap(True)
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        lay.addWidget(self.message)
        for sig in ("resultsChanged", "projectReplaced"):
            s = getattr(doc, sig, None)
            if s is not None:
                s.connect(self._changed)

    def _changed(self, *_args) -> None:
        if self.report is not None:
            self.stale_label.show()
            self.table.setEnabled(False)

    def compute(self) -> dict:
        """Check every route and compare every two (see the module text)."""
        from kinematics.check.traffic import band_of, traffic

        bands = []
        skipped = []
        for name in self.doc.route_names():
            chk = self.doc.check(name)
            if chk is None:
                skipped.append(name)
                continue
            bands.append(band_of(chk, self.doc.vehicle(name)))
        self._bands = {b.name: b for b in bands}
        self.report = traffic(bands, self.doc.obstacle_index())
        self.rows = traffic_rows(self.report)
        self.table.setRowCount(len(self.rows))
        for r, row in enumerate(self.rows):
            for col, key in enumerate(("kind", "routes", "amount")):
                it = QTableWidgetItem(row[key])
                it.setToolTip(row["message"])
                if col == 2:
                    it.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                self.table.setItem(r, col, it)
        n_c, n_p = len(self.report["conflicts"]), len(self.report["corridors"])
        single = sum(c["verdict"] != "passing" for c in self.report["corridors"])
        text = (f"{len(bands)} routes compared: {n_c} conflict area{'s' * (n_c != 1)}, "
                f"{n_p} shared corridor{'s' * (n_p != 1)} head-on ({single} single lane).")
        if skipped:
            text += " Not planned, left out: " + ", ".join(skipped) + "."
        self.state.setText(text)
        self.stale_label.hide()
        self.table.setEnabled(True)
        self.message.clear()
        return self.report

    def place_geometry(self, r: int) -> list:
        """What outlines row ``r``'s place: the conflict area's piece holding its point, or a
        circle round a corridor's narrowest place."""
        row = self.rows[r]
        pt = shapely.Point(row["x"], row["y"])
        if row["kind"] == "conflict":
            a, b = (self._bands.get(n) for n in row["routes_list"])
            if a is not None and b is not None and a.band is not None and b.band is not None:
                parts = shapely.get_parts(shapely.intersection(a.band, b.band))
                near = [g for g in parts if g.geom_type == "Polygon" and g.distance(pt) < 1e-6]
                if near:
                    return near
        return [pt.buffer(PLACE_R_M)]

    def show_row(self, r: int, _c: int = 0) -> None:
        if not 0 <= r < len(self.rows):
            return
        row = self.rows[r]
        self.message.setText(row["message"])
        self.placeShown.emit(self.place_geometry(r))
        self.zoomRequested.emit(float(row["x"]), float(row["y"]))
