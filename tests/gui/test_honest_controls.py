"""Controls that mean what they say, driven with mouse clicks and key presses on the real widgets.

Issue 9, items 5 (auto shows the estimate), 6 (a proposal that changes nothing cannot be applied;
skipped gaps are reported) and 7 (the tools in the recommended order on the bundled tunnel ride).
Outside reference for item 7: the demo generator's noise-free truth and its ``cleaned_tolerance``.
"""
from __future__ import annotations

import json

import pytest
from gui_support import GPX_XSD, ROOT, type_number
from PySide6 import QtCore

TUNNEL = ROOT / "demo_tracks" / "demo_tunnel.gpx"
LEFT = QtCore.Qt.MouseButton.LeftButton


@pytest.fixture
def gpx_schema():
    import xmlschema

    # the GPX 1.1 XML Schema published with the standard (Topografix): the outside judge of what we write
    return xmlschema.XMLSchema(str(GPX_XSD))


@pytest.fixture
def tunnel(window):
    assert window.files.open_path(TUNNEL)
    return window


def click(qtbot, widget) -> None:
    assert widget.isVisible() and widget.isEnabled(), widget
    qtbot.mouseClick(widget, LEFT, pos=widget.rect().center())


def open_tab(qtbot, window, name: str):
    """Click the tool's tab; return its panel."""
    dock = window.tool_dock
    panel = dock.panel(name)
    index = dock.panels.index(panel)
    bar = dock.tabBar()
    qtbot.mouseClick(bar, LEFT, pos=bar.tabRect(index).center())
    assert dock.currentIndex() == index
    return panel


def wait_preview(qtbot, window, tool: str, previous=None):
    qtbot.waitUntil(lambda: window.state.preview is not None and window.state.preview is not previous
                    and window.state.preview.tool == tool, timeout=30000)
    qtbot.wait(30)
    return window.state.preview


def test_auto_shows_the_estimate_unticking_keeps_it_and_estimate_always_sets_both(tunnel, qtbot):
    window = tunnel
    panel = open_tab(qtbot, window, "smooth")
    h, v = panel.controls["horizontal_strength"], panel.controls["vertical_strength"]
    assert h.auto_box.isChecked() and v.auto_box.isChecked()
    click(qtbot, panel.preview_button)
    proposal = wait_preview(qtbot, window, "smooth")
    est_h, est_v = round(proposal.info["horizontal_strength"]), round(proposal.info["vertical_strength"])
    assert 0 < est_h < 100 and 0 < est_v < 100
    # "auto" shows the strength it found, in the box and on the slider, not a dash
    for control, estimate in ((h, est_h), (v, est_v)):
        assert control.editor.text() == str(estimate) and control.slider.value() == estimate
        assert not control.editor.isEnabled()
    # unticking keeps that value (it does not jump to 0) and previews with it
    click(qtbot, h.auto_box)
    assert not h.auto_box.isChecked() and h.value() == est_h and h.slider.value() == est_h
    fixed = wait_preview(qtbot, window, "smooth", proposal)
    assert fixed.info["horizontal_strength"] == pytest.approx(est_h)
    assert fixed.info["vertical_strength"] == pytest.approx(proposal.info["vertical_strength"])
    # the rider types another strength; "Estimate" then estimates both again and sets both values
    type_number(qtbot, h.editor, "10")
    assert h.value() == 10
    click(qtbot, panel.estimate_button)
    qtbot.waitUntil(lambda: window.previews.long_job is not None and not window.previews.long_job.running, timeout=30000)
    qtbot.waitUntil(lambda: h.value() != 10, timeout=5000)
    assert h.value() == est_h and v.value() == est_v
    assert h.slider.value() == est_h and v.slider.value() == est_v
    wait_preview(qtbot, window, "smooth", fixed)


def test_strength_zero_proposes_nothing_and_apply_says_so(tunnel, qtbot):
    window = tunnel
    panel = open_tab(qtbot, window, "smooth")
    for name in ("horizontal_strength", "vertical_strength"):
        control = panel.controls[name]
        click(qtbot, control.auto_box)
        type_number(qtbot, control.editor, "0")
        assert control.value() == 0
    click(qtbot, panel.preview_button)
    qtbot.waitUntil(lambda: window.state.preview is not None
                    and window.state.preview.info.get("horizontal_strength") == 0
                    and window.state.preview.info.get("vertical_strength") == 0, timeout=30000)
    qtbot.wait(30)
    proposal = window.state.preview
    assert proposal.is_noop() and proposal.after == proposal.before
    assert not panel.apply_button.isEnabled() and panel.discard_button.isEnabled()
    assert "changes nothing" in panel.status.text()
    assert window.undo_stack.count() == 0


def test_a_gap_left_alone_is_reported_with_its_place_and_reason(tunnel, qtbot):
    window = tunnel
    panel = open_tab(qtbot, window, "fill_gaps")
    type_number(qtbot, panel.controls["max_gap_s"].editor, "60")
    click(qtbot, panel.preview_button)
    qtbot.waitUntil(lambda: window.state.preview is not None and window.state.preview.tool == "fill_gaps"
                    and window.state.preview.info.get("unfilled") == 1, timeout=30000)
    qtbot.wait(30)
    assert not panel.apply_button.isEnabled()
    text = panel.status.text()
    assert "changes nothing" in text and "gap at" in text and "113 s, over the 60 s limit" in text


def test_tools_in_the_recommended_order_on_the_tunnel_ride_reach_the_truth(tunnel, qtbot):
    from editor.io.gpx import read_gpx
    from editor.processing.pipeline import clean_document
    from editor.processing.stats import track_totals

    window = tunnel
    truth = json.loads((ROOT / "demo_tracks" / "demo_tunnel.truth.json").read_text())
    applied = []
    for name, tool in (("despike", "despike"), ("fill_gaps", "fill_gaps"), ("collapse_stops", "collapse_stops"),
                       ("smooth", "smooth")):
        panel = open_tab(qtbot, window, name)
        click(qtbot, panel.preview_button)
        proposal = wait_preview(qtbot, window, tool)
        if tool == "fill_gaps":  # the gap the catch-up removal lengthened past 120 s is still filled
            assert proposal.info["filled"] == 1 and len(proposal.inserted) > 100
        if proposal.is_noop():
            assert not panel.apply_button.isEnabled()
            continue
        click(qtbot, panel.apply_button)
        applied.append(proposal.label)
    assert [window.undo_stack.text(i) for i in range(window.undo_stack.count())] == applied
    assert applied == ["Remove spikes", "Fill gaps", "Smooth track"]  # no stop on this ride
    totals = track_totals(window.session.doc.tracks[0])
    tol = truth["cleaned_tolerance"]
    assert abs(totals.distance_m - truth["true_distance_m"]) <= tol["distance_m"]
    assert abs(totals.ascent_m - truth["true_ascent_m"]) <= tol["ascent_m"]
    assert abs(totals.descent_m - truth["true_descent_m"]) <= tol["descent_m"]
    # the same result as the batch clean of the same file
    _, report = clean_document(read_gpx(TUNNEL))
    assert totals.distance_m == pytest.approx(report.after.distance_m, rel=1e-9)
    assert totals.ascent_m == pytest.approx(report.after.ascent_m) and totals.points == report.after.points


def test_a_saved_cleaned_copy_records_what_was_done_and_every_place_carries_the_caution(window, dialogs, qtbot,
                                                                                        tmp_path, gpx_schema):
    import shutil

    from lxml import etree

    from editor.model.payload import TW_NS

    source = tmp_path / "tunnel.gpx"
    shutil.copy(TUNNEL, source)
    assert window.files.open_path(source)
    # the Totals header says what the numbers are
    assert window.totals_panel.caution.isVisible()
    assert "estimates" in window.totals_panel.caution.text()
    assert "not for navigation" in window.totals_panel.caution.text()
    panel = open_tab(qtbot, window, "despike")
    click(qtbot, panel.preview_button)
    wait_preview(qtbot, window, "despike")
    click(qtbot, panel.apply_button)
    window.state.set_selection([3, 4])
    qtbot.keyClick(window.map_view, QtCore.Qt.Key.Key_Delete)  # a hand edit too
    assert window.undo_stack.count() == 2
    target = tmp_path / "tunnel-cleaned.gpx"
    dialogs.save_path = str(target)
    qtbot.keyClick(window, QtCore.Qt.Key.Key_S, QtCore.Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(target.exists, timeout=5000)
    kind, title = [a for a in dialogs.asked if a[0] == "save"][-1]
    assert "estimate" in title and "not for navigation" in title   # the save dialog carries the caution
    gpx_schema.validate(str(target))

    def runs(path):
        tree = etree.parse(str(path))
        records = tree.findall(f".//{{{TW_NS}}}cleaning")
        assert len(records) == 1 and len(records[0].findall(f"{{{TW_NS}}}caution")) == 1
        assert "not for navigation" in records[0].findtext(f"{{{TW_NS}}}caution")
        return records[0].findall(f"{{{TW_NS}}}run")

    (run,) = runs(target)
    assert run.get("program") == "Trackwright" and run.get("version") and run.get("date").endswith("Z")
    steps = run.findall(f"{{{TW_NS}}}step")
    assert [(s.get("name"), s.get("label")) for s in steps] == [("despike", "Remove spikes"),
                                                                ("edit", "Delete 2 points")]
    params = {p.get("name"): p.get("value") for p in steps[0]}
    assert params["confidence"] == "0.999" and params["check_catch_up"] == "true"
    # open the copy, fill the gap, save again: the first run is kept and the new one follows it
    assert window.files.open_path(target)
    panel = open_tab(qtbot, window, "fill_gaps")
    click(qtbot, panel.preview_button)
    wait_preview(qtbot, window, "fill_gaps")
    click(qtbot, panel.apply_button)
    again = tmp_path / "tunnel-cleaned-2.gpx"
    dialogs.save_path = str(again)
    qtbot.keyClick(window, QtCore.Qt.Key.Key_S, QtCore.Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(again.exists, timeout=5000)
    gpx_schema.validate(str(again))
    first, second = runs(again)
    assert etree.tostring(first, with_tail=False) == etree.tostring(run, with_tail=False)
    assert [s.get("name") for s in second.findall(f"{{{TW_NS}}}step")] == ["fill_gaps"]
