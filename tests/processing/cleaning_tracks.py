"""Invented synthetic tracks with known truth for the cleaning-tool tests (planar metres -> WGS84)."""
from __future__ import annotations

import numpy as np

from editor.geo.projection import LocalProjection
from editor.model import PointTable, Track

#: Where the invented tracks lie (an arbitrary mid-latitude origin).
ORIGIN = LocalProjection(46.5, 7.5)
T0 = np.datetime64("2026-06-01T06:00:00", "ns")


def track_from_xy(x, y, ele=None, t_s=None, starts=(0,), extra=None) -> Track:
    """A track whose points sit at planar ``x``/``y`` metres around :data:`ORIGIN`, times in seconds."""
    lat, lon = ORIGIN.to_latlon(np.asarray(x, float), np.asarray(y, float))
    time = None if t_s is None else T0 + (np.asarray(t_s, float) * 1e9).astype("timedelta64[ns]")
    pts = PointTable.from_columns(lat, lon, ele=ele, time=time, extra=extra)
    return Track(pts, list(starts), segment_extra=[None] * len(starts))


def xy_of(track: Track) -> tuple[np.ndarray, np.ndarray]:
    """Planar metres of a track's points around :data:`ORIGIN`."""
    return ORIGIN.to_xy(track.points.lat, track.points.lon)


def wandering_path(n: int, speed_mps: float, dt_s: float = 1.0, seed: int = 0, turn_sd: float = 0.03):
    """A smooth invented route: constant speed, heading wandering slowly. Returns t, x, y (truth)."""
    rng = np.random.default_rng(seed)
    heading = np.cumsum(rng.normal(0.0, turn_sd, n))
    step = speed_mps * dt_s
    x = np.concatenate(([0.0], np.cumsum(np.cos(heading[:-1]) * step)))
    y = np.concatenate(([0.0], np.cumsum(np.sin(heading[:-1]) * step)))
    return np.arange(n) * dt_s, x, y


def hill_profile(x_along: np.ndarray, height: float = 80.0, length: float = 3000.0, base: float = 600.0):
    """Elevation of an invented route with smooth rolling hills (metres)."""
    phase = 2 * np.pi * x_along / length
    return base + height * np.sin(phase) + 0.3 * height * np.sin(phase / 0.37)
