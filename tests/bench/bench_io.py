"""Benchmark: GPX reading and writing (prints numbers and ratios; asserts nothing).

Targets (issue: file input/output):
* reading a 100,000-point GPX 1.1 file with one extension per point (~20 MB) into the model takes
  <= 2.5 x the time of a bare ``lxml.etree.parse`` of the same file, measured in the same run;
* writing it takes <= 0.3 s;
* opening, smoothing and saving a 1,000,000-point file stays <= 2 GB of memory; measured here:
  the peak resident memory of a fresh process that reads and writes such a file (no smoothing).

Run from the repository root:  python tests/bench/bench_io.py  [--skip-million]
Timings on a shared machine vary from run to run: each is the best (and median) of several runs.
"""
from __future__ import annotations

import argparse
import gc
import statistics
import subprocess
import sys
import tempfile
import textwrap
import time
from unittest import mock
from pathlib import Path

import numpy as np
from lxml import etree

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from editor.io.gpx import scan as gpx_scan  # noqa: E402
from editor.io.gpx import gpx_bytes, read_gpx, write_gpx  # noqa: E402


def make_gpx(path: Path, n: int, seed: int = 1) -> None:
    """An invented 1 Hz ride: pretty-printed points with a heart-rate/temperature extension each."""
    rng = np.random.default_rng(seed)
    heading = np.cumsum(rng.normal(0, 0.05, n))
    lat = 46.2 + np.cumsum(np.cos(heading) * 5e-5)
    lon = 6.9 + np.cumsum(np.sin(heading) * 7e-5)
    ele = 600 + 150 * np.sin(np.arange(n) / 4000) + rng.normal(0, 1.5, n)
    times = np.datetime_as_string(np.datetime64("2026-05-01T06:00:00", "s") + np.arange(n), unit="s")
    heart = rng.integers(90, 175, n)
    temp = rng.integers(12, 25, n)
    with open(path, "w", encoding="utf-8") as out:
        out.write('<?xml version="1.0" encoding="UTF-8"?>\n<gpx xmlns="http://www.topografix.com/GPX/1/1" '
                  'xmlns:sn="urn:example:sensor" version="1.1" creator="bench">\n'
                  "  <trk>\n    <name>Bench ride</name>\n    <trkseg>\n")
        for start in range(0, n, 50_000):
            stop = min(n, start + 50_000)
            out.write("".join(
                f'      <trkpt lat="{a:.7f}" lon="{o:.7f}">\n        <ele>{e:.1f}</ele>\n'
                f"        <time>{t}Z</time>\n        <extensions>\n          <sn:sensor><sn:hr>{h}</sn:hr>"
                f"<sn:temp>{c}</sn:temp></sn:sensor>\n        </extensions>\n      </trkpt>\n"
                for a, o, e, t, h, c in zip(lat[start:stop].tolist(), lon[start:stop].tolist(),
                                            ele[start:stop].tolist(), times[start:stop].tolist(),
                                            heart[start:stop].tolist(), temp[start:stop].tolist())))
        out.write("    </trkseg>\n  </trk>\n</gpx>\n")


def timed(fn, repeats: int):
    times = []
    for _ in range(repeats):
        gc.collect()
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times), statistics.median(times)


def speed(folder: Path, repeats: int) -> None:
    path = folder / "bench-100k.gpx"
    make_gpx(path, 100_000)
    size_mb = path.stat().st_size / 1e6
    # interleave the two measurements so both see the same machine load
    parse_times, read_times = [], []
    for _ in range(repeats):
        parse_times.append(timed(lambda: etree.parse(str(path)), 1)[0])
        read_times.append(timed(lambda: read_gpx(path), 1)[0])
    doc = read_gpx(path)
    with mock.patch.object(gpx_scan, "worth_trying", lambda data: False):
        tree_best, tree_median = timed(lambda: read_gpx(path), max(2, repeats // 3))
    write_best, write_median = timed(lambda: gpx_bytes(doc), repeats)
    save_best, save_median = timed(lambda: write_gpx(doc, folder / "bench-100k-out.gpx"), repeats)
    parse_best, read_best = min(parse_times), min(read_times)
    ratios = [r / p for r, p in zip(read_times, parse_times)]
    print(f"100,000 points, one extension each: file {size_mb:.1f} MB")
    print(f"  bare lxml.etree.parse  best {parse_best:.3f} s   median {statistics.median(parse_times):.3f} s")
    print(f"  read_gpx into model    best {read_best:.3f} s   median {statistics.median(read_times):.3f} s")
    print(f"  ratio read/parse       of bests {read_best / parse_best:.2f}   median of paired runs "
          f"{statistics.median(ratios):.2f}   (target <= 2.5)")
    print(f"  read through the tree alone (files the fast scan does not take) best {tree_best:.3f} s   "
          f"median {tree_median:.3f} s   ratio {tree_best / parse_best:.2f}")
    print(f"  gpx_bytes (write text) best {write_best:.3f} s   median {write_median:.3f} s   (target <= 0.3 s)")
    print(f"  write_gpx (atomic, fsync) best {save_best:.3f} s   median {save_median:.3f} s")


def memory(folder: Path) -> None:
    path = folder / "bench-1m.gpx"
    make_gpx(path, 1_000_000)
    script = textwrap.dedent(f"""
        import resource, sys, time, psutil
        sys.path.insert(0, {str(ROOT)!r})
        from editor.io.gpx import read_gpx, write_gpx
        process = psutil.Process()
        start_rss = process.memory_info().rss
        t0 = time.perf_counter()
        doc = read_gpx({str(path)!r})
        t1 = time.perf_counter()
        after_read = process.memory_info().rss
        write_gpx(doc, {str(folder / "bench-1m-out.gpx")!r})
        t2 = time.perf_counter()
        peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024  # Linux reports kB
        print(start_rss, after_read, peak, t1 - t0, t2 - t1, doc.point_count)
    """)
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, check=True).stdout
    start_rss, after_read, peak, read_s, write_s, count = out.split()
    print(f"1,000,000 points: file {path.stat().st_size / 1e6:.0f} MB, read {float(read_s):.2f} s, "
          f"write {float(write_s):.2f} s")
    print(f"  resident memory: at start {int(start_rss) / 1e6:.0f} MB, after reading "
          f"{int(after_read) / 1e6:.0f} MB, peak over read + write {int(peak) / 1e6:.0f} MB (budget 2000 MB "
          "for open + smooth + save)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=7)
    parser.add_argument("--skip-million", action="store_true")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as folder:
        speed(Path(folder), args.repeats)
        if not args.skip_million:
            memory(Path(folder))


if __name__ == "__main__":
    main()
