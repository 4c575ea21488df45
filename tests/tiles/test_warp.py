"""The warp of Web Mercator tiles into the local transverse Mercator: each cell's affine stays within
its stated error bound, checked against positions computed independently with pyproj
(EPSG:3857 → the projection's own transverse Mercator, not through editor.tiles.mercator)."""
import math

import numpy as np
import pytest
from pyproj import CRS, Transformer

from editor.geo.projection import LocalProjection
from editor.tiles.mercator import (
    EARTH_RADIUS_M,
    lonlat_to_world,
    tile_ground_resolution_m,
)
from editor.tiles.warp import MAX_DEPTH, TileWarp, visible_tiles

HALF_WORLD_M = math.pi * EARTH_RADIUS_M


def true_positions(projection: LocalProjection, z: int, x: int, y: int, u: np.ndarray, v: np.ndarray):
    """Tile fractions → metres with pyproj only: Web Mercator metres, then EPSG:3857 → tmerc."""
    n = 2 ** z
    east = ((x + u) / n) * 2 * HALF_WORLD_M - HALF_WORLD_M
    north = HALF_WORLD_M - ((y + v) / n) * 2 * HALF_WORLD_M
    tm = CRS.from_proj4(f"+proj=tmerc +lat_0={projection.lat0} +lon_0={projection.lon0} +k_0=1 +x_0=0 +y_0=0 "
                        "+ellps=WGS84 +units=m +no_defs")
    return Transformer.from_crs("EPSG:3857", tm, always_xy=True).transform(east, north)


CASES = [  # (centre lat, lon), tile offset from the centre (degrees), zoom
    ((47.0, 9.0), (0.05, 0.02), 16), ((47.0, 9.0), (0.3, -0.4), 12), ((47.0, 9.0), (1.0, 2.0), 9),
    ((60.0, 9.0), (0.01, 0.01), 19), ((60.0, 9.0), (0.5, 1.5), 11), ((-33.9, 18.4), (0.0, 0.0), 7),
    ((69.0, 179.9), (0.02, 0.2), 13),  # beside the 180° meridian
]


@pytest.mark.parametrize("centre, offset, z", CASES)
def test_every_cell_is_within_its_bound_and_the_tolerance(centre, offset, z):
    projection = LocalProjection(*centre)
    lat, lon = centre[0] + offset[0], centre[1] + offset[1]
    wx, wy = lonlat_to_world(lon, lat)
    x, y = int(wx * 2 ** z), int(wy * 2 ** z)
    warp = TileWarp(projection, z, x, y)
    rng = np.random.default_rng(z)
    for pixels in (0.5, 0.05):  # metres per screen pixel: at the tile's own scale and enlarged 10 ×
        tolerance = pixels * tile_ground_resolution_m(z, lat)
        cells = warp.cells(tolerance)
        covered = sum((c.u1 - c.u0) * (c.v1 - c.v0) for c in cells)
        assert covered == pytest.approx(1.0)
        for cell in cells:
            assert cell.error_m <= tolerance or (cell.u1 - cell.u0) <= 0.5 ** MAX_DEPTH
            u = rng.uniform(cell.u0, cell.u1, 400)
            v = rng.uniform(cell.v0, cell.v1, 400)
            a, b, c, d, tx, ty = cell.affine
            ex, ey = true_positions(projection, z, x, y, u, v)
            miss = np.hypot(a * u + c * v + tx - ex, b * u + d * v + ty - ey)
            assert miss.max() <= cell.error_m


def test_large_tiles_are_split_and_small_ones_are_not():
    projection = LocalProjection(47.0, 9.0)
    coarse = TileWarp(projection, 6, 33, 22)  # ~400 km across: the Mercator scale changes across it
    assert len(coarse.cells(0.5 * tile_ground_resolution_m(6, 47.0))) > 1
    fine = TileWarp(projection, 15, 17202, 11585)
    assert len(fine.cells(0.05 * tile_ground_resolution_m(15, 47.0))) == 1


def test_visible_tiles_cover_the_view_centre_first():
    projection = LocalProjection(47.0, 9.0)
    rect = (-1500.0, -1000.0, 1500.0, 1000.0)
    z, tiles, _ = visible_tiles(projection, rect, 15)
    assert z == 15
    wx, wy = lonlat_to_world(9.0, 47.0)
    assert tiles[0] == (15, int(wx * 2 ** 15), int(wy * 2 ** 15))
    # Every corner of the view lies in a listed tile.
    lat, lon = projection.to_latlon(np.array([rect[0], rect[2], rect[0], rect[2]]),
                                    np.array([rect[1], rect[1], rect[3], rect[3]]))
    cx, cy = lonlat_to_world(lon, lat)
    for px, py in zip((cx * 2 ** 15).astype(int), (cy * 2 ** 15).astype(int)):
        assert (15, px, py) in tiles
    # A view needing hundreds of tiles takes a coarser zoom instead.
    z_far, many, _ = visible_tiles(projection, (-50_000.0, -50_000.0, 50_000.0, 50_000.0), 17)
    assert z_far < 17 and len(many) <= 160


def test_view_across_the_180th_meridian_unwraps_columns():
    projection = LocalProjection(65.0, 180.0)
    _, tiles, _ = visible_tiles(projection, (-2000.0, -2000.0, 2000.0, 2000.0), 14)
    xs = {t[1] for t in tiles}
    assert min(xs) < 2 ** 14 <= max(xs)  # the columns run on past the world's east edge, without a jump
    assert max(xs) - min(xs) < 10


def test_an_enlarged_coarse_tile_is_refined_only_where_the_view_is():
    projection = LocalProjection(47.005, 9.01)
    _, _, box = visible_tiles(projection, (-650.0, -400.0, 650.0, 400.0), 0)
    warp = TileWarp(projection, 0, 0, 0)  # the whole world in one tile, shown at about 1 m per pixel
    cells = warp.cells(0.5, within=box, max_depth=MAX_DEPTH + 15)
    assert 0 < len(cells) < 50
    covered = sum(max(0.0, min(c.u1, box[2]) - max(c.u0, box[0])) * max(0.0, min(c.v1, box[3]) - max(c.v0, box[1]))
                  for c in cells)
    assert covered == pytest.approx((box[2] - box[0]) * (box[3] - box[1]), rel=1e-9)
    assert all(c.error_m <= 0.5 for c in cells)
