"""Benchmark: totals of a 100,000-point track (prints numbers and ratios; asserts nothing).

Target (issue: foundation): statistics of the whole track <= 20 ms with distances within 1e-5 (relative)
of the ellipsoidal geodesic, on any track, a 1,000 km one included. The reference is pyproj's
vectorised Geod.inv over every pair, measured in the same run.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from editor.geo.distance import geodesic_steps, step_lengths  # noqa: E402
from editor.model import PointTable, Track  # noqa: E402
from editor.processing.stats import track_totals  # noqa: E402


def best_of(fn, repeats=7):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - t0)
    return min(times), result


def make_track(n, step_m, seed=0):
    rng = np.random.default_rng(seed)
    heading = np.cumsum(rng.normal(0, 0.05, n))
    step_deg = step_m / 111_000 * rng.uniform(0.5, 1.5, n)
    lat = 44 + np.cumsum(np.cos(heading) * step_deg)
    lon = 5 + np.cumsum(np.sin(heading) * step_deg / np.cos(np.radians(44)))
    ele = np.round(500 + 200 * np.sin(np.arange(n) / 3000) + rng.normal(0, 2, n))
    t = np.datetime64("2026-06-01T06:00:00", "ns") + (np.cumsum(rng.choice([1.0, 1.0, 1.0, 2.0], n)) * 1e9).astype("timedelta64[ns]")
    return Track(PointTable.from_columns(lat, lon, ele=ele, time=t), [0])


def main():
    n = 100_000
    for label, step in (("ride, ~6 m steps (600 km)", 6.0), ("1,000 km track, 10 m steps", 10.0)):
        track = make_track(n, step)
        p = track.points
        t_ref, ref = best_of(lambda: geodesic_steps(p.lat, p.lon))
        t_steps, steps = best_of(lambda: step_lengths(p.lat, p.lon))
        t_totals, totals = best_of(lambda: track_totals(track))
        rel = abs(totals.distance_m - ref.sum()) / ref.sum()
        worst = np.max(np.abs(steps - ref) / np.maximum(ref, 1e-9))
        print(f"{label}: {n} points, distance {totals.distance_m / 1000:.3f} km")
        print(f"  Geod.inv over all pairs (reference) {t_ref * 1e3:7.2f} ms")
        print(f"  step_lengths                        {t_steps * 1e3:7.2f} ms  ({t_ref / t_steps:.1f}x faster)")
        print(f"  track_totals (all totals)           {t_totals * 1e3:7.2f} ms  (target <= 20 ms)")
        print(f"  total distance relative error {rel:.2e}, worst step {worst:.2e} (target 1e-5)")


if __name__ == "__main__":
    main()
