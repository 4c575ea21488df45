"""Shaded relief of the user's terrain under the track on the map view.

The picture is computed off the UI thread (:func:`editor.terrain.relief.relief_image`, Horn's
method) for the visible extent at screen resolution in the map's own projection, after pan or zoom
has been still for :data:`DEBOUNCE_MS`; finished pictures are cached per extent (a few views), and
a result that arrives after the view moved on is dropped (generation counter). The image sits
below every track layer.
"""
from __future__ import annotations

from collections import OrderedDict
from concurrent.futures import ThreadPoolExecutor

import pyqtgraph as pg
from PySide6 import QtCore

#: Quiet time after the last pan/zoom before the relief is recomputed.
DEBOUNCE_MS = 250
#: Pictures kept (per extent, size and projection).
CACHE_SIZE = 8
#: Screen pixels per relief pixel (2: a quarter of the samples, still sharper than 1-arc-second data
#: at most zooms).
PIXEL_STEP = 2
#: Z value: under the track lines and points (which start at 0).
Z_VALUE = -100


class _Relay(QtCore.QObject):
    done = QtCore.Signal(int, object, object)   # generation, key, ReliefImage (or None on error)


class ReliefLayer(QtCore.QObject):
    """A pyqtgraph ImageItem of shaded relief in ``map_view``'s view box."""

    def __init__(self, map_view) -> None:
        super().__init__(map_view)
        self.map_view = map_view
        self.terrain = None
        self.enabled = True
        self.generation = 0
        self.item = pg.ImageItem(axisOrder="row-major")
        self.item.setZValue(Z_VALUE)
        self.item.hide()
        map_view.view_box.addItem(self.item, ignoreBounds=True)
        self._cache: OrderedDict = OrderedDict()
        self._pool = ThreadPoolExecutor(max_workers=1, thread_name_prefix="relief")
        self._relay = _Relay()
        self._relay.done.connect(self._show)
        self._timer = QtCore.QTimer(self, singleShot=True, interval=DEBOUNCE_MS)
        self._timer.timeout.connect(self.refresh)
        map_view.view_box.sigRangeChanged.connect(lambda *_: self._timer.start())
        map_view.view_box.sigResized.connect(lambda *_: self._timer.start())
        self.last_error: str | None = None
        self._closed = False

    def set_terrain(self, terrain) -> None:
        """Use ``terrain`` (an :class:`editor.terrain.Terrain`), or ``None`` to draw nothing."""
        self.terrain = terrain
        self._cache.clear()
        self.refresh()

    def set_enabled(self, enabled: bool) -> None:
        self.enabled = bool(enabled)
        self.refresh()

    def _key(self):
        vb = self.map_view.view_box
        (x0, x1), (y0, y1) = vb.viewRange()
        rect = vb.sceneBoundingRect()
        width = max(int(rect.width()) // PIXEL_STEP, 1)
        height = max(int(rect.height()) // PIXEL_STEP, 1)
        proj = self.map_view.projection
        return (proj.lat0, proj.lon0, round(x0, 3), round(y0, 3), round(x1, 3), round(y1, 3), width, height)

    def refresh(self) -> None:
        """Show the cached picture of the current view, or compute it in the background."""
        self.generation += 1
        if self._closed:
            return
        if self.terrain is None or not self.enabled:
            self.item.hide()
            return
        key = self._key()
        if key in self._cache:
            self._cache.move_to_end(key)
            self._place(self._cache[key])
            return
        generation, terrain, projection = self.generation, self.terrain, self.map_view.projection
        relay = self._relay

        def work() -> None:
            from ..terrain.relief import relief_image

            try:
                image = relief_image(terrain, projection, key[2], key[3], key[4], key[5], key[6], key[7])
            except Exception as exc:  # noqa: BLE001 -- a bad tile must not end the worker
                relay.done.emit(generation, key, exc)
                return
            relay.done.emit(generation, key, image)

        self._pool.submit(work)

    def _show(self, generation: int, key, image) -> None:
        if isinstance(image, Exception):
            self.last_error = str(image)
            return
        self._cache[key] = image
        while len(self._cache) > CACHE_SIZE:
            self._cache.popitem(last=False)
        if generation == self.generation:
            self._place(image)

    def _place(self, image) -> None:
        # rows of the picture run north to south; the view's y axis points north
        self.item.setImage(image.rgba[::-1], autoLevels=False, levels=(0, 255))
        self.item.setRect(QtCore.QRectF(image.x0, image.y0, image.x1 - image.x0, image.y1 - image.y0))
        self.item.show()

    def shutdown(self) -> None:
        """Stop for good (the window is closing): no further pictures are computed."""
        self._closed = True
        self._timer.stop()
        self._pool.shutdown(wait=True, cancel_futures=True)
