"""The workbench window's files: open, import, save, export, recent files, drag and drop,
and the background jobs that read big drawings.

Owns :class:`WindowFiles`, the part of :class:`app.main_window.MainWindow` that reads and
writes files (each failure of user input is one dialog naming the file and the place; the
open document is never replaced by a broken one), and the file-dialog filters.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt, QTimer
from PySide6.QtWidgets import (
    QApplication,
    QDialog,
    QFileDialog,
    QMessageBox,
)

from kinematics.errors import SwatheInputError

from .import_dialogs import DxfImportDialog, SvgImportDialog
from .window_build import _keys

SAMPLES = Path(__file__).resolve().parents[1] / "sample_floorplans"
DEMO_PROJECT = SAMPLES / "demo.swathe.json"
PROJECT_FILTER = "Swathe projects (*.swathe.json);;JSON (*.json);;All files (*)"
FLOOR_FILTER = ("Floor plans (*.floor.json *.dxf *.svg);;Swathe floor plan (*.floor.json);;"
                "DXF drawing (*.dxf);;SVG drawing (*.svg);;All files (*)")
OPEN_FILTER = ("Swathe projects (*.swathe.json);;Floor plans, for a new project "
               "(*.floor.json *.dxf *.svg);;JSON (*.json);;All files (*)")
MAX_RECENT = 8


class WindowFiles:
    """Files, exports, recent files, drops and background reads of
    :class:`app.main_window.MainWindow` (a mixin: it uses the window's document)."""

    # -- files ------------------------------------------------------------------------------
    def confirm_discard(self) -> bool:
        """Ask to save unsaved changes; True when the caller may go on."""
        if not self.doc.dirty:
            return True
        ans = QMessageBox.question(
            self, "Unsaved changes", f"Save the changes to {self.doc.title().rstrip(' *')}?",
            QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
            | QMessageBox.StandardButton.Cancel)
        if ans == QMessageBox.StandardButton.Save:
            return self._menu_save()
        return ans == QMessageBox.StandardButton.Discard

    @staticmethod
    def is_floorplan_path(path: str | Path) -> bool:
        """A floor-plan file (native, DXF or SVG) rather than a project."""
        p = Path(path)
        return p.name.lower().endswith(".floor.json") or p.suffix.lower() in (".dxf", ".svg")

    def ask_new_from_plan(self, path: Path) -> bool:
        """Asked when Open project is given a floor plan: start a new project on it?"""
        ans = QMessageBox.question(
            self, "Open a floor plan",
            f"{path.name} is a floor plan, not a project.\n\nStart a new project on it?",
            QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.Cancel)
        return ans == QMessageBox.StandardButton.Yes

    def new_project_from_floorplan(self, path: str | Path, options: dict[str, Any] | None = None,
                                   background: bool = True) -> bool:
        """A new project (default chassis, no routes) on the floor plan at ``path``."""
        self.doc.new_project()
        return self.open_floorplan_file(path, options, background)

    def open_project_file(self, path: str | Path) -> bool:
        """Open a project; a bad file shows one message and keeps the current document.

        Given a floor plan instead, offers a new project on it."""
        if self.is_floorplan_path(path):
            if not self.ask_new_from_plan(Path(path)):
                return False
            return self.new_project_from_floorplan(path)
        try:
            self.doc.open_project(path)
        except SwatheInputError as exc:
            self.show_input_error(exc, "open the project")
            return False
        self._add_recent(Path(path))
        self.canvas.fit()
        self.statusBar().showMessage(f"Opened {Path(path).name}", 5000)
        return True

    def open_floorplan_file(self, path: str | Path, options: dict[str, Any] | None = None,
                            background: bool = True) -> bool:
        """Use a floor plan file (native, DXF or SVG) in the open project.

        For DXF without ``options`` the layer dialog asks; for SVG the scale is asked.
        Loading runs off the GUI thread with a cancellable progress dialog.
        """
        p = Path(path).resolve()
        suffix = p.suffix.lower()
        if options is None:
            options = {}
            if suffix == ".dxf":
                try:
                    from kinematics.files.dxf_import import dxf_layers

                    layers = dxf_layers(p)
                except SwatheInputError as exc:
                    self.show_input_error(exc, "read the drawing")
                    return False
                dlg = DxfImportDialog(p, layers, self)
                if dlg.exec() != QDialog.DialogCode.Accepted:
                    return False
                options = dlg.options()
            elif suffix == ".svg":
                try:
                    from kinematics.files.svg_import import svg_groups

                    groups = svg_groups(p)
                except SwatheInputError as exc:
                    self.show_input_error(exc, "read the drawing")
                    return False
                sdlg = SvgImportDialog(p, groups, self)
                if sdlg.exec() != QDialog.DialogCode.Accepted:
                    return False
                options = sdlg.options()
        if suffix in (".dxf", ".svg"):
            ref: str | dict = {"file": str(p), **options}
        else:
            ref = str(p)

        def load():
            from kinematics.files.floorplan import zone_layers_from
            from kinematics.files.loader import load_floorplan

            opts = dict(options)
            if opts.get("zones"):  # the import object's zone layers, as a project reads them
                opts["zones"] = zone_layers_from(opts["zones"], str(p), "zones")
            return load_floorplan(p, **opts)

        def done(fp) -> None:
            self.doc.set_floorplan(fp, ref)
            self._add_recent(p)
            self.canvas.fit()
            self.statusBar().showMessage(f"Floor plan {p.name}: {len(fp.walls)} walls, "
                                         f"{len(fp.obstacles)} obstacles, {len(fp.doors)} doors"
                                         + (f", {len(fp.zones)} zones" if fp.zones else ""),
                                         8000)

        def failed(text: str) -> None:
            if str(p) not in text:
                text = f"{p}: {text}"
            self.show_error("Swathe could not import the floor plan",
                            f"{text}\n\nNothing was changed in the open project.")

        if not background:
            from .workers import error_text

            try:
                done(load())
            except Exception as exc:  # noqa: BLE001 - every failure becomes one dialog
                failed(error_text(exc))
                return False
            return True
        self.run_task(f"Reading {p.name}...", load, done, failed)
        return True

    def run_task(self, label: str, fn: Callable[[], Any], done: Callable[[Any], None],
                 failed: Callable[[str], None]) -> None:
        """Run ``fn`` off the GUI thread behind a progress dialog; Cancel drops its result."""
        from .workers import ProgressDialog, run_in_background

        dlg = ProgressDialog(label, self)
        dlg.setRange(0, 0)  # the importers report no fractions: a busy bar

        # The job may finish before anything can be connected to it after it starts, so
        # every ending goes through the callbacks, which are connected before the start.
        def end() -> None:
            dlg.reset()
            dlg.close()
            dlg.deleteLater()
            self._task = None
            self.taskFinished.emit()

        def ok(out: Any) -> None:
            end()
            done(out)

        def bad(text: str) -> None:
            end()
            failed(text)

        def cancelled() -> None:
            end()
            self.statusBar().showMessage("Cancelled; the open project is unchanged.", 5000)

        job = run_in_background(lambda _token: fn(), done_cb=ok, error_cb=bad,
                                cancelled_cb=cancelled, parent=self)
        dlg.canceled.connect(job.cancel)
        self._task = job

    def save_to(self, path: str | Path | None = None) -> bool:
        try:
            target = self.doc.save(path)
        except (OSError, ValueError) as exc:
            self.show_error("Swathe could not save", f"{path or self.doc.path}: {exc}")
            return False
        self._add_recent(target)
        self.statusBar().showMessage(f"Saved {target}", 5000)
        return True

    def export_schedule(self, path: str | Path, fmt: str | None = None) -> bool:
        """Write the current route's schedule as CSV or JSON (by ``fmt`` or the suffix)."""
        from kinematics.files.jsonio import atomic_write_pieces
        from kinematics.timing.schedule import schedule_json_pieces, schedule_to_csv

        r = self.doc.route()
        if r is None:
            self.show_error("Nothing to export", "The project has no route yet.")
            return False
        sched = self.doc.schedule(r.name)
        if sched is None:
            self.show_error("Nothing to export", f"Route {r.name!r} could not be planned: "
                            f"{self.doc.error(r.name) or 'no drivable segments'}")
            return False
        p = Path(path)
        fmt = fmt or ("csv" if p.suffix.lower() == ".csv" else "json")
        pieces = iter([schedule_to_csv(sched)]) if fmt == "csv" else schedule_json_pieces(sched)
        try:
            atomic_write_pieces(p, pieces)
        except OSError as exc:
            self.show_error("Swathe could not export", f"{p}: {exc.strerror or exc}")
            return False
        self.statusBar().showMessage(f"Schedule of {r.name!r} written to {p}", 6000)
        return True

    def current_sizing(self) -> dict | None:
        """The results panel's sizing answers if they still hold for what is open."""
        panel = self.results_panel
        return panel.current_sizing() if hasattr(panel, "current_sizing") else None

    def export_report(self, path: str | Path) -> bool:
        """Write the one-page report (PDF or PNG by the suffix) of every route.

        The sizing answers the results panel holds for the current route go into the report
        (answers made stale by an edit do not).
        """
        from .report import export_report

        p = Path(path)
        QApplication.setOverrideCursor(Qt.CursorShape.WaitCursor)
        try:
            export_report(self.doc.project, p, sizing=self.current_sizing())
        except SwatheInputError as exc:
            self.show_error("Swathe could not write the report", exc.message)
            return False
        except OSError as exc:
            self.show_error("Swathe could not write the report", f"{p}: {exc.strerror or exc}")
            return False
        finally:
            QApplication.restoreOverrideCursor()
        self.statusBar().showMessage(f"Report written to {p}", 6000)
        return True

    def export_picture(self, path: str | Path) -> bool:
        """Write the plan picture as ``swathe render PROJECT -o FILE.png`` does."""
        from .render import render_project_png

        p = Path(path)
        if p.suffix.lower() != ".png":
            self.show_error("Swathe could not write the picture",
                            f"{p}: expected a file name ending in .png")
            return False
        QApplication.setOverrideCursor(Qt.CursorShape.WaitCursor)
        try:
            render_project_png(self.doc.project, p)
        except SwatheInputError as exc:
            self.show_error("Swathe could not write the picture", exc.message)
            return False
        except OSError as exc:
            self.show_error("Swathe could not write the picture", f"{p}: {exc.strerror or exc}")
            return False
        finally:
            QApplication.restoreOverrideCursor()
        self.statusBar().showMessage(f"Picture written to {p}", 6000)
        return True

    def _export_base(self) -> Path:
        name = self.doc.path.name if self.doc.path else "untitled.swathe.json"
        for end in (".swathe.json", ".json"):
            if name.endswith(end):
                name = name[: -len(end)]
                break
        return Path(self._start_dir()) / name

    def _menu_report(self) -> None:
        path, chosen = QFileDialog.getSaveFileName(
            self, "Export report", str(self._export_base()) + ".report.pdf",
            "PDF (*.pdf);;PNG picture of the page (*.png)")
        if path:
            if Path(path).suffix.lower() not in (".pdf", ".png"):
                path += ".png" if chosen.startswith("PNG") else ".pdf"
            self.export_report(path)

    def _menu_picture(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Export plan picture",
                                              str(self._export_base()) + ".png", "PNG (*.png)")
        if path:
            if Path(path).suffix.lower() != ".png":
                path += ".png"
            self.export_picture(path)

    def _start_dir(self) -> str:
        return str(self.doc.path.parent) if self.doc.path else str(Path.home())

    def _menu_new(self) -> None:
        if self.confirm_discard():
            self.doc.new_project()
            self.statusBar().showMessage(
                f"New project: open a floor plan ({_keys(self.act_open_plan)}) or draw walls, "
                f"then press {_keys(self.act_add)} to add a route.", 8000)

    def _menu_open(self) -> None:
        if not self.confirm_discard():
            return
        path, _ = QFileDialog.getOpenFileName(self, "Open project", self._start_dir(),
                                              OPEN_FILTER)
        if path:
            self.open_project_file(path)

    def _menu_new_from_plan(self) -> None:
        if not self.confirm_discard():
            return
        path, _ = QFileDialog.getOpenFileName(self, "New project from floor plan",
                                              self._start_dir(), FLOOR_FILTER)
        if path:
            self.new_project_from_floorplan(path)

    def _menu_open_plan(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Open floor plan", self._start_dir(),
                                              FLOOR_FILTER)
        if path:
            self.open_floorplan_file(path)

    def _menu_save(self) -> bool:
        if self.doc.path is None or not self.doc.path.parent.exists():
            return self._menu_save_as()
        return self.save_to()

    def _menu_save_as(self) -> bool:
        start = str(self.doc.path) if self.doc.path else str(Path.home() / "untitled.swathe.json")
        path, _ = QFileDialog.getSaveFileName(self, "Save project as", start, PROJECT_FILTER)
        if not path:
            return False
        if not path.endswith(".json"):
            path += ".swathe.json"
        return self.save_to(path)

    def _menu_export(self) -> None:
        r = self.doc.route()
        if r is None:
            return
        safe = "".join(c if c.isalnum() or c in "-_" else "_" for c in r.name)
        path, chosen = QFileDialog.getSaveFileName(
            self, "Export schedule", str(Path(self._start_dir()) / f"{safe}.schedule.csv"),
            "CSV (*.csv);;JSON (*.json)")
        if path:
            self.export_schedule(path, "json" if chosen.startswith("JSON") else None)

    def open_any(self, path: str | Path) -> bool:
        """Open a dropped or recent file: a project, or a floor plan for this project."""
        p = Path(path)
        name = p.name.lower()
        if name.endswith(".floor.json") or p.suffix.lower() in (".dxf", ".svg"):
            return self.open_floorplan_file(p)
        if not self.confirm_discard():
            return False
        return self.open_project_file(p)

    # -- recent files -----------------------------------------------------------------------
    def recent_files(self) -> list[str]:
        v = self.settings.value("recent_files", [])
        if isinstance(v, str):
            v = [v]
        return [str(x) for x in (v or [])]

    def _add_recent(self, path: Path) -> None:
        s = str(Path(path).resolve())
        items = [s] + [x for x in self.recent_files() if x != s]
        self.settings.setValue("recent_files", items[:MAX_RECENT])
        self._rebuild_recent()

    def _rebuild_recent(self) -> None:
        self.recent_menu.clear()
        items = self.recent_files()
        for k, p in enumerate(items):
            a = self.recent_menu.addAction(f"&{k + 1} {Path(p).name}   ({Path(p).parent})")
            a.triggered.connect(lambda _c=False, q=p: self.open_any(q))
        self.recent_menu.setEnabled(bool(items))

    # -- drag and drop ----------------------------------------------------------------------
    @staticmethod
    def _dropped_path(mime) -> Path | None:
        for url in mime.urls() if mime.hasUrls() else []:
            if url.isLocalFile():
                p = Path(url.toLocalFile())
                if p.name.lower().endswith(".json") or p.suffix.lower() in (".dxf", ".svg"):
                    return p
        return None

    def dragEnterEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        if self._dropped_path(ev.mimeData()) is not None:
            ev.acceptProposedAction()
        else:
            ev.ignore()

    def dropEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        p = self._dropped_path(ev.mimeData())
        if p is not None:
            ev.acceptProposedAction()
            QTimer.singleShot(0, lambda: self.open_any(p))
