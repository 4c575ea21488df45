"""Invented rides on their own invented 1-arc-second terrain tiles, for the held-out style score.

Each ride gets a landscape (a sum of random plane waves, wavelengths 250 m to 12 km), a true path
(a wandering road at riding speed, 1 s fixes), the true elevation (the landscape along the path),
a recording (correlated position error; satellite elevation with slow wander, or a barometer with
offset and drift; 1 m or 0.1 m steps) and terrain tiles of 0.04 x 0.04 degrees at 1 arc-second that
cover the ride (several per ride), whose heights are the landscape at pixel centres plus a
correlated raster error, stored as whole metres like common 1-arc-second models. Used by
tests/terrain/test_elevation_score.py (few rides) and tests/bench/score_elevation.py (many).
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import rasterio
from rasterio.transform import from_origin

from editor.model.document import Track
from editor.model.points import PointTable

ARCSEC = 1.0 / 3600.0
TILE_DEG = 0.04
M_PER_DEG = 111_195.0


@dataclass
class Ride:
    track: Track
    true_track: Track
    tiles: list[str]
    kind: str


class Landscape:
    """Heights (m) as a sum of plane waves in local metres around (lat0, lon0)."""

    def __init__(self, rng: np.random.Generator, lat0: float, lon0: float, relief_m: float):
        self.lat0, self.lon0 = lat0, lon0
        k = 60
        wavelength = np.exp(rng.uniform(np.log(250.0), np.log(12_000.0), k))
        amp = wavelength ** 1.1
        self.amp = amp / np.sqrt((amp ** 2).sum() / 2) * relief_m
        angle = rng.uniform(0, 2 * np.pi, k)
        self.kx, self.ky = 2 * np.pi / wavelength * np.cos(angle), 2 * np.pi / wavelength * np.sin(angle)
        self.phase = rng.uniform(0, 2 * np.pi, k)
        self.base = rng.uniform(200, 1500)

    def xy(self, lat, lon):
        dlon = (np.asarray(lon) - self.lon0 + 180.0) % 360.0 - 180.0
        return dlon * M_PER_DEG * np.cos(np.radians(self.lat0)), (np.asarray(lat) - self.lat0) * M_PER_DEG

    def height_xy(self, x, y):
        x, y = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float))
        out = np.full(x.shape, self.base)
        for a, kx, ky, ph in zip(self.amp, self.kx, self.ky, self.phase):
            out += a * np.sin(kx * x + ky * y + ph)
        return out

    def height(self, lat, lon):
        return self.height_xy(*self.xy(lat, lon))


def _ou(rng, n, tau, sigma, dt=1.0):
    a = np.exp(-dt / tau)
    e = rng.standard_normal(n) * sigma * np.sqrt(1 - a * a)
    out = np.empty(n)
    out[0] = rng.standard_normal() * sigma
    for i in range(1, n):
        out[i] = a * out[i - 1] + e[i]
    return out


def _path(rng, land: Landscape, duration_s: int, speed: float):
    """A road that wanders and prefers gentle grades (riders' roads wind up hills)."""
    x, y = [0.0], [0.0]
    heading = rng.uniform(0, 2 * np.pi)
    turn = 0.0
    for _ in range(duration_s):
        turn = 0.97 * turn + rng.normal(0, 0.01)
        # steer towards the flatter of left/right when the road gets steep
        ahead = [land.height_xy(x[-1] + 30 * np.cos(heading + d), y[-1] + 30 * np.sin(heading + d)) - land.height_xy(x[-1], y[-1])
                 for d in (-0.3, 0.3)]
        steer = 0.02 * np.sign(abs(ahead[1]) - abs(ahead[0])) * -1
        heading += turn + steer
        x.append(x[-1] + speed * np.cos(heading))
        y.append(y[-1] + speed * np.sin(heading))
    return np.array(x), np.array(y)


def _track(lat, lon, ele, t_s) -> Track:
    time = np.datetime64("2026-06-01T08:00:00", "ns") + (np.asarray(t_s) * 1e9).astype("timedelta64[ns]")
    return Track(PointTable.from_columns(lat, lon, ele=ele, time=time), [0], segment_extra=[None])


def write_tiles(land: Landscape, lat, lon, folder: Path, rng) -> list[str]:
    """1-arc-second tiles of TILE_DEG degrees covering the points (with a margin)."""
    folder.mkdir(parents=True, exist_ok=True)
    lat_i = np.floor(lat / TILE_DEG).astype(int)
    lon_i = np.floor(lon / TILE_DEG).astype(int)
    keys = set(zip(lat_i.tolist(), lon_i.tolist()))
    margin = set()
    for a, b in keys:
        for da in (-1, 0, 1):
            for db in (-1, 0, 1):
                margin.add((a + da, b + db))
    n = round(TILE_DEG / ARCSEC)
    paths = []
    for a, b in sorted(margin):
        south, west = a * TILE_DEG, b * TILE_DEG
        if west >= 180.0 - 1e-9 or west < -180.0 - 1e-9:
            continue
        rows_lat = south + TILE_DEG - (np.arange(n) + 0.5) * ARCSEC
        cols_lon = west + (np.arange(n) + 0.5) * ARCSEC
        h = land.height(rows_lat[:, None], cols_lon[None, :])
        err = rng.standard_normal((n // 6 + 2, n // 6 + 2)) * 1.2           # raster error, ~180 m blobs
        h = h + np.kron(err, np.ones((6, 6)))[:n, :n] + rng.standard_normal((n, n)) * 0.5
        path = folder / f"tile_{a}_{b}.tif"
        with rasterio.open(path, "w", driver="GTiff", width=n, height=n, count=1, dtype="int16",
                           crs="EPSG:4326", nodata=-32768,
                           transform=from_origin(west, south + TILE_DEG, ARCSEC, ARCSEC)) as ds:
            ds.write(np.rint(h).astype("int16"), 1)
        paths.append(str(path))
    return paths


#: Where the simulated rides are: mid-latitudes, a tropical island, one across the 180th meridian.
PLACES = ((46.31, 7.13), (-33.52, 150.21), (-16.52, 179.97), (61.2, -149.7), (36.1, -5.4), (44.6, 6.0))


def make_ride(seed: int, folder: Path, place: tuple[float, float] | None = None,
              duration_s: int | None = None) -> Ride:
    """One simulated ride (see module notes); ``seed`` picks everything, ``place`` the origin."""
    rng = np.random.default_rng(seed)
    lat0, lon0 = place if place is not None else PLACES[seed % len(PLACES)]
    land = Landscape(rng, lat0, lon0, relief_m=rng.choice([25.0, 60.0, 120.0, 220.0]))
    duration = int(rng.uniform(2400, 5400))
    duration = duration if duration_s is None else duration_s
    speed = rng.uniform(5.0, 9.0)
    x, y = _path(rng, land, duration, speed)
    if abs(lon0) > 179.0:  # centre the ride on the 180th meridian so that it crosses it
        lon0 = 180.0 - float(np.mean(x)) / (M_PER_DEG * np.cos(np.radians(lat0)))
        land.lon0 = lon0
    true_ele = land.height_xy(x, y)
    def to_lat(yy):
        return lat0 + yy / M_PER_DEG
    def to_lon(xx):
        return (lon0 + xx / (M_PER_DEG * np.cos(np.radians(lat0))) + 180.0) % 360.0 - 180.0
    t = np.arange(len(x), dtype=float)
    # position error: correlated wander plus jitter (metres per axis; GPS SPS / common practice)
    ex = _ou(rng, len(x), 30.0, 2.5) + rng.standard_normal(len(x)) * 1.2
    ey = _ou(rng, len(x), 30.0, 2.5) + rng.standard_normal(len(x)) * 1.2
    kind = "barometer" if seed % 2 else "satellite"
    if kind == "satellite":   # slow wander of several metres and jitter, whole metres
        ele = np.rint(true_ele + _ou(rng, len(x), 150.0, 6.0) + rng.standard_normal(len(x)) * 1.0)
    else:                     # offset, weather drift and fine steps
        drift = rng.uniform(-15, 15) + np.cumsum(rng.standard_normal(len(x))) * 0.05 + t / 3600 * rng.uniform(-8, 8)
        ele = np.round(true_ele + drift + rng.standard_normal(len(x)) * 0.25, 1)
    lat, lon = to_lat(y + ey), to_lon(x + ex)
    tiles = write_tiles(land, to_lat(y), to_lon(x), folder, rng)
    return Ride(track=_track(lat, lon, ele, t), true_track=_track(to_lat(y), to_lon(x), true_ele, t),
                tiles=tiles, kind=kind)
