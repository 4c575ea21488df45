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


if __name__ == "__main__":
    main()
