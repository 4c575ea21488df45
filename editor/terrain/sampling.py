"""Bilinear terrain heights at track points, across tile edges and the 180th meridian.

Heights are interpolated between the four surrounding pixel *centres* (``transform * (col + 0.5,
row + 0.5)``, right for pixel-is-area and pixel-is-point rasters alike, see :mod:`.tiles`). A
point is assigned to the first tile whose footprint holds it; a corner that falls outside that
tile (the point lies within half a pixel of its edge) is read from the neighbouring tile of the
same CRS that holds the corner's centre, trying longitudes shifted by ±360° for geographic rasters
so a tile ending at 180° E continues into one starting at 180° W. At the outer edge of all
coverage the edge pixel stands in for the missing corner (within half a pixel of real data).

Nothing is invented: a point outside every tile, or with a nodata pixel among its weighted
corners, gets NaN and is counted in :class:`TerrainSample`'s report. Pixels are read in blocks of
:data:`BLOCK` x :data:`BLOCK` around the points only, and blocks are cached.
"""
from __future__ import annotations

import threading
from collections import OrderedDict
from dataclasses import dataclass

import numpy as np
import rasterio
from pyproj import CRS, Transformer
from rasterio.windows import Window

from .tiles import _ENV, Tile, index_tiles

#: Side of the pixel blocks read from a tile.
BLOCK = 256
#: Blocks kept in memory (about 128 kB each as float64).
CACHE_BLOCKS = 256
#: Metres per degree of latitude (mean), for pixel sizes and slopes of geographic rasters.
M_PER_DEG = 111_195.0

OK, OUTSIDE, NODATA = 0, 1, 2


@dataclass
class TerrainSample:
    """Heights at the asked points; NaN where ``status`` is not :data:`OK`.

    ``slope`` is the local ground slope (rise over run) of the interpolating surface,
    ``pixel_m`` the raster's pixel size in metres there (the larger side), both NaN with the height.
    """

    height: np.ndarray
    slope: np.ndarray
    pixel_m: np.ndarray
    status: np.ndarray

    @property
    def outside(self) -> np.ndarray:
        return np.flatnonzero(self.status == OUTSIDE)

    @property
    def nodata(self) -> np.ndarray:
        return np.flatnonzero(self.status == NODATA)

    def report(self) -> str:
        """One line for the user: how many points got a terrain height, and why others did not."""
        n, bad_out, bad_nd = len(self.status), len(self.outside), len(self.nodata)
        if not bad_out and not bad_nd:
            return f"terrain height found for all {n} points"
        parts = [f"terrain height found for {n - bad_out - bad_nd} of {n} points"]
        if bad_out:
            parts.append(f"{bad_out} outside the terrain files (rows {_runs(self.outside)})")
        if bad_nd:
            parts.append(f"{bad_nd} on holes in the terrain data (rows {_runs(self.nodata)})")
        return "; ".join(parts)


def _runs(rows: np.ndarray, limit: int = 3) -> str:
    """``"10-42, 97-97, ..."``: the first runs of consecutive rows."""
    cut = np.flatnonzero(np.diff(rows) != 1)
    starts, ends = np.r_[rows[:1], rows[cut + 1]], np.r_[rows[cut], rows[-1:]]
    text = ", ".join(f"{a}-{b}" for a, b in zip(starts[:limit], ends[:limit]))
    return text + (", ..." if len(starts) > limit else "")


class Terrain:
    """A set of terrain rasters (any CRS) sampled as one surface. Thread-safe."""

    def __init__(self, tiles: list[Tile]):
        self.tiles = list(tiles)
        self._groups: dict[str, list[int]] = {}
        for i, tile in enumerate(self.tiles):
            self._groups.setdefault(tile.crs_wkt, []).append(i)
        self._bounds = np.array([t.bounds for t in self.tiles], dtype=np.float64).reshape(-1, 4)
        self._to_crs = {wkt: Transformer.from_crs("EPSG:4326", CRS.from_wkt(wkt), always_xy=True)
                        for wkt in self._groups}
        self._datasets: dict[int, rasterio.DatasetReader] = {}
        self._blocks: OrderedDict = OrderedDict()
        self._lock = threading.Lock()

    @classmethod
    def open(cls, paths) -> Terrain:
        """Index files and folders (headers only); see :func:`editor.terrain.tiles.index_tiles`."""
        return cls(index_tiles(paths))

    def vertical_reference(self) -> str:
        """What the heights refer to, in words for the user."""
        names = sorted({t.vertical_crs for t in self.tiles if t.vertical_crs})
        if names:
            return "heights relative to " + ", ".join(names)
        return ("heights as stored in the terrain files (no vertical reference declared; "
                "usually metres above mean sea level)")

    def close(self) -> None:
        with self._lock:
            for ds in self._datasets.values():
                ds.close()
            self._datasets.clear()
            self._blocks.clear()

    # -- sampling ---------------------------------------------------------------------------

    def sample(self, lat, lon) -> TerrainSample:
        """Bilinear heights at WGS84 ``lat``, ``lon`` (degrees); see the module notes."""
        lat = np.asarray(lat, dtype=np.float64)
        lon = np.asarray(lon, dtype=np.float64)
        n = len(lat)
        height, slope, pixel = np.full(n, np.nan), np.full(n, np.nan), np.full(n, np.nan)
        status = np.full(n, OUTSIDE, dtype=np.int8)
        todo = np.isfinite(lat) & np.isfinite(lon)
        for wkt, members in self._groups.items():
            if not todo.any():
                break
            idx = np.flatnonzero(todo)
            x, y = self._to_crs[wkt].transform(lon[idx], lat[idx])
            x, y = np.asarray(x, dtype=np.float64), np.asarray(y, dtype=np.float64)
            tile_of, x = self._locate(members, x, y)
            for ti in np.unique(tile_of[tile_of >= 0]):
                sel = np.flatnonzero(tile_of == ti)
                rows = idx[sel]
                h, s, p, st = self._bilinear(int(ti), members, x[sel], y[sel], lat[rows])
                height[rows], slope[rows], pixel[rows], status[rows] = h, s, p, st
                todo[rows] = False
        return TerrainSample(height=height, slope=slope, pixel_m=pixel, status=status)

    def _shifts(self, tile_index: int) -> tuple[float, ...]:
        return (0.0, 360.0, -360.0) if self.tiles[tile_index].geographic else (0.0,)

    def _locate(self, members: list[int], x: np.ndarray, y: np.ndarray):
        """First tile holding each point (-1: none) and x shifted into that tile's longitudes."""
        tile_of = np.full(len(x), -1, dtype=np.int64)
        xs = x.copy()
        if not len(x):
            return tile_of, xs
        ymin, ymax = np.nanmin(y), np.nanmax(y)
        for ti in members:
            x0, y0, x1, y1 = self._bounds[ti]
            if y1 < ymin or y0 > ymax:
                continue
            for shift in self._shifts(ti):
                free = tile_of < 0
                inside = free & (x + shift >= x0) & (x + shift <= x1) & (y >= y0) & (y <= y1)
                if inside.any():
                    tile_of[inside] = ti
                    xs[inside] = x[inside] + shift
        return tile_of, xs

    def _bilinear(self, ti: int, members: list[int], x, y, lat):
        tile = self.tiles[ti]
        a, b, c, d, e, f = tile.transform
        det = a * e - b * d
        # inverse affine, then pixel-centre coordinates (centre of pixel k is at k + 0.5)
        u = (e * (x - c) - b * (y - f)) / det - 0.5
        v = (-d * (x - c) + a * (y - f)) / det - 0.5
        c0, r0 = np.floor(u).astype(np.int64), np.floor(v).astype(np.int64)
        fx, fy = u - c0, v - r0
        weights = ((1 - fx) * (1 - fy), fx * (1 - fy), (1 - fx) * fy, fx * fy)
        corners = ((r0, c0), (r0, c0 + 1), (r0 + 1, c0), (r0 + 1, c0 + 1))
        z = [self._corner_values(ti, members, r, cc) for r, cc in corners]
        bad = np.zeros(len(x), dtype=bool)
        for w, zc in zip(weights, z):
            bad |= (w > 0) & np.isnan(zc)
        z = [np.where(np.isnan(zc), 0.0, zc) for zc in z]
        h = sum(w * zc for w, zc in zip(weights, z))
        dzdu = (1 - fy) * (z[1] - z[0]) + fy * (z[3] - z[2])
        dzdv = (1 - fx) * (z[2] - z[0]) + fx * (z[3] - z[1])
        px, py = tile.pixel_size
        if tile.geographic:
            sx, sy = px * M_PER_DEG * np.cos(np.radians(lat)), np.full(len(x), py * M_PER_DEG)
        else:
            sx, sy = np.full(len(x), px), np.full(len(x), py)
        slope = np.hypot(dzdu / sx, dzdv / sy)
        status = np.where(bad, NODATA, OK).astype(np.int8)
        h[bad] = np.nan
        slope[bad] = np.nan
        return h, slope, np.maximum(sx, sy), status

    def _corner_values(self, ti: int, members: list[int], r, cc) -> np.ndarray:
        """Pixel values at (row, col) of tile ``ti``; corners beyond its edge come from a neighbour."""
        tile = self.tiles[ti]
        inside = (r >= 0) & (r < tile.height) & (cc >= 0) & (cc < tile.width)
        out = np.empty(len(r))
        out[inside] = self._pixels(ti, r[inside], cc[inside])
        away = np.flatnonzero(~inside)
        if len(away):
            a, b, c, d, e, f = tile.transform
            px = a * (cc[away] + 0.5) + b * (r[away] + 0.5) + c
            py = d * (cc[away] + 0.5) + e * (r[away] + 0.5) + f
            others = [m for m in members if m != ti]
            owner, pxs = self._locate(others, px, py)
            for oi in np.unique(owner[owner >= 0]):
                sel = np.flatnonzero(owner == oi)
                other = self.tiles[int(oi)]
                oa, ob, oc, od, oe, of = other.transform
                det = oa * oe - ob * od
                col = np.floor((oe * (pxs[sel] - oc) - ob * (py[sel] - of)) / det).astype(np.int64)
                row = np.floor((-od * (pxs[sel] - oc) + oa * (py[sel] - of)) / det).astype(np.int64)
                col = np.clip(col, 0, other.width - 1)
                row = np.clip(row, 0, other.height - 1)
                out[away[sel]] = self._pixels(int(oi), row, col)
            edge = away[owner < 0]  # the outer edge of all coverage: the nearest pixel of this tile
            out[edge] = self._pixels(ti, np.clip(r[edge], 0, tile.height - 1),
                                     np.clip(cc[edge], 0, tile.width - 1))
        return out

    def _pixels(self, ti: int, rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
        """Values (NaN for nodata) of pixels of one tile, read block by block."""
        out = np.empty(len(rows))
        if not len(rows):
            return out
        key = (rows // BLOCK) * (1 << 32) + cols // BLOCK
        order = np.argsort(key, kind="stable")
        ks = key[order]
        cuts = np.flatnonzero(np.diff(ks)) + 1
        for part in np.split(order, cuts):
            br, bc = int(rows[part[0]] // BLOCK), int(cols[part[0]] // BLOCK)
            block = self._block(ti, br, bc)
            out[part] = block[rows[part] - br * BLOCK, cols[part] - bc * BLOCK]
        return out

    def _block(self, ti: int, br: int, bc: int) -> np.ndarray:
        with self._lock:
            key = (ti, br, bc)
            block = self._blocks.get(key)
            if block is not None:
                self._blocks.move_to_end(key)
                return block
            tile = self.tiles[ti]
            ds = self._datasets.get(ti)
            if ds is None:
                with rasterio.Env(**_ENV):
                    ds = self._datasets[ti] = rasterio.open(tile.path)
            window = Window(bc * BLOCK, br * BLOCK, min(BLOCK, tile.width - bc * BLOCK),
                            min(BLOCK, tile.height - br * BLOCK))
            data = ds.read(1, window=window, masked=False).astype(np.float64)
            if tile.nodata is not None:
                data[data == tile.nodata] = np.nan
            data[~np.isfinite(data)] = np.nan
            if tile.scale != 1.0 or tile.offset != 0.0:
                data = data * tile.scale + tile.offset
            self._blocks[key] = data
            if len(self._blocks) > CACHE_BLOCKS:
                self._blocks.popitem(last=False)
            return data
