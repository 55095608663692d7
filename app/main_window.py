"""The workbench window: the canvas in the middle, panels docked around it, files and undo.

``run_workbench(project_path)`` is what the ``swathe`` command calls: it creates the
application, offers to recover an autosave a crash left behind, opens the project (the bundled
demo when none is given), shows the window and runs the event loop.

Every failure of user input (a bad project, floor plan, DXF or SVG) becomes one dialog that
names the file and the place in it; the open document is never replaced by a broken one.

The window is in parts: this module (the window itself, status read-outs, routes bar,
messages, recovery and life cycle, ``run_workbench``), :mod:`app.window_build` (actions,
menus, toolbars, docks), :mod:`app.window_files` (open, import, save, export, recent files,
drops, background reads) and :mod:`app.import_dialogs` (DXF/SVG role dialogs). Names that
tests and tools import from here (``MainWindow``, ``DEMO_PROJECT``, the dialogs) stay here.
"""

from __future__ import annotations

import dataclasses
import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

from PySide6.QtCore import QSettings, Qt, Signal
from PySide6.QtGui import QKeySequence
from PySide6.QtWidgets import (
    QApplication,
    QDialog,
    QInputDialog,
    QMainWindow,
    QMessageBox,
)

from kinematics.analysis.report_text import CAUTION as SAFETY_CAUTION
from kinematics.errors import SwatheInputError
from kinematics.files.project import Route, Waypoint, route_transitions

from .autosave import AutosaveEntry, Autosaver, discard, pending_autosaves, recover_into
from .canvas import PlanCanvas
from .document import Document, clearance_words
from .import_dialogs import ROLES, ZONE_ROLES, DxfImportDialog, SvgImportDialog  # noqa: F401
from .window_build import WindowBuild, _keys, _placeholder  # noqa: F401
from .window_files import (  # noqa: F401 - also imported from here by others
    DEMO_PROJECT,
    FLOOR_FILTER,
    MAX_RECENT,
    OPEN_FILTER,
    PROJECT_FILTER,
    SAMPLES,
    WindowFiles,
)


def _version() -> str:
    try:
        from importlib.metadata import version

        return version("swathe")
    except Exception:  # noqa: BLE001 - a source checkout without metadata still runs
        return "0.1"


class MainWindow(WindowBuild, WindowFiles, QMainWindow):
    """The Swathe workbench.

    Parameters
    ----------
    doc : Document, optional
    settings : QSettings, optional
        Where recent files are kept (tests pass their own).
    autosave_dir : Path, optional
        Where autosaves go (default: the application-data folder).
    """

    taskFinished = Signal()

    def __init__(self, doc: Document | None = None, settings: QSettings | None = None,
                 autosave_dir: Path | None = None) -> None:
        super().__init__()
        self.doc = doc if doc is not None else Document()
        self.settings = settings if settings is not None else QSettings("Swathe", "Swathe")
        self.autosaver = Autosaver(self.doc, directory=autosave_dir)
        self.error_box: QMessageBox | None = None
        self.about_box: QMessageBox | None = None
        self._task: Any = None  # the running background job, if any
        self.first_shown_at: float | None = None
        self._last_hover_shown = ""
        self.setAcceptDrops(True)
        self.resize(1360, 860)

        self.canvas = PlanCanvas(self.doc, self)
        self.setCentralWidget(self.canvas)
        self._build_actions()
        self._build_menus()
        self._build_toolbars()
        self._build_docks()
        self._build_status()

        d = self.doc
        d.fileStateChanged.connect(self._update_title)
        d.routesChanged.connect(self._refresh_route_bar)
        d.currentRouteChanged.connect(self._refresh_route_bar)
        d.projectReplaced.connect(self._refresh_route_bar)
        d.chassisChanged.connect(self._refresh_route_bar)  # the transitions default follows it
        d.resultsChanged.connect(self._refresh_summary)
        # A message about the project before ("Opened demo.swathe.json") no longer holds.
        d.projectReplaced.connect(self.statusBar().clearMessage)
        d.currentRouteChanged.connect(lambda _i: self._refresh_summary())
        self.canvas.cursorMoved.connect(self._cursor)
        self.canvas.hoverInfo.connect(self._hover)
        self.canvas.message.connect(lambda m: self.statusBar().showMessage(m, 6000))
        self.canvas.selectionChanged.connect(self._selection_changed)
        self.canvas.modeChanged.connect(self._mode_changed)
        self._refresh_route_bar()
        self._refresh_summary()
        self._update_title()
        self._rebuild_recent()

    # -- status -----------------------------------------------------------------------------
    #: Pixels kept free between the hover read-out and the summary on the right.
    STATUS_GAP_PX = 16

    def status_room_px(self) -> int:
        """How wide a status message may be without running into the summary."""
        sb = self.statusBar()
        right = min([w.x() for w in (self.summary_label, self.cursor_label) if w.isVisible()]
                    or [sb.width()])
        return max(0, right - 8 - self.STATUS_GAP_PX)  # Qt starts messages 6 px in

    def _hover(self, text: str) -> None:
        self.hover_text = text
        shown = text
        if text:
            # Cut with an ellipsis where the summary starts (the canvas's tooltip has it all).
            shown = self.statusBar().fontMetrics().elidedText(
                text, Qt.TextElideMode.ElideRight, self.status_room_px())
            self.statusBar().showMessage(shown)
        elif self.statusBar().currentMessage() == self._last_hover_shown:
            self.statusBar().clearMessage()
        self._last_hover_shown = shown

    def _cursor(self, x: float, y: float) -> None:
        self.cursor_label.setText(f"x {x:8.2f} m   y {y:8.2f} m")

    def _update_title(self) -> None:
        name = self.doc.path.name if self.doc.path else "untitled"
        self.setWindowTitle(f"{name}[*] — Swathe")
        self.setWindowModified(self.doc.dirty)

    def _refresh_summary(self) -> None:
        r = self.doc.route()
        if r is None:
            self.summary_label.setText("No route yet: press A and click twice on the plan.")
            return
        err = self.doc.error(r.name)
        chk = self.doc.check(r.name)
        if err and chk is None:
            self.summary_label.setText(f"{r.name}: cannot plan — {err}")
            return
        if chk is None:
            self.summary_label.setText(f"{r.name}: not checked")
            return
        plan = self.doc.plan(r.name)
        from kinematics.motion.segments import path_length

        length = path_length(plan.segments) if plan is not None else 0.0
        n = len(chk.violations)
        state = "all clear" if chk.clear else f"{n} problem{'s' if n != 1 else ''}"
        mc = chk.min_clearance_m
        near = clearance_words(mc) if mc is not None else "nothing solid"
        self.summary_label.setText(f"{r.name}: {length:.1f} m, {state}, {near}  ")

    def _selection_changed(self, i: int) -> None:
        r = self.doc.route()
        has = r is not None and 0 <= i < len(r.waypoints)
        self.act_delete.setEnabled(has)
        self.act_clear_heading.setEnabled(has and r.waypoints[i].heading_deg is not None)

    def _mode_changed(self, mode: str) -> None:
        if mode in self.plan_mode_actions:
            self.plan_mode_actions[mode].setChecked(True)
        else:
            (self.act_add if mode == "add" else self.act_select).setChecked(True)

    def _toggle_band(self, on: bool) -> None:
        self.canvas.show_band = on
        self.canvas.refresh_routes()

    def _set_outlines(self, spacing: float | None) -> None:
        self.canvas.outline_spacing_m = spacing
        self.canvas.refresh_routes()

    def _clear_heading(self) -> None:
        i = self.canvas.selected
        if self.doc.route() is not None and i >= 0:
            self.doc.set_waypoint_heading(self.doc.current_route, i, None)
            self._selection_changed(i)

    # -- routes -----------------------------------------------------------------------------
    def _refresh_route_bar(self, *_args) -> None:
        names = self.doc.route_names()
        self.route_combo.blockSignals(True)
        # Refill only when the names changed: a drag emits routesChanged on every step.
        if names != [self.route_combo.itemText(k) for k in range(self.route_combo.count())]:
            self.route_combo.clear()
            self.route_combo.addItems(names)
        if self.route_combo.currentIndex() != self.doc.current_route:
            self.route_combo.setCurrentIndex(self.doc.current_route)
        self.route_combo.blockSignals(False)
        r = self.doc.route()
        for w in (self.radius_spin, self.reverse_check, self.transitions_check,
                  self.act_route_rename, self.act_route_remove, self.act_export):
            w.setEnabled(r is not None)
        if r is not None:
            if self.radius_spin.value() != r.turn_radius_m:
                self.radius_spin.blockSignals(True)
                self.radius_spin.setValue(r.turn_radius_m)
                self.radius_spin.blockSignals(False)
            if self.reverse_check.isChecked() != r.reverse:
                self.reverse_check.setChecked(r.reverse)
            cc = route_transitions(r, self.doc.project.chassis) == "clothoid"
            if self.transitions_check.isChecked() != cc:
                self.transitions_check.setChecked(cc)
        self._selection_changed(self.canvas.selected)

    def new_route(self, name: str | None = None) -> None:
        """Add a route with two waypoints across the middle of the view and make it current."""
        (x0, x1), (y0, y1) = self.canvas.view.viewRange()
        ym = (y0 + y1) / 2.0
        wps = (Waypoint(x0 + 0.35 * (x1 - x0), ym), Waypoint(x0 + 0.65 * (x1 - x0), ym))
        self.doc.add_route(Route(name or self.doc.unique_route_name(), wps))

    def rename_route(self, new_name: str) -> bool:
        r = self.doc.route()
        if r is None:
            return False
        try:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, name=new_name))
        except ValueError as exc:
            self.show_error("Cannot rename the route", str(exc))
            return False
        return True

    def _menu_rename_route(self) -> None:
        r = self.doc.route()
        if r is None:
            return
        name, ok = QInputDialog.getText(self, "Rename route", "New name:", text=r.name)
        if ok and name.strip() and name != r.name:
            self.rename_route(name.strip())

    def _remove_route(self) -> None:
        r = self.doc.route()
        if r is None:
            return
        # Undoable, so no question first; the status says what went and how to get it back.
        self.doc.remove_route(self.doc.current_route)
        key = self.act_undo.shortcut().toString(QKeySequence.SequenceFormat.NativeText)
        self.statusBar().showMessage(f"Removed route {r.name!r}; {key or 'Undo'} restores it",
                                     10000)

    def _radius_edited(self) -> None:
        r = self.doc.route()
        v = round(self.radius_spin.value(), 4)
        if r is not None and v != r.turn_radius_m:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, turn_radius_m=v))

    def _transitions_edited(self, on: bool) -> None:
        r = self.doc.route()
        want = "clothoid" if on else "none"
        if r is not None and r.transitions != want:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, transitions=want))

    def _reverse_edited(self, on: bool) -> None:
        r = self.doc.route()
        if r is not None and on != r.reverse:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, reverse=on))

    # -- messages ---------------------------------------------------------------------------
    def show_error(self, title: str, text: str) -> QMessageBox:
        """One window-modal message; kept in ``error_box`` (it does not block the caller)."""
        box = QMessageBox(QMessageBox.Icon.Warning, title, text, QMessageBox.StandardButton.Ok,
                          self)
        box.setWindowModality(Qt.WindowModality.WindowModal)
        box.open()
        self.error_box = box
        return box

    def show_input_error(self, exc: SwatheInputError, action: str) -> QMessageBox:
        return self.show_error(f"Swathe could not {action}",
                               f"{exc.message}\n\nNothing was changed in the open project.")

    def show_guide(self) -> QDialog:
        """Help > Guide: modes, shortcuts (read from the actions now) and words."""
        from .guide import GuideDialog

        if self.guide_box is None:
            self.guide_box = GuideDialog(self)
        else:
            self.guide_box.reload()
        self.guide_box.show()
        self.guide_box.raise_()
        return self.guide_box

    def show_about(self) -> QMessageBox:
        box = QMessageBox(self)
        box.setWindowTitle("About Swathe")
        box.setIcon(QMessageBox.Icon.Information)
        box.setTextFormat(Qt.TextFormat.RichText)
        box.setText(f"<h3>Swathe {_version()}</h3><p>Lay out routes for wheeled robots and "
                    "carts on a floor plan, see the swept footprint, find what is in the way "
                    "and export wheel-rate schedules.</p>"
                    f"<p><b>Caution.</b> {SAFETY_CAUTION}</p>")
        box.open()
        self.about_box = box
        return box

    # -- recovery and life cycle ------------------------------------------------------------
    def offer_recovery(self, ask: Callable[[AutosaveEntry], bool] | None = None,
                       choose: Callable[[list[AutosaveEntry]], AutosaveEntry | None]
                       | None = None) -> bool:
        """Offer the autosaves a crash left; True if one was recovered.

        ``choose`` picks one of the entries (newest first) or ``None``; by default the
        recovery dialog asks the user, who may also delete some or keep them all for later.
        ``ask`` is the older form: a yes or no for the newest. Entries not recovered stay on
        disk unless the user deleted them.
        """
        entries = pending_autosaves(self.autosaver.directory)
        if not entries:
            return False
        if choose is None and ask is not None:
            def choose(es: list[AutosaveEntry]) -> AutosaveEntry | None:
                return es[0] if ask(es[0]) else None
        if choose is None:
            from .recovery import RecoveryDialog

            def choose(es: list[AutosaveEntry]) -> AutosaveEntry | None:
                dlg = RecoveryDialog(es, self)
                dlg.exec()
                return dlg.chosen

        entry = choose(entries)
        if entry is None:
            return False
        try:
            recover_into(self.doc, entry)
        except SwatheInputError as exc:
            self.show_input_error(exc, "recover the autosave")
            return False
        # The recovered work is autosaved again under this session; an untitled project's
        # old copy (named after the crashed process) is then no longer needed.
        try:
            written = self.autosaver.save_now()
        except OSError:
            written = entry.file
        if written != entry.file:
            discard(entry)
        self.canvas.fit()
        return True

    def showEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        super().showEvent(ev)
        if not self._legend_tabified:
            self._legend_tabified = True
            self.tabifyDockWidget(self.results_dock, self.legend_dock)
            self.results_dock.raise_()
        if self.first_shown_at is None:
            self.first_shown_at = time.perf_counter()

    def closeEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        if not self.confirm_discard():
            ev.ignore()
            return
        self.autosaver.shutdown()
        ev.accept()


def run_workbench(project_path: str | None) -> int:
    """Open the workbench on ``project_path`` (default: the bundled demo) and run it.

    Returns the application's exit code.
    """
    app = QApplication.instance() or QApplication(sys.argv[:1])
    app.setApplicationName("Swathe")
    app.setOrganizationName("Swathe")
    win = MainWindow()
    recovered = win.offer_recovery()
    if not recovered:
        target = Path(project_path) if project_path else DEMO_PROJECT
        if target.exists():
            win.open_project_file(target)
        else:
            win.statusBar().showMessage(f"{target} not found; starting an empty project", 8000)
    win.show()
    return int(app.exec())
