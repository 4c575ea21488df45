"""Web Mercator tile arithmetic (the spherical "slippy map" scheme: EPSG:3857, 256-pixel tiles).

Tile ``(z, x, y)`` covers ``1 / 2**z`` of the world in each direction; x grows east from the
180° meridian, y grows south from the top edge at about 85.0511° N. ``X, Y`` below are world
fractions in [0, 1). The formulas are the published ones of the scheme (common practice); the tests
check them against pyproj's EPSG:3857.
"""
from __future__ import annotations

import math

import numpy as np

#: Sphere radius of Web Mercator (metres): the WGS84 semi-major axis.
EARTH_RADIUS_M = 6378137.0
#: Pixels along a tile's edge.
TILE_PX = 256
#: Highest latitude Web Mercator shows (the square world's edge), degrees.
MAX_LATITUDE = math.degrees(math.atan(math.sinh(math.pi)))


def lonlat_to_world(lon, lat) -> tuple[np.ndarray, np.ndarray]:
    """Degrees to world fractions ``(X, Y)``; latitudes are clipped to the square world."""
    lon = np.asarray(lon, dtype=np.float64)
    lat = np.clip(np.asarray(lat, dtype=np.float64), -MAX_LATITUDE, MAX_LATITUDE)
    wx = (lon + 180.0) / 360.0
    wy = (1.0 - np.arcsinh(np.tan(np.radians(lat))) / math.pi) / 2.0
    return wx, wy


def world_to_lonlat(wx, wy) -> tuple[np.ndarray, np.ndarray]:
    """World fractions back to degrees (X outside [0, 1) gives longitudes outside ±180°, unwrapped)."""
    wx = np.asarray(wx, dtype=np.float64)
    wy = np.asarray(wy, dtype=np.float64)
    lon = wx * 360.0 - 180.0
    lat = np.degrees(np.arctan(np.sinh(math.pi * (1.0 - 2.0 * wy))))
    return lon, lat


def tile_ground_resolution_m(z: int, lat: float) -> float:
    """Metres on the ground per tile pixel at zoom ``z`` and latitude ``lat`` (Mercator scale sec φ)."""
    return 2 * math.pi * EARTH_RADIUS_M * math.cos(math.radians(lat)) / (TILE_PX * 2 ** z)


def zoom_for_resolution(metres_per_px: float, lat: float, min_zoom: int = 0, max_zoom: int = 19,
                        device_ratio: float = 1.0) -> int:
    """The tile zoom whose pixels are no larger than a screen pixel (``metres_per_px`` / ``device_ratio``).

    Taking the next finer level as soon as a tile pixel would be stretched by more than 10 % keeps
    text sharp without fetching four times the tiles for a few per cent of magnification.
    """
    target = metres_per_px / max(device_ratio, 1e-9)
    if not (target > 0 and math.isfinite(target)):
        return min_zoom
    exact = math.log2(2 * math.pi * EARTH_RADIUS_M * max(math.cos(math.radians(lat)), 1e-9) / (TILE_PX * target))
    z = math.ceil(exact - math.log2(1.1))
    return int(min(max(z, min_zoom), max_zoom))


def tile_range(wx: np.ndarray, wy: np.ndarray, z: int) -> tuple[int, int, int, int]:
    """Tiles at zoom ``z`` covering world points ``(wx, wy)``: ``(x0, x1, y0, y1)`` inclusive.

    x is not wrapped (a view across the 180° meridian gives x < 0 or x ≥ 2**z; see :func:`wrap_x`),
    y is clipped to the world.
    """
    n = 2 ** z
    x0 = int(math.floor(float(np.min(wx)) * n))
    x1 = int(math.floor(float(np.max(wx)) * n))
    y0 = max(int(math.floor(float(np.min(wy)) * n)), 0)
    y1 = min(int(math.floor(float(np.max(wy)) * n)), n - 1)
    return x0, x1, y0, y1


def wrap_x(x: int, z: int) -> int:
    """The stored column of an unwrapped tile column (the world repeats every 2**z tiles east-west)."""
    return x % (2 ** z)


def tms_row(y: int, z: int) -> int:
    """Row of tile ``y`` in the TMS numbering (counted from the south), used by MBTiles."""
    return 2 ** z - 1 - y
