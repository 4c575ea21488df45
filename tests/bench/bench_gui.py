"""Benchmark of the editor window (prints numbers and ratios to the targets; asserts nothing).

Targets (issue: editor window), on a 100,000-point track:
  open to first full paint <= 2 s; preview after a smoothing change <= 300 ms (10,000 points: <= 60 ms);
  a point drag redraws both views at >= 30 frames per second; resident memory <= 400 MB;
  the UI thread is never blocked for more than 50 ms by a preview.
Run: ``QT_QPA_PLATFORM=offscreen python tests/bench/bench_gui.py`` (offscreen, for CI), or
``python tests/bench/bench_gui.py --real``: a real X window through the xcb platform (under
``xvfb-run`` when there is no display), driven by ``xdotool``; see ``real_window.py`` for the steps
and targets of issue 13. It ends with one ``summary:`` line of medians.
"""
from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

if __name__ == "__main__" and "--real" in sys.argv:
    sys.path.insert(0, str(Path(__file__).resolve().parent))
    import real_window

    _code = real_window.relaunch_under_xvfb([__file__, *sys.argv[1:]])
    sys.exit(real_window.main() if _code is None else _code)
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "gui"))
sys.path.insert(0, str(ROOT / "tests"))  # gui_support finds shared_files there

import numpy as np  # noqa: E402
import psutil  # noqa: E402
from PySide6 import QtCore, QtWidgets  # noqa: E402

from editor.app import create_application  # noqa: E402
from editor.app.settings import AppSettings  # noqa: E402
from editor.app.window import MainWindow  # noqa: E402
from editor.io.gpx import write_gpx  # noqa: E402
from gui_support import synthetic_ride  # noqa: E402


def report(name: str, value: float, target: float, unit: str, higher_is_better: bool = False) -> None:
    ratio = value / target
    ok = ratio >= 1 if higher_is_better else ratio <= 1
    print(f"{name:<52} {value:10.1f} {unit:<4} target {'>=' if higher_is_better else '<='} {target:g} {unit}"
          f"   ratio {ratio:5.2f}  {'ok' if ok else 'MISSED'}")


def paint_both(window: MainWindow) -> None:
    window.map_view.viewport().repaint()
    window.profile_view.viewport().repaint()


def wait_for(app, predicate, timeout_s: float = 60.0) -> None:
    """Run the event loop (idle, as in the real program) until ``predicate()`` holds."""
    if predicate():
        return
    loop = QtCore.QEventLoop()
    poll = QtCore.QTimer(interval=2)
    poll.timeout.connect(lambda: predicate() and loop.quit())
    give_up = QtCore.QTimer(singleShot=True, interval=int(timeout_s * 1000))
    give_up.timeout.connect(loop.quit)
    poll.start()
    give_up.start()
    loop.exec()
    poll.stop()
    if not predicate():
        raise TimeoutError("the window did not finish in time")


def wait_for_signal(signal, predicate, timeout_s: float = 60.0) -> None:
    """Run an idle event loop until ``signal`` fires with ``predicate()`` true.

    Unlike :func:`wait_for` it does not wake the UI thread every 2 ms: such polling makes the
    preview worker queue for the GIL whenever numpy releases it (measured: a 10,000-point
    smoothing took 56 ms instead of 24 ms), which a real, idle window does not do.
    """
    if predicate():
        return
    loop = QtCore.QEventLoop()

    def check(*_args):
        if predicate():
            loop.quit()

    signal.connect(check)
    give_up = QtCore.QTimer(singleShot=True, interval=int(timeout_s * 1000))
    give_up.timeout.connect(loop.quit)
    give_up.start()
    loop.exec()
    signal.disconnect(check)
    if not predicate():
        raise TimeoutError("the window did not finish in time")


class PaintWatcher(QtCore.QObject):
    """Counts the paint events of both views' viewports."""

    def __init__(self, window: MainWindow) -> None:
        super().__init__()
        self.count = {"map": 0, "profile": 0}
        self._names = {window.map_view.viewport(): "map", window.profile_view.viewport(): "profile"}
        for viewport in self._names:
            viewport.installEventFilter(self)

    def eventFilter(self, obj, event):  # noqa: N802 (Qt override)
        if event.type() == QtCore.QEvent.Type.Paint and obj in self._names:
            self.count[self._names[obj]] += 1
        return False


def run_until_both_painted(app, window: MainWindow, watcher: PaintWatcher, timeout_s: float = 5.0) -> float:
    """Run the event loop until both views have repainted with the new layers; the time it ended.

    A view counts once its pending layer refresh has run and a paint event followed it. Falls back
    to forcing a repaint if none comes (it always has in practice).
    """
    start = dict(watcher.count)
    deadline = time.perf_counter() + timeout_s
    while time.perf_counter() < deadline:
        app.processEvents()
        refreshed = not (window.map_view._refresh_timer.isActive() or window.profile_view._refresh_timer.isActive())
        if refreshed and all(watcher.count[k] > start[k] for k in start):
            return time.perf_counter()
    paint_both(window)
    return time.perf_counter()


def open_and_paint(app, window: MainWindow, doc_or_path) -> float:
    t0 = time.perf_counter()
    if isinstance(doc_or_path, Path):
        window.files.open_path(doc_or_path, confirmed=True)
    else:
        window.display.set_document(doc_or_path)
    app.processEvents()
    window.grab()  # forces a full paint of every widget
    return time.perf_counter() - t0


def timed(steps: list, function):
    """``function`` wrapped to append its duration (ms) to ``steps``."""
    def wrapper(*args, **kwargs):
        t = time.perf_counter()
        try:
            return function(*args, **kwargs)
        finally:
            steps.append((time.perf_counter() - t) * 1000)
    return wrapper


def preview_latency(app, window: MainWindow, strength: float, repeats: int = 3) -> tuple[float, float, float]:
    """Control change → proposal drawn on both views.

    Returns the median total time, the median time until the result reached the UI thread, and the
    longest single UI-thread step of the hand-over (taking the result, redrawing each view, the
    totals), all in ms.
    """
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    control = panel.controls["horizontal_strength"]
    steps: list[float] = []
    originals = (window.state.set_preview, window.map_view.refresh_layers, window.profile_view.refresh_layers)
    window.state.set_preview = timed(steps, originals[0])
    window.map_view.refresh_layers = timed(steps, originals[1])
    window.profile_view.refresh_layers = timed(steps, originals[2])
    window.map_view._refresh_timer.timeout.disconnect()
    window.map_view._refresh_timer.timeout.connect(window.map_view.refresh_layers)
    window.profile_view._refresh_timer.timeout.disconnect()
    window.profile_view._refresh_timer.timeout.connect(window.profile_view.refresh_layers)
    totals, arrivals, longest = [], [], []
    watcher = PaintWatcher(window)
    for k in range(repeats):
        previous = window.state.preview
        control.set_value(strength + k)
        steps.clear()
        t0 = time.perf_counter()
        window.previews.request_preview = timed(steps, window.previews.request_preview)
        window.previews.request_preview(panel.tool, panel.params(), False, immediately=True)
        del window.previews.request_preview
        wait_for_signal(window.state.preview_changed,
                        lambda: window.state.preview is not None and window.state.preview is not previous)
        arrived = time.perf_counter()
        painted = run_until_both_painted(app, window, watcher)
        totals.append((painted - t0) * 1000)
        arrivals.append((arrived - t0) * 1000)
        longest.append(max(steps))
    window.state.set_preview = originals[0]
    window.map_view.refresh_layers = originals[1]
    window.profile_view.refresh_layers = originals[2]
    return float(np.median(totals)), float(np.median(arrivals)), float(max(longest))


def tool_alone_ms(window: MainWindow, strength: float) -> float:
    """The smoothing function called directly on the shown track (no window work), median of 3."""
    panel = window.tool_dock.panel("smooth")
    params = panel.tool.params(horizontal_strength=strength, vertical_strength=strength)
    times = []
    for _ in range(3):
        t = time.perf_counter()
        panel.tool.function(window.session.track(), params)
        times.append((time.perf_counter() - t) * 1000)
    return float(np.median(times))


def drag_fps(app, window: MainWindow, frames: int = 60) -> tuple[float, float]:
    m = window.map_view
    row = len(m.geometry) // 3
    x, y = m.geometry.x_m[row], m.geometry.y_m[row]
    m.view_box.setRange(QtCore.QRectF(x - 80, y - 80, 160, 160), padding=0)
    app.processEvents()
    m.refresh_layers()
    pos = QtCore.QPointF(x, y)
    if hasattr(window, "set_move_mode"):
        window.set_move_mode(True)  # points move only in "Move points" mode
    gesture = m.gesture_started(pos, QtCore.Qt.KeyboardModifier.NoModifier)
    assert gesture == "point", "the benchmark must grab a point"
    t0 = time.perf_counter()
    for k in range(frames):
        m.gesture_moved(gesture, QtCore.QPointF(x + k * 0.5, y + k * 0.3))
        app.processEvents()
        paint_both(window)
    fps = frames / (time.perf_counter() - t0)
    t1 = time.perf_counter()
    m.gesture_finished(gesture, QtCore.QPointF(x + frames * 0.5, y + frames * 0.3))
    app.processEvents()
    paint_both(window)
    commit_ms = (time.perf_counter() - t1) * 1000
    return fps, commit_ms


def main() -> int:
    app = create_application()
    tmp = Path(tempfile.mkdtemp(prefix="tw-bench-"))
    window = MainWindow(AppSettings.at_path(tmp / "settings.ini"))
    window.resize(1600, 1000)
    window.show()
    app.processEvents()
    print(f"window 1600x1000, {QtCore.QThread.idealThreadCount()} cores, Qt platform "
          f"{QtWidgets.QApplication.platformName()}")

    big = synthetic_ride(100_000, seed=11)
    path = tmp / "big.gpx"
    write_gpx(big, path)
    source = path
    del big
    print(f"100,000-point GPX file: {path.stat().st_size / 1e6:.1f} MB (read with editor.io.read_document)")
    rss_before = psutil.Process().memory_info().rss / 2**20
    report("open 100k to first full paint", open_and_paint(app, window, source) * 1000, 2000, "ms")
    rss_open = psutil.Process().memory_info().rss / 2**20
    print(f"    resident memory: {rss_before:.0f} MB before opening, {rss_open:.0f} MB with the track shown")

    total, worker, ui = preview_latency(app, window, 40)
    report("preview after smoothing change, 100k (total)", total, 300, "ms")
    print(f"    of which until the worker's result arrived: {worker:.1f} ms; the smoothing function "
          f"alone takes {tool_alone_ms(window, 40):.1f} ms on this track")
    report("longest UI-thread step of a 100k preview", ui, 50, "ms")
    window.previews.discard_preview()

    fps, commit = drag_fps(app, window)
    report("point drag on 100k, both views redrawn", fps, 30, "fps", higher_is_better=True)
    print(f"    drag release -> command -> both views rebuilt: {commit:.1f} ms")
    rss = psutil.Process().memory_info().rss / 2**20
    report("resident memory, 100k open after preview and drag", rss, 400, "MB")

    small = synthetic_ride(10_000, seed=12)
    open_and_paint(app, window, small)
    total, worker, ui = preview_latency(app, window, 40)
    report("preview after smoothing change, 10k (total)", total, 60, "ms")
    print(f"    of which until the worker's result arrived: {worker:.1f} ms (smoothing function alone "
          f"{tool_alone_ms(window, 40):.1f} ms); longest UI step {ui:.1f} ms")
    window.undo_stack.setClean()
    window.close()
    return 0


if __name__ == "__main__":
    sys.exit(main())
