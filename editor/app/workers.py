"""Background work: tool previews and long estimates off the UI thread.

A control change starts a short timer (not restarted by later changes); when it fires, the tool runs
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


#: How long a control change waits before its preview starts, milliseconds. The wait is counted
#: from the first change and not restarted by later ones (a throttle, not a debounce): a slider
#: dragged without pause still shows a new picture whenever the worker is free.
DEBOUNCE_MS = 5


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
        self.threads = threads
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


def _same(a: Any, b: Any) -> bool:
    """Whether two request keys are equal (``False`` when they cannot be compared)."""
    if a is None or b is None:
        return False
    try:
        return bool(a == b)
    except Exception:  # e.g. a parameter holding an array: treat as a new request
        return False


class PreviewRunner(QtCore.QObject):
    """Coalescing, generation-checked tool runs for previews.

    At most one run is in the worker and at most one waits: a request made while a run is busy
    replaces the waiting one, which starts as soon as the busy run ends. So a slider dragged
    faster than the tool can follow computes the newest value next, never a queue of old ones,
    and the picture keeps following it. A request with ``immediately`` (the Preview button, a
    released slider) drops the busy run's result, which is older than what was asked for, and
    starts at once when the pool has a second thread.
    Requests carry a ``key`` (what they compute); one equal to the run in the worker, or to the
    result shown, computes nothing again.

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
        self._pending_key: Any = None
        self._running_key: Any = None
        self._shown_key: Any = None
        self._drop_running = False
        # No Qt parent: the relay lives as long as a job still refers to it, even past the window.
        self._relay = _Relay()
        self._relay.finished.connect(self._finished)
        self._timer = QtCore.QTimer(self, singleShot=True, interval=debounce_ms)
        self._timer.timeout.connect(self._launch)
        self.busy = False

    def request(self, work: Callable[[], Any], immediately: bool = False, key: Any = None) -> None:
        """Run ``work()`` (which must only read its own snapshot) soon; see the class notes."""
        if key is not None and _same(key, self._running_key if self.busy else self._shown_key):
            # already being computed (or shown): forget any other value asked for meanwhile
            self._pending, self._pending_key = None, None
            self._timer.stop()
            self._drop_running = False
            return
        self._pending, self._pending_key = work, key
        if self.busy and immediately and self.pool.threads > 1:
            # A released slider: start the value it settled on now, on the second thread, instead of
            # after the older run (whose result the generation check then drops).
            self._timer.stop()
            self._launch()
            return
        if self.busy:
            self._drop_running = self._drop_running or immediately
            return
        if immediately:
            self._timer.stop()
            self._launch()
        elif not self._timer.isActive():
            self._timer.start()

    def forget_shown(self) -> None:
        """The shown result is gone (discarded elsewhere): a request for it computes it again."""
        self._shown_key = None

    def cancel(self) -> None:
        """Forget the pending request and any running one."""
        self._timer.stop()
        self._pending = self._pending_key = self._running_key = self._shown_key = None
        self._drop_running = False
        self.generation += 1
        self.busy = False

    def _launch(self) -> None:
        if self._pending is None:
            return
        work, self._pending = self._pending, None
        self._running_key, self._pending_key = self._pending_key, None
        self.generation += 1
        self.busy = True
        self._drop_running = False
        self.started.emit()
        self.pool.drop_queued()
        self.pool.submit(_run_job, self.generation, work, self._relay)

    def _finished(self, generation: int, result: Any, error: str | None) -> None:
        if generation != self.generation:
            return
        self.busy = False
        drop, self._drop_running = self._drop_running, False
        key, self._running_key = self._running_key, None
        # the worker starts on the newest request before this result is drawn
        self._launch()
        if drop and self.busy:
            return
        if error is not None:
            self._shown_key = None
            self.failed.emit(error)
        else:
            self._shown_key = key
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
