"""Issue 9, item 12: the activity choice shows words a rider uses, and picking one sets the preset."""
from __future__ import annotations

from PySide6 import QtCore

from editor.processing.activity import ACTIVITIES


def test_activity_choices_read_as_words_and_pick_the_preset(window, qtbot):
    panel = window.tool_dock.panel("despike")
    window.tool_dock.show_panel(panel)
    combo = panel.controls["activity"].editor
    texts = [combo.itemText(i) for i in range(combo.count())]
    assert texts == ["Guess from the speeds", "Walk / hike", "Run", "Ride (bicycle)", "Drive"]
    assert not any(key in texts for key in ACTIVITIES)  # no internal keys ("walk", "ride") shown
    # choose "Walk / hike" with the keyboard, as a rider would
    combo.setFocus()
    qtbot.mouseClick(combo, QtCore.Qt.MouseButton.LeftButton)
    qtbot.keyClick(combo.view(), QtCore.Qt.Key.Key_Down)
    qtbot.keyClick(combo.view(), QtCore.Qt.Key.Key_Return)
    assert combo.currentText() == "Walk / hike"
    assert panel.params().activity == "walk"
