"""Crash-recoverable autosave of the open document.

While the document has unsaved changes, a copy is written every ``interval_ms`` and a few
seconds after the last edit, atomically, into the per-user application-data folder (not next to
the project, which may be read-only). The copy is a complete project file with the floor plan
inlined, plus a ``swathe_autosave`` header naming the original project, the time and the
original floor plan reference. A clean save or a clean exit removes it; a crash leaves it,
and the next start offers it back.
"""

from __future__ import annotations

import dataclasses
import hashlib
import os
import platform
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from PySide6.QtCore import QObject, QStandardPaths, QTimer

from kinematics.files.jsonio import parse_json, write_json
from kinematics.files.project import project_from_dict, project_to_dict

from .document import Document

HEADER = "swathe_autosave"
SUFFIX = ".autosave.swathe.json"


@dataclass(frozen=True)
class AutosaveEntry:
    """One autosave found on disk."""

    file: Path
    original_path: Path | None
    saved_at: datetime
    pid: int | None = None
    host: str = ""

    def describe(self) -> str:
        """Two lines for people: the project (or "untitled") and when it was autosaved,
        then its folder."""
        name = self.original_path.name if self.original_path else "untitled project"
        where = str(self.original_path.parent) if self.original_path else "never saved"
        return f"{name} \u2014 autosaved {self.saved_at:%Y-%m-%d %H:%M:%S}\n    {where}"


def default_directory() -> Path:
    """``<app data>/autosave`` from QStandardPaths, or ``~/.swathe/autosave``."""
    base = QStandardPaths.writableLocation(QStandardPaths.StandardLocation.AppDataLocation)
    return Path(base or Path.home() / ".swathe") / "autosave"


def file_for(directory: Path, project_path: Path | None) -> Path:
    """The autosave file of a project: one per project path, one per process when untitled."""
    key = str(project_path.resolve()) if project_path else f"untitled-{os.getpid()}"
    return directory / (hashlib.sha1(key.encode("utf-8")).hexdigest()[:16] + SUFFIX)


def _read_header(file: Path) -> AutosaveEntry | None:
    try:
        d = parse_json(file.read_text(encoding="utf-8"), str(file))
        h = d[HEADER]
        orig = Path(h["original_path"]) if h.get("original_path") else None
        pid = h.get("pid")
        return AutosaveEntry(file, orig, datetime.fromisoformat(h["saved_at"]),
                             pid if isinstance(pid, int) and not isinstance(pid, bool) else None,
                             str(h.get("host") or ""))
    except Exception:  # noqa: BLE001 - a half-written or foreign file is simply not offered
        return None


def _host() -> str:
    return platform.node()


def _running_elsewhere(entry: AutosaveEntry) -> bool:
    """True if the autosave belongs to another Swathe still running on this machine (its
    work is not lost; offering it would fork it). Asked only on POSIX, where signal 0 tests a
    process without touching it (POSIX kill(2)); a reused process id merely postpones the
    offer to a later start."""
    if entry.pid is None or entry.pid == os.getpid() or entry.host != _host() \
            or os.name != "posix":
        return False
    try:
        os.kill(entry.pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True  # alive, another user's
    except OSError:
        return False
    return True


def pending_autosaves(directory: Path | None = None) -> list[AutosaveEntry]:
    """Autosaves a crash left on disk, newest first (not those of a Swathe still running)."""
    directory = Path(directory) if directory is not None else default_directory()
    if not directory.is_dir():
        return []
    found = [e for f in directory.glob("*" + SUFFIX)
             if (e := _read_header(f)) is not None and not _running_elsewhere(e)]
    return sorted(found, key=lambda e: e.saved_at, reverse=True)


def recover_into(doc: Document, entry: AutosaveEntry) -> None:
    """Load an autosave into ``doc`` as unsaved work on the original project path.

    Raises :class:`~kinematics.errors.SwatheInputError` if the file cannot be read.
    """
    d = parse_json(entry.file.read_text(encoding="utf-8"), str(entry.file))
    header = d.get(HEADER, {}) if isinstance(d, dict) else {}
    base = entry.original_path.parent if entry.original_path else entry.file.parent
    project = project_from_dict(d, str(entry.file), base)
    extra = {k: v for k, v in project.extra.items() if k != HEADER}
    project = dataclasses.replace(project, floorplan_ref=header.get("floorplan_ref"),
                                  path=entry.original_path, extra=extra)
    doc.replace_project(project, dirty=True)


def discard(entry: AutosaveEntry) -> None:
    """Delete an autosave the user declined."""
    try:
        entry.file.unlink()
    except FileNotFoundError:
        pass


class Autosaver(QObject):
    """Writes ``doc`` to its autosave file while it has unsaved changes.

    Parameters
    ----------
    doc : Document
    directory : Path, optional
        Where autosaves go; :func:`default_directory` if omitted.
    interval_ms : int
        Period of the regular save while dirty.
    settle_ms : int
        Delay after the last edit before saving (a drag produces many edits).
    """

    def __init__(self, doc: Document, directory: Path | None = None,
                 interval_ms: int = 30_000, settle_ms: int = 3_000) -> None:
        super().__init__(doc)
        self.doc = doc
        self.directory = Path(directory) if directory is not None else default_directory()
        self._file = file_for(self.directory, doc.path)
        self._periodic = QTimer(self)
        self._periodic.setInterval(interval_ms)
        self._periodic.timeout.connect(self._tick)
        self._periodic.start()
        self._settle = QTimer(self)
        self._settle.setSingleShot(True)
        self._settle.setInterval(settle_ms)
        self._settle.timeout.connect(self._tick)
        doc.edited.connect(self._settle.start)
        doc.fileStateChanged.connect(self._file_state)
        doc.projectReplaced.connect(self._replaced)

    @property
    def file(self) -> Path:
        return self._file

    def _tick(self) -> None:
        if self.doc.dirty:
            try:
                self.save_now()
            except OSError:
                pass  # a full disk must not interrupt editing; the next tick tries again

    def save_now(self) -> Path:
        """Write the autosave now (atomically) and return its path."""
        p = self.doc.project
        self._file = file_for(self.directory, p.path)
        d = project_to_dict(p, inline_floorplan=True)
        d[HEADER] = {"original_path": str(p.path) if p.path else None,
                     "saved_at": datetime.now().isoformat(timespec="seconds"),
                     "pid": os.getpid(), "host": _host(),
                     "floorplan_ref": p.floorplan_ref if isinstance(p.floorplan_ref,
                                                                    (str, dict)) else None}
        self.directory.mkdir(parents=True, exist_ok=True)
        write_json(self._file, d)
        return self._file

    def remove(self) -> None:
        try:
            self._file.unlink()
        except FileNotFoundError:
            pass

    def _file_state(self) -> None:
        if not self.doc.dirty:
            self.remove()
            self._file = file_for(self.directory, self.doc.path)

    def _replaced(self) -> None:
        new = file_for(self.directory, self.doc.path)
        if new != self._file:
            self.remove()
        self._file = new

    def shutdown(self) -> None:
        """Clean exit: stop the timers and remove the autosave (the user saved or declined)."""
        self._periodic.stop()
        self._settle.stop()
        self.remove()
