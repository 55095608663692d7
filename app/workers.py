"""Background work for the window: slow computations off the GUI thread, with Cancel.

:func:`run_in_background` runs a function on Qt's global thread pool (``QRunnable``) and
reports progress, the result or the failure back on the GUI thread through queued signals, so
the window keeps repainting while a sizing search runs. The function gets a
:class:`CancelToken`: it reports progress through it and stops when it says so. A failure
comes back as one line (``SwatheInputError.message`` or a short text), never a traceback.
"""

from __future__ import annotations

import threading
from collections.abc import Callable
from typing import Any

from PySide6.QtCore import QObject, QRunnable, Qt, QThreadPool, Signal
from PySide6.QtWidgets import QProgressDialog, QWidget

from kinematics.errors import SwatheInputError


class Cancelled(Exception):
    """Raised inside a background function when the user pressed Cancel."""


class CancelToken:
    """Shared between the GUI thread (which cancels) and the worker (which checks).

    Calling the token returns ``True`` once cancelled, so it can be passed where a
    ``cancel=`` callable is expected; :meth:`report` sends progress to the GUI thread.
    """

    def __init__(self) -> None:
        self._event = threading.Event()
        self._progress: Callable[[float, str], None] | None = None

    def cancel(self) -> None:
        self._event.set()

    @property
    def cancelled(self) -> bool:
        return self._event.is_set()

    def __call__(self) -> bool:
        return self._event.is_set()

    def raise_if_cancelled(self) -> None:
        if self._event.is_set():
            raise Cancelled()

    def report(self, fraction: float, text: str = "") -> None:
        """Progress from 0 to 1 with an optional line of text (thread-safe)."""
        if self._progress is not None:
            self._progress(float(fraction), str(text))


def error_text(exc: BaseException) -> str:
    """One line a user can read for a failure in the background."""
    if isinstance(exc, SwatheInputError):
        return exc.message
    msg = str(exc).strip().splitlines()[0] if str(exc).strip() else ""
    if isinstance(exc, (ValueError, ArithmeticError)) and msg:
        return msg
    if isinstance(exc, MemoryError):
        return "ran out of memory"
    return f"{type(exc).__name__}: {msg}" if msg else f"unexpected {type(exc).__name__}"


class Job(QObject):
    """A running background function: its signals, its token and ``cancel()``.

    Signals are emitted on the GUI thread (the Job lives there; the worker emits through
    queued connections).
    """

    progress = Signal(float, str)
    done = Signal(object)
    failed = Signal(str)
    cancelled = Signal()
    finished = Signal()  # after done, failed or cancelled

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.token = CancelToken()
        self.running = True
        self.result: Any = None
        self.error: str | None = None
        self._finished_event = threading.Event()
        self.finished.connect(self._mark_finished)

    def cancel(self) -> None:
        """Ask the function to stop; ``cancelled`` is emitted when it has."""
        self.token.cancel()

    def _mark_finished(self) -> None:
        self.running = False

    def wait_done(self, timeout_s: float = 30.0) -> bool:
        """Block until the worker thread has returned (tests; never on a live window)."""
        return self._finished_event.wait(timeout_s)


class _Runner(QRunnable):
    def __init__(self, fn: Callable[[CancelToken], Any], job: Job) -> None:
        super().__init__()
        self.setAutoDelete(True)
        self.fn = fn
        self.job = job

    def run(self) -> None:  # worker thread
        job = self.job
        try:
            out = self.fn(job.token)
        except Cancelled:
            job.cancelled.emit()
        except BaseException as exc:  # noqa: BLE001 - reported to the GUI thread as text
            if job.token.cancelled:
                job.cancelled.emit()
            else:
                job.error = error_text(exc)
                job.failed.emit(job.error)
        else:
            if job.token.cancelled:
                job.cancelled.emit()
            else:
                job.result = out
                job.done.emit(out)
        finally:
            job._finished_event.set()
            job.finished.emit()


_live_jobs: set[Job] = set()  # keeps every running Job alive until it has finished


def run_in_background(fn: Callable[[CancelToken], Any], *,
                      progress_cb: Callable[[float, str], None] | None = None,
                      done_cb: Callable[[Any], None] | None = None,
                      error_cb: Callable[[str], None] | None = None,
                      cancelled_cb: Callable[[], None] | None = None,
                      parent: QObject | None = None,
                      pool: QThreadPool | None = None,
                      before_start: Callable[[Job], None] | None = None) -> Job:
    """Run ``fn(token)`` on the thread pool; callbacks run on the GUI thread.

    Parameters
    ----------
    fn : callable
        Takes the :class:`CancelToken`; returns the result. It should call
        ``token.report(fraction, text)`` now and then and stop (return, or raise
        :class:`Cancelled`) once ``token()`` is true.
    progress_cb : callable, optional
        ``(fraction, text)``.
    done_cb : callable, optional
        The result, when ``fn`` returned and was not cancelled.
    error_cb : callable, optional
        One line of text when ``fn`` raised.
    cancelled_cb : callable, optional
        When the job stopped after a cancel.
    parent : QObject, optional
        Owner of the returned :class:`Job` (the job is also kept alive until it finishes).
    pool : QThreadPool, optional
        Default: the global pool.
    before_start : callable, optional
        Called with the :class:`Job` before ``fn`` starts: connect anything else to the job
        here, since a quick ``fn`` can finish before the caller gets the job back.

    Returns
    -------
    Job
    """
    job = Job(parent)
    # Queued: the callbacks run in the Job's thread (the GUI thread), never in the worker.
    q = Qt.ConnectionType.QueuedConnection
    if progress_cb is not None:
        job.progress.connect(progress_cb, q)
    if done_cb is not None:
        job.done.connect(done_cb, q)
    if error_cb is not None:
        job.failed.connect(error_cb, q)
    if cancelled_cb is not None:
        job.cancelled.connect(cancelled_cb, q)
    job.token._progress = job.progress.emit
    _live_jobs.add(job)
    job.finished.connect(lambda: _live_jobs.discard(job), q)
    if before_start is not None:
        before_start(job)
    (pool or QThreadPool.globalInstance()).start(_Runner(fn, job))
    return job


class ProgressDialog(QProgressDialog):
    """A modeless progress dialog bound to one :class:`Job`: Cancel cancels the job.

    Use :meth:`run` to start a function and show the dialog in one call.
    """

    def __init__(self, title: str, parent: QWidget | None = None) -> None:
        super().__init__(title, "Cancel", 0, 1000, parent)
        self.setWindowTitle(title)
        self.setMinimumDuration(300)  # quick jobs finish before the dialog would flash up
        self.setAutoClose(True)
        self.setAutoReset(True)
        self.setWindowModality(Qt.WindowModality.WindowModal)
        self.job: Job | None = None

    def attach(self, job: Job) -> None:
        """Follow ``job``: its progress, Cancel, and closing when it ends.

        Attach before the job starts (:meth:`run` does): a job that already finished is
        closed for at once, but its progress signals are gone.
        """
        self.job = job
        self.canceled.connect(job.cancel)
        job.progress.connect(self._progress)
        job.finished.connect(self._finish)
        self.setValue(0)
        if not job.running:
            self._finish()

    def _progress(self, fraction: float, text: str) -> None:
        self.setValue(int(max(0.0, min(1.0, fraction)) * 1000))
        if text:
            self.setLabelText(text)

    def _finish(self) -> None:
        self.setValue(self.maximum())
        self.close()

    @classmethod
    def run(cls, parent: QWidget | None, title: str, fn: Callable[[CancelToken], Any],
            done_cb: Callable[[Any], None] | None = None,
            error_cb: Callable[[str], None] | None = None,
            pool: QThreadPool | None = None) -> ProgressDialog:
        """Start ``fn`` in the background and show a dialog with its progress and Cancel.

        The dialog is attached before ``fn`` starts, so even a job that ends at once closes
        it (it would otherwise pop up after the minimum duration and stay).
        """
        dlg = cls(title, parent)
        run_in_background(fn, done_cb=done_cb, error_cb=error_cb, parent=dlg, pool=pool,
                          before_start=dlg.attach)
        return dlg
