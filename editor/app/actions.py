"""Menus, toolbar and keyboard shortcuts; every main action is reachable from the keyboard."""
from __future__ import annotations

from PySide6 import QtCore, QtGui, QtWidgets

from ..bundled import demo_ride
from ..views.style import icon
from ..units import IMPERIAL, METRIC, offset_label

Key = QtGui.QKeySequence


def _action(window, text: str, slot, shortcut=None, icon_name: str | None = None, tip: str | None = None,
            checkable: bool = False) -> QtGui.QAction:
    action = QtGui.QAction(text, window)
    if shortcut is not None:
        shortcuts = shortcut if isinstance(shortcut, (list, tuple)) else [shortcut]
        action.setShortcuts([Key(s) if isinstance(s, str) else Key(s) for s in shortcuts])
    if icon_name:
        action.setIcon(icon(icon_name))
    action.setCheckable(checkable)
    tip = tip or text.replace("&", "").rstrip("…")
    if action.shortcut().toString():
        tip += f" ({action.shortcut().toString(Key.SequenceFormat.NativeText)})"
    action.setToolTip(tip)
    action.setStatusTip(tip)
    action.triggered.connect(slot)
    window.addAction(action)  # shortcuts work even with the menu bar hidden
    return action


def build_actions(w) -> dict[str, QtGui.QAction]:
    """Create the window's actions, menus and toolbar; returns the actions by name."""
    a: dict[str, QtGui.QAction] = {}
    a["open"] = _action(w, "&Open…", w.files.open_dialog, Key.StandardKey.Open, "open")
    a["demo"] = _action(w, "Open the &demo ride", lambda: w.files.confirm_discard("opening the demo") and
                        w.files.open_path(demo_ride(), confirmed=True))
    a["save"] = _action(w, "&Save cleaned copy…", w.files.save_cleaned_copy, Key.StandardKey.Save, "save")
    a["geojson"] = _action(w, "Export &GeoJSON…", lambda: w.files.export_as("geojson"))
    a["csv"] = _action(w, "Export &CSV…", lambda: w.files.export_as("csv"))
    a["close"] = _action(w, "&Close window", w.close, Key.StandardKey.Close)
    a["quit"] = _action(w, "&Quit", QtWidgets.QApplication.closeAllWindows, "Ctrl+Q")

    a["undo"] = w.undo_stack.createUndoAction(w, "&Undo")
    a["undo"].setShortcuts([Key(Key.StandardKey.Undo)])
    a["undo"].setIcon(icon("undo"))
    a["redo"] = w.undo_stack.createRedoAction(w, "&Redo")
    a["redo"].setShortcuts([Key("Ctrl+Shift+Z"), Key("Ctrl+Y")])
    a["redo"].setIcon(icon("redo"))
    for name in ("undo", "redo"):
        w.addAction(a[name])
    a["delete"] = _action(w, "&Delete selected points", w.editing.delete_selection,
                          [Key.StandardKey.Delete, "Backspace"], "delete")
    a["trim_before"] = _action(w, "Trim &before selection", w.editing.trim_before, "Ctrl+Shift+B", "trim_before",
                               "Delete every point before the selection")
    a["trim_after"] = _action(w, "Trim &after selection", w.editing.trim_after, "Ctrl+Shift+E", "trim_after",
                              "Delete every point after the selection")
    a["split"] = _action(w, "S&plit segment here", w.editing.split_segment, "Ctrl+Shift+K", "split",
                         "Start a new segment at the first selected point")
    a["merge"] = _action(w, "&Join with next segment", w.editing.merge_segments, "Ctrl+Shift+J", "merge",
                         "Join the selected point's segment with the next one")
    a["insert"] = _action(w, "&Insert point after selection", w.editing.insert_point, ["Insert", "Ctrl+Shift+I"],
                          "insert", "Add a point halfway to the next point")
    a["sort_time"] = _action(w, "Sort points by &time", w.editing.sort_by_time, None, None,
                             "Put each segment's points in time order")
    a["select_all"] = _action(w, "Select &all points", w.editing.select_all, Key.StandardKey.SelectAll)
    a["select_none"] = _action(w, "Select &none", w.editing.clear_selection, "Ctrl+Shift+A")
    a["next"] = _action(w, "Select next point", lambda: w.editing.step_selection(+1), "Ctrl+Right")
    a["previous"] = _action(w, "Select previous point", lambda: w.editing.step_selection(-1), "Ctrl+Left")
    a["grow_next"] = _action(w, "Extend selection forward", lambda: w.editing.step_selection(+1, True),
                             "Ctrl+Shift+Right")
    a["grow_previous"] = _action(w, "Extend selection backward", lambda: w.editing.step_selection(-1, True),
                                 "Ctrl+Shift+Left")

    a["fit"] = _action(w, "&Whole track", w.fit_views, "Ctrl+0", "fit", "Zoom both views to the whole track")
    a["fit_selection"] = _action(w, "Zoom to &selection", w.fit_selection, "Ctrl+Shift+0")
    a["box"] = _action(w, "&Box select on the map", lambda on: setattr(w.map_view, "box_mode", on), "Ctrl+B",
                       "box", "Dragging on the map selects a box instead of panning", checkable=True)
    a["move_points"] = _action(w, "&Move points", w.set_move_mode, "Ctrl+M", "move_points",
                               "Move points: press on a point (the pointer shows a hand) and drag it; "
                               "other drags still pan", checkable=True)
    a["time_axis"] = _action(w, "Profile against &time", w.set_profile_against_time, "Ctrl+T",
                             checkable=True)
    a["time_axis"].setChecked(w.settings.profile_against_time)
    a["side_by_side"] = _action(w, "Views side by side", lambda on: w.set_stacked(not on), "Ctrl+Shift+L",
                                checkable=True)
    a["side_by_side"].setChecked(not w.settings.stacked)
    units_group = QtGui.QActionGroup(w)
    a["metric"] = _action(w, "&Metric (km, m)", lambda: w.set_units(METRIC), checkable=True)
    a["imperial"] = _action(w, "&Imperial (mi, ft)", lambda: w.set_units(IMPERIAL), checkable=True)
    for name in ("metric", "imperial"):
        units_group.addAction(a[name])
    (a["imperial"] if w.units is IMPERIAL else a["metric"]).setChecked(True)
    a["utc"] = _action(w, "Times in &UTC", lambda: w.set_utc_offset(0.0))
    a["offset"] = _action(w, "Times at a fixed &offset from UTC…", lambda: ask_offset(w))

    a["clean_up"] = _action(w, "Clean &up…", w.clean_up.open, "Ctrl+Shift+C", "clean_up",
                            "Clean up: the recommended steps at once (spikes, gaps, stops, smoothing), "
                            "previewed before you keep them")
    a["apply"] = _action(w, "&Apply proposal", w.previews.apply_preview, ["Ctrl+Return", "Ctrl+Enter"], "apply")
    a["discard"] = _action(w, "&Discard proposal", w.previews.discard_preview, "Escape", "discard")
    a["estimate"] = _action(w, "&Estimate smoothing strengths", lambda: _estimate(w), "Ctrl+Shift+M")
    a["about"] = _action(w, "&About Trackwright", w.files.show_about)
    a["gestures"] = _action(w, "&Gestures and shortcuts", lambda: show_gestures(w), Key.StandardKey.HelpContents)

    bar = w.menuBar()
    m = bar.addMenu("&File")
    for name in ("open",):
        m.addAction(a[name])
    w.recent_menu = m.addMenu("Open &recent")
    w.recent_menu.setToolTipsVisible(True)  # each entry's tooltip is the file's full path
    m.addAction(a["demo"])
    m.addSeparator()
    for name in ("save", "geojson", "csv"):
        m.addAction(a[name])
    m.addSeparator()
    m.addAction(a["close"])
    m.addAction(a["quit"])
    m = bar.addMenu("&Edit")
    for name in ("undo", "redo", None, "move_points", None, "delete", "trim_before", "trim_after", None, "split",
                 "merge", "insert", "sort_time", None, "select_all", "select_none", "next", "previous", "grow_next",
                 "grow_previous"):
        m.addSeparator() if name is None else m.addAction(a[name])
    m = bar.addMenu("&View")
    for name in ("fit", "fit_selection", "box", None, "time_axis", "side_by_side"):
        m.addSeparator() if name is None else m.addAction(a[name])
    units = m.addMenu("&Units")
    units.addAction(a["metric"])
    units.addAction(a["imperial"])
    times = m.addMenu("&Times")
    times.addAction(a["utc"])
    times.addAction(a["offset"])
    m.addSeparator()
    for dock in (w.tools_dock, w.clean_up.dock, w.totals_dock, w.history_dock, w.legend_dock, w.tracks_dock):
        m.addAction(dock.toggleViewAction())
    m = bar.addMenu("&Tools")
    m.addAction(a["clean_up"])
    m.addSeparator()
    for i, panel in enumerate(w.tool_dock.panels):
        act = _action(w, f"{panel.tool.title}…", lambda _c=False, p=panel: _show_tool(w, p), f"Ctrl+{i + 1}")
        m.addAction(act)
        a[f"tool_{panel.tool.key}"] = act
    m.addSeparator()
    for name in ("estimate", "apply", "discard"):
        m.addAction(a[name])
    m = bar.addMenu("&Help")
    m.addAction(a["gestures"])
    m.addAction(a["about"])

    tb = w.addToolBar("Main")
    tb.setObjectName("mainToolbar")
    tb.setIconSize(QtCore.QSize(22, 22))
    for name in ("open", "save", None, "clean_up", None, "undo", "redo", None, "delete", "trim_before", "trim_after",
                 "split", "merge", "insert", None, "box", "move_points", "fit"):
        tb.addSeparator() if name is None else tb.addAction(a[name])
    # the one-click clean up says its name beside its icon
    tb.widgetForAction(a["clean_up"]).setToolButtonStyle(QtCore.Qt.ToolButtonStyle.ToolButtonTextBesideIcon)
    w.files.refresh_recent_menu()
    return a


def show_gestures(w) -> None:
    """Help ▸ Gestures and shortcuts: one window, raised again when asked twice."""
    from ..panels.help_page import GesturesPage

    page = getattr(w, "gestures_page", None)
    if page is None:
        page = w.gestures_page = GesturesPage(w.actions_, w)
    page.show()
    page.raise_()
    page.activateWindow()


def _show_tool(w, panel) -> None:
    w.tools_dock.show()
    w.tools_dock.raise_()
    w.tool_dock.show_panel(panel)


def _estimate(w) -> None:
    panel = w.tool_dock.panel("smooth")
    if panel is not None:
        _show_tool(w, panel)
        w.tool_dock.estimate(panel)


def ask_offset(w) -> None:
    hours, ok = QtWidgets.QInputDialog.getDouble(
        w, "Time offset", "Hours to add to UTC for shown times (e.g. 2 or −5.5):", w.utc_offset_h, -14.0, 14.0, 2)
    if ok:
        w.set_utc_offset(round(hours * 4) / 4)
        w.statusBar().showMessage(f"Times are shown in {offset_label(w.utc_offset_h)}", 5000)
