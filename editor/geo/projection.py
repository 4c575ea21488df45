"""A transverse Mercator projection centred on the data, for the map and for processing in metres.

Centring the projection on the track keeps its scale error small (the point
scale factor of transverse Mercator is about 1 + x²/(2R²), x the distance from
the central meridian: 5e-6 at 20 km) and makes tracks that cross the 180°
meridian or pass near a pole continuous in the plane, since the longitude
wrap happens on the far side of the globe from the track.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike
from pyproj import CRS, Transformer


def _circular_mean_deg(angles: np.ndarray) -> float:
    rad = np.radians(angles)
    return float(np.degrees(np.arctan2(np.nanmean(np.sin(rad)), np.nanmean(np.cos(rad)))))


@dataclass
class LocalProjection:
    """Transverse Mercator on WGS84 with origin ``(lat0, lon0)``; x east, y north, metres."""

    lat0: float
    lon0: float
    _forward: Transformer = field(init=False, repr=False)
    _inverse: Transformer = field(init=False, repr=False)

    def __post_init__(self) -> None:
        crs = CRS.from_proj4(f"+proj=tmerc +lat_0={self.lat0!r} +lon_0={self.lon0!r} +k_0=1 "
                             "+x_0=0 +y_0=0 +ellps=WGS84 +units=m +no_defs")
        self._forward = Transformer.from_crs(crs.geodetic_crs, crs, always_xy=True)
        self._inverse = Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True)

    @classmethod
    def centred_on(cls, lat: ArrayLike, lon: ArrayLike) -> "LocalProjection":
        """Centre on the data: mean latitude, circular mean longitude (NaNs ignored)."""
        lat = np.asarray(lat, dtype=np.float64)
        lon = np.asarray(lon, dtype=np.float64)
        if not np.isfinite(lat).any():
            return cls(0.0, 0.0)
        lat0 = float(np.clip(np.nanmean(lat), -89.999, 89.999))
        return cls(round(lat0, 6), round(_circular_mean_deg(lon), 6))

    def to_xy(self, lat: ArrayLike, lon: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """Geographic degrees to planar metres."""
        x, y = self._forward.transform(np.asarray(lon, dtype=np.float64), np.asarray(lat, dtype=np.float64))
        return np.asarray(x, dtype=np.float64), np.asarray(y, dtype=np.float64)

    def to_latlon(self, x: ArrayLike, y: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
        """Planar metres back to geographic degrees (longitude in [-180, 180))."""
        lon, lat = self._inverse.transform(np.asarray(x, dtype=np.float64), np.asarray(y, dtype=np.float64))
        lon = (np.asarray(lon, dtype=np.float64) + 180.0) % 360.0 - 180.0
        return np.asarray(lat, dtype=np.float64), lon
