"""Background work: tool previews and long estimates off the UI thread.

A control change restarts a short debounce timer; when it fires, the tool runs
on a worker thread on an immutable snapshot of the track (taken once per
document revision; it shares the columns, which edits never write in place).
Every request gets a generation number and a result whose generation is no
longer the newest is dropped, so a slow old computation can never overwrite a newer preview.
"""
from __future__ import annotations

import threading
import traceback
from concurrent.futures import Future, ThreadPoolExecutor, wait
from typing import Any, Callable

from PySide6 import QtCore


#: Debounce interval for control changes, milliseconds.
DEBOUNCE_MS = 150


class _Relay(QtCore.QObject):
    """Lives in the UI thread; signals emitted from a worker arrive there queued."""

    finished = QtCore.Signal(int, object, object)   # generation, result, error text
    progress = QtCore.Signal(int, float)            # generation, fraction 0..1


def _run_job(generation: int, work: Callable[[], Any], relay: _Relay) -> None:
    """Body of a worker: run ``work`` and hand the result (or the error) to the UI thread."""
    try:
        result = work()
    except Exception as err:  # reported to the user in the window, never lost silently
        message = f"{type(err).__name__}: {err}"
        if not isinstance(err, (ValueError, RuntimeError)):
            message += "\n" + traceback.format_exc(limit=4)
        relay.finished.emit(generation, None, message)
    else:
        relay.finished.emit(generation, result, None)


class WorkerPool:
    """Persistent Python worker threads.

    Python threads rather than QThreadPool runnables: each keeps one interpreter
    thread state for its whole life, which the thread-local contexts of the
    numeric libraries (PROJ via pyproj) rely on; with short-lived runnable
    thread states PROJ crashed in this editor's tests.
    """

    def __init__(self, threads: int = 1) -> None:
        self._executor = ThreadPoolExecutor(max_workers=threads, thread_name_prefix="trackwright-worker")
        self._pending: list[Future] = []

    def submit(self, function: Callable[..., Any], *args: Any) -> Future:
        self._pending = [f for f in self._pending if not f.done()]
        future = self._executor.submit(function, *args)
        self._pending.append(future)
        return future

    def drop_queued(self) -> None:
        """Forget jobs that have not started yet (a newer request replaces them)."""
        for future in self._pending:
            future.cancel()

    def wait(self, timeout_s: float | None = None) -> bool:
        """Wait until every submitted job has finished; ``False`` on timeout."""
        done, not_done = wait(list(self._pending), timeout=timeout_s)
        return not not_done

    def shutdown(self) -> None:
        self._executor.shutdown(wait=False, cancel_futures=True)


class PreviewRunner(QtCore.QObject):
    """Debounced, generation-checked tool runs for previews.

    Signals
    -------
    started() : a computation was launched.
    result_ready(object) : the newest proposal.
    failed(str) : the newest computation raised; the message is for the user.
    """

    started = QtCore.Signal()
    result_ready = QtCore.Signal(object)
    failed = QtCore.Signal(str)

    def __init__(self, pool: WorkerPool, parent=None, debounce_ms: int = DEBOUNCE_MS) -> None:
        super().__init__(parent)
        self.pool = pool
        self.generation = 0
        self._pending: Callable[[], Any] | None = None
        # No Qt parent: the relay lives as long as a job still refers to it, even past the window.
        self._relay = _Relay()
        self._relay.finished.connect(self._finished)
        self._timer = QtCore.QTimer(self, singleShot=True, interval=debounce_ms)
        self._timer.timeout.connect(self._launch)
        self.busy = False

    def request(self, work: Callable[[], Any], immediately: bool = False) -> None:
        """Run ``work()`` (which must only read its own snapshot) after the debounce interval."""
        self._pending = work
        self.generation += 1  # results of anything still running are now stale
        if immediately:
            self._timer.stop()
            self._launch()
        else:
            self._timer.start()

    def cancel(self) -> None:
        """Forget the pending request and any running one."""
        self._timer.stop()
        self._pending = None
        self.generation += 1
        self.busy = False

    def _launch(self) -> None:
        if self._pending is None:
            return
        work, self._pending = self._pending, None
        self.generation += 1
        self.busy = True
        self.started.emit()
        self.pool.drop_queued()
        self.pool.submit(_run_job, self.generation, work, self._relay)

    def _finished(self, generation: int, result: Any, error: str | None) -> None:
        if generation != self.generation:
            return
        self.busy = False
        if error is not None:
            self.failed.emit(error)
        else:
            self.result_ready.emit(result)


class LongJob(QtCore.QObject):
    """A cancellable job with progress (e.g. estimating the smoothing strength of a long track).

    ``work(progress, cancelled)`` receives a ``progress(fraction)`` callable and a
    ``cancelled() -> bool`` callable; both are safe to call from the worker.

    Signals
    -------
    progress(float) : fraction done, 0..1.
    done(object) : the result.
    failed(str) : an error message, or "cancelled".
    """

    progress = QtCore.Signal(float)
    done = QtCore.Signal(object)
    failed = QtCore.Signal(str)

    def __init__(self, pool: WorkerPool, work: Callable[..., Any], parent=None) -> None:
        super().__init__(parent)
        self.pool = pool
        self._cancel = threading.Event()
        self._relay = _Relay()
        self._relay.finished.connect(self._finished)
        self._relay.progress.connect(lambda _g, f: self.progress.emit(f))
        relay, cancel = self._relay, self._cancel
        self._work = lambda: work(lambda f: relay.progress.emit(0, float(f)), cancel.is_set)
        self.running = False

    def start(self) -> None:
        self.running = True
        self.pool.submit(_run_job, 0, self._work, self._relay)

    def cancel(self) -> None:
        self._cancel.set()

    def _finished(self, _generation: int, result: Any, error: str | None) -> None:
        self.running = False
        if self._cancel.is_set():
            self.failed.emit("cancelled")
        elif error is not None:
            self.failed.emit(error)
        else:
            self.done.emit(result)
