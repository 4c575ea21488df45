"""Offline raster tile archives: MBTiles (an SQLite file, rows counted from the south) and PMTiles.

Both readers return a tile's encoded image bytes (PNG, JPEG or WebP) or ``None`` when the archive
has no such tile. Opening checks the file and raises :class:`ArchiveError` naming it and the
problem. A reader is used from one thread only (the fetch worker's), like its SQLite connection.
"""
from __future__ import annotations

import gzip
import sqlite3
from dataclasses import dataclass
from pathlib import Path

from .mercator import tms_row

#: Tile formats an archive may hold to be drawn as a background.
RASTER_FORMATS = ("png", "jpg", "jpeg", "webp")


class ArchiveError(ValueError):
    """A file that cannot serve as a background; the message names the file and the reason."""


@dataclass(frozen=True)
class ArchiveInfo:
    """What the map needs to know about an archive before reading tiles."""

    name: str
    attribution: str
    min_zoom: int
    max_zoom: int
    image_format: str


class MBTilesArchive:
    """A raster MBTiles file (the MBTiles 1.3 specification: ``tiles`` table, TMS rows, ``metadata``)."""

    def __init__(self, path: str | Path) -> None:
        self.path = Path(path)
        try:
            # Read-only and immutable: the archive is never changed, and no journal file is written beside it.
            self._db = sqlite3.connect(f"{self.path.resolve().as_uri()}?mode=ro", uri=True,
                                       check_same_thread=False)
            meta = dict(self._db.execute("SELECT name, value FROM metadata").fetchall())
            zooms = self._db.execute("SELECT MIN(zoom_level), MAX(zoom_level) FROM tiles").fetchone()
        except sqlite3.Error as err:
            raise ArchiveError(f"{self.path}: not a readable MBTiles archive ({err}).") from err
        image_format = str(meta.get("format", "png")).lower()
        if image_format not in RASTER_FORMATS:
            raise ArchiveError(f"{self.path}: holds {image_format} tiles; only raster images (PNG, JPEG, WebP) "
                               "can be drawn as a background.")
        if zooms[0] is None:
            raise ArchiveError(f"{self.path}: the archive holds no tiles.")
        self.info = ArchiveInfo(name=str(meta.get("name", self.path.stem)),
                                attribution=str(meta.get("attribution", "") or f"Tiles: {self.path.name}"),
                                min_zoom=int(meta.get("minzoom", zooms[0])),
                                max_zoom=int(meta.get("maxzoom", zooms[1])), image_format=image_format)

    def tile(self, z: int, x: int, y: int) -> bytes | None:
        row = self._db.execute("SELECT tile_data FROM tiles WHERE zoom_level=? AND tile_column=? AND tile_row=?",
                               (z, x, tms_row(y, z))).fetchone()
        return bytes(row[0]) if row else None

    def close(self) -> None:
        self._db.close()


class PMTilesArchive:
    """A raster PMTiles (version 3) file, read through the ``pmtiles`` library from a memory map."""

    def __init__(self, path: str | Path) -> None:
        from pmtiles.reader import MmapSource, Reader
        from pmtiles.tile import Compression, TileType

        self.path = Path(path)
        try:
            self._file = open(self.path, "rb")
        except OSError as err:
            raise ArchiveError(f"{self.path}: cannot be opened ({err.strerror}).") from err
        try:
            self._reader = Reader(MmapSource(self._file))
            header = self._reader.header()
            meta = self._reader.metadata()
        except Exception as err:  # the library raises several kinds on a damaged or foreign file
            self._file.close()
            raise ArchiveError(f"{self.path}: not a readable PMTiles archive ({err}).") from err
        kinds = {TileType.PNG: "png", TileType.JPEG: "jpeg", TileType.WEBP: "webp"}
        if header["tile_type"] not in kinds:
            self._file.close()
            raise ArchiveError(f"{self.path}: holds {header['tile_type'].name.lower()} tiles; only raster images "
                               "(PNG, JPEG, WebP) can be drawn as a background.")
        self._gzip = header["tile_compression"] == Compression.GZIP
        self.info = ArchiveInfo(name=str(meta.get("name", self.path.stem)),
                                attribution=str(meta.get("attribution", "") or f"Tiles: {self.path.name}"),
                                min_zoom=int(header["min_zoom"]), max_zoom=int(header["max_zoom"]),
                                image_format=kinds[header["tile_type"]])

    def tile(self, z: int, x: int, y: int) -> bytes | None:
        data = self._reader.get(z, x, y)
        if data is None:
            return None
        return gzip.decompress(data) if self._gzip else bytes(data)

    def close(self) -> None:
        self._file.close()


def open_archive(path: str | Path) -> MBTilesArchive | PMTilesArchive:
    """Open an archive, telling the kinds apart by their first bytes (not by the file name)."""
    path = Path(path)
    try:
        with open(path, "rb") as f:
            magic = f.read(16)
    except OSError as err:
        raise ArchiveError(f"{path}: cannot be opened ({err.strerror}).") from err
    if magic.startswith(b"PMTiles"):
        return PMTilesArchive(path)
    if magic.startswith(b"SQLite format 3"):
        return MBTilesArchive(path)
    raise ArchiveError(f"{path}: neither an MBTiles nor a PMTiles archive.")
