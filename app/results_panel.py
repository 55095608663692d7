"""The check results panel: verdict, violations, door clearances and the sizing answers.

Owns :class:`ResultsPanel`: it lists the violations (a click asks the canvas to zoom there),
the door clearances, the least clearance, and on request the sizing answers (widest and
longest footprint that clears, door widths needed), computed in the background with Cancel.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import QPointF, Qt, Signal
from PySide6.QtGui import QColor, QIcon, QPainter, QPixmap
from PySide6.QtWidgets import (
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QProgressBar,
    QPushButton,
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

from .document import clearance_words
from .qstyle import MESSAGE_STYLE
from .render import (
    draw_marker,
)
from .tables import _item, _numbers_whole, _table
from .workers import Cancelled, CancelToken, Job, run_in_background


# -- results --------------------------------------------------------------------------------
def marker_icon(kind: str, size: int = 16) -> QIcon:
    pm = QPixmap(size, size)
    pm.fill(QColor(0, 0, 0, 0))
    p = QPainter(pm)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    draw_marker(p, kind, QPointF(size / 2, size / 2), size * 0.42)
    p.end()
    return QIcon(pm)


_VERDICT_STYLE = "QLabel { color: %s; } QLabel:disabled { color: #9A9A9A; }"



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
