"""Simulated held-out score of the elevation step (issue #10): realistic invented rides on their own
1-arc-second terrain tiles (several per ride, one ride across the 180th meridian), cleaned with
``clean_document(..., terrain=...)``. Targets: median ascent error <= 2.5 % and none
over 15 % with the recorded <ele>; with every <ele> removed, <= 5 % median and none over 25 %.
Prints numbers; asserts nothing.

    python tests/bench/score_elevation.py [N_RIDES]
"""
from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "terrain"))
from elevation_score import score  # noqa: E402 (after the path set-up)


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 12
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        s = score(range(n), Path(tmp))
    print(f"{n} rides in {time.perf_counter() - t0:.0f} s")
    print(f"with ele:    median {s['median_with']:.2f} % (target <= 2.5), worst {s['worst_with']:.2f} % (<= 15)")
    print(f"without ele: median {s['median_without']:.2f} % (target <= 5), worst {s['worst_without']:.2f} % (<= 25)")


if __name__ == "__main__":
    main()
