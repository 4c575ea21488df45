"""Reading and writing track files off the UI thread, with progress and a working Cancel.

A million-point file takes seconds to read and to write. :class:`FileJobs` runs
such a job on a thread of its own and, until it ends, keeps the window's event
loop running (a local ``QEventLoop``): the window goes on painting and
answering, the status bar shows the progress and a Cancel button. Callers keep
a plain synchronous shape::

    doc = window.file_jobs.run("Reading ride.gpx", lambda progress: read_gpx(path, progress=progress))

``run`` returns the job's result, raises the job's own exception, or raises
:class:`Cancelled` when the user pressed Cancel. Cancel abandons a read at
once: the caller keeps everything as it was (the previous document); the thread
stops at its next progress report, or finishes in the background and its result
is dropped. A write (``abandon=False``) is waited for until it has stopped at its
next progress report, so that "cancelled" always means "nothing was written";
a write already past its last piece completes and counts as done.

While a job runs, the window refuses to start another file job, and closing the
window cancels it.
"""
from __future__ import annotations

import ctypes
import ctypes.util
import threading
from collections.abc import Callable
from typing import Any

from PySide6 import QtCore



class Cancelled(Exception):
    """The user cancelled a file job; nothing was changed."""


class FileJobBusy(RuntimeError):
    """Another file job is still running."""


class _Relay(QtCore.QObject):
    """Lives in the UI thread: signals emitted by the job's thread arrive there queued."""

    progress = QtCore.Signal(float)
    finished = QtCore.Signal(object, object)  # result, exception


class FileJobs(QtCore.QObject):
    """Runs one file job at a time for ``window`` (which has ``progress``, ``cancel_button``,
    ``statusBar()``)."""

    def __init__(self, window) -> None:
        super().__init__(window)
        self.window = window
        self._loop: QtCore.QEventLoop | None = None
        self._cancel: threading.Event | None = None
        self._outcome: tuple[Any, BaseException | None] | None = None
        self._abandon = True
        window.cancel_button.clicked.connect(self.cancel)

    @property
    def busy(self) -> bool:
        return self._loop is not None

    def run(self, title: str, work: Callable[[Callable[[float], None]], Any], abandon: bool = True) -> Any:
        """Run ``work(progress)`` on a worker thread while the window stays live.

        ``progress(fraction)`` may be called from the worker with 0..1; after Cancel it raises
        :class:`Cancelled` so that the work stops early. ``abandon``: Cancel returns at once
        (reads); otherwise Cancel waits for the work to stop (writes).
        """
        if self.busy:
            raise FileJobBusy("another file is still being read or written")
        cancel = threading.Event()
        relay = _Relay()
        loop = QtCore.QEventLoop()
        self._loop, self._cancel, self._outcome, self._abandon = loop, cancel, None, abandon

        def report(fraction: float) -> None:
            if cancel.is_set():
                raise Cancelled()
            relay.progress.emit(float(fraction))

        def body() -> None:
            try:
                result, error = work(report), None
            except BaseException as err:  # noqa: BLE001 (handed to the UI thread, raised there by run())
                result, error = None, err
            relay.finished.emit(result, error)

        def finished(result, error) -> None:
            if self._loop is loop:
                self._outcome = (result, error)
                loop.quit()

        relay.finished.connect(finished)
        relay.progress.connect(self._show_progress)
        self._start_progress(title)
        try:
            threading.Thread(target=body, name="trackwright-file", daemon=True).start()
            loop.exec()  # the window keeps painting and answering until the job ends or is cancelled
        finally:
            self._loop = self._cancel = None
            self._stop_progress()
            relay.finished.disconnect(finished)
            relay.progress.disconnect(self._show_progress)  # an abandoned job reports nothing more
        outcome, self._outcome = self._outcome, None
        release_free_memory()
        if outcome is None or (cancel.is_set() and abandon):
            raise Cancelled()
        result, error = outcome
        if error is not None:
            raise error
        return result

    def cancel(self) -> None:
        """Cancel the running job (if any): ``run`` raises :class:`Cancelled` (see ``abandon``)."""
        if self._cancel is not None and self._loop is not None:
            self._cancel.set()
            if self._abandon:
                self._loop.quit()
            else:
                self.window.statusBar().showMessage("Cancelling…")

    # --- the status bar --------------------------------------------------------------------------
    def _start_progress(self, title: str) -> None:
        bar = self.window.progress
        bar.setValue(0)
        bar.setFormat(f"{title} %p%")
        bar.show()
        self.window.cancel_button.show()
        self.window.statusBar().showMessage(f"{title}…")

    def _show_progress(self, fraction: float) -> None:
        if self.busy:
            self.window.progress.setValue(int(max(0.0, min(1.0, fraction)) * 1000))

    def _stop_progress(self) -> None:
        self.window.progress.hide()
        self.window.cancel_button.hide()
        self.window.statusBar().clearMessage()


def release_free_memory() -> None:
    """Hand memory freed by a finished job back to the system.

    A read allocates hundreds of megabytes on the job's thread; glibc keeps what that thread freed
    in the thread's own arena, where the UI and preview threads cannot reuse it (at a million
    points about 100 MB of resident memory). ``malloc_trim`` returns it; elsewhere this does nothing.
    """
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        trim = libc.malloc_trim
    except (OSError, AttributeError):
        return
    trim(0)


__all__ = ["Cancelled", "FileJobBusy", "FileJobs"]
