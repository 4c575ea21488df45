"""Previews a person can read (issue 9, item 13): a proposal highlights only what it changes, and
simplification shows the kept points and line instead of thousands of removal crosses.

The tools run from their panels (Preview button clicked with the mouse); the checks read what
the views draw.
"""
from __future__ import annotations

import numpy as np
from PySide6 import QtCore

from gui_support import line_vertices, settle, synthetic_ride

Left = QtCore.Qt.MouseButton.LeftButton
SPIKES = (400, 1100)


def _spiked_ride():
    doc = synthetic_ride(1500, segments=1)
    p = doc.tracks[0].points
    for row in SPIKES:
        p.lat[row] += 800.0 / 111_200.0      # one fix 800 m off the road (about 111.2 km per degree)
    return doc


def _preview(window, qtbot, name):
    panel = window.tool_dock.panel(name)
    window.tool_dock.show_panel(panel)
    qtbot.mouseClick(panel.preview_button, Left)
    qtbot.waitUntil(lambda: window.state.preview is not None, timeout=20000)
    settle(qtbot, 60)
    return window.state.preview


def test_a_partial_change_is_highlighted_only_where_it_changes(window, qtbot):
    window.display.set_document(_spiked_ride())
    settle(qtbot, 60)
    plain = {v: line_vertices(v.track_item) for v in (window.map_view, window.profile_view)}
    proposal = _preview(window, qtbot, "despike")
    assert set(SPIKES) <= set(proposal.removed.tolist())
    assert len(proposal.removed) < 30
    for view in (window.map_view, window.profile_view):
        # The unchanged track keeps its look: full colour, nearly all of it drawn.
        assert view.track_item.opts["pen"].color().alpha() == 255
        assert line_vertices(view.track_item) > 0.8 * plain[view]
        assert 0 < line_vertices(view.faded_item) < 0.2 * plain[view]
        # The proposal colour covers only the rows around what changes (each removed fix and the
        # new step that joins its neighbours), not the whole line.
        proposed = view._highlight.proposed
        assert 0 < proposed.sum() <= 4 * len(proposal.removed) + 4
        src = proposal.source_rows[proposed]
        near = np.min(np.abs(src[:, None] - np.asarray(proposal.removed)[None, :]), axis=1)
        assert (near <= 2).all()
        assert 0 < line_vertices(view.proposal_item) <= proposed.sum()
        # Removed fixes are crossed.
        assert len(view.removed_item.getData()[0]) >= 1
    # Discard restores the plain track.
    window.tool_dock.current_panel().discard_button.click()
    settle(qtbot, 60)
    assert line_vertices(window.map_view.faded_item) == 0 and line_vertices(window.map_view.proposal_item) == 0


def test_simplify_shows_the_kept_points_and_line_not_removal_crosses(window, qtbot):
    window.display.set_document(synthetic_ride(1500, segments=1))
    proposal = _preview(window, qtbot, "simplify")
    kept = int((proposal.source_rows >= 0).sum())
    assert len(proposal.removed) > kept                          # most points go
    for view in (window.map_view, window.profile_view):
        assert len(view.removed_item.getData()[0]) == 0            # no crosses
        assert len(view.kept_item.getData()[0]) == kept            # every kept point, on screen
        assert line_vertices(view.proposal_item) > 0
