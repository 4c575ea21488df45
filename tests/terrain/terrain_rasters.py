"""Small GeoTIFFs written into a test's tmp_path (never shared files)."""
from __future__ import annotations

import numpy as np
import rasterio
from rasterio.transform import from_origin


def write_raster(path, data: np.ndarray, *, west: float, north: float, xres: float, yres: float,
                 crs: str = "EPSG:4326", nodata: float | None = None, point: bool = False,
                 dtype: str = "float32") -> str:
    """Write ``data`` (rows from north to south) with its top-left pixel corner at (west, north)."""
    profile = {"driver": "GTiff", "width": data.shape[1], "height": data.shape[0], "count": 1, "dtype": dtype,
                   "crs": crs, "transform": from_origin(west, north, xres, yres)}
    if nodata is not None:
        profile["nodata"] = nodata
    with rasterio.open(path, "w", **profile) as ds:
        if point:
            ds.update_tags(AREA_OR_POINT="Point")
        ds.write(data.astype(dtype), 1)
    return str(path)
