"""Benchmark: the window's Clean up against the batch clean it reuses, on 100,000 points and the demo rides.

Prints numbers and ratios; asserts nothing. Clean up runs the batch clean's steps on the shown track
(on the preview worker) and then combines them into one proposal: chaining the row maps, the totals
of the result and the compact undo step. The ratio shows what that combining adds to the batch's own work.
Run: /work/venv/bin/python tests/bench/bench_clean_up.py
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "processing"))
sys.path.insert(0, str(ROOT / "tests" / "bench"))

from bench_tools import invented_ride  # noqa: E402

from editor.io.gpx import read_gpx  # noqa: E402
from editor.model import Document  # noqa: E402
from editor.model.payload import GAP_FILL_MARKER  # noqa: E402
from editor.processing.clean_up import clean_up_track  # noqa: E402
from editor.processing.pipeline import clean_document  # noqa: E402


def best_of(repeats, function):
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        function()
        times.append(time.perf_counter() - start)
    return min(times)


def bench(name, doc, repeats=3):
    track = doc.tracks[0]
    batch = best_of(repeats, lambda: clean_document(doc, inserted_marker=GAP_FILL_MARKER))

    def clean_up():
        result = clean_up_track(track, 0, inserted_marker=GAP_FILL_MARKER)
        result.proposal.edit()  # the worker spells the undo step too

    window = best_of(repeats, clean_up)
    print(f"{name:<22} {len(track.points):>8,} points: batch clean {batch * 1000:8.1f} ms, "
          f"Clean up (steps + combined proposal + undo step) {window * 1000:8.1f} ms, ratio {window / batch:4.2f}")


def main() -> None:
    for demo in ("demo_tunnel", "demo_ride", "demo_hike"):
        bench(demo, read_gpx(ROOT / "demo_tracks" / f"{demo}.gpx"))
    bench("invented ride", Document(tracks=[invented_ride()]), repeats=2)


if __name__ == "__main__":
    main()
