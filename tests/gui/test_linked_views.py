"""The two views share one EditorState: hover, selection and hand edits (each one undo step)."""
from __future__ import annotations

import numpy as np
from PySide6 import QtCore
from PySide6.QtTest import QTest

from editor.geo import step_lengths

from gui_support import drag, settle, synthetic_ride, widget_pos

Left = QtCore.Qt.MouseButton.LeftButton
NoMod = QtCore.Qt.KeyboardModifier.NoModifier
Shift = QtCore.Qt.KeyboardModifier.ShiftModifier


def test_both_views_hold_every_point(window):
    doc = synthetic_ride(1500)
    window.display.set_document(doc)
    assert len(window.map_view.geometry) == 1500 == len(window.profile_view.geometry)
    # Profile distance is the running sum of the core's ellipsoidal step lengths, without the
    # step across the segment boundary (the convention of editor.processing.stats).
    p = doc.tracks[0].points
    steps = step_lengths(p.lat, p.lon)
    steps[749] = 0.0
    assert np.allclose(window.profile_view.geometry.distance_m[-1], steps.sum(), rtol=1e-12)
    assert window.windowTitle().startswith("untitled")


def test_hover_on_profile_moves_the_map_marker(window, qtbot):
    window.display.set_document(synthetic_ride(1500))
    settle(qtbot)
    prof = window.profile_view
    row = 900
    x_km = prof.geometry.distance_m[row] / 1000.0
    y = prof.geometry.ele_m[row]
    QTest.mouseMove(prof.viewport(), widget_pos(prof, x_km, y))
    qtbot.waitUntil(lambda: window.state.hover is not None, timeout=2000)
    hovered = window.state.hover
    assert abs(hovered - row) <= 3  # one screen pixel covers a few points
    mx, my = window.map_view.hover_item.getData()
    assert mx[0] == window.map_view.geometry.x_m[hovered] and my[0] == window.map_view.geometry.y_m[hovered]
    assert "elevation" in window.profile_pane.readout.full_text()


def test_profile_range_selects_the_same_rows_on_the_map(window, qtbot):
    window.display.set_document(synthetic_ride(1500))
    settle(qtbot)
    prof = window.profile_view
    d = prof.geometry.distance_m / 1000.0
    low, high = d[200], d[400]
    y = float(np.nanmean(prof.geometry.ele_m))
    drag(prof.viewport(), [widget_pos(prof, low + f * (high - low), y) for f in np.linspace(0, 1, 6)], Shift)
    sel = window.state.selection
    assert len(sel) > 150
    lo, hi = prof.region.getRegion()
    expected = np.flatnonzero((d >= lo) & (d <= hi))
    assert np.array_equal(sel, expected)
    # The map draws exactly those rows highlighted.
    assert np.array_equal(np.flatnonzero(window.map_view._selected_mask), expected)
    assert window.map_view.selection_item.getData()[0] is not None


def test_box_on_map_selects_rows_and_profile_shows_the_range(window, qtbot):
    window.display.set_document(synthetic_ride(1500, segments=1))
    settle(qtbot)
    m = window.map_view
    x, y = m.geometry.x_m, m.geometry.y_m
    x0, x1 = np.percentile(x, 70), x.max() + 10
    y0, y1 = y.min() - 10, y.max() + 10
    drag(m.viewport(), [widget_pos(m, x0, y0), widget_pos(m, (x0 + x1) / 2, (y0 + y1) / 2),
                        widget_pos(m, x1, y1)], Shift)
    sel = window.state.selection
    rect_rows = np.flatnonzero(x >= x0 - 2 * m.view_box.viewPixelSize()[0])
    assert len(sel) > 100 and set(sel) <= set(rect_rows)
    lo, hi = window.profile_view.region.getRegion()
    d = window.profile_view.geometry.distance_m / 1000.0
    assert window.profile_view.region.isVisible()
    assert np.isclose(lo, d[sel].min()) and np.isclose(hi, d[sel].max())


def _zoom_map_on(window, row, qtbot, half_width_m=60.0):
    m = window.map_view
    x, y = m.geometry.x_m[row], m.geometry.y_m[row]
    m.view_box.setRange(QtCore.QRectF(x - half_width_m, y - half_width_m, 2 * half_width_m, 2 * half_width_m),
                        padding=0)
    settle(qtbot)
    m.refresh_layers()
    assert m.points_visible()
    return x, y


def test_dragging_a_point_is_one_undo_step_and_undo_restores_it_exactly(window, qtbot):
    doc = synthetic_ride(1500)
    window.display.set_document(doc)
    original = doc.tracks[0].points.copy()
    row = 321
    x, y = _zoom_map_on(window, row, qtbot)
    vp = window.map_view.viewport()
    window.actions_["move_points"].trigger()       # points move only in "Move points" mode
    drag(vp, [widget_pos(window.map_view, x + 3 * k, y + 2 * k) for k in range(8)], finish=False)
    # While the drag runs nothing is committed; a rubber band shows the move.
    assert window.undo_stack.count() == 0
    assert len(window.map_view.drag_item.getData()[0]) == 3
    QTest.mouseRelease(vp, Left, NoMod, widget_pos(window.map_view, x + 21, y + 14))
    assert window.undo_stack.count() == 1
    assert window.undo_stack.text(0).startswith("Move point")
    moved = doc.tracks[0].points
    assert moved.lat[row] != original.lat[row] and moved.lon[row] != original.lon[row]
    others = np.arange(len(moved)) != row
    assert np.array_equal(moved.lat[others], original.lat[others])
    assert window.isWindowModified()
    window.undo_stack.undo()
    assert doc.tracks[0].points.equals(original)
    assert not window.isWindowModified()


def test_elevation_drag_on_profile(window, qtbot):
    doc = synthetic_ride(1500)
    window.display.set_document(doc)
    prof = window.profile_view
    row = 700
    d = prof.geometry.distance_m[row] / 1000.0
    e = prof.geometry.ele_m[row]
    prof.view_box.setRange(QtCore.QRectF(d - 0.05, e - 20, 0.1, 40), padding=0)
    settle(qtbot)
    prof.refresh_layers()
    window.actions_["move_points"].trigger()       # points move only in "Move points" mode
    drag(prof.viewport(), [widget_pos(prof, d, e + 2 * k) for k in range(6)])
    assert window.undo_stack.count() == 1
    assert abs(doc.tracks[0].points.ele[row] - (e + 10)) < 1.0  # within a screen pixel of the release
    window.undo_stack.undo()
    assert doc.tracks[0].points.ele[row] == e
