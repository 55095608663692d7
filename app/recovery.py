"""The dialog that offers back the work a crash left in autosaves.

Every autosave found is listed, newest first: the user recovers one, deletes those not
wanted (after a confirmation: it is unsaved work), or keeps them all for a later start.
Nothing is deleted without being asked.
"""

from __future__ import annotations

from collections.abc import Callable

from PySide6.QtWidgets import (
    QAbstractItemView,
    QDialog,
    QDialogButtonBox,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QMessageBox,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from .autosave import AutosaveEntry, discard


class RecoveryDialog(QDialog):
    """Choose an autosave to recover; ``chosen`` holds it after *Recover*."""

    def __init__(self, entries: list[AutosaveEntry], parent: QWidget | None = None,
                 confirm: Callable[[AutosaveEntry], bool] | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Recover unsaved work")
        self.entries = list(entries)
        self.chosen: AutosaveEntry | None = None
        self._confirm = confirm or self._ask_delete
        lay = QVBoxLayout(self)
        intro = QLabel("Swathe did not close cleanly last time. This unsaved work was kept:")
        intro.setWordWrap(True)
        lay.addWidget(intro)
        self.list = QListWidget()
        self.list.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.list.setMinimumWidth(460)
        self.list.itemDoubleClicked.connect(lambda _it: self._recover())
        lay.addWidget(self.list)
        note = QLabel("Recover opens the chosen work as unsaved changes to its project. "
                      "Keep for later leaves every copy for the next start.")
        note.setWordWrap(True)
        lay.addWidget(note)
        self.buttons = QDialogButtonBox()
        self.recover_button = QPushButton("Recover")
        self.recover_button.setDefault(True)
        self.delete_button = QPushButton("Delete...")
        self.later_button = QPushButton("Keep for later")
        self.buttons.addButton(self.recover_button, QDialogButtonBox.ButtonRole.AcceptRole)
        self.buttons.addButton(self.delete_button, QDialogButtonBox.ButtonRole.DestructiveRole)
        self.buttons.addButton(self.later_button, QDialogButtonBox.ButtonRole.RejectRole)
        self.recover_button.clicked.connect(self._recover)
        self.delete_button.clicked.connect(self._delete)
        self.later_button.clicked.connect(self.reject)
        lay.addWidget(self.buttons)
        self._fill()

    def _fill(self) -> None:
        self.list.clear()
        for e in self.entries:
            it = QListWidgetItem(e.describe())
            it.setToolTip(str(e.original_path or e.file))
            self.list.addItem(it)
        if self.entries:
            self.list.setCurrentRow(0)
        self.recover_button.setEnabled(bool(self.entries))
        self.delete_button.setEnabled(bool(self.entries))

    def selected(self) -> AutosaveEntry | None:
        row = self.list.currentRow()
        return self.entries[row] if 0 <= row < len(self.entries) else None

    def _recover(self) -> None:
        e = self.selected()
        if e is not None:
            self.chosen = e
            self.accept()

    def _ask_delete(self, e: AutosaveEntry) -> bool:
        ans = QMessageBox.question(
            self, "Delete autosaved work",
            f"Delete the unsaved work of {e.describe().splitlines()[0]}?\n\n"
            "This cannot be undone.")
        return ans == QMessageBox.StandardButton.Yes

    def _delete(self) -> None:
        e = self.selected()
        if e is None or not self._confirm(e):
            return
        discard(e)
        self.entries.remove(e)
        self._fill()
        if not self.entries:
            self.reject()
