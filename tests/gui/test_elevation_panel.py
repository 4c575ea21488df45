"""The elevation panel: terrain choice, what the heights refer to, and a preview through the tool."""
from __future__ import annotations

from pathlib import Path

import numpy as np

from editor.io.gpx import read_gpx
from editor.panels.elevation_panel import ElevationPanel
from editor.processing.tools import TOOLS
from editor.views.relief_layer import ReliefBackground

DEMO = Path(__file__).resolve().parents[2] / "demo_tracks"


def test_panel_uses_the_chosen_terrain(qtbot):
    panel = ElevationPanel(TOOLS["elevation"])
    qtbot.addWidget(panel)
    seen = []
    panel.terrain_changed.connect(seen.append)
    track = read_gpx(DEMO / "demo_tunnel.gpx").tracks[0]
    # before terrain is chosen the tool says what to do instead of inventing anything
    try:
        panel.tool.function(track, panel.params())
        raise AssertionError("expected a refusal without terrain")
    except ValueError as err:
        assert "terrain files" in str(err)
    with qtbot.waitSignal(panel.preview_requested):
        assert panel.set_terrain_paths([DEMO / "demo_tunnel.terrain.tif"])
    assert seen and seen[-1] is panel.terrain
    assert "mean sea level" in panel.reference.text() and "not a bridge" in panel.reference.text()
    params = panel.params()
    assert params.mode == "auto"
    proposal = panel.tool.function(track, params, rows=None, track_index=0)
    assert proposal.info["mode"] == "combine" and np.isfinite(proposal.points.ele).all()
    assert "terrain height found" in panel.describe(proposal)


def test_a_bad_terrain_file_is_named(qtbot, tmp_path):
    panel = ElevationPanel(TOOLS["elevation"])
    qtbot.addWidget(panel)
    bad = tmp_path / "broken.tif"
    bad.write_bytes(b"no raster here")
    assert not panel.set_terrain_paths([bad])
    assert "broken.tif" in panel.status.text()
    assert panel.terrain is None


def test_elevation_tab_previews_applies_and_shades_the_map(window, qtbot):
    # The whole path in the window: choose terrain -> preview -> one undo step; the map shows relief.
    import json

    window.files.open_path(DEMO / "demo_tunnel.gpx")
    dock = window.tool_dock
    panel = dock.panel("elevation")
    dock.show_panel(panel)
    panel.set_terrain_paths([DEMO / "demo_tunnel.terrain.tif"])
    qtbot.waitUntil(lambda: window.state.preview is not None, timeout=20000)
    proposal = window.state.preview
    assert proposal.tool == "elevation"
    truth = json.loads((DEMO / "demo_tunnel.truth.json").read_text(encoding="utf-8"))["true_ascent_m"]
    assert abs(proposal.after.ascent_m - truth) < abs(proposal.before.ascent_m - truth)
    assert "terrain height found" in panel.status.text()
    qtbot.waitUntil(lambda: len(window.profile_view.terrain_item.getData()[0]) > 0, timeout=5000)
    panel.apply_button.click()
    assert window.undo_stack.count() == 1
    # the terrain's shaded relief became the map's background (View ▸ Background ▸ Shaded relief)
    relief = window.map_view.background
    assert isinstance(relief, ReliefBackground)
    assert window.background_controller.kind_shown() == "relief"
    qtbot.waitUntil(lambda: relief.shown is not None, timeout=20000)
