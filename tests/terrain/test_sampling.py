"""Terrain sampling against outside references: scipy's RegularGridInterpolator, rasterio's own
``sample()`` and pyproj. Every raster is written small into tmp_path."""
from __future__ import annotations

import numpy as np
import pytest
import rasterio
from pyproj import Transformer
from scipy.interpolate import RegularGridInterpolator
from terrain_rasters import write_raster

from editor.terrain import NODATA, OK, OUTSIDE, Terrain, TerrainFileError


def _surface(lat, lon):
    return 500 + 80 * np.sin(lat * 40) * np.cos(lon * 30) + 10 * lat


def _grid(west, north, res, shape):
    rows, cols = shape
    lon_c = west + (np.arange(cols) + 0.5) * res      # pixel centres
    lat_c = north - (np.arange(rows) + 0.5) * res
    return lat_c, lon_c


def test_bilinear_equals_scipy_regular_grid_interpolator(tmp_path):
    # reference: scipy.interpolate.RegularGridInterpolator (method="linear") on the pixel-centre grid
    west, north, res = 10.0, 47.0, 0.01
    lat_c, lon_c = _grid(west, north, res, (40, 50))
    data = _surface(lat_c[:, None], lon_c[None, :])
    path = write_raster(tmp_path / "a.tif", data, west=west, north=north, xres=res, yres=res, dtype="float64")
    rng = np.random.default_rng(1)
    lat = rng.uniform(lat_c[-1], lat_c[0], 500)
    lon = rng.uniform(lon_c[0], lon_c[-1], 500)
    got = Terrain.open([path]).sample(lat, lon)
    ref = RegularGridInterpolator((lat_c[::-1], lon_c), data[::-1], method="linear")(np.c_[lat, lon])
    assert (got.status == OK).all()
    np.testing.assert_allclose(got.height, ref, rtol=0, atol=1e-9)


def test_pixel_centres_equal_rasterio_sample(tmp_path):
    # reference: rasterio's DatasetReader.sample() (nearest pixel) at pixel centres
    data = np.arange(12 * 9, dtype=float).reshape(12, 9) * 1.5 - 20
    path = write_raster(tmp_path / "b.tif", data, west=5.0, north=45.0, xres=0.1, yres=0.05)
    lat_c, lon_c = 45.0 - (np.arange(12) + 0.5) * 0.05, 5.0 + (np.arange(9) + 0.5) * 0.1
    lat, lon = (a.ravel() for a in np.meshgrid(lat_c, lon_c, indexing="ij"))
    with rasterio.open(path) as ds:
        ref = np.array([v[0] for v in ds.sample(list(zip(lon, lat)))], dtype=float)
    np.testing.assert_allclose(Terrain.open([path]).sample(lat, lon).height, ref, atol=1e-9)


@pytest.mark.parametrize("point", [False, True])
def test_pixel_is_point_and_area_both_sample_centres(tmp_path, point):
    # A pixel-is-point raster written by GDAL keeps the same georeferenced centres (GDAL shifts the
    # tie point by half a pixel; GDAL raster data model docs, "AREA_OR_POINT"): the value of a pixel is
    # found at its centre in both cases, and rasterio's sample() agrees.
    data = np.arange(20, dtype=float).reshape(4, 5)
    path = write_raster(tmp_path / "p.tif", data, west=1.0, north=2.0, xres=0.5, yres=0.5, point=point)
    terrain = Terrain.open([path])
    assert terrain.tiles[0].pixel_is_point is point
    with rasterio.open(path) as ds:
        centre = ds.xy(2, 3)  # (x, y) of the centre of row 2, col 3
        ref = next(ds.sample([centre]))[0]
    got = terrain.sample(np.array([centre[1]]), np.array([centre[0]])).height[0]
    assert got == pytest.approx(ref) == data[2, 3]


def test_nodata_is_reported_not_interpolated(tmp_path):
    data = np.full((6, 6), 100.0)
    data[2, 3] = -9999
    path = write_raster(tmp_path / "n.tif", data, west=0.0, north=6.0, xres=1.0, yres=1.0, nodata=-9999)
    lat_c, lon_c = 6.0 - 2.5, 3.5          # the nodata pixel's centre
    s = Terrain.open([path]).sample(np.array([lat_c, lat_c - 0.3, 0.5, 50.0]),
                                    np.array([lon_c, lon_c + 0.2, 0.5, 50.0]))
    assert list(s.status) == [NODATA, NODATA, OK, OUTSIDE]
    assert np.isnan(s.height[:2]).all() and np.isnan(s.height[3]) and s.height[2] == 100.0
    assert "outside" in s.report() and "holes" in s.report()


def test_across_tile_edge_uses_the_neighbour(tmp_path):
    # Two tiles side by side cut from one grid give the same heights as the one grid (scipy reference).
    res, west, north = 0.01, 20.0, 50.0
    lat_c, lon_c = _grid(west, north, res, (30, 60))
    data = _surface(lat_c[:, None], lon_c[None, :])
    left = write_raster(tmp_path / "l.tif", data[:, :30], west=west, north=north, xres=res, yres=res,
                        dtype="float64")
    right = write_raster(tmp_path / "r.tif", data[:, 30:], west=west + 30 * res, north=north, xres=res,
                         yres=res, dtype="float64")
    lat = np.linspace(lat_c[-1], lat_c[0], 200)
    lon = west + 30 * res + np.linspace(-0.006, 0.006, 200)   # straddling the shared edge
    got = Terrain.open([tmp_path]).sample(lat, lon)
    ref = RegularGridInterpolator((lat_c[::-1], lon_c), data[::-1])(np.c_[lat, lon])
    np.testing.assert_allclose(got.height, ref, atol=1e-9)
    assert sorted(t.path for t in Terrain.open([tmp_path]).tiles) == sorted([left, right])


def test_across_the_180th_meridian(tmp_path):
    # One grid spanning 179.7 E .. 179.7 W cut into an east tile (ends at 180) and a west tile
    # (starts at -180); scipy on the unwrapped grid is the reference.
    res = 0.01
    lat_c, lon_c = _grid(179.7, -16.0, res, (20, 60))          # lon 179.705 .. 180.295
    data = _surface(lat_c[:, None], lon_c[None, :])
    write_raster(tmp_path / "e.tif", data[:, :30], west=179.7, north=-16.0, xres=res, yres=res, dtype="float64")
    write_raster(tmp_path / "w.tif", data[:, 30:], west=-180.0, north=-16.0, xres=res, yres=res, dtype="float64")
    lat = np.linspace(lat_c[-1], lat_c[0], 101)
    lon_unwrapped = np.linspace(179.95, 180.05, 101)
    lon = (lon_unwrapped + 180) % 360 - 180
    got = Terrain.open([tmp_path]).sample(lat, lon)
    ref = RegularGridInterpolator((lat_c[::-1], lon_c), data[::-1])(np.c_[lat, lon_unwrapped])
    np.testing.assert_allclose(got.height, ref, atol=1e-9)


def test_utm_raster_reprojected_with_pyproj(tmp_path):
    # reference: pyproj Transformer EPSG:4326 -> EPSG:32632 (UTM 32N), then scipy on the metre grid
    res, west, north = 30.0, 500_000.0, 5_200_000.0
    ys = north - (np.arange(40) + 0.5) * res
    xs = west + (np.arange(50) + 0.5) * res
    data = 300 + 0.05 * (xs[None, :] - west) + 0.02 * (north - ys[:, None]) + 5 * np.sin(xs[None, :] / 90)
    path = write_raster(tmp_path / "utm.tif", data, west=west, north=north, xres=res, yres=res,
                        crs="EPSG:32632", dtype="float64")
    back = Transformer.from_crs("EPSG:32632", "EPSG:4326", always_xy=True)
    rng = np.random.default_rng(3)
    px, py = rng.uniform(xs[0], xs[-1], 300), rng.uniform(ys[-1], ys[0], 300)
    lon, lat = back.transform(px, py)
    got = Terrain.open([path]).sample(lat, lon)
    fwd_x, fwd_y = Transformer.from_crs("EPSG:4326", "EPSG:32632", always_xy=True).transform(lon, lat)
    ref = RegularGridInterpolator((ys[::-1], xs), data[::-1])(np.c_[fwd_y, fwd_x])
    np.testing.assert_allclose(got.height, ref, atol=1e-6)
    np.testing.assert_allclose(fwd_x, px, atol=1e-6)   # the round trip itself (pyproj)
    assert got.pixel_m[0] == pytest.approx(30.0)


def test_vertical_crs_is_reported(tmp_path):
    # EPSG:9518 = WGS 84 + EGM2008 height (compound); the vertical part is named to the user
    path = write_raster(tmp_path / "v.tif", np.ones((3, 3)), west=0, north=3, xres=1, yres=1, crs="EPSG:9518")
    terrain = Terrain.open([path])
    assert "EGM2008" in terrain.vertical_reference()
    plain = Terrain.open([write_raster(tmp_path / "w.tif", np.ones((3, 3)), west=0, north=3, xres=1, yres=1)])
    assert "mean sea level" in plain.vertical_reference()


def test_bad_files_are_named(tmp_path):
    bad = tmp_path / "broken.tif"
    bad.write_bytes(b"not a tiff")
    with pytest.raises(TerrainFileError, match="broken.tif"):
        Terrain.open([bad])
    with pytest.raises(TerrainFileError, match="nothing-here"):
        Terrain.open([tmp_path / "nothing-here"])


def test_band_scale_and_offset_are_applied(tmp_path):
    # GDAL raster data model: "unscaled value = raw * scale + offset" for a band with scale/offset set
    raw = np.arange(16, dtype="int16").reshape(4, 4) * 7
    path = write_raster(tmp_path / "s.tif", raw, west=0.0, north=4.0, xres=1.0, yres=1.0, dtype="int16")
    with rasterio.open(path, "r+") as ds:
        ds.scales = (0.1,)
        ds.offsets = (100.0,)
    got = Terrain.open([path]).sample(np.array([4.0 - 1.5]), np.array([2.5])).height[0]
    assert got == pytest.approx(raw[1, 2] * 0.1 + 100.0)
