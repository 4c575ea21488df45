"""Speed of the elevation tool's combine smoother against the elevation-only smoother (issue #10:
combine <= 2x). Prints numbers and the ratio, asserts nothing.

    python tests/bench/bench_elevation.py

"elevation-only": the existing exact smoother (``kalman.Problem``) on one elevation axis with a fixed
q, means only (as the batch clean runs it); "combine": :func:`combine_smooth` on the same rows with
the recording and the terrain as two measurements. Both include building the problem from arrays.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
from editor.processing.elevation_model import combine_smooth  # noqa: E402
from editor.processing.kalman import Problem  # noqa: E402


def best_of(fn, repeat=7) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main() -> None:
    rng = np.random.default_rng(0)
    for n in (10_000, 100_000):
        t = np.cumsum(rng.uniform(0.8, 1.2, n))
        truth = 500 + 50 * np.sin(t / 300)
        rec = truth + 10 + rng.standard_normal(n)
        ter = truth + rng.standard_normal(n) * 2
        r_ter = rng.uniform(2, 6, n)
        starts = np.array([0])
        only = best_of(lambda: Problem(t, rec, 1.0, starts=starts).smooth(1e-3, want_std=False))
        both = best_of(lambda: combine_smooth(t, starts, rec, 1.0, ter, r_ter, 1e-3, 1e-3))
        print(f"n={n}: elevation-only {only * 1e3:.1f} ms, combine {both * 1e3:.1f} ms, "
              f"ratio {both / only:.2f} (target <= 2)")
    whole_tool()


def whole_tool() -> None:
    """The whole elevation tool (a preview's work) on the demo ride and its terrain, next to smoothing."""
    from editor.io.gpx import read_gpx
    from editor.processing.cleaning_base import planar
    from editor.processing.elevation import ElevationParams, terrain_elevation
    from editor.processing.smoothing import smooth
    from editor.processing.stats import track_totals
    from editor.terrain import Terrain

    demo = Path(__file__).resolve().parents[2] / "demo_tracks"
    track = read_gpx(demo / "demo_ride.gpx").tracks[0]
    terrain = Terrain.open([demo / "demo_ride.terrain.tif"])
    plane, before = planar(track), track_totals(track)
    smoothing = best_of(lambda: smooth(track, want_std=False, plane=plane, before=before), 3)
    print(f"demo ride ({len(track.points)} points): automatic smoothing {smoothing * 1e3:.0f} ms")
    for mode in ("replace", "combine"):
        took = best_of(lambda: terrain_elevation(track, ElevationParams(mode=mode), terrain=terrain,
                                                 plane=plane, before=before, want_std=False), 3)
        print(f"  elevation tool, {mode}: {took * 1e3:.0f} ms ({took / smoothing:.1f}x the smoothing preview)")


if __name__ == "__main__":
    main()
