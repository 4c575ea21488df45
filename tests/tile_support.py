"""Generated reference tiles and a local tile server for the map-background tests and benchmark.

Every tile is white with lines of known geography drawn into it: meridians in red every
``MERIDIAN_STEP`` degrees and parallels in blue every ``PARALLEL_STEP`` degrees, each a 3-pixel
box profile centred exactly on the line's position in the tile (so the centroid of a line's
colour, even after resampling, sits on the line). Positions come from the Web Mercator formulas
(common practice; checked against pyproj's EPSG:3857 in tests/tiles/test_mercator.py).
"""
from __future__ import annotations

import http.server
import math
import struct
import threading
import zlib

import numpy as np

MERIDIAN_STEP = 0.01
PARALLEL_STEP = 0.005
LINE_HALF_WIDTH_PX = 1.5


def png_bytes(rgb: np.ndarray) -> bytes:
    """Encode an ``(h, w, 3)`` uint8 array as PNG (the PNG specification, RFC 2083: IHDR, IDAT, IEND)."""
    h, w, _ = rgb.shape
    raw = b"".join(b"\x00" + rgb[row].tobytes() for row in range(h))

    def chunk(kind: bytes, data: bytes) -> bytes:
        return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)

    return (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, 8, 2, 0, 0, 0))
            + chunk(b"IDAT", zlib.compress(raw, 6)) + chunk(b"IEND", b""))


def _coverage(centres_px: np.ndarray, size: int) -> np.ndarray:
    """How much of each pixel ``[i, i+1)`` the union of boxes ``[c − 1.5, c + 1.5]`` covers."""
    cover = np.zeros(size)
    edges = np.arange(size)
    for c in centres_px:
        lo, hi = c - LINE_HALF_WIDTH_PX, c + LINE_HALF_WIDTH_PX
        cover += np.clip(np.minimum(edges + 1, hi) - np.maximum(edges, lo), 0, 1)
    return np.clip(cover, 0, 1)


def reference_tile(z: int, x: int, y: int, size: int = 256) -> np.ndarray:
    """The RGB array of tile ``(z, x, y)``."""
    n = 2 ** z
    scale = size * n  # world pixels at this zoom
    lon_w, lon_e = x / n * 360 - 180, (x + 1) / n * 360 - 180
    lat_n = math.degrees(math.atan(math.sinh(math.pi * (1 - 2 * y / n))))
    lat_s = math.degrees(math.atan(math.sinh(math.pi * (1 - 2 * (y + 1) / n))))
    cols, rows = np.zeros(0), np.zeros(0)
    if (lon_e - lon_w) / MERIDIAN_STEP < size / 4:  # draw lines only where they stay apart
        lons = np.arange(math.floor(lon_w / MERIDIAN_STEP) - 1, math.ceil(lon_e / MERIDIAN_STEP) + 2) * MERIDIAN_STEP
        cols = (lons + 180) / 360 * scale - x * size
    if (lat_n - lat_s) / PARALLEL_STEP < size / 4:
        lats = np.arange(math.floor(lat_s / PARALLEL_STEP) - 1, math.ceil(lat_n / PARALLEL_STEP) + 2) * PARALLEL_STEP
        wy = (1 - np.arcsinh(np.tan(np.radians(lats))) / math.pi) / 2
        rows = wy * scale - y * size
    red = _coverage(cols, size)[None, :] * np.ones((size, 1))
    blue = _coverage(rows, size)[:, None] * np.ones((1, size))
    img = np.full((size, size, 3), 255.0)
    img[..., 1] -= 255 * np.maximum(red, blue)  # green off under either line
    img[..., 2] -= 255 * red * (1 - blue)
    img[..., 0] -= 255 * blue * (1 - red)
    return np.clip(np.round(img), 0, 255).astype(np.uint8)


class TileServer:
    """``http.server`` on 127.0.0.1 in a thread, serving ``/{z}/{x}/{y}.png`` reference tiles.

    ``requests`` counts the requests; ``max_age_s`` goes into Cache-Control; a ``failing`` server
    answers every request with 503 (overloaded).
    """

    def __init__(self, max_age_s: int = 86400, failing: bool = False) -> None:
        self.requests: list[str] = []
        self.failing = failing
        self.user_agents: set[str] = set()
        self.max_age_s = max_age_s
        server = self

        class Handler(http.server.BaseHTTPRequestHandler):
            def do_GET(self):  # noqa: N802 (http.server's name)
                server.requests.append(self.path)
                server.user_agents.add(self.headers.get("User-Agent", ""))
                if server.failing:
                    self.send_error(503)
                    return
                try:
                    z, x, y = (int(p) for p in self.path.strip("/").removesuffix(".png").split("/"))
                except ValueError:
                    self.send_error(404)
                    return
                body = png_bytes(reference_tile(z, x, y))
                self.send_response(200)
                self.send_header("Content-Type", "image/png")
                self.send_header("Content-Length", str(len(body)))
                self.send_header("Cache-Control", f"public, max-age={server.max_age_s}")
                self.end_headers()
                self.wfile.write(body)

            def log_message(self, *args):
                pass

        self.httpd = http.server.ThreadingHTTPServer(("127.0.0.1", 0), Handler)
        self.port = self.httpd.server_address[1]
        self.url = f"http://127.0.0.1:{self.port}/{{z}}/{{x}}/{{y}}.png"
        self.thread = threading.Thread(target=self.httpd.serve_forever, daemon=True)
        self.thread.start()

    def stop(self) -> None:
        self.httpd.shutdown()
        self.httpd.server_close()


def write_mbtiles(path, tiles: dict, attribution: str = "Reference lines (generated)") -> None:
    """An MBTiles 1.3 file (``metadata`` and ``tiles`` tables, rows counted from the south) holding
    ``tiles[(z, x, y)] = png bytes`` (x, y in the XYZ scheme)."""
    import sqlite3

    db = sqlite3.connect(str(path))
    db.execute("CREATE TABLE metadata (name TEXT, value TEXT)")
    db.execute("CREATE TABLE tiles (zoom_level INTEGER, tile_column INTEGER, tile_row INTEGER, tile_data BLOB)")
    zooms = [k[0] for k in tiles]
    db.executemany("INSERT INTO metadata VALUES (?, ?)", [
        ("name", "reference"), ("format", "png"), ("attribution", attribution),
        ("minzoom", str(min(zooms))), ("maxzoom", str(max(zooms)))])
    db.executemany("INSERT INTO tiles VALUES (?, ?, ?, ?)",
                   [(z, x, 2 ** z - 1 - y, data) for (z, x, y), data in tiles.items()])
    db.commit()
    db.close()


def write_pmtiles(path, tiles: dict, attribution: str = "Reference lines (generated)") -> None:
    """A PMTiles v3 raster archive written with the ``pmtiles`` library's writer."""
    from pmtiles.tile import Compression, TileType, zxy_to_tileid
    from pmtiles.writer import Writer

    zooms = [k[0] for k in tiles]
    with open(path, "wb") as f:
        writer = Writer(f)
        for tile_id, data in sorted((zxy_to_tileid(*k), v) for k, v in tiles.items()):
            writer.write_tile(tile_id, data)
        writer.finalize({"tile_type": TileType.PNG, "tile_compression": Compression.NONE,
                         "min_zoom": min(zooms), "max_zoom": max(zooms),
                         "min_lon_e7": -1800000000, "min_lat_e7": -850000000,
                         "max_lon_e7": 1800000000, "max_lat_e7": 850000000,
                         "center_zoom": min(zooms), "center_lon_e7": 0, "center_lat_e7": 0},
                        {"name": "reference", "attribution": attribution})
