"""Help, legend, status text and the max-speed flag (issue 9, item 19)."""
from __future__ import annotations

import numpy as np
from PySide6 import QtCore, QtWidgets
from PySide6.QtTest import QTest

from editor.model import Document, PointTable, Track
from gui_support import settle, synthetic_ride

Ctrl = QtCore.Qt.KeyboardModifier.ControlModifier
CtrlShift = Ctrl | QtCore.Qt.KeyboardModifier.ShiftModifier
Left = QtCore.Qt.MouseButton.LeftButton


def test_f1_opens_the_gestures_and_shortcuts_page(window, qtbot):
    help_menu = next(a.menu() for a in window.menuBar().actions() if a.text() == "&Help")
    assert "&Gestures and shortcuts" in [a.text() for a in help_menu.actions()]
    window.activateWindow()
    QTest.keyClick(window, QtCore.Qt.Key.Key_F1)
    page = window.gestures_page
    qtbot.waitUntil(page.isVisible, timeout=2000)
    assert not page.isModal() and QtWidgets.QApplication.activeModalWidget() is None
    text = page.browser.toPlainText()
    for words in ("Drag", "Pan. A plain drag never changes the track.", "Move points", "Ctrl+M",
                  "Shift+mouse wheel", "Zoom the elevation only", "Undo", "Ctrl+Z", "Delete selected points"):
        assert words in text, words
    page.close()
    assert not page.isVisible()


def test_the_legend_dock_is_in_the_view_menu(window):
    view_menu = next(a.menu() for a in window.menuBar().actions() if a.text() == "&View")
    toggle = window.legend_dock.toggleViewAction()
    assert toggle in view_menu.actions()
    toggle.trigger()
    assert window.legend_dock.isHidden()
    toggle.trigger()
    assert not window.legend_dock.isHidden()


def test_status_text_says_what_undo_redo_and_a_trim_did(window, qtbot):
    window.display.set_document(synthetic_ride(1500, segments=1))
    window.activateWindow()
    status = window.statusBar()
    window.state.set_selection([50])
    QTest.keyClick(window, QtCore.Qt.Key.Key_B, CtrlShift)            # trim before
    assert status.currentMessage() == "Done: Trim before selection · the track has 1,450 points"
    QTest.keyClick(window, QtCore.Qt.Key.Key_Z, Ctrl)
    assert status.currentMessage() == "Undone: Trim before selection · the track has 1,500 points"
    QTest.keyClick(window, QtCore.Qt.Key.Key_Z, CtrlShift)
    assert status.currentMessage() == "Redone: Trim before selection · the track has 1,450 points"
    QTest.keyClick(window, QtCore.Qt.Key.Key_Z, Ctrl)
    # A tool's "Applied: …" is replaced when the step is undone.
    panel = window.tool_dock.panel("simplify")
    window.tool_dock.show_panel(panel)
    qtbot.mouseClick(panel.preview_button, Left)
    qtbot.waitUntil(lambda: window.state.preview is not None, timeout=20000)
    qtbot.mouseClick(panel.apply_button, Left)
    label = window.undo_stack.text(0)
    assert status.currentMessage() == f"Applied: {label}"
    QTest.keyClick(window, QtCore.Qt.Key.Key_Z, Ctrl)
    assert status.currentMessage() == f"Undone: {label} · the track has 1,500 points"
    assert "Applied" not in status.currentMessage()


def _steady_ride(spike_row: int | None) -> Document:
    """Invented: 600 fixes, 1 s apart, due east at 6 m/s with 0.3 m scatter (a calm ride)."""
    rng = np.random.default_rng(11)
    n = 600
    east = 6.0 * np.arange(n) + rng.normal(0, 0.3, n)
    north = rng.normal(0, 0.3, n)
    if spike_row is not None:
        north[spike_row] += 400.0                                    # one fix 400 m off: 400 m/s for a second
    lat = 47.0 + north / 111_200.0
    lon = 9.0 + east / (111_200.0 * np.cos(np.radians(47.0)))
    time = np.datetime64("2024-06-01T07:00:00", "ns") + (np.arange(n) * 1e9).astype("timedelta64[ns]")
    points = PointTable.from_columns(lat, lon, ele=np.full(n, 400.0), time=time)
    return Document(tracks=[Track(points=points, segment_starts=np.array([0]), segment_extra=[None])])


def test_a_max_speed_above_the_activitys_limit_is_flagged_as_probably_a_spike(window, qtbot):
    window.display.set_document(_steady_ride(None))
    settle(qtbot, 50)
    now, _ = window.totals_panel.text_of("Max speed")
    assert "⚠" not in now and window.totals_panel.spike_label.isHidden()
    window.display.set_document(_steady_ride(300))
    settle(qtbot, 50)
    now, _ = window.totals_panel.text_of("Max speed")
    assert now.endswith("⚠")
    note = window.totals_panel.spike_label.text()
    assert note == "⚠ Max speed: probably a spike — over 90 km/h"
    assert "“Ride (bicycle)”" in window.totals_panel.spike_label.toolTip()
    assert "probably a spike" in window.totals_panel.cells["Max speed"][0].toolTip()
    # The Spikes tool removes it; its proposal is no longer flagged.
    panel = window.tool_dock.panel("despike")
    window.tool_dock.show_panel(panel)
    qtbot.mouseClick(panel.preview_button, Left)
    qtbot.waitUntil(lambda: window.state.preview is not None, timeout=20000)
    now, after = window.totals_panel.text_of("Max speed")
    assert now.endswith("⚠") and "⚠" not in after
