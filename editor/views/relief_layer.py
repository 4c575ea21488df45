"""Shaded relief of the user's terrain: one kind of map background (View ▸ Background ▸ Shaded relief).

The picture is computed off the UI thread (:func:`editor.terrain.relief.relief_image`, Horn's
method) for the visible extent at screen resolution in the map's own projection, after pan or zoom
has been still for :data:`DEBOUNCE_MS`; finished pictures are cached per extent (a few views), and
a result that arrives after the view moved on is dropped (generation counter). Like every
background it sits below the track layers and never takes the mouse
(:class:`~editor.views.background.layer.BackgroundLayer`).
"""
from __future__ import annotations

from collections import OrderedDict
from concurrent.futures import ThreadPoolExecutor
from typing import Any

import numpy as np
from PySide6 import QtCore, QtGui

from ..geo.projection import LocalProjection
from .background.layer import BackgroundLayer

#: Quiet time after the last pan/zoom before the relief is recomputed.
DEBOUNCE_MS = 250
#: Pictures kept (per extent, size and projection).
CACHE_SIZE = 8
#: Screen pixels per relief pixel (2: a quarter of the samples, still sharper than 1-arc-second data
#: at most zooms).
PIXEL_STEP = 2


class _Relay(QtCore.QObject):
    done = QtCore.Signal(int, object, object)   # generation, key, ReliefImage (or the exception)


class ReliefBackground(BackgroundLayer):
    """Hill shading of ``terrain`` (an :class:`editor.terrain.Terrain`) under the map's track."""

    def __init__(self, terrain: Any) -> None:
        super().__init__()
        self.terrain = terrain
        self.generation = 0
        self.shown: Any = None  # the ReliefImage drawn now
        self._qimage: QtGui.QImage | None = None
        self._cache: OrderedDict = OrderedDict()
        self._pool = ThreadPoolExecutor(max_workers=1, thread_name_prefix="relief")
        self._relay = _Relay()
        self._relay.done.connect(self._arrived)
        self._timer = QtCore.QTimer(singleShot=True, interval=DEBOUNCE_MS)
        self._timer.timeout.connect(self.refresh)
        self._closed = False
        self.last_error: str | None = None

    # --- what the map view calls --------------------------------------------------------------------
    def set_projection(self, projection: LocalProjection) -> None:
        super().set_projection(projection)
        self._cache.clear()
        self._show(None)

    def set_view(self, rect: QtCore.QRectF, metres_per_px: float, device_ratio: float = 1.0) -> bool:
        changed = super().set_view(rect, metres_per_px, device_ratio)
        if changed and not self._closed:
            self._timer.start()
        return changed

    def attribution(self) -> str:
        return "Relief: your terrain files"

    def shutdown(self) -> None:
        """Stop for good (the layer is removed or the window closes)."""
        self._closed = True
        self._timer.stop()
        self._pool.shutdown(wait=False, cancel_futures=True)

    # --- computing ------------------------------------------------------------------------------------
    def _key(self) -> tuple:
        rect, proj = self.view_rect, self.projection
        width = max(int(rect.width() / max(self.metres_per_px, 1e-9)) // PIXEL_STEP, 1)
        height = max(int(rect.height() / max(self.metres_per_px, 1e-9)) // PIXEL_STEP, 1)
        return (proj.lat0, proj.lon0, round(rect.left(), 3), round(rect.top(), 3), round(rect.right(), 3),
                round(rect.bottom(), 3), width, height)

    def refresh(self) -> None:
        """Show the cached picture of the current view, or compute it in the background."""
        self.generation += 1
        if self._closed or self.view_rect.isEmpty():
            return
        key = self._key()
        if key in self._cache:
            self._cache.move_to_end(key)
            self._show(self._cache[key])
            return
        generation, terrain, projection, relay = self.generation, self.terrain, self.projection, self._relay

        def work() -> None:
            from ..terrain.relief import relief_image

            try:
                # full alpha where there is terrain: the background's strength slider sets the opacity
                image = relief_image(terrain, projection, key[2], key[3], key[4], key[5], key[6], key[7],
                                     opacity=1.0)
            except Exception as exc:  # noqa: BLE001 -- a bad tile must not end the worker
                relay.done.emit(generation, key, exc)
                return
            relay.done.emit(generation, key, image)

        self._pool.submit(work)

    def _arrived(self, generation: int, key: tuple, image: Any) -> None:
        if self._closed:
            return
        if isinstance(image, Exception):
            self.last_error = str(image)
            self.status_changed.emit(f"Shaded relief not drawn: {image}")
            return
        self._cache[key] = image
        while len(self._cache) > CACHE_SIZE:
            self._cache.popitem(last=False)
        if generation == self.generation:
            self._show(image)

    def _show(self, image: Any) -> None:
        self.shown = image
        if image is None:
            self._qimage = None
        else:
            # rows of the picture run north to south; the map's y axis points north, and the item's
            # y grows with the rows, so the rows are flipped once here
            rgba = np.ascontiguousarray(image.rgba[::-1])
            height, width = rgba.shape[:2]
            self._qimage = QtGui.QImage(rgba.data, width, height, 4 * width,
                                        QtGui.QImage.Format.Format_RGBA8888).copy()
        self.update()

    # --- QGraphicsItem ----------------------------------------------------------------------------
    def paint(self, painter: QtGui.QPainter, *args: Any) -> None:
        image, picture = self.shown, self._qimage
        if image is None or picture is None:
            return
        painter.setRenderHint(QtGui.QPainter.RenderHint.SmoothPixmapTransform, True)
        painter.drawImage(QtCore.QRectF(image.x0, image.y0, image.x1 - image.x0, image.y1 - image.y0), picture)
