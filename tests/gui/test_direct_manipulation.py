"""Direct manipulation (issue 9, items 1-3): a click on a point selects it, a plain drag always
pans, moving a point needs the "Move points" mode, and the profile's wheel zooms distance.

Every gesture is sent as mouse events at widget coordinates of the real views.
"""
from __future__ import annotations

import numpy as np
import pytest
from PySide6 import QtCore
from PySide6.QtTest import QTest

from gui_support import click, drag, settle, synthetic_ride, wheel, widget_pos

Left = QtCore.Qt.MouseButton.LeftButton
NoMod = QtCore.Qt.KeyboardModifier.NoModifier
Ctrl = QtCore.Qt.KeyboardModifier.ControlModifier
Shift = QtCore.Qt.KeyboardModifier.ShiftModifier
Cursor = QtCore.Qt.CursorShape


def _zoom(view, x, y, half_w, half_h, qtbot):
    view.view_box.setRange(QtCore.QRectF(x - half_w, y - half_h, 2 * half_w, 2 * half_h), padding=0)
    settle(qtbot)
    view.refresh_layers()


@pytest.mark.parametrize("half_width_m", [25.0, 90.0, 300.0])
def test_a_click_exactly_on_a_map_point_selects_it_in_both_views(window, qtbot, half_width_m):
    window.display.set_document(synthetic_ride(1500))
    m = window.map_view
    for row in (321, 322, 900):
        x, y = m.geometry.x_m[row], m.geometry.y_m[row]
        _zoom(m, x, y, half_width_m, half_width_m, qtbot)
        click(m.viewport(), widget_pos(m, x, y))
        # The hover marker sits on the point under the pointer; the click still reaches the view.
        assert window.state.hover == row
        assert list(window.state.selection) == [row]
        assert np.flatnonzero(m._selected_mask).tolist() == [row]
        assert np.flatnonzero(window.profile_view._selected_mask).tolist() == [row]
        settle(qtbot)
        sx, sy = m.selected_points_item.getData()                  # a ring marks the one selected point
        assert (list(sx), list(sy)) == ([x], [y])
    assert window.undo_stack.count() == 0


@pytest.mark.parametrize("half_width_km", [0.04, 0.15, 0.5])
def test_a_click_exactly_on_a_profile_point_selects_it_in_both_views(window, qtbot, half_width_km):
    window.display.set_document(synthetic_ride(1500))
    prof = window.profile_view
    for row in (200, 701):
        d, e = prof.geometry.distance_m[row] / 1000.0, prof.geometry.ele_m[row]
        _zoom(prof, d, e, half_width_km, 30.0, qtbot)
        click(prof.viewport(), widget_pos(prof, d, e))
        assert list(window.state.selection) == [row]
        assert np.flatnonzero(window.map_view._selected_mask).tolist() == [row]
    # A click away from the track clears the selection.
    click(prof.viewport(), widget_pos(prof, d, e + 25.0))
    assert len(window.state.selection) == 0


@pytest.mark.parametrize("view_name", ["profile_view", "map_view"])
def test_a_drag_that_starts_3_px_from_a_point_pans_and_changes_nothing(window, qtbot, view_name):
    doc = synthetic_ride(1500)
    window.display.set_document(doc)
    original = doc.tracks[0].points.copy()
    view = getattr(window, view_name)
    row = 700
    x, y = view._xy[0][row], view._xy[1][row]
    half = (0.05, 20.0) if view_name == "profile_view" else (40.0, 40.0)
    _zoom(view, x, y, *half, qtbot)
    assert view.points_visible()
    start = widget_pos(view, x, y) + QtCore.QPoint(0, 3)          # 3 px below the point
    before = view.view_box.viewRange()
    drag(view.viewport(), [start + QtCore.QPoint(0, 6 * k) for k in range(6)])
    after = view.view_box.viewRange()
    assert after[1][0] > before[1][0]                              # dragged down: the view moved up
    assert window.undo_stack.count() == 0
    assert doc.tracks[0].points.equals(original)


def test_move_mode_shows_a_grab_cursor_then_moves_the_point_as_one_step(window, qtbot):
    doc = synthetic_ride(1500)
    window.display.set_document(doc)
    original = doc.tracks[0].points.copy()
    m = window.map_view
    row = 321
    x, y = m.geometry.x_m[row], m.geometry.y_m[row]
    _zoom(m, x, y, 60.0, 60.0, qtbot)
    vp = m.viewport()
    QTest.mouseMove(vp, widget_pos(m, x, y))
    settle(qtbot)
    assert m.cursor().shape() != Cursor.OpenHandCursor           # no grab outside the mode
    window.activateWindow()
    QTest.keyClick(window, QtCore.Qt.Key.Key_M, Ctrl)
    assert window.actions_["move_points"].isChecked()
    QTest.mouseMove(vp, widget_pos(m, x + 20, y + 20))               # away from the track: no hand
    settle(qtbot)
    far = m.nearest_row(m.view_box.mapSceneToView(m.mapToScene(widget_pos(m, x + 20, y + 20))))
    if far is None:
        assert m.cursor().shape() != Cursor.OpenHandCursor
    QTest.mouseMove(vp, widget_pos(m, x, y))
    settle(qtbot)
    assert m.cursor().shape() == Cursor.OpenHandCursor           # over the point: a hand says "grab me"
    drag(vp, [widget_pos(m, x + 3 * k, y + 2 * k) for k in range(8)], finish=False)
    assert m.cursor().shape() == Cursor.ClosedHandCursor         # visibly moving
    assert window.statusBar().currentMessage() == "Moving point 322: release to put it there"
    assert len(m.drag_item.getData()[0]) == 3                      # rubber band to both neighbours
    assert window.undo_stack.count() == 0
    QTest.mouseRelease(vp, Left, NoMod, widget_pos(m, x + 21, y + 14))
    assert window.undo_stack.count() == 1 and window.undo_stack.text(0).startswith("Move point")
    assert window.statusBar().currentMessage().startswith("Done: Move point 322")
    moved = doc.tracks[0].points
    others = np.arange(len(moved)) != row
    assert moved.lat[row] != original.lat[row] and np.array_equal(moved.lat[others], original.lat[others])
    # In the mode a drag away from every point still pans.
    before = m.view_box.viewRange()
    far_start = widget_pos(m, x + 50, y - 50)
    drag(vp, [far_start + QtCore.QPoint(4 * k, 0) for k in range(5)])
    assert m.view_box.viewRange()[0][0] < before[0][0] and window.undo_stack.count() == 1
    QTest.keyClick(window, QtCore.Qt.Key.Key_M, Ctrl)
    assert not window.actions_["move_points"].isChecked()


def test_profile_wheel_zooms_distance_and_elevation_follows_shift_wheel_zooms_elevation(window, qtbot):
    window.display.set_document(synthetic_ride(3000))
    prof = window.profile_view
    settle(qtbot)
    (x0, x1), (y0, y1) = prof.view_box.viewRange()
    centre = widget_pos(prof, (x0 + x1) / 2, (y0 + y1) / 2)
    wheel(prof.viewport(), centre, 4)
    settle(qtbot)
    (a0, a1), (b0, b1) = prof.view_box.viewRange()
    assert (a1 - a0) < 0.8 * (x1 - x0)                            # distance zoomed in
    # Elevation spans exactly the points now in view (plus a small margin).
    d, e = prof._xy
    inside = (d >= a0) & (d <= a1)
    lo, hi = e[inside].min(), e[inside].max()
    assert b0 < lo and b1 > hi
    assert (b1 - b0) < 1.3 * (hi - lo) + 4.0
    # Shift+wheel zooms elevation only.
    wheel(prof.viewport(), widget_pos(prof, (a0 + a1) / 2, (b0 + b1) / 2), 3, Shift)
    settle(qtbot)
    (c0, c1), (f0, f1) = prof.view_box.viewRange()
    assert (c0, c1) == pytest.approx((a0, a1))
    assert (f1 - f0) < 0.8 * (b1 - b0)


def test_points_are_drawn_only_when_they_stand_apart(window, qtbot):
    window.display.set_document(synthetic_ride(1200))
    prof = window.profile_view
    window.fit_views()
    settle(qtbot)
    # 1,200 points across a few hundred pixels would overlap into a band: no dots.
    assert not prof.points_visible()
    d, e = prof._xy[0][600], prof._xy[1][600]
    wheel(prof.viewport(), widget_pos(prof, d, e), 12)              # zoom in on distance
    settle(qtbot)
    assert prof.points_visible()
    px, _ = prof.points_item.getData()
    assert np.median(np.diff(px)) / prof.view_box.viewPixelSize()[0] >= 3.0


def test_a_plain_drag_inside_a_selected_stretch_pans_and_keeps_the_selection(window, qtbot):
    window.display.set_document(synthetic_ride(1500))
    prof = window.profile_view
    settle(qtbot)
    d = prof._xy[0]
    y = float(np.nanmean(prof._xy[1]))
    drag(prof.viewport(), [widget_pos(prof, d[300] + f * (d[900] - d[300]), y) for f in np.linspace(0, 1, 6)],
         Shift)
    selected = window.state.selection.copy()
    assert len(selected) > 500
    before = prof.view_box.viewRange()[0]
    middle = widget_pos(prof, d[600], y)
    drag(prof.viewport(), [middle + QtCore.QPoint(-15 * k, 0) for k in range(6)])
    after = prof.view_box.viewRange()[0]
    assert after[0] > before[0]                                     # dragged left: the view moved right
    assert np.array_equal(window.state.selection, selected)        # the stretch did not move
    assert window.undo_stack.count() == 0
    # Its edge still adjusts it: drag the left edge further left.
    left_edge = widget_pos(prof, prof.region.getRegion()[0], y)
    drag(prof.viewport(), [left_edge + QtCore.QPoint(-8 * k, 0) for k in range(6)])
    grown = window.state.selection
    assert grown[0] < selected[0] and grown[-1] == selected[-1]
