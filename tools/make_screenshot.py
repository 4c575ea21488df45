#!/usr/bin/env python3
"""Render the editor on the bundled demo ride with a smoothing preview to docs/screenshot.png.

Usage: ``QT_QPA_PLATFORM=offscreen python tools/make_screenshot.py [OUT.png]`` (works without a
display). Uses a throwaway settings file, so the user's own settings are neither read nor changed.
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


def main(argv: list[str]) -> int:
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
    out.parent.mkdir(parents=True, exist_ok=True)
    window.grab().save(str(out))
    window.undo_stack.setClean()
    window.close()
    print(f"wrote {out}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
