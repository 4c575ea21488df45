"""Opening, saving a cleaned copy, exporting, bad files and the unsaved-changes prompt."""
from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np
import pytest
import xmlschema
from PySide6 import QtCore, QtWidgets

from editor.io.gpx import read_gpx
from gui_support import DEMO_RIDE, GPX_XSD, synthetic_ride


@pytest.fixture(scope="module")
def gpx_schema():
    # The GPX 1.1 XML Schema published with the standard (Topografix, 2004; 2011 text), from the
    # tests/reference/ (vendored): the outside judge of what we write.
    return xmlschema.XMLSchema(str(GPX_XSD))


@pytest.fixture
def ride_copy(tmp_path) -> Path:
    target = tmp_path / "morning ride.gpx"
    shutil.copyfile(DEMO_RIDE, target)
    return target


def test_opening_the_demo_ride_fills_both_views(window, ride_copy):
    assert window.files.open_path(ride_copy)
    fresh = read_gpx(ride_copy)
    n = len(fresh.tracks[0].points)
    assert n > 1000
    assert len(window.map_view.geometry) == n == len(window.profile_view.geometry)
    x, _ = window.map_view.track_item.getData()
    assert np.isfinite(x).sum() > 100  # the line is drawn (thinned to the screen)
    assert window.windowTitle() == "morning ride.gpx[*] — Trackwright"
    assert window.settings.recent_files()[0] == str(ride_copy.resolve())
    assert window.totals_panel.text_of("Points")[0] == f"{n:,}"


def test_save_cleaned_copy_is_schema_valid_and_leaves_the_original_alone(window, dialogs, ride_copy,
                                                                        gpx_schema, tmp_path):
    original_bytes = ride_copy.read_bytes()
    window.files.open_path(ride_copy)
    doc = window.session.doc
    window.state.set_selection([5, 6, 7])
    window.editing.delete_selection()
    window.state.set_selection([100])
    window.editing.insert_point()
    assert window.isWindowModified()
    expected = tmp_path / "morning ride-cleaned.gpx"
    dialogs.save_path = str(expected)
    assert window.files.save_cleaned_copy()
    assert expected.exists()
    gpx_schema.validate(str(expected))           # raises on any schema violation
    assert ride_copy.read_bytes() == original_bytes
    assert not window.isWindowModified()
    saved = read_gpx(expected)
    assert len(saved.tracks[0].points) == len(doc.tracks[0].points)
    # The default name offered is beside the original, with our suffix.
    from editor.app.session import cleaned_copy_name
    assert cleaned_copy_name(ride_copy) == expected


def test_overwriting_asks_first_and_cancel_keeps_the_file(window, dialogs, ride_copy, tmp_path):
    window.files.open_path(ride_copy)
    target = tmp_path / "existing.gpx"
    target.write_bytes(b"keep me")
    dialogs.save_path = str(target)
    dialogs.warning_answer = QtWidgets.QMessageBox.StandardButton.Cancel
    assert not window.files.save_cleaned_copy()
    assert target.read_bytes() == b"keep me"
    assert "already exists" in dialogs.asked[-1][1]
    # Choosing the original itself gets the stronger warning, and Cancel keeps its bytes.
    original = ride_copy.read_bytes()
    dialogs.save_path = str(ride_copy)
    assert not window.files.save_cleaned_copy()
    assert "the file you opened" in dialogs.asked[-1][1]
    assert ride_copy.read_bytes() == original


def test_undoing_everything_equals_a_fresh_read(window, ride_copy):
    window.files.open_path(ride_copy)
    window.state.set_selection(np.arange(200, 260))
    window.editing.delete_selection()
    window.state.set_selection([400])
    window.editing.split_segment()
    window.state.set_selection([30])
    window.editing.trim_before()
    window.state.set_selection([10])
    window.editing.insert_point()
    window.editing.move_point(50, 12.0, 34.0)
    window.editing.set_point_elevation(51, 999.0)
    assert window.undo_stack.count() == 6
    window.undo_stack.setIndex(0)
    assert window.session.doc.equals(read_gpx(ride_copy))


def test_malformed_file_names_the_problem_and_the_window_keeps_working(window, dialogs, tmp_path, ride_copy):
    window.files.open_path(ride_copy)
    shown = window.session.doc
    bad = tmp_path / "broken.gpx"
    bad.write_text('<?xml version="1.0"?>\n<gpx version="1.1" creator="x" '
                   'xmlns="http://www.topografix.com/GPX/1/1">\n<trk><trkseg>\n'
                   '<trkpt lat="north" lon="9.0"></trkpt>\n</trkseg></trk></gpx>\n', encoding="utf-8")
    assert not window.files.open_path(bad)
    kind, text = dialogs.asked[-1]
    assert kind == "warning" and "broken.gpx" in text
    assert window.session.doc is shown                      # still showing the previous file
    window.state.set_selection([3])
    window.editing.delete_selection()                       # and still editing it
    assert window.undo_stack.count() == 1
    assert QtWidgets.QApplication.activeModalWidget() is None


def test_truncated_file_offers_the_points_read_so_far(window, dialogs, tmp_path, ride_copy):
    data = ride_copy.read_bytes()
    cut = tmp_path / "cut.gpx"
    cut.write_bytes(data[: len(data) // 2])
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.Yes
    assert window.files.open_path(cut)
    kind, text = dialogs.asked[-1]
    assert kind == "question" and "cut.gpx" in text and "line" in text
    shown = len(window.map_view.geometry)
    assert 0 < shown < len(read_gpx(ride_copy).tracks[0].points)
    assert "read-only" in window.windowTitle()
    # Salvaged points are read-only: edits are refused and say why.
    window.state.set_selection([1])
    window.editing.delete_selection()
    assert window.undo_stack.count() == 0 and "read-only" in window.statusBar().currentMessage()
    # Declining leaves the window on what it showed before.
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.No
    assert not window.files.open_path(cut)
    assert len(window.map_view.geometry) == shown
    # Saving a copy keeps the damaged file as it was and makes the copy the editable document.
    copy = tmp_path / "cut-salvaged.gpx"
    assert window.files.write_copy(copy)
    assert cut.read_bytes() == data[: len(data) // 2]
    assert len(read_gpx(copy).tracks[0].points) == shown
    window.state.set_selection([1])
    window.editing.delete_selection()
    assert window.undo_stack.count() == 1 and "read-only" not in window.windowTitle()


def test_closing_with_unsaved_changes_asks_and_cancel_keeps_the_window(window, dialogs, ride_copy):
    window.files.open_path(ride_copy)
    window.state.set_selection([1])
    window.editing.delete_selection()
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.Cancel
    assert not window.close()
    assert window.isVisible()
    assert dialogs.kinds()[-1] == "question"
    dialogs.question_answer = QtWidgets.QMessageBox.StandardButton.Discard
    assert window.close()


def test_export_geojson_and_csv(window, dialogs, ride_copy, tmp_path):
    window.files.open_path(ride_copy)
    out = tmp_path / "ride.geojson"
    dialogs.save_path = str(out)
    assert window.files.export_as("geojson")
    data = json.loads(out.read_text(encoding="utf-8"))
    assert data["type"] == "FeatureCollection"      # RFC 7946, section 3.3
    out_csv = tmp_path / "ride.csv"
    dialogs.save_path = str(out_csv)
    assert window.files.export_as("csv")
    assert out_csv.read_text(encoding="utf-8").count("\n") > 1000


def test_drop_a_file_opens_it(window, ride_copy, qtbot):
    mime = QtCore.QMimeData()
    mime.setUrls([QtCore.QUrl.fromLocalFile(str(ride_copy))])
    from PySide6 import QtGui
    drop = QtGui.QDropEvent(QtCore.QPointF(50, 50), QtCore.Qt.DropAction.CopyAction, mime,
                            QtCore.Qt.MouseButton.NoButton, QtCore.Qt.KeyboardModifier.NoModifier)
    window.dropEvent(drop)
    assert window.session.source_path == ride_copy


def test_a_file_with_several_tracks_lists_them_and_switches(window, tmp_path):
    from editor.io.gpx import write_gpx
    doc = synthetic_ride(300, seed=1)
    doc.tracks.append(synthetic_ride(500, seed=2, segments=3).tracks[0])
    path = tmp_path / "two.gpx"
    write_gpx(doc, path)
    window.files.open_path(path)
    assert window.track_list.topLevelItemCount() == 2
    assert window.tracks_dock.isVisibleTo(window)
    second = window.track_list.topLevelItem(1)
    window.track_list._activated(second)
    assert window.state.track == 1 and len(window.map_view.geometry) == 500
    window.track_list._activated(second.child(2))
    assert list(window.state.selection) == list(range(333, 500))


def test_about_box_carries_the_caution(window, dialogs):
    window.actions_["about"].trigger()
    kind, text = dialogs.asked[-1]
    assert kind == "about"
    assert "estimates" in text and "not for navigation" in text


def test_replacing_the_original_names_the_backup_it_keeps(window, dialogs, ride_copy):
    """Issue 8, §2: the prompt said the original is lost although a backup is kept; it names the backup."""
    original = ride_copy.read_bytes()
    window.files.open_path(ride_copy)
    window.state.set_selection([10])
    window.editing.delete_selection()
    dialogs.save_path = str(ride_copy)
    dialogs.warning_answer = QtWidgets.QMessageBox.StandardButton.Yes
    assert window.files.save_cleaned_copy()
    backup = ride_copy.with_name(ride_copy.name + ".bak")
    asked = dialogs.asked[-1][1]
    assert str(backup) in asked and "loses" not in asked
    assert backup.read_bytes() == original
