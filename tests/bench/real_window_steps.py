"""The steps ``bench_gui.py --real`` times in a real X window (see ``real_window.py``).

Every step starts from a real input event delivered by the X server (``xdotool``) or from the
open call, and ends when both views have finished a paint that came after their last layer
refresh with the step's result. Times are taken on the UI thread with ``time.perf_counter``.
"""
from __future__ import annotations

import os
import subprocess
import time
from pathlib import Path
from typing import Callable

import numpy as np
from PySide6 import QtCore, QtWidgets

from editor.app import create_application, workers
from editor.app.settings import AppSettings
from editor.app.window import MainWindow
from editor.io.gpx import write_gpx
from gui_support import synthetic_ride


class Watch(QtCore.QObject):
    """Times both views' paints (start to end of their own painting) and their layer refreshes."""

    def __init__(self, window: MainWindow) -> None:
        super().__init__()
        self.views = {"map": window.map_view, "profile": window.profile_view}
        self.by_viewport = {v.viewport(): k for k, v in self.views.items()}
        self.painted = {k: 0.0 for k in self.views}      # end of the last paint
        self.refreshed = {k: 0.0 for k in self.views}    # end of the last layer refresh
        self.paint_ms = {k: [] for k in self.views}
        self.refresh_ms = {k: [] for k in self.views}
        self.listeners: list[Callable[[], None]] = []
        self.preview_set = 0.0  # when the shown preview last changed
        window.state.preview_changed.connect(self._preview_changed)
        for key, view in self.views.items():
            view.viewport().installEventFilter(self)
            timer = view._refresh_timer
            timer.timeout.disconnect()
            timer.timeout.connect(lambda k=key, v=view: self._refresh(k, v))

    def _preview_changed(self, _proposal) -> None:
        self.preview_set = time.perf_counter()

    def _refresh(self, key: str, view) -> None:
        t = time.perf_counter()
        view.refresh_layers()
        self.refreshed[key] = time.perf_counter()
        self.refresh_ms[key].append((self.refreshed[key] - t) * 1000)

    def eventFilter(self, obj, event):  # noqa: N802 (Qt override)
        key = self.by_viewport.get(obj)
        if key is None or event.type() != QtCore.QEvent.Type.Paint:
            return False
        t = time.perf_counter()
        self.views[key].viewportEvent(event)  # the view's own painting, timed to its end
        self.painted[key] = time.perf_counter()
        self.paint_ms[key].append((self.painted[key] - t) * 1000)
        for listener in list(self.listeners):
            listener()
        return True

    def both_painted_after(self, t0: float) -> float | None:
        """End of the later paint if both views painted after their own refresh and after ``t0``."""
        if any(v._refresh_timer.isActive() for v in self.views.values()):
            return None
        if all(self.painted[k] > max(self.refreshed[k], t0) for k in self.views):
            return max(self.painted.values())
        return None

    def reset_stats(self) -> None:
        for k in self.views:
            self.paint_ms[k].clear()
            self.refresh_ms[k].clear()


class ReleaseWatch(QtCore.QObject):
    """The time of the last mouse press / release on a widget (as Qt received it from X)."""

    def __init__(self, widget: QtWidgets.QWidget) -> None:
        super().__init__()
        self.pressed = self.released = 0.0
        widget.installEventFilter(self)

    def eventFilter(self, obj, event):  # noqa: N802 (Qt override)
        if event.type() == QtCore.QEvent.Type.MouseButtonPress:
            self.pressed = time.perf_counter()
        elif event.type() == QtCore.QEvent.Type.MouseButtonRelease:
            self.released = time.perf_counter()
        return False


def run_loop_until(watch: Watch, predicate: Callable[[], float | None], timeout_s: float = 30.0,
                   extra_signals=()) -> float:
    """An idle event loop (woken by paints and ``extra_signals`` only) until ``predicate`` gives a time."""
    found = predicate()
    if found is not None:
        return found
    loop = QtCore.QEventLoop()
    result: list[float] = []

    def check(*_args):
        value = predicate()
        if value is not None and not result:
            result.append(value)
            loop.quit()

    watch.listeners.append(check)
    for signal in extra_signals:
        signal.connect(check)
    give_up = QtCore.QTimer(singleShot=True, interval=int(timeout_s * 1000))
    give_up.timeout.connect(loop.quit)
    give_up.start()
    loop.exec()
    watch.listeners.remove(check)
    for signal in extra_signals:
        signal.disconnect(check)
    if not result:
        raise TimeoutError("the window did not finish the step in time")
    return result[0]


def idle(seconds: float) -> None:
    loop = QtCore.QEventLoop()
    QtCore.QTimer.singleShot(int(seconds * 1000), loop.quit)
    loop.exec()


def xdotool(*args: str) -> subprocess.Popen:
    """Start ``xdotool`` with ``args`` (it runs while our event loop keeps going)."""
    return subprocess.Popen(["xdotool", *args])


def global_centre(widget: QtWidgets.QWidget, rect: QtCore.QRect | None = None) -> tuple[int, int]:
    rect = rect if rect is not None else widget.rect()
    p = widget.mapToGlobal(rect.center())
    return p.x(), p.y()


def slider_handle(slider: QtWidgets.QSlider) -> tuple[int, int]:
    option = QtWidgets.QStyleOptionSlider()
    slider.initStyleOption(option)
    rect = slider.style().subControlRect(QtWidgets.QStyle.ComplexControl.CC_Slider, option,
                                         QtWidgets.QStyle.SubControl.SC_SliderHandle, slider)
    return global_centre(slider, rect)


def stats(values: list[float]) -> tuple[float, float, float]:
    return float(np.min(values)), float(np.median(values)), float(np.max(values))


def line(name: str, values: list[float], unit: str, target: float, higher: bool = False) -> float:
    lo, med, hi = stats(values)
    ok = med >= target if higher else med <= target
    print(f"  {name:<46} min {lo:8.1f}  median {med:8.1f}  max {hi:8.1f} {unit:<5} "
          f"target {'>=' if higher else '<='} {target:g}  {'ok' if ok else 'MISSED'}   (n={len(values)})",
          flush=True)
    print("      runs: " + ", ".join(f"{v:.1f}" for v in values), flush=True)  # an outlier shows which run
    return med


class WorkerClock:
    """Durations of the preview worker's jobs (the tool, the projection and the undo step)."""

    def __init__(self) -> None:
        self.ms: list[float] = []
        original = workers._run_job

        def timed(generation, work, relay):
            t = time.perf_counter()
            try:
                return original(generation, work, relay)
            finally:
                self.ms.append((time.perf_counter() - t) * 1000)

        workers._run_job = timed


def measure_open(app, window: MainWindow, watch: Watch, path: Path, runs: int) -> list[float]:
    times = []
    for _ in range(runs):
        idle(0.3)
        t0 = time.perf_counter()
        window.files.open_path(path, confirmed=True)
        # A later layer refresh may find nothing new to draw (and paint nothing): after 50 ms
        # without a paint it counts as done. A 25 ms timer wakes the check (opening has no worker).
        poke = QtCore.QTimer(interval=25)
        poke.start()

        def done():
            if any(v._refresh_timer.isActive() for v in watch.views.values()):
                return None
            now = time.perf_counter()
            if all(watch.painted[k] > t0 and (watch.painted[k] > watch.refreshed[k]
                                               or now - watch.refreshed[k] > 0.05) for k in watch.views):
                return max(watch.painted.values())
            return None

        end = run_loop_until(watch, done, extra_signals=(poke.timeout,))
        poke.stop()
        times.append(end - t0)
    return times


def smoothing_controls(window: MainWindow):
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    return panel, panel.controls["horizontal_strength"], panel.controls["vertical_strength"]


def preview_painted(window: MainWindow, watch: Watch, wanted: Callable[[object], bool],
                    after: float) -> Callable[[], float | None]:
    """Predicate: the shown preview satisfies ``wanted`` and both views have painted it.

    A preview already painted before ``after`` counts (a fast tool can show the value before
    the slider is let go); the caller counts such a step as taking no time after ``after``.
    """
    state = window.state

    def predicate():
        proposal = state.preview
        if proposal is None or not wanted(proposal):
            return None
        return watch.both_painted_after(watch.preview_set)

    return predicate


def measure_release(window: MainWindow, watch: Watch, control, field: str,
                    runs: int) -> tuple[list[float], list[float]]:
    """Drag a strength slider a little and release it: release → both views painted with that value
    (0 when it was painted before the release), and the slider's last step → painted."""
    slider = control.slider
    released = ReleaseWatch(slider)
    stepped = [0.0]
    slider.valueChanged.connect(lambda _v: stepped.__setitem__(0, time.perf_counter()))
    times, from_step = [], []
    for k in range(runs):
        control.set_value(40.0)
        idle(0.4)
        x, y = slider_handle(slider)
        step = 4 if k % 2 == 0 else -4
        moves = []
        for _ in range(4):
            moves += ["mousemove_relative", "--", str(step), "0", "sleep", "0.03"]
        proc = xdotool("mousemove", "--sync", str(x), str(y), "sleep", "0.1", "mousedown", "1",
                       "sleep", "0.05", *moves, "mouseup", "1")
        start = time.perf_counter()
        predicate_box: list = []

        def predicate():
            if released.released < start:
                return None
            if not predicate_box:
                value = control.value()
                predicate_box.append(preview_painted(
                    window, watch, lambda p, v=value: getattr(p.params, field, None) == v, released.released))
            return predicate_box[0]()

        poke = QtCore.QTimer(interval=25)  # the step may be done before the release: check after it too
        poke.start()
        end = run_loop_until(watch, predicate, extra_signals=(window.state.preview_changed, poke.timeout))
        poke.stop()
        proc.wait()
        times.append(max(0.0, end - released.released) * 1000)
        from_step.append((end - stepped[0]) * 1000)
        idle(0.2)
    return times, from_step


def measure_drag_rate(window: MainWindow, watch: Watch, control, field: str, runs: int) -> list[float]:
    """A slow drag (one pixel every 50 ms for 3 s): distinct proposals painted in both views per second."""
    slider = control.slider
    released = ReleaseWatch(slider)
    state = window.state
    rates = []
    for k in range(runs):
        control.set_value(30.0 if k % 2 == 0 else 70.0)
        idle(0.4)
        x, y = slider_handle(slider)
        step = "1" if k % 2 == 0 else "-1"
        moves = []
        for _ in range(60):
            moves += ["mousemove_relative", "--", step, "0", "sleep", "0.05"]
        pending: dict[str, float] = {}
        shown: list[float] = []

        def on_preview(proposal):
            if proposal is not None:
                pending["t"] = time.perf_counter()

        def on_paint():
            if "t" in pending and watch.both_painted_after(pending["t"]) is not None:
                shown.append(pending.pop("t"))

        state.preview_changed.connect(on_preview)
        watch.listeners.append(on_paint)
        proc = xdotool("mousemove", "--sync", str(x), str(y), "sleep", "0.1", "mousedown", "1", *moves,
                       "mouseup", "1")
        t_start = time.perf_counter()
        while proc.poll() is None:
            idle(0.05)
        idle(0.05)
        watch.listeners.remove(on_paint)
        state.preview_changed.disconnect(on_preview)
        begin = released.pressed if released.pressed > t_start else t_start
        during = [t for t in shown if begin <= t <= released.released]
        rates.append(len(during) / max(released.released - begin, 1e-6))
        idle(0.5)
    return rates


def measure_auto(window: MainWindow, watch: Watch, control, field: str, runs: int,
                 ahead: bool) -> list[float]:
    """Tick "auto" with the mouse: release → both views painted with the estimated strength.

    Each run starts on a fresh track state (the preview cache emptied). ``ahead``: as a user
    does, the hand-set preview is shown for a second first (the window estimates the automatic
    strengths meanwhile); otherwise the cache is emptied right before the click (nothing known).
    """
    box = control.auto_box
    released = ReleaseWatch(box)
    panel = window.tool_dock.panel("smooth")
    times = []
    for k in range(runs):
        control.set_value(40.0 + k)
        window.session.preview_cache().clear()
        window.previews.request_preview(panel.tool, panel.params(), False, immediately=True)
        idle(1.5)
        window.long_pool.wait(30)
        if not ahead:
            window.session.preview_cache().clear()
        x, y = global_centre(box, box.rect().adjusted(0, 0, -box.width() + 16, 0))
        proc = xdotool("mousemove", "--sync", str(x), str(y), "sleep", "0.1", "click", "1")
        start = time.perf_counter()
        box_pred: list = []

        def predicate():
            if released.released < start:
                return None
            if not box_pred:
                box_pred.append(preview_painted(window, watch, lambda p: getattr(p.params, field, 0) is None
                                                and field in p.info, released.released))
            return box_pred[0]()

        end = run_loop_until(watch, predicate, timeout_s=60, extra_signals=(window.state.preview_changed,))
        proc.wait()
        times.append(max(0.0, end - released.released) * 1000)
    control.set_value(40.0)
    return times


def measure_point_drag(window: MainWindow, watch: Watch, runs: int) -> tuple[list[float], list[float]]:
    """Grab a point on the map in "Move points" mode and drag it 60 steps at ~100 moves per second."""
    m = window.map_view
    window.set_move_mode(True)
    fps, commit = [], []
    for k in range(runs + 3):
        if len(fps) == runs:
            break
        row = len(m.geometry) // 3 + 50 * k
        x, y = m.geometry.x_m[row], m.geometry.y_m[row]
        m.view_box.setRange(QtCore.QRectF(x - 80, y - 80, 160, 160), padding=0)
        idle(0.5)
        scene = m.view_box.mapViewToScene(QtCore.QPointF(x, y))
        local = m.mapFromScene(scene)
        g = m.viewport().mapToGlobal(local)
        released = ReleaseWatch(m.viewport())
        moves = []
        for _ in range(60):
            moves += ["mousemove_relative", "--", "1", "1", "sleep", "0.01"]
        steps_before = window.undo_stack.index()
        proc = xdotool("mousemove", "--sync", str(g.x()), str(g.y()), "sleep", "0.3", "mousedown", "1",
                       *moves, "mouseup", "1")
        stamps: list[float] = []
        def listener() -> None:
            stamps.append(watch.painted["map"])

        watch.listeners.append(listener)
        t_start = time.perf_counter()
        while proc.poll() is None:
            idle(0.02)
        watch.listeners.remove(listener)
        if window.undo_stack.index() == steps_before:  # the press did not grab the point: not a drag
            print(f"    (run {k + 1}: the press did not grab the point; not counted)", flush=True)
            idle(0.5)
            continue
        end = run_loop_until(watch, lambda: watch.both_painted_after(released.released))
        during = [t for t in stamps if released.pressed < t <= released.released and released.pressed > t_start]
        span = released.released - released.pressed
        fps.append(len(during) / span if span > 0 else float("nan"))
        commit.append((end - released.released) * 1000)
        window.undo_stack.undo()
        idle(0.3)
    window.set_move_mode(False)
    return fps, commit


def breakdown(watch: Watch, clock: WorkerClock, label: str) -> None:
    p = {k: np.median(v) if v else float("nan") for k, v in watch.paint_ms.items()}
    r = {k: np.median(v) if v else float("nan") for k, v in watch.refresh_ms.items()}
    w = np.median(clock.ms) if clock.ms else float("nan")
    print(f"    where the time goes ({label}, medians): worker job {w:.1f} ms; layer refresh map {r['map']:.1f}"
          f" / profile {r['profile']:.1f} ms; paint map {p['map']:.1f} / profile {p['profile']:.1f} ms",
          flush=True)


def run_all(tmp: Path, runs: int) -> int:
    app = create_application()
    window = MainWindow(AppSettings.at_path(tmp / "settings.ini"))
    window.resize(1600, 1000)
    window.move(0, 0)
    window.show()
    window.raise_()
    window.activateWindow()
    idle(1.0)
    watch = Watch(window)
    clock = WorkerClock()
    print(f"real window: Qt platform {QtWidgets.QApplication.platformName()}, display {os.environ.get('DISPLAY')}, "
          f"window {window.width()}x{window.height()}, load average {os.getloadavg()}", flush=True)
    summary = {}
    sizes = [(n, label) for n, label in ((10_000, "10k"), (100_000, "100k"))
             if os.environ.get("TW_BENCH_ONLY", label) == label]
    for n, label in sizes:
        path = tmp / f"ride{label}.gpx"
        write_gpx(synthetic_ride(n, seed=11), path)
        print(f"{n:,} points ({path.stat().st_size / 1e6:.1f} MB GPX), load {os.getloadavg()[0]:.2f}", flush=True)
        opened = [t * 1000 for t in measure_open(app, window, watch, path, runs)]
        summary[f"open{label}_s"] = line("open → track fully painted in both views", opened, "ms",
                                         400 if n == 10_000 else 1000) / 1000
        panel, h_control, v_control = smoothing_controls(window)
        v_control.set_value(40.0)
        watch.reset_stats()
        clock.ms.clear()
        released, stepped = measure_release(window, watch, h_control, "horizontal_strength", runs)
        summary[f"preview{label}_ms"] = line("position slider released → both views painted", released, "ms",
                                             60 if n == 10_000 else 200)
        line("  (its last step, 30 ms before the release → painted)", stepped, "ms", 60 if n == 10_000 else 200)
        breakdown(watch, clock, "position slider")
        watch.reset_stats()
        clock.ms.clear()
        released, stepped = measure_release(window, watch, v_control, "vertical_strength", runs)
        line("elevation slider released → both views painted", released, "ms", 60 if n == 10_000 else 200)
        line("  (its last step, 30 ms before the release → painted)", stepped, "ms", 60 if n == 10_000 else 200)
        breakdown(watch, clock, "elevation slider")
        rates = measure_drag_rate(window, watch, h_control, "horizontal_strength", runs)
        summary[f"drag_updates{label}_per_s"] = line("updates per second during a slow position drag", rates,
                                                     "/s", 15 if n == 10_000 else 5, higher=True)
        autos = measure_auto(window, watch, h_control, "horizontal_strength", runs, ahead=True)
        summary[f"auto{label}_ms"] = line("\"auto\" ticked → painted (after a hand-set preview)", autos, "ms",
                                          150 if n == 10_000 else 400)
        line("\"auto\" ticked → painted (nothing estimated ahead)",
             measure_auto(window, watch, h_control, "horizontal_strength", runs, ahead=False), "ms",
             150 if n == 10_000 else 400)
        window.previews.discard_preview()
        idle(0.3)
        fps, commit = measure_point_drag(window, watch, runs)
        summary[f"pointdrag{label}_fps"] = line("point drag on the map, frames per second", fps, "fps",
                                                60 if n == 10_000 else 30, higher=True)
        line("point released → both views painted", commit, "ms", 100)
    print(f"load average at the end {os.getloadavg()}", flush=True)
    keys = ("preview10k_ms", "preview100k_ms", "drag_updates100k_per_s", "auto100k_ms", "open100k_s",
            "pointdrag100k_fps")
    print("summary: " + " ".join(f"{k}={summary.get(k, float('nan')):.3g}" for k in keys), flush=True)
    window.undo_stack.setClean()
    window.close()
    return 0
