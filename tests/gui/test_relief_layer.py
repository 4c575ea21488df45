"""The map's shaded relief layer: computed off the UI thread, under the track, cached, switchable."""
from __future__ import annotations

from pathlib import Path

import numpy as np

from editor.geo.projection import LocalProjection
from editor.model.state import EditorState
from editor.terrain import Terrain
from editor.views.map_view import MapView
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
    view.view_box.setRange(xRange=(-1500, 1500), yRange=(-1000, 1000), padding=0)
    view.set_terrain(terrain)
    layer = view.relief
    qtbot.waitUntil(lambda: layer.item.isVisible(), timeout=10_000)
    image = layer.item.image
    assert image.shape[2] == 4 and image.shape[0] > 10 and image.shape[1] > 10
    assert np.ptp(image[..., 0]) > 20            # real shading, not a flat fill
    assert layer.item.zValue() < 0              # below every track layer
    # back to a view already seen: shown from the cache at once, no new computation
    cached = len(layer._cache)
    layer.refresh()
    assert len(layer._cache) == cached and layer.item.isVisible()
    view.set_relief_visible(False)
    assert not layer.item.isVisible()
    layer.shutdown()
