"""Web Mercator tile arithmetic against pyproj's EPSG:3857 (the reference library) and the published
scheme's known values."""
import math

import numpy as np
import pytest
from pyproj import Transformer

from editor.tiles.mercator import (
    EARTH_RADIUS_M,
    lonlat_to_world,
    tile_ground_resolution_m,
    tile_range,
    tms_row,
    world_to_lonlat,
    wrap_x,
    zoom_for_resolution,
)

HALF_WORLD_M = math.pi * EARTH_RADIUS_M


def test_world_fractions_match_pyproj_epsg3857():
    # Reference: pyproj EPSG:4326 → EPSG:3857; world fraction X = (E + πR) / 2πR, Y = (πR − N) / 2πR.
    rng = np.random.default_rng(3)
    lon = rng.uniform(-180, 180, 500)
    lat = rng.uniform(-85, 85, 500)
    east, north = Transformer.from_crs("EPSG:4326", "EPSG:3857", always_xy=True).transform(lon, lat)
    wx, wy = lonlat_to_world(lon, lat)
    np.testing.assert_allclose(wx, (east + HALF_WORLD_M) / (2 * HALF_WORLD_M), atol=1e-12)
    np.testing.assert_allclose(wy, (HALF_WORLD_M - north) / (2 * HALF_WORLD_M), atol=1e-12)
    back_lon, back_lat = world_to_lonlat(wx, wy)
    np.testing.assert_allclose(back_lon, lon, atol=1e-9)
    np.testing.assert_allclose(back_lat, lat, atol=1e-9)


def test_square_world_edge_is_85_0511():
    # The scheme's latitude limit, atan(sinh(π)) = 85.0511287798° (common practice).
    _, wy = lonlat_to_world([0.0, 0.0], [85.0511287798, -85.0511287798])
    np.testing.assert_allclose(wy, [0.0, 1.0], atol=1e-10)


def test_ground_resolution_published_value():
    # 156543.03 m per pixel at zoom 0 on the equator (2πR / 256, common practice; recalled from memory).
    assert tile_ground_resolution_m(0, 0.0) == pytest.approx(156543.03, abs=0.01)
    # Mercator stretches by sec φ: half the ground per pixel at 60°.
    assert tile_ground_resolution_m(10, 60.0) == pytest.approx(tile_ground_resolution_m(0, 0.0) / 1024 / 2, rel=1e-12)


@pytest.mark.parametrize("lat", [0.0, 47.0, 60.0, -33.0])
def test_chosen_zoom_has_tile_pixels_no_larger_than_screen_pixels(lat):
    for mpp in np.geomspace(0.05, 5000, 60):
        z = zoom_for_resolution(mpp, lat, 0, 22)
        assert tile_ground_resolution_m(z, lat) <= 1.1 * mpp * (1 + 1e-12)
        if z > 0:  # and the next coarser level would be too coarse: no needless fetching
            assert tile_ground_resolution_m(z - 1, lat) > 1.1 * mpp
    assert zoom_for_resolution(0.001, 47.0, 3, 17) == 17
    assert zoom_for_resolution(1e7, 47.0, 3, 17) == 3
    # A screen with two device pixels per logical pixel wants one level more.
    assert zoom_for_resolution(10.0, 47.0, device_ratio=2.0) == zoom_for_resolution(5.0, 47.0)


def test_tile_range_wrap_and_tms_row():
    assert tile_range(np.array([0.26, 0.49]), np.array([0.5, 0.74]), 2) == (1, 1, 2, 2)
    assert tile_range(np.array([-0.1, 0.1]), np.array([-0.5, 1.5]), 1) == (-1, 0, 0, 1)
    assert wrap_x(-1, 3) == 7 and wrap_x(8, 3) == 0
    # MBTiles 1.3 specification: rows counted from the south (TMS), so row = 2**z − 1 − y.
    assert tms_row(0, 3) == 7 and tms_row(7, 3) == 0
