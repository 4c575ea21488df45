"""Benchmark of the map background (prints numbers and ratios to the targets; asserts nothing).

Targets (issue 11): panning and zooming stay at >= 30 fps with a full screen of tiles; a point drag
is as fast with a background as without. Tiles come from a generated tile server on 127.0.0.1.
Run: ``QT_QPA_PLATFORM=offscreen python tests/bench/bench_background.py``.
"""
from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "gui"))
sys.path.insert(0, str(ROOT / "tests"))

from PySide6 import QtCore  # noqa: E402

from editor.app import create_application  # noqa: E402
from editor.app.settings import AppSettings  # noqa: E402
from editor.app.web_map_dialog import WebMapChoice  # noqa: E402
from editor.app.window import MainWindow  # noqa: E402
from editor.tiles.templates import custom_template  # noqa: E402
from gui_support import synthetic_ride  # noqa: E402
from tile_support import TileServer  # noqa: E402

SCREEN = (1920, 1080)


def report(name: str, value: float, target: float, unit: str, higher_is_better: bool = True) -> None:
    ratio = value / target
    ok = ratio >= 1 if higher_is_better else ratio <= 1
    print(f"{name:<58} {value:9.1f} {unit:<4} target {'>=' if higher_is_better else '<='} {target:g} {unit}"
          f"   ratio {ratio:5.2f}  {'ok' if ok else 'MISSED'}")


def settle(app, window, timeout_s: float = 30.0) -> float:
    t0 = time.perf_counter()
    layer = window.map_view.background
    while time.perf_counter() - t0 < timeout_s:
        app.processEvents(QtCore.QEventLoop.ProcessEventsFlag.AllEvents, 5)
        if layer._shown and layer.is_settled():
            break
    return time.perf_counter() - t0


class PaintCounter(QtCore.QObject):
    """Counts paint events of the map's viewport."""

    def __init__(self, widget) -> None:
        super().__init__()
        self.count = 0
        widget.installEventFilter(self)

    def eventFilter(self, obj, event):  # noqa: N802 (Qt override)
        if event.type() == QtCore.QEvent.Type.Paint:
            self.count += 1
        return False


def frames(app, window, steps) -> tuple[float, float]:
    """Frames per second of ``steps`` (each changes the view), each shown by exactly one paint of the
    map, as in the running program (the event loop paints once per turn)."""
    m = window.map_view
    counter = PaintCounter(m.viewport())
    c0 = time.thread_time()
    t0 = time.perf_counter()
    for step in steps:
        before = counter.count
        step()
        app.processEvents()  # the range change, the layers' refresh, tile arrivals and the paint
        if counter.count == before:
            m.viewport().repaint()
    fps = len(steps) / (time.perf_counter() - t0)
    cpu_fps = len(steps) / max(time.thread_time() - c0, 1e-9)
    m.viewport().removeEventFilter(counter)
    return fps, cpu_fps


def drag_fps(app, window, n: int = 60) -> tuple[float, float, int]:
    """Wall-clock fps, UI-thread CPU fps and how often the background itself was repainted."""
    m = window.map_view
    row = len(m.geometry) // 3
    x, y = m.geometry.x_m[row], m.geometry.y_m[row]
    m.view_box.setRange(QtCore.QRectF(x - 150, y - 85, 300, 170), padding=0)
    app.processEvents()
    m.refresh_layers()
    if m.background is not None:
        settle(app, window)
    m.viewport().repaint()
    gesture = m.gesture_started(QtCore.QPointF(x, y), QtCore.Qt.KeyboardModifier.NoModifier)
    assert gesture == "point", "the benchmark must grab a point"
    layer_paints = [0]
    if m.background is not None:
        paint = m.background.paint
        m.background.paint = lambda *a: (layer_paints.__setitem__(0, layer_paints[0] + 1), paint(*a))
    c0 = time.thread_time()
    t0 = time.perf_counter()
    for k in range(n):
        m.gesture_moved(gesture, QtCore.QPointF(x + k * 0.5, y + k * 0.3))
        app.processEvents()
        m.viewport().repaint()
        window.profile_view.viewport().repaint()
    fps = n / (time.perf_counter() - t0)
    cpu_fps = n / max(time.thread_time() - c0, 1e-9)
    m.gesture_finished(gesture, QtCore.QPointF(x, y))
    app.processEvents()
    if m.background is not None:
        del m.background.paint
    return fps, cpu_fps, layer_paints[0]


def main() -> int:
    app = create_application()
    tmp = Path(tempfile.mkdtemp(prefix="tw-bench-bg-"))
    server = TileServer()
    window = MainWindow(AppSettings.at_path(tmp / "settings.ini"))
    window.resize(*SCREEN)
    window.show()
    window.display.set_document(synthetic_ride(10_000))
    app.processEvents()
    off = drag_fps(app, window)

    window.background_controller.use_web_map(WebMapChoice(custom_template(server.url, "bench"), ""))
    window.background_controller.set_opacity(0.7)
    m = window.map_view
    m.setFixedSize(SCREEN[0], SCREEN[1] - 200)  # the map as large as a full-screen window gives it
    app.processEvents()
    m.fit_all()
    app.processEvents()
    first = settle(app, window)
    layer = m.background
    print(f"map {m.viewport().width()} x {m.viewport().height()} px, tile zoom {layer.zoom}, "
          f"{len(layer._shown)} tiles on screen; first full screen from the local server in {first * 1000:.0f} ms")
    t0 = time.perf_counter()
    for _ in range(20):
        m.viewport().repaint()
    print(f"repaint with a full screen of tiles: {(time.perf_counter() - t0) / 20 * 1000:.1f} ms")

    vb = m.view_box

    def pan(dx_px: float):
        def step():
            px = vb.viewPixelSize()[0]
            vb.translateBy(x=dx_px * px)
        return step

    def zoom(factor: float):
        return lambda: vb.scaleBy((factor, factor))

    start = QtCore.QRectF(vb.viewRect())
    for label in ("tiles arriving from the local server", "tiles already in memory"):
        print(f"-- {label}")
        vb.setRange(start, padding=0)
        settle(app, window)
        for name, steps in (("pan (20 px per frame)", [pan(20)] * 60), ("zoom in (5 % per frame)", [zoom(0.95)] * 40),
                            ("zoom out (5 % per frame)", [zoom(1 / 0.95)] * 40)):
            fps, cpu_fps = frames(app, window, steps)
            report(f"{name}, full screen of tiles", fps, 30, "fps")
            print(f"    UI thread busy {1000 / cpu_fps:.1f} ms per frame (the fps this allows: {cpu_fps:.0f})")
    print(f"    tiles requested from the server: {len(server.requests)}")

    on = drag_fps(app, window)
    report("point drag, background off (10k track)", off[0], 30, "fps")
    report("point drag, background on (10k track)", on[0], 30, "fps")
    print(f"    UI thread per drag frame: {1000 / off[1]:.1f} ms without, {1000 / on[1]:.1f} ms with background "
          f"(ratio {off[1] / on[1]:.2f}); background repainted {on[2]} times in {60} drag frames")
    window.undo_stack.setClean()
    window.close()
    server.stop()
    return 0


if __name__ == "__main__":
    sys.exit(main())
