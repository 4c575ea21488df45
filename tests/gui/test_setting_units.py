"""Issue 9, item 12: View ▸ Units ▸ Imperial converts the tool settings too, for display only.

Driven through the real menu actions, number boxes and Preview button. Outside reference: the
international foot is exactly 0.3048 m and the international mile exactly 1609.344 m (the 1959
international yard and pound agreement; NIST SP 811, appendix B), so 1 mph = 0.44704 m/s exactly.
"""
from __future__ import annotations

from dataclasses import replace

import pytest
from gui_support import ROOT, type_number
from PySide6 import QtCore, QtWidgets

from editor.units import IMPERIAL

FOOT_M = 0.3048            # exact, by the 1959 agreement (NIST SP 811)
MPH_MPS = 1609.344 / 3600  # exact: 0.44704 m/s
LEFT = QtCore.Qt.MouseButton.LeftButton
TUNNEL = ROOT / "demo_tracks" / "demo_tunnel.gpx"


def choose_units(window, name: str) -> None:
    """Pick View ▸ Units ▸ Metric / Imperial through the menu's own action."""
    action = window.actions_[name]
    menus = [m for m in window.menuBar().findChildren(QtWidgets.QMenu) if action in m.actions()]
    assert menus and menus[0].title() == "&Units"
    action.trigger()
    assert action.isChecked()


def open_tab(qtbot, window, key: str):
    dock = window.tool_dock
    panel = dock.panel(key)
    bar = dock.tabBar()
    qtbot.mouseClick(bar, LEFT, pos=bar.tabRect(dock.panels.index(panel)).center())
    return panel


def test_imperial_converts_tool_settings_and_the_tool_still_gets_metres(window, qtbot):
    assert window.files.open_path(TUNNEL)
    choose_units(window, "imperial")
    assert window.units is IMPERIAL
    panel = open_tab(qtbot, window, "simplify")
    panel.more_button.setChecked(True)
    tolerance, area = panel.controls["tolerance_m"], panel.controls["area_m2"]
    # value, unit, range and step of the box are in feet; the default is still 5 m
    assert tolerance.editor.suffix() == " ft"
    assert tolerance.editor.value() == pytest.approx(5 / FOOT_M, abs=0.05)
    assert tolerance.editor.text() == "16.4 ft"
    assert tolerance.editor.maximum() == pytest.approx(500 / FOOT_M, abs=0.05)
    assert 1 / FOOT_M / 2 <= tolerance.editor.singleStep() <= 1 / FOOT_M * 2
    assert "feet (ft)" in tolerance.toolTip() and "feet (ft)" in panel.labels["tolerance_m"].toolTip()
    assert area.editor.suffix() == " ft²"
    assert area.editor.value() == pytest.approx(50 / FOOT_M ** 2, abs=0.5)
    assert "square feet" in area.toolTip()
    speed = window.tool_dock.panel("collapse_stops").controls["speed_threshold_mps"]
    assert speed.editor.suffix() == " mph" and speed.editor.text() == "from activity"
    assert speed.editor.maximum() == pytest.approx(10 / MPH_MPS, abs=0.01)
    # a rider types 20 ft: the tool receives 6.096 m
    type_number(qtbot, tolerance.editor, "20")
    assert tolerance.value() == pytest.approx(20 * FOOT_M, rel=1e-12)
    received = []
    real = panel.tool.function

    def recording(track, params, **kwargs):
        received.append(params)
        return real(track, params, **kwargs)

    panel.tool = replace(panel.tool, function=recording)
    qtbot.mouseClick(panel.preview_button, LEFT)
    qtbot.waitUntil(lambda: window.state.preview is not None and window.state.preview.tool == "simplify"
                    and bool(received), timeout=30000)
    assert received[-1].tolerance_m == pytest.approx(20 * FOOT_M, rel=1e-12)
    assert received[-1].area_m2 == 50.0  # untouched: exactly the default, whatever the units showed

    # back to metric: the same 6.096 m, shown in metres; and again and again, without drift
    choose_units(window, "metric")
    assert tolerance.editor.suffix() == " m" and tolerance.editor.text() == "6.1 m"
    assert area.editor.suffix() == " m²" and area.editor.value() == 50
    assert "metres (m)" in tolerance.toolTip()
    for _ in range(5):
        choose_units(window, "imperial")
        choose_units(window, "metric")
    assert tolerance.value() == 20 * FOOT_M
    assert panel.params().area_m2 == 50.0
    spikes = window.tool_dock.panel("despike")
    assert spikes.params() == replace(spikes.tool.params())  # every spike setting still at its exact default


def test_a_speed_typed_in_mph_reaches_the_tool_in_metres_per_second(window, qtbot):
    choose_units(window, "imperial")
    panel = open_tab(qtbot, window, "collapse_stops")
    speed = panel.controls["speed_threshold_mps"]
    qtbot.mouseClick(speed.auto_box, LEFT, pos=speed.auto_box.rect().center())
    assert not speed.auto_box.isChecked()
    type_number(qtbot, speed.editor, "2")
    assert speed.editor.text() == "2 mph"
    assert panel.params().speed_threshold_mps == pytest.approx(2 * MPH_MPS, rel=1e-12)
    choose_units(window, "metric")
    # metric speeds are shown as the rest of the window shows them: km/h (0.89408 m/s = 3.22 km/h)
    assert speed.editor.suffix() == " km/h" and speed.editor.value() == pytest.approx(3.22)
    assert panel.params().speed_threshold_mps == pytest.approx(2 * MPH_MPS, rel=1e-12)
    # ticking "from activity" again hands the tool None (the activity's own speed), in any units
    qtbot.mouseClick(speed.auto_box, LEFT, pos=speed.auto_box.rect().center())
    choose_units(window, "imperial")
    assert panel.params().speed_threshold_mps is None and speed.editor.text() == "from activity"


def test_percent_and_unitless_settings_do_not_change_with_units(window, qtbot):
    panel = window.tool_dock.panel("despike")
    confidence = panel.controls["confidence"]
    assert confidence.editor.text() == "99.9 %" and confidence.value() == 0.999
    choose_units(window, "imperial")
    assert confidence.editor.text() == "99.9 %" and confidence.value() == 0.999
    assert panel.controls["trust_s"].editor.suffix() == " s"
    assert panel.controls["max_zone_points"].editor.suffix() == " points"


def test_a_gap_left_alone_is_placed_in_miles_and_back_in_km(window, qtbot):
    assert window.files.open_path(TUNNEL)
    choose_units(window, "imperial")
    panel = open_tab(qtbot, window, "fill_gaps")
    max_gap = panel.controls["max_gap_s"]
    assert max_gap.editor.suffix() == " s"  # seconds are seconds in both systems
    type_number(qtbot, max_gap.editor, "60")
    qtbot.mouseClick(panel.preview_button, LEFT)
    qtbot.waitUntil(lambda: window.state.preview is not None and window.state.preview.tool == "fill_gaps"
                    and window.state.preview.info.get("unfilled") == 1, timeout=30000)
    qtbot.wait(30)
    (note,) = window.state.preview.info["notes"]
    km = note.at_m / 1000
    assert f"gap at {note.at_m / 1609.344:.1f} mi:" in panel.status.text() and " km" not in panel.status.text()
    choose_units(window, "metric")  # the shown status follows the menu at once
    assert f"gap at {km:.1f} km:" in panel.status.text()
    assert str(note) in panel.status.text()  # the command line's text is the metric one
