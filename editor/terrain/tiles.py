"""Terrain rasters found from their headers alone: where each tile lies, in which CRS, with which nodata.

Indexing opens every file once with rasterio (GDAL) and reads only its header: size, geotransform,
CRS, nodata and the raster type (pixel-is-area or pixel-is-point). No pixel is read here; the
sampler (:mod:`.sampling`) reads the windows a track needs later. ``GDAL_DISABLE_READDIR_ON_OPEN``
stops GDAL from listing the folder on every open (looking for side-car files), which otherwise
makes indexing a folder of n tiles cost O(n^2).

Pixel-is-point rasters: GDAL already shifts their geotransform by half a pixel on reading
(``GTIFF_POINT_GEO_IGNORE`` off, the default), so for both raster types the centre of pixel
``(row, col)`` is ``transform * (col + 0.5, row + 0.5)``; the raster type is kept for the report.
"""
from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import rasterio
from pyproj import CRS
from rasterio.errors import RasterioIOError

#: File name endings taken from a folder (GeoTIFF, and the common single-file DEM formats GDAL reads).
RASTER_SUFFIXES = (".tif", ".tiff", ".hgt", ".dem", ".img", ".vrt", ".asc", ".bil", ".dt0", ".dt1", ".dt2")
_ENV = {"GDAL_DISABLE_READDIR_ON_OPEN": "EMPTY_DIR"}


class TerrainFileError(ValueError):
    """A terrain file that cannot be used: ``path`` and ``problem``; ``str()`` is ``"PATH: problem"``."""

    def __init__(self, path, problem: str):
        self.path, self.problem = str(path), problem
        super().__init__(f"{path}: {problem}")


@dataclass(frozen=True)
class Tile:
    """One raster's header: georeferencing in its own CRS, and what its heights mean."""

    path: str
    crs_wkt: str
    geographic: bool
    #: affine geotransform ``(a, b, c, d, e, f)``: x = a*col + b*row + c, y = d*col + e*row + f
    transform: tuple[float, float, float, float, float, float]
    width: int
    height: int
    nodata: float | None
    pixel_is_point: bool
    vertical_crs: str | None
    units: str | None
    #: GDAL's scale and offset of the band: height = stored * scale + offset
    scale: float = 1.0
    offset: float = 0.0

    @property
    def bounds(self) -> tuple[float, float, float, float]:
        """``(xmin, ymin, xmax, ymax)`` of the pixel footprints in the tile's CRS."""
        a, b, c, d, e, f = self.transform
        xs = [c, c + a * self.width, c + b * self.height, c + a * self.width + b * self.height]
        ys = [f, f + d * self.width, f + e * self.height, f + d * self.width + e * self.height]
        return min(xs), min(ys), max(xs), max(ys)

    @property
    def pixel_size(self) -> tuple[float, float]:
        """Pixel width and height in CRS units (degrees for a geographic CRS)."""
        a, b, _, d, e, _ = self.transform
        return float(np.hypot(a, d)), float(np.hypot(b, e))


def _vertical_name(crs: CRS) -> str | None:
    """The name of a declared vertical CRS (compound CRS or 3D geographic), else None."""
    if crs.is_compound:
        for sub in crs.sub_crs_list:
            if sub.is_vertical:
                return sub.name
    if crs.is_vertical:
        return crs.name
    return None


def read_tile(path: str | os.PathLike) -> Tile:
    """The header of one raster; raises :class:`TerrainFileError` naming the file if unusable."""
    path = str(path)
    try:
        with rasterio.Env(**_ENV), rasterio.open(path) as ds:
            if ds.crs is None:
                raise TerrainFileError(path, "the raster declares no coordinate reference system")
            if ds.count < 1:
                raise TerrainFileError(path, "the raster has no band")
            t = ds.transform
            if (t.a == 0 and t.b == 0) or (t.d == 0 and t.e == 0):
                raise TerrainFileError(path, "the raster has no usable geotransform")
            crs = CRS.from_wkt(ds.crs.to_wkt())
            tags = ds.tags()
            units = ds.units[0] if ds.units and ds.units[0] else None
            return Tile(path=path, crs_wkt=crs.to_wkt(), geographic=bool(crs.is_geographic),
                        transform=(t.a, t.b, t.c, t.d, t.e, t.f), width=ds.width, height=ds.height,
                        nodata=None if ds.nodata is None else float(ds.nodata),
                        pixel_is_point=tags.get("AREA_OR_POINT", "Area").lower() == "point",
                        vertical_crs=_vertical_name(crs), units=units,
                        scale=float(ds.scales[0] if ds.scales and ds.scales[0] else 1.0),
                        offset=float(ds.offsets[0] if ds.offsets and ds.offsets[0] else 0.0))
    except RasterioIOError as exc:
        raise TerrainFileError(path, f"not a raster rasterio can read ({exc})") from None


def raster_files(paths) -> list[str]:
    """Files to index: each file given, and every raster file inside each folder (recursively, sorted)."""
    out: list[str] = []
    for p in paths:
        p = Path(p)
        if p.is_dir():
            out.extend(sorted(str(f) for f in p.rglob("*")
                              if f.is_file() and f.suffix.lower() in RASTER_SUFFIXES))
        elif p.exists():
            out.append(str(p))
        else:
            raise TerrainFileError(p, "no such file or folder")
    return out


def index_tiles(paths) -> list[Tile]:
    """Headers of every raster in ``paths`` (files and folders), in a stable order."""
    with rasterio.Env(**_ENV):
        return [read_tile(f) for f in raster_files(paths)]
