"""The demo rides' invented landscape as a terrain raster (GeoTIFF, 1 arc-second, WGS84).

The demo truth is a path with an elevation *profile* along it (``generate.build_truth``), not a
surface, so the landscape is built around the paths: at a place ``p`` each scenario's path offers
the true elevation at its nearest point plus a valley side that rises with the distance ``d`` from
the path, ``rise(d) = 70 (1 - exp(-(d / 300)^2)) + ripples`` (ripples also vanish on the path), and
the scenarios are blended with weights ``1 / max(d, 1 m)^4``, so the raster equals each truth
profile along its own path (up to decimetre storage and the path's distance from pixel centres).
Nearest-point heights jump where the nearest part of the path changes (between switchback legs), so
away from the paths the surface is replaced by its Gaussian blur (sigma 150 m), blending in over
``exp(-(d / 80 m)^2)``: exact on the paths, smooth hillsides between them.
Over the demo tunnel the ground rises into a ridge (up to 140 m above the rail bed, zero at the
portals): terrain is the ground, not the tunnel.

Written with rasterio, DEFLATE-compressed int16 decimetres (GDAL scale 0.1: whole metres would show
as terraces in the shaded relief), nodata -32768. Fixed inputs, so the file is
byte-identical between runs on one platform.
"""
from __future__ import annotations

import math

import numpy as np
import rasterio
from rasterio.transform import from_origin
from scipy.ndimage import gaussian_filter
from scipy.spatial import cKDTree

ARCSEC = 1.0 / 3600.0
MARGIN_M = 1500.0
M_PER_DEG = 111_195.0


def _rise(d: np.ndarray, east: np.ndarray, north: np.ndarray) -> np.ndarray:
    ripples = 12.0 * np.sin(east / 410.0) * np.cos(north / 530.0) + 6.0 * np.sin((east + north) / 170.0)
    return 70.0 * (1.0 - np.exp(-(d / 300.0) ** 2)) + ripples * (1.0 - np.exp(-(d / 120.0) ** 2))


def write_terrain(path, paths: list[dict]) -> None:
    """``paths``: per scenario ``lat``, ``lon``, ``ele`` (dense truth), ``ground_extra`` (metres of
    ground above the path, e.g. over a tunnel). Writes the raster covering all of them."""
    lat_all = np.concatenate([p["lat"] for p in paths])
    lon_all = np.concatenate([p["lon"] for p in paths])
    lat0 = float(np.mean(lat_all))
    m_lon = M_PER_DEG * math.cos(math.radians(lat0))
    south = math.floor((lat_all.min() - MARGIN_M / M_PER_DEG) * 3600) / 3600
    north = math.ceil((lat_all.max() + MARGIN_M / M_PER_DEG) * 3600) / 3600
    west = math.floor((lon_all.min() - MARGIN_M / m_lon) * 3600) / 3600
    east = math.ceil((lon_all.max() + MARGIN_M / m_lon) * 3600) / 3600
    rows, cols = round((north - south) * 3600), round((east - west) * 3600)
    lat_c = north - (np.arange(rows) + 0.5) * ARCSEC
    lon_c = west + (np.arange(cols) + 0.5) * ARCSEC
    gy = ((lat_c - lat0) * M_PER_DEG)[:, None] * np.ones((1, cols))
    gx = np.ones((rows, 1)) * ((lon_c - west) * m_lon)[None, :]
    total = np.zeros((rows, cols))
    weight = np.zeros((rows, cols))
    nearest = np.full((rows, cols), np.inf)
    for p in paths:
        px = (p["lon"] - west) * m_lon
        py = (p["lat"] - lat0) * M_PER_DEG
        d, i = cKDTree(np.column_stack([px, py])).query(np.column_stack([gx.ravel(), gy.ravel()]))
        d, i = d.reshape(rows, cols), i.reshape(rows, cols)
        w = 1.0 / np.maximum(d, 1.0) ** 4
        total += w * (p["ele"][i] + p["ground_extra"][i] + _rise(d, gx, gy))
        weight += w
        nearest = np.minimum(nearest, d)
    exact = total / weight
    near = np.exp(-(nearest / 80.0) ** 2)
    surface = near * exact + (1.0 - near) * gaussian_filter(exact, sigma=5.0, mode="nearest")
    heights = np.rint(surface * 10.0).astype("int16")
    with rasterio.open(path, "w", driver="GTiff", width=cols, height=rows, count=1, dtype="int16",
                       crs="EPSG:4326", transform=from_origin(west, north, ARCSEC, ARCSEC), nodata=-32768,
                       compress="deflate", predictor=2, tiled=True, blockxsize=256, blockysize=256) as ds:
        ds.write(heights, 1)
        ds.scales = (0.1,)
        ds.offsets = (0.0,)
        ds.units = ("metre",)
        ds.update_tags(AREA_OR_POINT="Area", DESCRIPTION="Invented demo landscape (Trackwright demo data)")
