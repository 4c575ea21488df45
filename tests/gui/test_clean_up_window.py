"""Clean up in the window, driven with the mouse: toolbar button, step switches, Apply, Undo.

Outside reference for "equal to the batch": ``trackwright clean``'s own core
(:func:`editor.processing.pipeline.clean_document`, what the command writes, checked against the
command's output file in tests/processing/test_clean_up.py) on the same bundled demo ride.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from gui_support import journal_after_a_crash
from PySide6 import QtCore, QtWidgets
from PySide6.QtTest import QTest

from editor import CAUTION
from editor.io.gpx import read_gpx
from editor.model.payload import GAP_FILL_MARKER
from editor.processing.pipeline import CleanParams, clean_document

TUNNEL = Path(__file__).resolve().parents[2] / "demo_tracks" / "demo_tunnel.gpx"
LEFT = QtCore.Qt.MouseButton.LeftButton


@pytest.fixture
def tunnel(window):
    window.files.open_path(TUNNEL)
    yield window
    window.clean_up.runner.cancel()
    assert window.clean_up.pool.wait(30)


def press(widget: QtWidgets.QWidget) -> None:
    """A left click in the middle of ``widget``, as a hand does."""
    QTest.mouseClick(widget, LEFT, QtCore.Qt.KeyboardModifier.NoModifier, widget.rect().center())


def toolbar_button(window, name: str) -> QtWidgets.QWidget:
    toolbar = window.findChild(QtWidgets.QToolBar, "mainToolbar")
    return toolbar.widgetForAction(window.actions_[name])


def wait_result(qtbot, window, previous=None):
    qtbot.waitUntil(lambda: window.clean_up.result is not None and window.state.preview is not previous
                    and window.state.preview is window.clean_up.result.proposal, timeout=20000)
    qtbot.wait(30)  # the views redraw in the next event-loop turn
    return window.state.preview


def same_points(a, b) -> None:
    for key in ("lat", "lon", "ele"):
        assert np.array_equal(getattr(a, key), getattr(b, key), equal_nan=True), key
    assert np.array_equal(a.time.view("int64"), b.time.view("int64"))


def test_the_toolbar_button_previews_the_batch_clean_and_apply_is_one_undo_step(tunnel, qtbot):
    window = tunnel
    original = read_gpx(TUNNEL)
    cleaned, report = clean_document(original, inserted_marker=GAP_FILL_MARKER)
    button = toolbar_button(window, "clean_up")
    assert button.text() == "Clean up"
    press(button)
    proposal = wait_result(qtbot, window)
    panel = window.clean_up.panel
    assert window.clean_up.dock.isVisible()
    # both views draw the combined proposal, the totals show before -> after of the batch clean
    assert len(window.map_view.proposal_item.getData()[0]) > 0
    assert len(window.profile_view.proposal_item.getData()[0]) > 0
    assert len(window.map_view.faded_item.getData()[0]) > 0  # the changed stretches of the recording fade
    assert window.totals_panel.text_of("Distance")[1] == f"{report.after.distance_m / 1000:,.2f} km"
    assert proposal.after == report.after
    same_points(proposal.points, cleaned.tracks[0].points)
    # the list says what each step did, in a rider's words; the method in the secondary line
    rows = panel.rows
    assert [r.switch.text() for r in rows.values()] == ["Spikes", "Gaps", "Stops", "Smooth"]
    assert rows["despike"].result.text() == "removed 15 points"
    assert rows["fill_gaps"].result.text() == "filled 1 gap (124 points added)"
    assert rows["smooth"].result.text().endswith("(estimated)")
    assert "maximum likelihood" in rows["smooth"].detail.text()
    assert panel.caution.text() == CAUTION and panel.caution.isVisible()
    # the tool panel shown beside it offers no Apply for this preview
    assert not window.tool_dock.current_panel().apply_button.isEnabled()
    assert window.session.doc.tracks[0].equals(original.tracks[0])

    press(panel.apply_button)
    assert window.state.preview is None
    assert window.undo_stack.count() == 1 and window.undo_stack.text(0) == "Clean up"
    assert window.history.model().rowCount() == 2  # "File as opened" and the one step
    assert window.session.doc.tracks[0].equals(cleaned.tracks[0])
    # the saved copy's record lists every step that ran, as the command's does (stops found none here)
    assert [r.tool for r in window.editing.cleaning_steps()] == ["despike", "fill_gaps", "collapse_stops", "smooth"]
    assert any(value.startswith("auto (") for name, value in window.editing.cleaning_steps()[3].params
               if name == "horizontal_strength")

    press(toolbar_button(window, "undo"))
    assert window.session.doc.equals(original)
    press(toolbar_button(window, "redo"))
    assert window.session.doc.tracks[0].equals(cleaned.tracks[0])


def test_switching_a_step_off_works_the_clean_up_out_again(tunnel, qtbot):
    window = tunnel
    original = read_gpx(TUNNEL)
    QTest.keyClick(window, QtCore.Qt.Key.Key_C,
                   QtCore.Qt.KeyboardModifier.ControlModifier | QtCore.Qt.KeyboardModifier.ShiftModifier)
    first = wait_result(qtbot, window)
    panel = window.clean_up.panel
    switch = panel.rows["smooth"].switch
    press(switch)
    assert not switch.isChecked()
    second = wait_result(qtbot, window, first)
    assert panel.rows["smooth"].result.text() == "switched off"
    without, report = clean_document(original, CleanParams(smooth=None), inserted_marker=GAP_FILL_MARKER)
    same_points(second.points, without.tracks[0].points)
    assert second.after == report.after and second.after.distance_m > first.after.distance_m
    assert window.totals_panel.text_of("Distance")[1] == f"{report.after.distance_m / 1000:,.2f} km"
    # every step off: nothing to apply
    for key in ("despike", "fill_gaps", "collapse_stops"):
        previous = window.state.preview
        press(panel.rows[key].switch)
        wait_result(qtbot, window, previous)
    assert window.state.preview.is_noop()
    assert not panel.apply_button.isEnabled() and panel.discard_button.isEnabled()
    press(panel.discard_button)
    assert window.state.preview is None and window.undo_stack.count() == 0


def test_the_menu_entry_opens_it_and_a_tool_preview_takes_over(tunnel, qtbot):
    window = tunnel
    tools = next(a.menu() for a in window.menuBar().actions() if a.text() == "&Tools")
    assert window.actions_["clean_up"] in tools.actions()
    window.actions_["clean_up"].trigger()
    wait_result(qtbot, window)
    panel = window.clean_up.panel
    assert panel.apply_button.isEnabled()
    # a tool's own preview replaces the clean up's: its Apply goes, its words are cleared
    smooth = window.tool_dock.panel("smooth")
    window.tools_dock.raise_()
    window.tool_dock.show_panel(smooth)
    press(smooth.preview_button)
    qtbot.waitUntil(lambda: window.state.preview is not None and window.state.preview.tool == "smooth",
                    timeout=20000)
    assert not panel.apply_button.isEnabled()
    assert panel.rows["despike"].result.text() == ""


def test_the_panel_fits_a_small_laptop_screen(tunnel, qtbot):
    window = tunnel
    window.resize(1280, 720)
    press(toolbar_button(window, "clean_up"))
    wait_result(qtbot, window)
    panel = window.clean_up.panel
    for widget in (panel.apply_button, panel.discard_button, panel.caution):
        top_left = widget.mapTo(window, QtCore.QPoint(0, 0))
        assert widget.isVisible()
        assert window.rect().contains(QtCore.QRect(top_left, widget.size())), widget


def test_with_terrain_chosen_the_terrain_step_is_offered_as_in_the_batch(tunnel, qtbot):
    from editor.terrain import Terrain

    window = tunnel
    terrain = Terrain.open([TUNNEL.with_suffix(".terrain.tif")])
    window.tool_dock.panel("elevation").set_terrain(terrain)  # as its "Terrain files…" button does
    press(toolbar_button(window, "clean_up"))
    proposal = wait_result(qtbot, window)
    panel = window.clean_up.panel
    assert list(panel.rows) == ["despike", "fill_gaps", "collapse_stops", "smooth", "elevation"]
    assert panel.rows["elevation"].result.text() == "terrain combined with the recorded heights"
    cleaned, report = clean_document(read_gpx(TUNNEL), inserted_marker=GAP_FILL_MARKER, terrain=terrain)
    same_points(proposal.points, cleaned.tracks[0].points)
    assert proposal.after == report.after


def test_an_applied_clean_up_is_in_the_crash_journal_and_the_saved_copys_record(tmp_path, window, qtbot, dialogs):
    import shutil


    source = tmp_path / "tunnel.gpx"
    shutil.copy(TUNNEL, source)
    assert window.files.open_path(source, confirmed=True)
    press(toolbar_button(window, "clean_up"))
    wait_result(qtbot, window)
    press(window.clean_up.panel.apply_button)
    expected = window.session.doc
    restored, journal = journal_after_a_crash(window)
    assert restored.tracks[0].equals(expected.tracks[0])
    journal.discard()
    out = tmp_path / "tunnel-cleaned.gpx"
    assert window.files.write_copy(out)
    text = out.read_text()
    # one undo step, yet the cleaning record names each step it ran
    for key, label in (("despike", "Remove spikes"), ("fill_gaps", "Fill gaps"), ("collapse_stops", "Collapse stops"),
                       ("smooth", "Smooth track")):
        assert f'name="{key}" label="{label}"' in text, label
    assert 'name="clean_up"' not in text
    window.clean_up.runner.cancel()
    assert window.clean_up.pool.wait(30)


def test_the_words_follow_the_chosen_units(window, qtbot):
    from gui_support import DEMO_RIDE

    assert window.files.open_path(DEMO_RIDE)
    press(toolbar_button(window, "clean_up"))
    proposal = wait_result(qtbot, window)
    stops = window.clean_up.panel.rows["collapse_stops"].result
    assert stops.text().startswith("1 stop, 2 min 24 s standing still") and " m of wander removed" in stops.text()
    window.actions_["imperial"].trigger()
    assert window.state.preview is proposal  # the same result, described again
    # 1 ft = 0.3048 m (international foot, 1959)
    metres = next(o for o in window.clean_up.result.steps if o.tool.key == "collapse_stops").proposal.info[
        "distance_removed_m"]
    assert f"({metres / 0.3048:,.0f} ft of wander removed)" in stops.text()
    window.clean_up.runner.cancel()
    assert window.clean_up.pool.wait(30)


def test_the_record_of_an_applied_clean_up_equals_the_commands():
    from editor.app.clean_up import cleaning_records
    from editor.io.provenance import StepRecord, params_record
    from editor.processing.clean_up import clean_up_track

    original = read_gpx(TUNNEL)
    _cleaned, report = clean_document(original, inserted_marker=GAP_FILL_MARKER)
    command = [StepRecord(s.tool, s.label, s.track, params_record(s.params, s.info)) for s in report.steps]
    assert list(cleaning_records(clean_up_track(original.tracks[0], 0, inserted_marker=GAP_FILL_MARKER))) == command
