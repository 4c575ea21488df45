"""Shaded relief (hillshade) of the terrain for the map, computed in the map's own projection. Qt-free.

Horn's method (Horn 1981, "Hill shading and the reflectance map", Proc. IEEE 69(1):14-47): the
gradient at a cell from its 3x3 neighbourhood ``a b c / d e f / g h i`` (rows north to south),

    dz/dx = ((c + 2f + i) - (a + 2d + g)) / (8 dx)        (east)
    dz/dy = ((g + 2h + i) - (a + 2b + c)) / (8 dy)        (south)

and the brightness of a Lambertian surface lit from azimuth ``A`` (clockwise from north) at
altitude ``H``::

    shade = cos(Z) cos(S) + sin(Z) sin(S) cos(A_math - aspect)

with ``Z = 90 - H`` the zenith, ``S = atan(|grad|)`` the slope, ``aspect = atan2(dz/dy, -dz/dx)`` and
``A_math = 360 - A + 90`` -- the form GIS packages publish (the arrangement of terms follows the
widely reproduced ESRI description "How Hillshade works"; see the tests). Light from the
north-west (315 deg) at 45 deg, the cartographers' convention (common practice).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

AZIMUTH_DEG = 315.0
ALTITUDE_DEG = 45.0


def horn_gradient(z: np.ndarray, dx: float, dy: float) -> tuple[np.ndarray, np.ndarray]:
    """``(dz/dx east, dz/dy south)`` of the interior cells of ``z`` (rows north to south), shape (r-2, c-2)."""
    a, b, c = z[:-2, :-2], z[:-2, 1:-1], z[:-2, 2:]
    d, f = z[1:-1, :-2], z[1:-1, 2:]
    g, h, i = z[2:, :-2], z[2:, 1:-1], z[2:, 2:]
    dzdx = ((c + 2 * f + i) - (a + 2 * d + g)) / (8.0 * dx)
    dzdy = ((g + 2 * h + i) - (a + 2 * b + c)) / (8.0 * dy)
    return dzdx, dzdy


def hillshade(z: np.ndarray, dx: float, dy: float, azimuth_deg: float = AZIMUTH_DEG,
              altitude_deg: float = ALTITUDE_DEG, z_factor: float = 1.0) -> np.ndarray:
    """Brightness 0..1 of the interior cells of ``z`` (see module notes); NaN where a neighbour is NaN."""
    dzdx, dzdy = horn_gradient(np.asarray(z, dtype=np.float64), dx, dy)
    slope = np.arctan(z_factor * np.hypot(dzdx, dzdy))
    aspect = np.arctan2(dzdy, -dzdx)
    aspect = np.where(aspect < 0, aspect + 2 * np.pi, aspect)
    zenith = np.radians(90.0 - altitude_deg)
    azimuth = np.radians((360.0 - azimuth_deg + 90.0) % 360.0)
    shade = np.cos(zenith) * np.cos(slope) + np.sin(zenith) * np.sin(slope) * np.cos(azimuth - aspect)
    return np.clip(shade, 0.0, 1.0)


@dataclass(frozen=True)
class ReliefImage:
    """A shaded-relief picture of a map extent: ``rgba`` (rows from north to south, uint8) covering
    planar ``x0..x1`` east and ``y0..y1`` north (metres of the map's projection)."""

    rgba: np.ndarray
    x0: float
    y0: float
    x1: float
    y1: float


def relief_image(terrain, projection, x0: float, y0: float, x1: float, y1: float, width: int, height: int,
                 opacity: float = 0.55) -> ReliefImage:
    """Shaded relief of the planar extent at ``width`` x ``height`` pixels of the map's projection.

    Heights are sampled (bilinearly) at each pixel centre and one pixel beyond the edge, for Horn's
    3x3 window. Grey shade with an alpha of ``opacity``; transparent where the terrain has no data.
    """
    width, height = max(int(width), 1), max(int(height), 1)
    px, py = (x1 - x0) / width, (y1 - y0) / height
    xs = x0 + (np.arange(-1, width + 1) + 0.5) * px
    ys = y1 - (np.arange(-1, height + 1) + 0.5) * py         # north to south
    gx, gy = np.meshgrid(xs, ys)
    lat, lon = projection.to_latlon(gx.ravel(), gy.ravel())
    z = terrain.sample(lat, lon).height.reshape(gy.shape)
    shade = hillshade(z, px, py)
    rgba = np.zeros((height, width, 4), dtype=np.uint8)
    valid = np.isfinite(shade)
    grey = np.where(valid, np.rint(shade * 255.0), 0).astype(np.uint8)
    rgba[..., 0] = rgba[..., 1] = rgba[..., 2] = grey
    rgba[..., 3] = np.where(valid, round(255 * opacity), 0).astype(np.uint8)
    return ReliefImage(rgba=rgba, x0=x0, y0=y0, x1=x1, y1=y1)
