"""Benchmark: pathological GPX inputs (prints a table; asserts nothing).

Targets (issue 8, section 3), each read by the command line's reader (``read_gpx``, which the
window's open path uses too), in a fresh process so that peak memory is the input's alone:

=====================================  ===============
100k namespace declarations on root    <= 2 s
1M one-point segments (~90 MB)         <= 15 s, <= 1.5 GB
200k two-point segments                <= 5 s
100k tracks                            <= 5 s
1M waypoints (~55 MB)                  <= 1 GB
=====================================  ===============

Run from the repository root:  python tests/bench/bench_hostile.py  [--only NAME] [--small]
``--small`` divides every size by 10 (a quick look at the scaling).
"""
from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
HEAD = '<?xml version="1.0" encoding="UTF-8"?>\n'
OPEN = '<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="bench"'


def _point(tag: str, i: int) -> str:
    return (f'<{tag} lat="{46 + (i % 100000) * 1e-5:.5f}" lon="{7 + (i // 100000) * 1e-3:.5f}">'
            f"<ele>{500 + i % 300}</ele><time>2026-05-01T{6 + i // 3600 % 12:02d}:{i // 60 % 60:02d}:"
            f"{i % 60:02d}Z</time></{tag}>")


def namespaces(n: int) -> str:
    decls = "".join(f' xmlns:n{i}="urn:example:n{i}"' for i in range(n))
    return HEAD + OPEN + decls + "><trk><trkseg>" + "".join(_point("trkpt", i) for i in range(10)) \
        + "</trkseg></trk></gpx>\n"


def segments(n: int, per: int) -> str:
    body = "".join("<trkseg>" + "".join(_point("trkpt", s * per + k) for k in range(per)) + "</trkseg>\n"
                   for s in range(n))
    return HEAD + OPEN + "><trk>\n" + body + "</trk></gpx>\n"


def tracks(n: int) -> str:
    body = "".join(f"<trk><trkseg>{_point('trkpt', 2 * t)}{_point('trkpt', 2 * t + 1)}</trkseg></trk>\n"
                   for t in range(n))
    return HEAD + OPEN + ">\n" + body + "</gpx>\n"


def waypoints(n: int) -> str:
    return HEAD + OPEN + ">\n" + "".join(_point("wpt", i) + "\n" for i in range(n)) + "</gpx>\n"


CASES = {
    "namespaces": ("100k namespace declarations on the root", lambda k: namespaces(100_000 // k), "<= 2 s"),
    "one_point_segments": ("1M one-point segments", lambda k: segments(1_000_000 // k, 1), "<= 15 s, <= 1.5 GB"),
    "two_point_segments": ("200k two-point segments", lambda k: segments(200_000 // k, 2), "<= 5 s"),
    "tracks": ("100k tracks", lambda k: tracks(100_000 // k), "<= 5 s"),
    "waypoints": ("1M waypoints", lambda k: waypoints(1_000_000 // k), "<= 1 GB"),
}

_MEASURE = textwrap.dedent("""
    import resource, sys, time
    sys.path.insert(0, {root!r})
    from editor.io.gpx import read_gpx
    start = time.perf_counter()
    doc = read_gpx({path!r})
    took = time.perf_counter() - start
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"{{took:.2f}} {{peak:.0f}} {{doc.point_count + len(doc.waypoints)}}")
""")


def measure(path: Path) -> tuple[float, float, int]:
    out = subprocess.run([sys.executable, "-c", _MEASURE.format(root=str(ROOT), path=str(path))],
                         capture_output=True, text=True, check=True).stdout.split()
    return float(out[0]), float(out[1]), int(out[2])


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--only", choices=sorted(CASES))
    parser.add_argument("--small", action="store_true")
    args = parser.parse_args()
    divide = 10 if args.small else 1
    print(f"{'input':<42} {'MB':>6} {'seconds':>8} {'peak MB':>8} {'points':>9}  target")
    with tempfile.TemporaryDirectory() as folder:
        for key, (label, make, target) in CASES.items():
            if args.only and key != args.only:
                continue
            path = Path(folder) / f"{key}.gpx"
            path.write_text(make(divide), encoding="utf-8")
            size = path.stat().st_size / 1e6
            took, peak, points = measure(path)
            print(f"{label + (' /10' if divide > 1 else ''):<42} {size:6.1f} {took:8.2f} {peak:8.0f} "
                  f"{points:9d}  {target}", flush=True)
            path.unlink()


if __name__ == "__main__":
    main()
