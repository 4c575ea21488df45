"""Hillshade (Horn's method) against the published formula, a worked example, and a GDAL-free plane."""
from __future__ import annotations

import numpy as np
import pytest
from terrain_rasters import write_raster

from editor.geo.projection import LocalProjection
from editor.terrain import Terrain
from editor.terrain.relief import hillshade, horn_gradient, relief_image


def test_worked_example_3x3():
    # Worked example of ESRI's "How Hillshade works" (ArcGIS documentation; values recalled from
    # memory, not fetched): cell size 5 m, z-factor 1, azimuth 315, altitude 45 ->
    # dz/dx = 3.125, dz/dy = -0.525, slope = 1.26511 rad, aspect = 3.3081 rad, hillshade 154 (of 255).
    # (We recall an unrounded 153.82 printed beside it, but the formula with the page's own rounded
    # angles gives 154.03, so only the integer is checked.)
    z = np.array([[2450, 2461, 2483],
                  [2452, 2461, 2483],
                  [2447, 2455, 2477]], dtype=float)
    dzdx, dzdy = horn_gradient(z, 5.0, 5.0)
    assert dzdx[0, 0] == pytest.approx(3.125)
    assert dzdy[0, 0] == pytest.approx(-0.525)
    assert np.arctan(np.hypot(dzdx, dzdy))[0, 0] == pytest.approx(1.26511, abs=1e-5)
    aspect = np.arctan2(dzdy, -dzdx)[0, 0] + 2 * np.pi
    assert aspect == pytest.approx(3.3081, abs=1e-4)
    assert round(hillshade(z, 5.0, 5.0)[0, 0] * 255) == 154


def test_plane_matches_lambert_closed_form():
    # Horn (1981): for a plane Horn's 3x3 gradient is exact, and the reflectance of a Lambertian
    # surface is the cosine of the angle between its normal and the light: n . s, computed here
    # directly from vectors (east, north, up) with the light from azimuth 315 at altitude 45.
    rng = np.random.default_rng(2)
    for _ in range(20):
        gx, gy = rng.uniform(-1.5, 1.5, 2)                       # dz/d(east), dz/d(north)
        east, north = np.meshgrid(np.arange(3) * 10.0, (2 - np.arange(3)) * 10.0)  # rows north to south
        z = 100 + gx * east + gy * north
        normal = np.array([-gx, -gy, 1.0]) / np.sqrt(gx * gx + gy * gy + 1)
        az, alt = np.radians(315.0), np.radians(45.0)
        light = np.array([np.sin(az) * np.cos(alt), np.cos(az) * np.cos(alt), np.sin(alt)])
        assert hillshade(z, 10.0, 10.0)[0, 0] == pytest.approx(max(normal @ light, 0.0), abs=1e-12)


def test_relief_image_of_a_raster(tmp_path):
    # A ridge running north-south: its west face (towards the light from the north-west) is lighter
    # than its east face; outside the raster the picture is transparent.
    res = 1.0 / 3600
    n = 120
    col = np.arange(n)
    data = np.tile(500 - 1.5 * np.abs(col - n / 2) * 30, (n, 1))
    path = write_raster(tmp_path / "r.tif", data, west=7.0, north=46.0 + n * res, xres=res, yres=res)
    terrain = Terrain.open([path])
    proj = LocalProjection(46.0 + n * res / 2, 7.0 + n * res / 2)
    half = n * 30 * 0.35
    img = relief_image(terrain, proj, -half, -half, half, half, 60, 60)
    grey = img.rgba[..., 0].astype(float)
    assert grey[:, 10:25].mean() > grey[:, 35:50].mean() + 50
    assert (img.rgba[..., 3] > 0).all()
    far = relief_image(terrain, proj, 50_000, 50_000, 52_000, 52_000, 8, 8)
    assert (far.rgba[..., 3] == 0).all()
