"""Terrain benchmarks: index a folder of 1,000 tiles (headers only), sample 100k points across 8 tiles.

Targets (issue #10): indexing 1,000 tiles <= 2 s; 100k points across 8 tiles <= 0.5 s (cold: blocks
read from disk; warm: blocks cached). Prints numbers, asserts nothing.
    python tests/bench/bench_terrain.py
"""
from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import rasterio
from rasterio.transform import from_origin

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
from editor.terrain import Terrain, index_tiles


def write(path, data, west, north, res):
    with rasterio.open(path, "w", driver="GTiff", width=data.shape[1], height=data.shape[0], count=1,
                       dtype="int16", crs="EPSG:4326", transform=from_origin(west, north, res, res),
                       nodata=-32768, tiled=True, blockxsize=256, blockysize=256) as ds:
        ds.write(data.astype("int16"), 1)


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "many"
        folder.mkdir()
        small = np.zeros((4, 4))
        for i in range(1000):
            write(folder / f"t{i:04d}.tif", small, -180 + (i % 360), 60 - i // 360, 0.25)
        t0 = time.perf_counter()
        tiles = index_tiles([folder])
        dt = time.perf_counter() - t0
        print(f"index {len(tiles)} tiles: {dt:.3f} s (target <= 2 s, ratio {dt / 2:.2f})")

        big = Path(tmp) / "eight"
        big.mkdir()
        n = 3601  # 1 arc-second tiles, 1 degree each
        res = 1.0 / 3600
        rng = np.random.default_rng(0)
        for k in range(8):
            lat0, lon0 = 46 + k // 4, 8 + k % 4
            data = rng.integers(200, 3000, size=(n, n))
            write(big / f"d{k}.tif", data, lon0 - res / 2, lat0 + 1 + res / 2, res)
        # a wandering 100k-point track over the 4 x 2 degree block
        steps = rng.standard_normal((100_000, 2)).cumsum(0)
        steps = (steps - steps.min(0)) / (steps.max(0) - steps.min(0))
        lat, lon = 46.001 + steps[:, 0] * 1.998, 8.001 + steps[:, 1] * 3.998
        terrain = Terrain.open([big])
        for label in ("cold", "warm"):
            t0 = time.perf_counter()
            s = terrain.sample(lat, lon)
            dt = time.perf_counter() - t0
            print(f"sample 100k points over 8 tiles ({label}): {dt:.3f} s (target <= 0.5 s, ratio {dt / 0.5:.2f}); "
                  f"{int((s.status == 0).sum())} found")
        terrain.close()


if __name__ == "__main__":
    main()
