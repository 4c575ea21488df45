#!/usr/bin/env python3
"""Render the Clean up preview on the bundled tunnel ride at 1280×720 to docs/screenshot-clean-up.png.

Usage: ``QT_QPA_PLATFORM=offscreen python tools/make_clean_up_screenshot.py [OUT.png]`` (no display
needed). The toolbar's Clean up button is clicked as a user would; the map is zoomed onto the
tunnel, where the spikes were removed and the gap filled. A throwaway settings file is used.
"""
from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))  # make_screenshot beside this
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

#: A small laptop's screen: the layout must work there.
SIZE = (1280, 720)
#: The views show this many recorded points either side of the tunnel's removed points.
ROWS_AROUND = 260

from make_screenshot import save_and_close, wait_until  # noqa: E402 (needs the path above)


def main(argv: list[str]) -> int:
    out = Path(argv[1]) if len(argv) > 1 else ROOT / "docs" / "screenshot-clean-up.png"
    import numpy as np
    from PySide6 import QtCore
    from PySide6.QtTest import QTest

    from editor.app import create_application
    from editor.app.settings import AppSettings
    from editor.app.window import MainWindow

    app = create_application()
    settings_dir = tempfile.mkdtemp(prefix="trackwright-shot-")
    window = MainWindow(AppSettings.at_path(Path(settings_dir) / "settings.ini"))
    window.resize(*SIZE)
    window.show()
    ride = ROOT / "demo_tracks" / "demo_tunnel.gpx"
    if not window.files.open_path(ride, confirmed=True):
        print(f"cannot open {ride}", file=sys.stderr)
        return 2
    wait_until(app, lambda: False, 0.3)
    toolbar = window.findChild(QtCore.QObject, "mainToolbar")
    button = toolbar.widgetForAction(window.actions_["clean_up"])
    QTest.mouseClick(button, QtCore.Qt.MouseButton.LeftButton, pos=button.rect().center())
    if not wait_until(app, lambda: window.clean_up.result is not None):
        print("the clean up did not arrive", file=sys.stderr)
        return 1
    proposal = window.state.preview
    # both views on the tunnel: the points the clean up removes there and the gap it fills
    removed = proposal.removed
    middle = int(np.median(removed)) if len(removed) else len(window.display.geometry) // 2
    rows = np.arange(max(0, middle - ROWS_AROUND), min(len(window.display.geometry), middle + ROWS_AROUND))
    for view in window.views:
        view.fit_rows(rows)
    wait_until(app, lambda: False, 0.5)
    return save_and_close(window, out)


if __name__ == "__main__":
    sys.exit(main(sys.argv))
