"""Benchmark: a 1,000,000-point file opens, smooths and saves within 2 GB of resident memory.

Prints times and the peak resident memory of a fresh process doing exactly that (read, automatic
strength estimate, smoothing proposal, apply as the editor would, atomic save). Asserts nothing.
Run from the repository root:  python tests/bench/bench_load.py [--points N]
"""
from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from tests.bench.bench_io import make_gpx  # noqa: E402

CHILD = textwrap.dedent("""
    import resource, sys, time
    sys.path.insert(0, {root!r})
    t0 = time.perf_counter()
    from editor.io.gpx import read_gpx, write_gpx
    from editor.processing.smoothing import smooth, SmoothParams
    def peak_mb():
        return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    base = peak_mb()
    t = time.perf_counter(); doc = read_gpx({src!r}); read_s = time.perf_counter() - t
    after_read = peak_mb()
    t = time.perf_counter(); proposal = smooth(doc.tracks[0], SmoothParams()); smooth_s = time.perf_counter() - t
    after_smooth = peak_mb()
    t = time.perf_counter(); proposal.edit().apply(doc); apply_s = time.perf_counter() - t
    del proposal
    t = time.perf_counter(); write_gpx(doc, {dst!r}); write_s = time.perf_counter() - t
    print(f"{{doc.point_count}} {{read_s:.2f}} {{smooth_s:.2f}} {{apply_s:.2f}} {{write_s:.2f}} "
          f"{{base:.0f}} {{after_read:.0f}} {{after_smooth:.0f}} {{peak_mb():.0f}}")
""")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1_000_000)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        src, dst = Path(tmp) / "big.gpx", Path(tmp) / "big-cleaned.gpx"
        make_gpx(src, args.points)
        size_mb = src.stat().st_size / 1e6
        out = subprocess.run([sys.executable, "-c", CHILD.format(root=str(ROOT), src=str(src), dst=str(dst))],
                             capture_output=True, text=True, check=True).stdout.split()
        n, read_s, smooth_s, apply_s, write_s, base, after_read, after_smooth, peak = out
        print(f"{int(n):,} points, file {size_mb:.0f} MB, written {dst.stat().st_size / 1e6:.0f} MB")
        print(f"  read {read_s} s, smooth (automatic strength) {smooth_s} s, apply {apply_s} s, save {write_s} s")
        print(f"  peak resident memory: after imports {base} MB, after read {after_read} MB, "
              f"after smoothing {after_smooth} MB, overall {peak} MB (budget 2000 MB)")


if __name__ == "__main__":
    main()
