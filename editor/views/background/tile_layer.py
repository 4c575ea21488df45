"""A background of Web Mercator tiles (from the web or an archive), warped into the map's metres.

The layer keeps decoded tiles in a bounded memory cache, asks its :class:`TileLoader` for the tiles
a view needs (centre first), and while a tile is on its way draws the part of a coarser tile it
already has. Each tile is drawn as the cells of its :class:`~editor.tiles.warp.TileWarp`, split
finely enough that the affine error stays under :data:`ERROR_BUDGET_PX` screen pixels.
"""
from __future__ import annotations

import math
from collections import OrderedDict

from PySide6 import QtCore, QtGui

from ...geo.projection import LocalProjection
from ...tiles.mercator import lonlat_to_world, wrap_x, zoom_for_resolution
from ...tiles.warp import MAX_DEPTH, TileWarp, view_lonlat, visible_tiles
from .layer import BackgroundLayer
from .loader import TileKey, TileLoader

#: Share of a screen pixel the warp may be off; the rest of the pixel is left to image resampling.
ERROR_BUDGET_PX = 0.5
#: Decoded tiles kept in memory (bytes of image data).
MEMORY_CACHE_BYTES = 96 * 1024 * 1024
#: Warps kept (they depend only on the projection and the tile).
WARP_CACHE = 2048
#: How far each cell is drawn beyond its edges, as a share of the warp tolerance (which is at most
#: ERROR_BUDGET_PX): closes hairline seams between separately fitted cells.
SEAM_OVERLAP = 0.7
#: Milliseconds the scale must rest before tiles are drawn smoothly again after a zoom.
ZOOM_REST_MS = 150
#: How many levels up a coarser tile may stand in for a missing one.
FALLBACK_LEVELS = 3


class TileLayer(BackgroundLayer):
    """Tiles from ``loader``; ``min_zoom``/``max_zoom`` are what the source offers (beyond ``max_zoom``
    its finest tiles are enlarged)."""

    def __init__(self, loader: TileLoader, attribution: str, min_zoom: int = 0, max_zoom: int = 19,
                 memory_bytes: int = MEMORY_CACHE_BYTES) -> None:
        super().__init__()
        self.loader = loader
        self._attribution = attribution
        self.min_zoom = min_zoom
        self.max_zoom = max_zoom
        self.memory_bytes = memory_bytes
        self._images: OrderedDict[TileKey, QtGui.QImage] = OrderedDict()
        self._image_bytes = 0
        self._absent: set[TileKey] = set()
        self._warps: OrderedDict[tuple[int, int, int], TileWarp] = OrderedDict()
        self._draw_lists: OrderedDict[tuple, list] = OrderedDict()
        self._tile_rects: dict[tuple[int, int, int], QtCore.QRectF] = {}
        self._shown: list[tuple[int, int, int]] = []  # (z, x unwrapped, y)
        self._world_box = (0.0, 0.0, 0.0, 0.0)
        self._asked: set[TileKey] = set()
        self.zoom = min_zoom
        self._wanted_zoom = min_zoom  # the zoom the view's scale asks for, beyond what the source has
        #: 2 for high-DPI ("@2x") tiles, which cover a tile's area with twice the pixels.
        self.tile_scale = 1.0
        self.status = ""
        # While the scale changes every frame (a zoom), tiles are resampled the fast way; the smooth
        # drawing follows once the scale has rested for a moment.
        self._zooming = False
        self._zoom_rest = QtCore.QTimer(singleShot=True, interval=ZOOM_REST_MS)
        self._zoom_rest.timeout.connect(self._zoom_rested)
        loader.tile_loaded.connect(self._tile_loaded)
        loader.tile_absent.connect(self._tile_absent)
        loader.status_changed.connect(self._status)

    # --- the view -------------------------------------------------------------------------------------
    def attribution(self) -> str:
        return self._attribution

    def set_projection(self, projection: LocalProjection) -> None:
        self._warps.clear()
        self._draw_lists.clear()
        self._tile_rects.clear()
        super().set_projection(projection)

    def bounds_changed(self) -> None:
        # Coarse tiles are refined only inside the layer's bounds (see TileWarp.cells).
        r = self._rect
        lon, lat = view_lonlat(self.projection, (r.left(), r.top(), r.right(), r.bottom()))
        if len(lon):
            wx, wy = lonlat_to_world(lon, lat)
            self._world_box = (float(wx.min()), float(wy.min()), float(wx.max()), float(wy.max()))

    def set_view(self, rect: QtCore.QRectF, metres_per_px: float, device_ratio: float = 1.0) -> bool:
        rescaled = metres_per_px != self.metres_per_px and self.metres_per_px > 0 and not self.view_rect.isEmpty()
        if not super().set_view(rect, metres_per_px, device_ratio) or rect.isEmpty() or not metres_per_px > 0:
            return False
        if rescaled:
            self._zooming = True
            self._zoom_rest.start()
        centre = rect.center()
        lat, _ = self.projection.to_latlon(centre.x(), centre.y())
        z = zoom_for_resolution(metres_per_px, float(lat), self.min_zoom, self.max_zoom, device_ratio / self.tile_scale)
        box = (rect.left(), rect.top(), rect.right(), rect.bottom())
        self._wanted_zoom = zoom_for_resolution(metres_per_px, float(lat), 0, 30, device_ratio / self.tile_scale)
        before = set(self._shown)
        self.zoom, self._shown, _ = visible_tiles(self.projection, box, z, self.min_zoom)
        wanted = []
        for z, x, y in self._shown:
            key = (z, wrap_x(x, z), y)
            if key in self._images:
                self._images.move_to_end(key)
                if (z, x, y) not in before:
                    self.update(self._tile_rect(z, x, y))
            elif key not in self._absent:
                wanted.append(key)
        if set(wanted) != self._asked:
            self._asked = set(wanted)
            self.loader.want(wanted)
        return True

    def all_shown_settled(self) -> bool:
        """Every tile the view needs has arrived or is known to be missing (for tests and benchmarks)."""
        return all((z, wrap_x(x, z), y) in self._images or (z, wrap_x(x, z), y) in self._absent
                   for z, x, y in self._shown)

    def is_settled(self) -> bool:
        """All tiles are in and drawn in their final (smooth) quality."""
        return self.all_shown_settled() and not self._zooming

    def shown_loaded(self) -> int:
        return sum((z, wrap_x(x, z), y) in self._images for z, x, y in self._shown)

    # --- arrivals -------------------------------------------------------------------------------------
    def _tile_loaded(self, key: TileKey, image: QtGui.QImage) -> None:
        key = (int(key[0]), int(key[1]), int(key[2]))
        old = self._images.pop(key, None)
        if old is not None:
            self._image_bytes -= old.sizeInBytes()
        self._images[key] = image
        self._image_bytes += image.sizeInBytes()
        while self._image_bytes > self.memory_bytes and len(self._images) > 1:
            _, dropped = self._images.popitem(last=False)
            self._image_bytes -= dropped.sizeInBytes()
        self._asked.discard(key)
        z, xw, y = key
        self._redraw_arrival(z, xw, y)

    def _redraw_arrival(self, z: int, xw: int, y: int) -> None:
        # Redraw only the tile's region while others are still coming (a pan stays cheap); once the
        # view is complete, redraw it whole, so no seam of the partial redraws stays behind.
        if self.all_shown_settled():
            self.update()
            return
        n = 2 ** z
        for shown in self._shown:  # the unwrapped column(s) showing this tile
            if shown[0] == z and shown[2] == y and shown[1] % n == xw:
                self.update(self._tile_rect(*shown))

    def _tile_absent(self, key: TileKey) -> None:
        key = (int(key[0]), int(key[1]), int(key[2]))
        self._absent.add(key)
        self._asked.discard(key)
        if self.all_shown_settled():
            self.update()

    def _status(self, text: str) -> None:
        self.status = text
        self.status_changed.emit(text)

    def shutdown(self) -> None:
        self._zoom_rest.stop()
        self.loader.shutdown()

    # --- drawing --------------------------------------------------------------------------------------
    def _warp(self, z: int, x: int, y: int) -> TileWarp:
        key = (z, x, y)
        warp = self._warps.get(key)
        if warp is None:
            warp = self._warps[key] = TileWarp(self.projection, z, x, y)
            if len(self._warps) > WARP_CACHE:
                self._warps.popitem(last=False)
        else:
            self._warps.move_to_end(key)
        return warp

    def _draw_list(self, z: int, x: int, y: int, tolerance_m: float, depth: int, part: tuple, w: int, h: int):
        """Per cell: its affine as a QTransform, the target rectangle (tile fractions) and the source
        rectangle (image pixels); kept until the tolerance, the layer's bounds or the image change."""
        key = (z, x, y, tolerance_m, depth, part, w, h, self._world_box)
        cached = self._draw_lists.get(key)
        if cached is not None:
            self._draw_lists.move_to_end(key)
            return cached
        ox, oy, scale = part
        out = []
        for cell in self._warp(z, x, y).cells(tolerance_m, self._world_box, depth):
            # Each cell is drawn a hair larger than it is (SEAM_OVERLAP of the tolerance, at most 0.35
            # screen px): neighbouring cells fitted separately would otherwise leave hairline gaps
            # where their edges round to different pixels. The warp bound plus this stays under 1 px.
            a, b, c, d = cell.affine[:4]
            pad_m = SEAM_OVERLAP * tolerance_m
            pu = pad_m / max(math.hypot(a, b), 1e-12)
            pv = pad_m / max(math.hypot(c, d), 1e-12)
            out.append((QtGui.QTransform(*cell.affine),
                        QtCore.QRectF(cell.u0 - pu, cell.v0 - pv, cell.u1 - cell.u0 + 2 * pu,
                                      cell.v1 - cell.v0 + 2 * pv),
                        QtCore.QRectF((ox + cell.u0 * scale) * w, (oy + cell.v0 * scale) * h,
                                      (cell.u1 - cell.u0) * scale * w, (cell.v1 - cell.v0) * scale * h)))
        self._draw_lists[key] = out
        if len(self._draw_lists) > WARP_CACHE:
            self._draw_lists.popitem(last=False)
        return out

    def _zoom_rested(self) -> None:
        self._zooming = False
        self.update()

    def _tile_rect(self, z: int, x: int, y: int) -> QtCore.QRectF:
        """Where tile ``(z, x, y)`` is drawn, in metres (the whole layer where the warp has no finite fit)."""
        rect = self._tile_rects.get((z, x, y))
        if rect is None:
            root = self._warp(z, x, y).root
            if not math.isfinite(root.error_m):
                return self.boundingRect()
            a, b, c, d, tx, ty = root.affine
            xs = [tx, a + tx, c + tx, a + c + tx]
            ys = [ty, b + ty, d + ty, b + d + ty]
            e = root.error_m
            rect = QtCore.QRectF(min(xs) - e, min(ys) - e, max(xs) - min(xs) + 2 * e, max(ys) - min(ys) + 2 * e)
            if len(self._tile_rects) > WARP_CACHE:
                self._tile_rects.clear()
            self._tile_rects[(z, x, y)] = rect
        m = 2 * self.metres_per_px  # and a margin for resampling
        return rect.adjusted(-m, -m, m, m)

    def _stand_in(self, z: int, x: int, y: int):
        """A coarser tile already in memory and the part of it that covers tile ``(z, x, y)``."""
        for up in range(1, FALLBACK_LEVELS + 1):
            if z - up < self.min_zoom:
                break
            f = 2 ** up
            px, py = x // f, y // f
            image = self._images.get((z - up, wrap_x(px, z - up), py))
            if image is not None:
                return image, ((x - px * f) / f, (y - py * f) / f, 1.0 / f)
        return None, None

    def paint(self, painter: QtGui.QPainter, option=None, *args) -> None:
        if not self._shown:
            return
        exposed = option.exposedRect if option is not None else self.boundingRect()
        painter.setRenderHint(QtGui.QPainter.RenderHint.SmoothPixmapTransform, not self._zooming)
        painter.setRenderHint(QtGui.QPainter.RenderHint.Antialiasing, False)
        base = painter.transform()
        # Tolerance rounded down to a power of two: the same cells (and prepared transforms) serve a
        # whole range of scales, and the error stays within the budget.
        tolerance_m = 2.0 ** math.floor(math.log2(ERROR_BUDGET_PX * self.metres_per_px))
        # A coarse tile enlarged far beyond its zoom (an archive's last level) may need deeper splits.
        depth = MAX_DEPTH + max(0, self._wanted_zoom - self.zoom)
        for z, x, y in reversed(self._shown):  # centre last: on top where tiles overlap by a hair
            image = self._images.get((z, wrap_x(x, z), y))
            part = (0.0, 0.0, 1.0)
            if image is None:
                image, part = self._stand_in(z, x, y)
                if image is None:
                    continue
            if not exposed.intersects(self._tile_rect(z, x, y)):
                continue
            for transform, target, source in self._draw_list(z, x, y, tolerance_m, depth, part,
                                                             image.width(), image.height()):
                painter.setTransform(transform * base)
                painter.drawImage(target, image, source)
        painter.setTransform(base)

