"""Issue 9, item 11: rarely needed settings wait under a collapsed "More settings"."""
from __future__ import annotations

from PySide6 import QtCore


def shown_controls(panel) -> list[str]:
    return [name for name, control in panel.controls.items() if control.isVisible()]


def test_spikes_shows_at_most_five_settings_until_more_is_clicked(window, qtbot):
    dock = window.tool_dock
    panel = dock.panel("despike")
    dock.show_panel(panel)
    qtbot.wait(10)
    first = shown_controls(panel)
    assert 0 < len(first) <= 5, first
    assert panel.more_button.isVisible() and not panel.more_box.isVisible()
    qtbot.mouseClick(panel.more_button, QtCore.Qt.MouseButton.LeftButton)
    every = shown_controls(panel)
    assert set(first) < set(every) and len(every) == len(panel.controls)
    qtbot.mouseClick(panel.more_button, QtCore.Qt.MouseButton.LeftButton)
    assert shown_controls(panel) == first


def test_every_tool_keeps_its_everyday_settings_in_view(window, qtbot):
    for panel in window.tool_dock.panels:
        window.tool_dock.show_panel(panel)
        qtbot.wait(10)
        shown = shown_controls(panel)
        assert shown, panel.tool.key  # something to set without opening "More settings"
        assert len(shown) <= 7, (panel.tool.key, shown)
