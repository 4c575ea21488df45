#!/usr/bin/env python3
"""Render the editor on the bundled demo ride with a smoothing preview to docs/screenshot.png.

Usage: ``QT_QPA_PLATFORM=offscreen python tools/make_screenshot.py [OUT.png]`` (works without a
display). Uses a throwaway settings file, so the user's own settings are neither read nor changed.
``--terrain [OUT.png]`` renders the demo hike with its invented terrain instead: the elevation tab's
preview, the terrain's line in the profile and shaded relief under the map
(docs/screenshot-terrain.png).
"""
from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

#: Strengths shown in the screenshot's preview (0 keeps the recording, 100 smooths the most).
POSITION_STRENGTH = 70  # q = 10^-2.4 m^2/s^3, as 55 was before 0 meant "unchanged"
ELEVATION_STRENGTH = 71  # q = 10^-4 m^2/s^3, as 50 was
#: The map is centred on the point this far along the track (the switchbacks below the saddle),
#: the profile's crosshair rests on it.
FOCUS_FRACTION = 0.42
#: Half-width (metres) of the map's view around that point.
MAP_HALF_WIDTH_M = 900.0


def wait_until(app, condition, seconds: float = 60.0) -> bool:
    """Run the event loop until ``condition()`` holds or ``seconds`` pass; whether it holds."""
    from PySide6 import QtCore

    deadline = time.monotonic() + seconds
    while not condition() and time.monotonic() < deadline:
        app.processEvents(QtCore.QEventLoop.ProcessEventsFlag.AllEvents, 20)
    return condition()


def save_and_close(window, out: Path) -> int:
    """Write the window's picture to ``out``, then close it without asking to save; 0 for the exit code."""
    out.parent.mkdir(parents=True, exist_ok=True)
    window.grab().save(str(out))
    window.previews.discard_preview()
    window.undo_stack.setClean()
    window.close()
    print(f"wrote {out}")
    return 0


def terrain_shot(out: Path) -> int:
    """The demo hike with its terrain: elevation preview (combine), terrain line, shaded relief."""
    from PySide6 import QtCore

    from editor.app import create_application
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow

    app = create_application()
    settings_dir = tempfile.mkdtemp(prefix="trackwright-shot-")
    window = MainWindow(AppSettings.at_path(Path(settings_dir) / "settings.ini"))
    window.resize(1600, 1000)
    window.show()
    hike = ROOT / "demo_tracks" / "demo_hike.gpx"
    if not window.files.open_path(hike, confirmed=True):
        print(f"cannot open {hike}", file=sys.stderr)
        return 2
    panel = window.tool_dock.panel("elevation")
    window.tool_dock.show_panel(panel)
    panel.set_terrain_paths([ROOT / "demo_tracks" / "demo_hike.terrain.tif"])
    if not wait_until(app, lambda: window.state.preview is not None):
        print("the preview did not arrive", file=sys.stderr)
        return 1
    geometry = window.display.geometry
    x0, x1 = float(geometry.x_m.min()), float(geometry.x_m.max())
    y0, y1 = float(geometry.y_m.min()), float(geometry.y_m.max())
    pad = 300.0
    window.map_view.view_box.setRange(QtCore.QRectF(x0 - pad, y0 - pad, x1 - x0 + 2 * pad, y1 - y0 + 2 * pad),
                                      padding=0)
    relief = window.map_view.background  # the terrain's shaded relief, shown once terrain is chosen
    app.processEvents()
    if not wait_until(app, lambda: relief.shown is not None and not relief._timer.isActive()):
        print("the relief did not arrive", file=sys.stderr)
        return 1
    wait_until(app, lambda: False, 1.5)  # the relief of the final view range
    return save_and_close(window, out)


def main(argv: list[str]) -> int:
    if len(argv) > 1 and argv[1] == "--terrain":
        return terrain_shot(Path(argv[2]) if len(argv) > 2 else ROOT / "docs" / "screenshot-terrain.png")
    out = Path(argv[1]) if len(argv) > 1 else ROOT / "docs" / "screenshot.png"
    from PySide6 import QtCore

    from editor.app import create_application
    from editor.bundled import demo_ride
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow

    app = create_application()
    settings_dir = tempfile.mkdtemp(prefix="trackwright-shot-")
    window = MainWindow(AppSettings.at_path(Path(settings_dir) / "settings.ini"))
    window.resize(1600, 1000)
    window.show()
    if not window.files.open_path(demo_ride(), confirmed=True):
        print(f"cannot open {demo_ride()}", file=sys.stderr)
        return 2
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    panel.controls["horizontal_strength"].set_value(POSITION_STRENGTH)
    panel.controls["vertical_strength"].set_value(ELEVATION_STRENGTH)
    window.previews.request_preview(panel.tool, panel.params(), False, immediately=True)
    deadline = time.monotonic() + 60
    while window.state.preview is None and time.monotonic() < deadline:
        app.processEvents(QtCore.QEventLoop.ProcessEventsFlag.AllEvents, 20)
    if window.state.preview is None:
        print("the preview did not arrive", file=sys.stderr)
        return 1
    # Zoom the map in far enough that the faded recording, its measured points and the bold
    # proposal can be told apart.
    geometry = window.display.geometry
    row = int(len(geometry) * FOCUS_FRACTION)
    x, y = geometry.x_m[row], geometry.y_m[row]
    half = MAP_HALF_WIDTH_M
    window.map_view.view_box.setRange(QtCore.QRectF(x - half, y - half * 0.55, 2 * half, 1.1 * half), padding=0)
    window.state.set_hover(row)
    for _ in range(10):
        app.processEvents()
    return save_and_close(window, out)


if __name__ == "__main__":
    sys.exit(main(sys.argv))
