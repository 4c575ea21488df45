"""Tool panels: a control change previews on both views with live totals; Apply is one undo step."""
from __future__ import annotations

import numpy as np
import pytest

from editor.io.gpx import read_gpx
from editor.processing.stats import track_totals
from gui_support import DEMO_RIDE



@pytest.fixture
def demo(window, tmp_path):
    window.files.open_path(DEMO_RIDE)
    return window


def _wait_preview(qtbot, window, previous=None):
    qtbot.waitUntil(lambda: window.state.preview is not None and window.state.preview is not previous,
                    timeout=20000)
    qtbot.wait(30)  # the views redraw in the next event-loop turn
    return window.state.preview


def test_moving_the_smoothing_control_previews_without_touching_the_document(demo, qtbot):
    window = demo
    before = window.session.doc.tracks[0].points.copy()
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    vertical = panel.controls["vertical_strength"]
    vertical.auto_box.setChecked(False)          # a user unticks "auto" ...
    vertical.slider.setValue(80)                 # ... and moves the slider
    first = _wait_preview(qtbot, window)
    assert first.tool == "smooth" and first.track == 0
    # Both views draw the proposal, the profile shows the band.
    assert len(window.map_view.proposal_item.getData()[0]) > 0
    assert len(window.profile_view.proposal_item.getData()[0]) > 0
    # Only the stretches the proposal changes fade; the rest of the track is drawn as usual.
    assert window.map_view.faded_item.opts["pen"].color().alpha() < 255
    assert len(window.map_view.faded_item.getData()[0]) > 0
    assert window.map_view.track_item.opts["pen"].color().alpha() == 255
    assert len(window.profile_view.band_upper.getData()[0]) > 0
    # Totals show before -> after; after is the core's statistics of the proposed track.
    now_text, after_text = window.totals_panel.text_of("Ascent")
    assert after_text == f"{first.after.ascent_m:,.0f} m"
    assert now_text == f"{track_totals(window.session.doc.tracks[0]).ascent_m:,.0f} m"
    assert first.after.ascent_m < first.before.ascent_m      # smoothing removes noise climb
    # A stronger setting gives a new preview with a different ascent; the document is untouched.
    vertical.slider.setValue(95)
    second = _wait_preview(qtbot, window, first)
    assert second.after.ascent_m != first.after.ascent_m
    assert window.totals_panel.text_of("Ascent")[1] == f"{second.after.ascent_m:,.0f} m"
    assert window.session.doc.tracks[0].points.equals(before)
    assert window.undo_stack.count() == 0
    # Discard drops the overlay.
    panel.discard_button.click()
    assert window.state.preview is None
    qtbot.waitUntil(lambda: len(window.map_view.proposal_item.getData()[0]) == 0, timeout=2000)
    assert len(window.profile_view.band_upper.getData()[0]) == 0


def test_apply_is_one_step_and_undo_restores_the_file_exactly(demo, qtbot):
    window = demo
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    panel.controls["horizontal_strength"].set_value(50)
    panel.controls["vertical_strength"].set_value(60)
    panel.preview_button.click()
    proposal = _wait_preview(qtbot, window)
    panel.apply_button.click()
    assert window.state.preview is None
    assert window.undo_stack.count() == 1 and window.undo_stack.text(0) == proposal.label
    applied = window.session.doc.tracks[0].points
    assert np.array_equal(applied.lat, proposal.points.lat)
    assert window.isWindowModified()
    window.undo_stack.undo()
    assert window.session.doc.equals(read_gpx(DEMO_RIDE))
    window.undo_stack.redo()
    assert np.array_equal(window.session.doc.tracks[0].points.ele, proposal.points.ele)


def test_selection_scope_limits_the_tool_to_the_selected_rows(demo, qtbot):
    window = demo
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    window.state.select_range(1000, 1500)
    assert panel.selection_only.isEnabled()
    panel.selection_only.setChecked(True)
    panel.controls["horizontal_strength"].set_value(70)
    panel.controls["vertical_strength"].set_value(70)
    panel.preview_button.click()
    proposal = _wait_preview(qtbot, window)
    changed = np.flatnonzero(proposal.changed)
    assert len(changed) > 0 and changed.min() >= 1000 and changed.max() < 1500


def test_stale_results_are_dropped(demo, qtbot):
    """Of several quick requests only the newest result becomes the preview (generation counter)."""
    window = demo
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    function = panel.tool.function
    params_class = panel.tool.params
    for strength in (10, 40, 90):
        window.previews.request_preview(panel.tool, params_class(horizontal_strength=strength, vertical_strength=strength),
                               False, immediately=True)
    proposal = _wait_preview(qtbot, window)
    assert window.pool.wait(30)
    qtbot.wait(50)
    expected = function(window.session.doc.tracks[0], params_class(horizontal_strength=90, vertical_strength=90))
    assert window.state.preview is proposal
    assert np.array_equal(proposal.points.ele, expected.points.ele, equal_nan=True)


def test_strength_estimate_runs_with_progress_and_fills_the_controls(demo, qtbot):
    window = demo
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    panel.estimate_button.click()
    assert window.progress.isVisibleTo(window) and window.cancel_button.isVisibleTo(window)
    qtbot.waitUntil(lambda: not window.previews.long_job.running, timeout=30000)
    qtbot.waitUntil(lambda: not window.progress.isVisibleTo(window), timeout=2000)
    h = panel.controls["horizontal_strength"].value()
    v = panel.controls["vertical_strength"].value()
    assert h is not None and v is not None and 0 <= h <= 100 and 0 <= v <= 100
    _wait_preview(qtbot, window)


def test_automatic_strength_is_estimated_once_per_track_state(demo, qtbot, monkeypatch):
    """Each axis' automatic strength is estimated once per track state: the elevation's for the
    preview, the position's ahead of time (while the user tunes it by hand) for "auto"."""
    import editor.processing.smoothing as smoothing
    from editor.model import DeletePoints

    calls = []
    real = smoothing.estimate_strength

    def counted(*args, **kwargs):
        params = kwargs["params"]
        calls.extend(axis for axis in ("horizontal", "vertical") if getattr(params, f"{axis}_strength") is None)
        return real(*args, **kwargs)

    monkeypatch.setattr(smoothing, "estimate_strength", counted)
    window = demo
    panel = window.tool_dock.panel("smooth")
    window.tool_dock.show_panel(panel)
    panel.controls["vertical_strength"].set_value(None)      # elevation stays automatic
    previous = window.state.preview
    for strength in (30, 45, 60):                            # the user moves the position strength
        panel.controls["horizontal_strength"].set_value(strength)
        panel.preview_button.click()
        previous = _wait_preview(qtbot, window, previous)
        assert previous.info["horizontal_strength"] == pytest.approx(strength)
    assert window.long_pool.wait(30)
    assert sorted(calls) == ["horizontal", "vertical"]
    # "auto" ticked for the position too: both known, no search
    panel.controls["horizontal_strength"].set_value(None)
    panel.preview_button.click()
    previous = _wait_preview(qtbot, window, previous)
    assert sorted(calls) == ["horizontal", "vertical"]
    # An edit changes the track: the next preview estimates again.
    window.editing.push_edit(DeletePoints(0, np.array([10])), "Delete 1 point")
    qtbot.wait(30)
    panel.preview_button.click()
    _wait_preview(qtbot, window, None)
    assert window.long_pool.wait(30)
    assert sorted(calls) == ["horizontal", "horizontal", "vertical", "vertical"]
