"""The whole file and the result (issue 9, items 17 and 18): asking before an empty track, every
track and route drawn, waypoints in the fitted view, Open Recent, the title after saving a copy.
"""
from __future__ import annotations

import html
import re
from pathlib import Path

import numpy as np
from PySide6 import QtCore, QtWidgets
from PySide6.QtTest import QTest

from gui_support import line_vertices, settle, synthetic_ride

Ctrl = QtCore.Qt.KeyboardModifier.ControlModifier
Yes = QtWidgets.QMessageBox.StandardButton.Yes
Cancel = QtWidgets.QMessageBox.StandardButton.Cancel


def test_deleting_every_point_and_saving_an_empty_track_ask_first(window, dialogs, tmp_path, qtbot):
    doc = synthetic_ride(300, segments=1)
    window.display.set_document(doc)
    window.activateWindow()
    QTest.keyClick(window, QtCore.Qt.Key.Key_A, Ctrl)             # select all
    dialogs.question_answer = Cancel
    QTest.keyClick(window, QtCore.Qt.Key.Key_Delete)
    assert any(text.startswith("Delete every point?") for kind, text in dialogs.asked if kind == "question")
    assert len(doc.tracks[0].points) == 300 and window.undo_stack.count() == 0
    # Deleting part of the track does not ask.
    dialogs.asked.clear()
    window.state.select_range(10, 20)
    QTest.keyClick(window, QtCore.Qt.Key.Key_Delete)
    assert dialogs.asked == [] and len(doc.tracks[0].points) == 290
    QTest.keyClick(window, QtCore.Qt.Key.Key_A, Ctrl)
    dialogs.question_answer = Yes
    QTest.keyClick(window, QtCore.Qt.Key.Key_Delete)
    assert len(doc.tracks[0].points) == 0
    # Saving the empty track asks too; Cancel stops before the file dialog.
    dialogs.asked.clear()
    dialogs.question_answer = Cancel
    dialogs.save_path = str(tmp_path / "empty.gpx")
    QTest.keyClick(window, QtCore.Qt.Key.Key_S, Ctrl)
    assert [k for k, _ in dialogs.asked] == ["question"] and "empty track" in dialogs.asked[0][1]
    assert not (tmp_path / "empty.gpx").exists()
    dialogs.question_answer = Yes
    QTest.keyClick(window, QtCore.Qt.Key.Key_S, Ctrl)
    assert (tmp_path / "empty.gpx").exists()


def _file_with_two_tracks_a_route_and_a_far_waypoint(path: Path) -> Path:
    def trkseg(lat0, lon0, n):
        return "".join(f'<trkpt lat="{lat0 + i * 1e-4:.6f}" lon="{lon0 + i * 5e-5:.6f}"><ele>{500 + i}</ele>'
                       f'<time>2024-05-01T08:{i // 60:02d}:{i % 60:02d}Z</time></trkpt>' for i in range(n))
    route = "".join(f'<rtept lat="{46.99 - i * 2e-3:.6f}" lon="{9.0 + i * 1e-3:.6f}"/>' for i in range(6))
    path.write_text(
        '<?xml version="1.0" encoding="UTF-8"?>'
        '<gpx version="1.1" creator="test" xmlns="http://www.topografix.com/GPX/1/1">'
        '<wpt lat="47.05" lon="9.06"><name>Hut</name></wpt>'         # about 5 km north-east of the tracks
        f'<rte><name>Plan</name>{route}</rte>'
        f'<trk><name>Out</name><trkseg>{trkseg(47.0, 9.0, 120)}</trkseg></trk>'
        f'<trk><name>Back</name><trkseg>{trkseg(47.0, 9.01, 80)}</trkseg></trk>'
        '</gpx>', encoding="utf-8")
    return path


def test_every_track_and_route_is_drawn_and_waypoints_are_in_the_fitted_view(window, tmp_path, qtbot):
    path = _file_with_two_tracks_a_route_and_a_far_waypoint(tmp_path / "two tracks.gpx")
    assert window.files.open_path(path)
    settle(qtbot, 60)
    m = window.map_view
    assert len(m.geometry) == 120                                   # the first track is the one edited
    assert line_vertices(m.other_tracks_item) >= 2                   # the second track is drawn
    assert line_vertices(m.routes_item) >= 2                         # and the route, dashed
    assert m.routes_item.opts["pen"].style() == QtCore.Qt.PenStyle.DashLine
    assert m.other_tracks_item.opts["pen"].style() == QtCore.Qt.PenStyle.SolidLine
    assert len(m.route_points_item.getData()[0]) == 6
    rect = m.view_box.viewRect()
    for x, y in zip(*m.waypoint_item.getData()):
        assert rect.contains(QtCore.QPointF(x, y))                  # the far waypoint is in view
    rx, ry = m.routes_item.getData()
    ok = np.isfinite(rx)
    assert all(rect.contains(QtCore.QPointF(a, b)) for a, b in zip(rx[ok], ry[ok]))
    # Showing the second track draws the first as context instead.
    window.display.show_track(1)
    settle(qtbot, 60)
    assert len(m.geometry) == 80 and line_vertices(m.other_tracks_item) >= 2


def test_open_recent_shows_full_paths_includes_saved_copies_and_the_title_names_the_copy(
        window, dialogs, tmp_path, qtbot):
    path = _file_with_two_tracks_a_route_and_a_far_waypoint(tmp_path / "ride.gpx")
    window.files.open_path(path)
    window.state.set_selection([3])
    window.editing.delete_selection()
    copy = tmp_path / "out" / "ride.tidy.gpx"
    copy.parent.mkdir()
    dialogs.save_path = str(copy)
    assert window.files.save_cleaned_copy()
    title = window.windowTitle()
    assert title.startswith("ride.tidy.gpx (cleaned copy of ride.gpx)")
    menu = window.recent_menu
    assert menu.toolTipsVisible()
    # tooltips are escaped rich text (editor.app.dialogs.plain_tooltip), so a path shows as written
    shown = {a: html.unescape(re.sub(r"<[^>]+>", "", a.toolTip())) for a in menu.actions()}
    entries = [a for a in menu.actions() if shown[a].endswith(".gpx")]
    assert [shown[a] for a in entries] == [str(copy.resolve()), str(path.resolve())]
    assert entries[0].text().endswith("ride.tidy.gpx")
