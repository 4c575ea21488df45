"""Warping Web Mercator tiles into the map's local transverse Mercator (metres).

The map draws a transverse Mercator centred on the data (``editor.geo.LocalProjection``); tiles are
squares in Web Mercator. Between the two lies a smooth, curved mapping, so a tile is drawn as one or
more cells, each with its own affine map (what a painter can apply to an image). A cell is split in
four until its affine is within the allowed error, which the view sets from its current metres per
pixel, so features land within a pixel at every zoom.

The error of a cell's affine is bounded, not only sampled: the residual ``e = f − A`` is sampled on a
``SAMPLES × SAMPLES`` grid with spacing ``d``; between samples ``e`` differs from its bilinear
interpolant by at most ``d²/8 · (max|e_uu| + max|e_vv|)`` (the bilinear interpolation error bound),
and since ``A`` is affine ``e'' = f''``, estimated from second differences of the samples and doubled
for safety. The bound is the largest sampled residual plus that term.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..geo.projection import LocalProjection
from .mercator import lonlat_to_world, tile_range, world_to_lonlat

#: Samples per cell side used to fit and bound a cell's affine.
SAMPLES = 9
#: Deepest split of a tile (4**6 cells); reached only for tiles far larger than the view needs.
MAX_DEPTH = 6
#: Parts of tiles farther east or west of the projection's central meridian are not drawn.
FARTHEST_LON_DEG = 60.0
#: Most tiles one view requests; a view needing more takes the next coarser zoom.
MAX_TILES = 160


@dataclass
class WarpCell:
    """Part ``[u0, u1] × [v0, v1]`` of a tile (fractions of its edge, v down) and its affine map.

    ``affine = (a, b, c, d, tx, ty)``: ``x = a·u + c·v + tx``, ``y = b·u + d·v + ty`` in metres
    (the order of ``QTransform(m11, m12, m21, m22, dx, dy)``). ``error_m`` bounds how far the
    affine puts any point of the cell from its true place.
    """

    u0: float
    v0: float
    u1: float
    v1: float
    affine: tuple[float, float, float, float, float, float]
    error_m: float
    children: list[WarpCell] | None = field(default=None, repr=False)


class TileWarp:
    """The cells of tile ``(z, x, y)`` (``x`` unwrapped: it may lie east or west of the world's copy)."""

    def __init__(self, projection: LocalProjection, z: int, x: int, y: int) -> None:
        self.projection = projection
        self.z, self.x, self.y = z, x, y
        self.root = self._fit(0.0, 0.0, 1.0, 1.0)

    def _to_metres(self, u: np.ndarray, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        n = 2 ** self.z
        lon, lat = world_to_lonlat((self.x + u) / n, (self.y + v) / n)
        x, y = self.projection.to_xy(lat, lon)
        # Transverse Mercator degenerates far from its central meridian: leave such parts out.
        far = np.abs((lon - self.projection.lon0 + 180.0) % 360.0 - 180.0) > FARTHEST_LON_DEG
        x[far] = np.nan
        return x, y

    def _fit(self, u0: float, v0: float, u1: float, v1: float) -> WarpCell:
        s = np.linspace(0.0, 1.0, SAMPLES)
        uu, vv = np.meshgrid(u0 + (u1 - u0) * s, v0 + (v1 - v0) * s)  # rows: v, columns: u
        x, y = self._to_metres(uu.ravel(), vv.ravel())
        if not (np.isfinite(x).all() and np.isfinite(y).all()):
            return WarpCell(u0, v0, u1, v1, (0.0,) * 6, math.inf)
        design = np.column_stack([uu.ravel(), vv.ravel(), np.ones(uu.size)])
        coef_x = np.linalg.lstsq(design, x, rcond=None)[0]
        coef_y = np.linalg.lstsq(design, y, rcond=None)[0]
        ex = (x - design @ coef_x).reshape(SAMPLES, SAMPLES)
        ey = (y - design @ coef_y).reshape(SAMPLES, SAMPLES)
        residual = float(np.max(np.hypot(ex, ey)))
        # Second differences over one sample step give d²·e'' directly.
        duu = np.hypot(np.diff(ex, 2, axis=1), np.diff(ey, 2, axis=1)).max()
        dvv = np.hypot(np.diff(ex, 2, axis=0), np.diff(ey, 2, axis=0)).max()
        bound = residual + 2.0 * (duu + dvv) / 8.0
        affine = (float(coef_x[0]), float(coef_y[0]), float(coef_x[1]), float(coef_y[1]),
                  float(coef_x[2]), float(coef_y[2]))
        return WarpCell(u0, v0, u1, v1, affine, bound)

    def cells(self, tolerance_m: float, within: tuple[float, float, float, float] | None = None,
              max_depth: int = MAX_DEPTH) -> list[WarpCell]:
        """Cells covering the tile whose affine is within ``tolerance_m`` (split as needed, kept for reuse).

        ``within``: only cells meeting this box ``(X0, Y0, X1, Y1)`` of world fractions (the view's,
        from :func:`visible_tiles`), so an enlarged coarse tile is refined only where it is seen.
        ``max_depth`` limits the splitting.
        """
        if within is not None:
            n = 2 ** self.z
            within = (within[0] * n - self.x, within[1] * n - self.y, within[2] * n - self.x, within[3] * n - self.y)
        out: list[WarpCell] = []
        self._collect(self.root, tolerance_m, 0, out, within, max_depth)
        return out

    def _collect(self, cell: WarpCell, tolerance_m: float, depth: int, out: list[WarpCell],
                 within: tuple[float, float, float, float] | None, max_depth: int) -> None:
        if within is not None and (cell.u1 < within[0] or cell.u0 > within[2] or cell.v1 < within[1]
                                   or cell.v0 > within[3]):
            return
        if not math.isfinite(cell.error_m) and depth >= MAX_DEPTH:
            return  # part of the tile lies where the projection breaks down (a quarter globe away)
        if cell.error_m <= tolerance_m or depth >= max_depth:
            if math.isfinite(cell.error_m):
                out.append(cell)
            return
        if cell.children is None:
            um, vm = (cell.u0 + cell.u1) / 2, (cell.v0 + cell.v1) / 2
            cell.children = [self._fit(cell.u0, cell.v0, um, vm), self._fit(um, cell.v0, cell.u1, vm),
                             self._fit(cell.u0, vm, um, cell.v1), self._fit(um, vm, cell.u1, cell.v1)]
        for child in cell.children:
            self._collect(child, tolerance_m, depth + 1, out, within, max_depth)


def view_lonlat(projection: LocalProjection, rect: tuple[float, float, float, float],
                steps: int = 12) -> tuple[np.ndarray, np.ndarray]:
    """Longitudes (unwrapped around the projection's central meridian) and latitudes sampled over
    the view rectangle ``(x0, y0, x1, y1)`` in metres."""
    x0, y0, x1, y1 = rect
    s = np.linspace(0.0, 1.0, steps)
    xx, yy = np.meshgrid(x0 + (x1 - x0) * s, y0 + (y1 - y0) * s)
    lat, lon = projection.to_latlon(xx.ravel(), yy.ravel())
    lon = projection.lon0 + (lon - projection.lon0 + 180.0) % 360.0 - 180.0
    ok = np.isfinite(lat) & np.isfinite(lon)
    return lon[ok], lat[ok]


def visible_tiles(projection: LocalProjection, rect: tuple[float, float, float, float], z: int,
                  min_zoom: int = 0) -> tuple[int, list[tuple[int, int, int]], tuple[float, float, float, float]]:
    """The zoom actually used, the tiles ``(z, x_unwrapped, y)`` covering the view (centre first)
    and the view's box of world fractions ``(X0, Y0, X1, Y1)`` (X unwrapped).

    The sampled view outline is padded by 2 % of its span, more than the bulge of a view edge
    between samples. When more than :data:`MAX_TILES` would be needed, coarser zooms are taken.
    """
    lon, lat = view_lonlat(projection, rect)
    if not len(lon):
        return z, [], (0.0, 0.0, 0.0, 0.0)
    wx, wy = lonlat_to_world(lon, lat)
    pad_x, pad_y = 0.02 * (np.ptp(wx) + 1e-12), 0.02 * (np.ptp(wy) + 1e-12)
    wx = np.array([wx.min() - pad_x, wx.max() + pad_x])
    wy = np.array([wy.min() - pad_y, wy.max() + pad_y])
    while True:
        x0, x1, y0, y1 = tile_range(wx, wy, z)
        count = (x1 - x0 + 1) * (y1 - y0 + 1)
        if count <= MAX_TILES or z <= min_zoom:
            break
        z -= 1
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
    tiles = [(z, x, y) for x in range(x0, x1 + 1) for y in range(y0, y1 + 1)]
    tiles.sort(key=lambda t: (t[1] - cx) ** 2 + (t[2] - cy) ** 2)
    return z, tiles, (float(wx[0]), float(wy[0]), float(wx[1]), float(wy[1]))
