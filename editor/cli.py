"""The ``trackwright`` command: batch work on track files with the Qt-free core.

``trackwright`` with no subcommand (or with only file names) opens the editor.
Exit codes: 0 success, 2 bad input or usage (one line on stderr, no traceback),
1 an unexpected internal error.
"""
from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path

from .io.errors import TrackFileError

SUBCOMMANDS = ("stats", "export", "clean")


def _fmt_duration(seconds: float) -> str:
    if not math.isfinite(seconds):
        return "n/a"
    s = int(round(seconds))
    return f"{s // 3600}:{s % 3600 // 60:02d}:{s % 60:02d}"


def _json_number(value):
    return None if isinstance(value, float) and not math.isfinite(value) else value


def cmd_stats(args) -> int:
    from .io.gpx import read_gpx
    from .processing.stats import StatsParams, document_totals, segment_totals

    params = StatsParams(moving_speed_mps=args.moving_speed, climb_threshold_m=args.climb_threshold)
    doc = read_gpx(args.file)
    total = document_totals(doc, params)
    if args.json:
        out = {k: _json_number(v) for k, v in total.as_dict().items()}
        out["file"] = str(args.file)
        out["tracks"] = len(doc.tracks)
        out["segment_totals"] = [
            {"track": ti, "segment": si, **{k: _json_number(v) for k, v in seg.as_dict().items()}}
            for ti, track in enumerate(doc.tracks) for si, seg in enumerate(segment_totals(track, params))]
        print(json.dumps(out))
        return 0
    speed = "n/a" if not math.isfinite(total.max_speed_mps) else f"{total.max_speed_mps * 3.6:.1f} km/h"
    print(f"{args.file}")
    print(f"  tracks {len(doc.tracks)}, segments {total.segments}, points {total.points}")
    print(f"  distance   {total.distance_m / 1000:.3f} km  (3D {total.distance_3d_m / 1000:.3f} km)")
    print(f"  ascent     {total.ascent_m:.0f} m   descent {total.descent_m:.0f} m"
          f"   (climb threshold {params.climb_threshold_m:g} m; raw {total.raw_ascent_m:.0f} / {total.raw_descent_m:.0f} m)")
    print(f"  duration   {_fmt_duration(total.duration_s)}   moving {_fmt_duration(total.moving_time_s)}"
          f"   max speed {speed}")
    return 0


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve() or (b.exists() and a.samefile(b))
    except OSError:
        return False


def cmd_export(args) -> int:
    from .io.export import write_document

    src, dst = Path(args.input), Path(args.output)
    if _same_file(src, dst):
        raise TrackFileError(dst, "refusing to overwrite the input file; choose another output name")
    from .io.gpx import read_gpx

    doc = read_gpx(src)
    write_document(doc, dst)
    print(f"wrote {dst}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="trackwright",
        description="Clean recorded GPS tracks. Without a subcommand, opens the editor on FILE(s) "
                    "(or on the bundled demo ride). Cleaned tracks are estimates, not surveyed data, "
                    "and are not for navigation.")
    sub = parser.add_subparsers(dest="command")

    p = sub.add_parser("stats", help="print distance, climb, time and speed totals of a GPX file")
    p.add_argument("file", type=Path)
    p.add_argument("--json", action="store_true", help="print one JSON object instead of text")
    p.add_argument("--moving-speed", type=float, default=0.5, metavar="M_PER_S",
                   help="a step counts as moving above this speed (default 0.5 m/s)")
    p.add_argument("--climb-threshold", type=float, default=5.0, metavar="METRES",
                   help="climb threshold: rises and falls smaller than this do not count in "
                        "ascent and descent (default 5 m)")
    p.set_defaults(run=cmd_stats)

    p = sub.add_parser("export", help="write a GPX file as GPX 1.1, GeoJSON or CSV (by OUT's extension)")
    p.add_argument("input", type=Path)
    p.add_argument("-o", "--output", type=Path, required=True, help="output file: .gpx, .geojson or .csv")
    p.set_defaults(run=cmd_export)

    from . import cli_clean  # the clean command lives in its own module

    cli_clean.add_parser(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    if not argv or (argv[0] not in SUBCOMMANDS and not argv[0].startswith("-")):
        from .app_entry import open_editor

        return open_editor(argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return 2
    try:
        return args.run(args)
    except TrackFileError as err:
        print(f"trackwright: {err}", file=sys.stderr)
        return 2
    except OSError as err:
        name = err.filename or ""
        print(f"trackwright: {name}: {err.strerror or err}", file=sys.stderr)
        return 2


if __name__ == "__main__":
    sys.exit(main())
