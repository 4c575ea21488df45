"""The map's shaded relief background: computed off the UI thread, under the track, cached."""
from __future__ import annotations

from pathlib import Path

import numpy as np

from editor.geo.projection import LocalProjection
from editor.model.state import EditorState
from editor.terrain import Terrain
from editor.views.background.layer import BACKGROUND_Z
from editor.views.map_view import MapView
from editor.views.relief_layer import ReliefBackground
from editor.views.style import Palette

DEMO = Path(__file__).resolve().parents[2] / "demo_tracks"


def test_relief_is_drawn_under_the_track_and_cached(qtbot):
    view = MapView(EditorState(), Palette.load())
    qtbot.addWidget(view)
    view.resize(400, 300)
    view.show()
    terrain = Terrain.open([DEMO / "demo_tunnel.terrain.tif"])
    # centre on the demo tunnel's start (demo_tracks/scenarios.py origin)
    view.set_projection(LocalProjection(47.1510, 8.9790))
    layer = ReliefBackground(terrain)
    view.set_background(layer)
    view.view_box.setRange(xRange=(-1500, 1500), yRange=(-1000, 1000), padding=0)
    qtbot.wait(20)
    layer.set_view(view.view_box.viewRect(), view.view_box.viewPixelSize()[0])
    layer.refresh()
    qtbot.waitUntil(lambda: layer.shown is not None, timeout=10_000)
    image = layer.shown.rgba
    assert image.shape[2] == 4 and image.shape[0] > 10 and image.shape[1] > 10
    assert np.ptp(image[..., 0]) > 20            # real shading, not a flat fill
    assert layer.zValue() == BACKGROUND_Z < 0    # below every track layer
    # the picture is painted: the grabbed view is no longer one flat colour
    qtbot.wait(50)
    grabbed = view.grab().toImage()
    colours = {grabbed.pixel(x, y) for x in range(50, 350, 25) for y in range(50, 250, 25)}
    assert len(colours) > 3
    # back to a view already seen: shown from the cache at once, no new computation
    cached = len(layer._cache)
    layer.refresh()
    assert len(layer._cache) == cached and layer.shown is not None
    view.set_background(None)  # removed: its worker stops
    assert layer._closed
