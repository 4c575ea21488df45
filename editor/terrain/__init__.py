"""Terrain: elevation rasters (DEMs) the user gives, read with rasterio. Qt-free.

Heights from a raster are the ground surface, not a bridge deck or a tunnel floor, and refer to
whatever the raster declares (usually metres above mean sea level; see
:meth:`Terrain.vertical_reference`).
"""
from .sampling import NODATA, OK, OUTSIDE, Terrain, TerrainSample
from .tiles import TerrainFileError, Tile, index_tiles, read_tile

__all__ = [
           "NODATA",
           "OK",
           "OUTSIDE",
           "Terrain",
           "TerrainFileError",
           "TerrainSample",
           "Tile",
           "index_tiles",
           "read_tile",
]
