"""Read-only tables of the side panels: a row item, a table, and number columns kept whole.

Shared by the results, schedule and traffic panels.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QAbstractItemView,
    QHeaderView,
    QTableWidget,
    QTableWidgetItem,
)


def _item(text: str, align_right: bool = False, data: Any = None) -> QTableWidgetItem:
    it = QTableWidgetItem(text)
    it.setFlags(Qt.ItemFlag.ItemIsSelectable | Qt.ItemFlag.ItemIsEnabled)
    if align_right:
        it.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
    if data is not None:
        it.setData(Qt.ItemDataRole.UserRole, data)
    return it


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
