"""Issue 9, item 14 (rest): the tools keep their room, and nothing jumps sideways in a tool tab."""
from __future__ import annotations

from PySide6 import QtCore, QtWidgets

from editor.app.window import MINIMUM_TOOLS_HEIGHT, MainWindow


def test_saved_dock_sizes_never_squeeze_the_tools(window, qtbot, settings):
    # a layout saved with the tools squeezed to a sliver (a small window, a dragged splitter)
    window.resizeDocks([window.tools_dock, window.totals_dock, window.history_dock], [60, 500, 500],
                       QtCore.Qt.Orientation.Vertical)
    qtbot.wait(20)
    window._save_layout()
    window.undo_stack.setClean()

    again = MainWindow(settings)
    qtbot.addWidget(again)
    again.showMaximized()
    qtbot.waitExposed(again)
    qtbot.waitUntil(lambda: again.tools_dock.height() >= MINIMUM_TOOLS_HEIGHT, timeout=2000)
    # the other docks are still there, only smaller
    assert again.totals_dock.isVisible() and again.history_dock.isVisible()
    again.close()


def test_opening_more_settings_moves_nothing_sideways(window, qtbot):
    window.resize(1300, 1000)  # the everyday settings fit; all of them need the scroll bar
    dock = window.tool_dock
    panel = dock.panel("despike")
    dock.show_panel(panel)
    qtbot.wait(50)
    scroller = panel.parentWidget().parentWidget()
    assert isinstance(scroller, QtWidgets.QScrollArea)
    bar = scroller.verticalScrollBar()
    first = next(c for c in panel.controls.values() if c.isVisible()).editor

    def place() -> tuple[int, int]:
        return first.mapTo(window, QtCore.QPoint(0, 0)).x(), first.width()

    before, width_before = place(), panel.width()
    assert not bar.isVisible()
    qtbot.mouseClick(panel.more_button, QtCore.Qt.MouseButton.LeftButton)
    qtbot.waitUntil(bar.isVisible, timeout=2000)
    qtbot.wait(20)
    assert place() == before and panel.width() == width_before


def test_at_1280_by_720_every_tool_keeps_preview_apply_discard_in_view(window, qtbot):
    window.resize(1280, 720)
    qtbot.wait(50)
    assert window.height() <= 720  # nothing in the docks forces a taller window
    inside = window.rect()
    for panel in window.tool_dock.panels:
        window.tool_dock.show_panel(panel)
        qtbot.mouseClick(panel.more_button, QtCore.Qt.MouseButton.LeftButton)  # everything open: it scrolls
        qtbot.wait(20)
        for button in (panel.preview_button, panel.apply_button, panel.discard_button):
            corner = button.mapTo(window, QtCore.QPoint(0, 0))
            assert button.isVisible(), (panel.tool.key, button.text())
            assert inside.contains(QtCore.QRect(corner, button.size())), (panel.tool.key, button.text())
        assert window.tools_dock.height() >= MINIMUM_TOOLS_HEIGHT
