"""Hand edits from the keyboard and menus: each is one named undo step; undoing all restores the input."""
from __future__ import annotations

import numpy as np
from PySide6 import QtCore
from PySide6.QtTest import QTest

from gui_support import synthetic_ride

Ctrl = QtCore.Qt.KeyboardModifier.ControlModifier
CtrlShift = Ctrl | QtCore.Qt.KeyboardModifier.ShiftModifier


def _key(window, key, modifiers=QtCore.Qt.KeyboardModifier.NoModifier):
    QTest.keyClick(window, key, modifiers)


def test_every_hand_edit_is_one_step_and_undoing_all_restores_the_document(window, qtbot):
    doc = synthetic_ride(1200, seed=3)
    window.display.set_document(doc)
    fresh = synthetic_ride(1200, seed=3)  # the same invented input, built again independently
    window.activateWindow()
    window.setFocus()
    track = lambda: doc.tracks[0]  # noqa: E731

    window.state.set_selection([10, 11, 12])
    _key(window, QtCore.Qt.Key.Key_Delete)
    assert len(track().points) == 1197
    window.state.set_selection([50])
    _key(window, QtCore.Qt.Key.Key_B, CtrlShift)           # trim before
    assert len(track().points) == 1147
    window.state.set_selection([1000])
    _key(window, QtCore.Qt.Key.Key_E, CtrlShift)           # trim after
    assert len(track().points) == 1001
    window.state.set_selection([300])
    _key(window, QtCore.Qt.Key.Key_K, CtrlShift)           # split
    assert track().segment_count == 3
    window.state.set_selection([100])
    _key(window, QtCore.Qt.Key.Key_J, CtrlShift)           # join with next
    assert track().segment_count == 2
    window.state.set_selection([400])
    _key(window, QtCore.Qt.Key.Key_Insert)
    qtbot.wait(10)
    assert len(track().points) == 1002
    assert list(window.state.selection) == [401]            # the new point is selected
    p = track().points
    # Halfway in time between its neighbours, as the action promises.
    assert p.time[401] - p.time[400] == p.time[402] - p.time[401]

    names = [window.undo_stack.text(i) for i in range(window.undo_stack.count())]
    assert names == ["Delete 3 points", "Trim before selection", "Trim after selection", "Split segment",
                     "Join segments", "Insert point"]
    assert window.isWindowModified()
    for _ in names:
        _key(window, QtCore.Qt.Key.Key_Z, Ctrl)
    assert doc.equals(fresh)
    assert not window.isWindowModified()
    # Redo with both shortcuts, then undo again.
    _key(window, QtCore.Qt.Key.Key_Z, CtrlShift)
    _key(window, QtCore.Qt.Key.Key_Y, Ctrl)
    assert window.undo_stack.index() == 2 and len(track().points) == 1147
    window.undo_stack.setIndex(0)
    assert doc.equals(fresh)


def test_actions_that_do_not_apply_explain_why_and_change_nothing(window):
    doc = synthetic_ride(300, segments=1)
    window.display.set_document(doc)
    window.state.set_selection([0])
    window.editing.split_segment()                     # a segment's first point cannot start a new one
    window.editing.trim_before()                       # nothing before row 0
    window.editing.merge_segments()                    # only one segment
    assert window.undo_stack.count() == 0
    assert "segment" in window.statusBar().currentMessage()


def test_keyboard_selection_steps_and_grows(window):
    window.display.set_document(synthetic_ride(300, segments=1))
    window.activateWindow()
    _key(window, QtCore.Qt.Key.Key_Right, Ctrl)
    assert list(window.state.selection) == [0]
    _key(window, QtCore.Qt.Key.Key_Right, Ctrl)
    assert list(window.state.selection) == [1]
    _key(window, QtCore.Qt.Key.Key_Right, CtrlShift)
    _key(window, QtCore.Qt.Key.Key_Right, CtrlShift)
    assert list(window.state.selection) == [1, 2, 3]
    assert window.state.hover == 3
    _key(window, QtCore.Qt.Key.Key_A, Ctrl)
    assert len(window.state.selection) == 300
    _key(window, QtCore.Qt.Key.Key_A, CtrlShift)
    assert len(window.state.selection) == 0


def test_units_time_offset_and_layout_are_remembered(window, settings, dialogs, qtbot):
    from editor.app.window import MainWindow
    from editor.units import IMPERIAL

    window.display.set_document(synthetic_ride(400))
    window.actions_["imperial"].trigger()
    window.actions_["offset"].trigger()          # the recorder answers +2 h
    window.actions_["side_by_side"].trigger()
    assert dialogs.kinds() == ["offset"]
    distance_text, _ = window.totals_panel.text_of("Distance")
    assert distance_text.endswith(" mi")
    assert window.profile_view.plotItem.getAxis("left").labelText == "Elevation (ft)"
    # 0.3048 m per international foot (1959 international yard and pound agreement).
    row = 100
    assert f"elevation {window.profile_view.geometry.ele_m[row] / 0.3048:,.0f} ft" in window.profile_view.readout(row)
    assert "UTC+02:00" in window.profile_view.readout(row)
    window.close()
    again = MainWindow(settings)
    qtbot.addWidget(again)
    assert again.units is IMPERIAL and again.utc_offset_h == 2.0
    assert again.splitter.orientation() == QtCore.Qt.Orientation.Horizontal
    assert again.actions_["imperial"].isChecked()


def test_profile_against_time_uses_clock_time(window):
    doc = synthetic_ride(400)
    window.display.set_document(doc)
    window.actions_["time_axis"].trigger()
    x, _ = window.profile_view.track_xy(window.profile_view.geometry)
    assert np.allclose(x, doc.tracks[0].points.time_s())
    assert window.profile_view.plotItem.getAxis("bottom").labelText == "Time (UTC)"


def test_edit_command_applies_the_edit_and_its_inverse_only(qtbot):
    """do → undo → redo on the model itself, through a bare QUndoStack (design rule 2)."""
    from PySide6.QtGui import QUndoStack

    from editor.commands import EditCommand
    from editor.model import DeletePoints, SplitSegment

    doc = synthetic_ride(200, seed=5, segments=1)
    fresh = synthetic_ride(200, seed=5, segments=1)
    changes = []
    doc.changed.connect(changes.append)
    stack = QUndoStack()
    stack.push(EditCommand(doc, DeletePoints(0, np.array([3, 4, 5])), "Delete 3 points"))
    stack.push(EditCommand(doc, SplitSegment(0, 50), "Split segment"))
    assert len(doc.tracks[0].points) == 197 and doc.tracks[0].segment_count == 2
    assert changes == [0, 0]                           # one notification per applied edit
    stack.undo()
    stack.undo()
    assert doc.equals(fresh)
    stack.redo()
    stack.redo()
    assert len(doc.tracks[0].points) == 197 and list(doc.tracks[0].segment_starts) == [0, 50]
    assert [stack.text(i) for i in range(stack.count())] == ["Delete 3 points", "Split segment"]


def test_times_out_of_order_are_offered_for_sorting_and_sorting_is_one_undo_step(window, dialogs, tmp_path):
    from PySide6 import QtWidgets as W

    from editor.model.hand_edits import backward_time_count
    from editor.io.gpx import read_gpx

    gpx = ['<?xml version="1.0" encoding="UTF-8"?>',
           '<gpx version="1.1" creator="t" xmlns="http://www.topografix.com/GPX/1/1" xmlns:h="urn:x-test:h">'
           '<trk><trkseg>']
    seconds = [0, 1, 2, 5, 3, 4, 6, 7]  # rows 3..5 were logged out of order
    for i, s in enumerate(seconds):
        gpx.append(f'<trkpt lat="{46 + i * 1e-4}" lon="7"><time>2026-05-01T08:00:0{s}Z</time>'
                   f'<extensions><h:n>{i}</h:n></extensions></trkpt>')
    gpx.append('</trkseg><trkseg><trkpt lat="46.1" lon="7"><time>2026-05-01T07:00:00Z</time></trkpt>'
               '</trkseg></trk></gpx>')
    path = tmp_path / "shuffled.gpx"
    path.write_text("\n".join(gpx))
    dialogs.question_answer = W.QMessageBox.StandardButton.Yes
    assert window.files.open_path(path, confirmed=True)
    assert any("Times out of order" in text for kind, text in dialogs.asked if kind == "question")
    track = window.session.doc.tracks[0]
    # one backward step inside segment 0; the second segment's earlier time is not compared across segments
    assert window.undo_stack.count() == 1 and window.undo_stack.text(0) == "Sort points by time"
    assert backward_time_count(track) == 0
    seconds_now = (track.points.time[:8] - track.points.time[0]).astype("timedelta64[s]").astype(int).tolist()
    assert seconds_now == [0, 1, 2, 3, 4, 5, 6, 7]
    # payloads moved with their points: the point logged at 5 s is the 4th in the file (n = 3)
    assert "<h:n>3</h:n>" in str(track.points.extra[5])
    assert track.segment_starts.tolist() == [0, 8]
    window.undo_stack.undo()
    assert window.session.doc.equals(read_gpx(path))
