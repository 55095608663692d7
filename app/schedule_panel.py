"""The schedule table panel: the segment schedule, exported as CSV or JSON.

Owns :class:`ScheduleTable`, which writes byte for byte what ``swathe schedule`` writes.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

from PySide6.QtCore import QTimer
from PySide6.QtWidgets import (
    QFileDialog,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from .qstyle import MESSAGE_STYLE
from .tables import _item, _table


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
        from kinematics.files.jsonio import atomic_write_pieces
        from kinematics.timing.schedule import schedule_json_pieces

        s = self.schedule()
        if s is None:
            raise ValueError("there is no schedule to export")
        atomic_write_pieces(path, schedule_json_pieces(s))

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
