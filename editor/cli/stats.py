"""``trackwright stats FILE``: the totals of a track file, as text or one JSON object."""
from __future__ import annotations

import argparse
import json
import math
from pathlib import Path
from typing import Any

from ..io import read_document
from ..processing.stats import StatsParams, document_totals, segment_totals
from ..units import format_duration


def _json_number(value: Any) -> Any:
    return None if isinstance(value, float) and not math.isfinite(value) else value


def add_parser(subparsers: Any) -> argparse.ArgumentParser:
    """Register the ``stats`` subcommand; its defaults are :class:`StatsParams`'s."""
    defaults = StatsParams()
    p = subparsers.add_parser("stats", help="print distance, climb, time and speed totals of a GPX file")
    p.add_argument("file", type=Path)
    p.add_argument("--json", action="store_true", help="print one JSON object instead of text")
    p.add_argument("--moving-speed", type=float, default=defaults.moving_speed_mps, metavar="M_PER_S",
                   help=f"a step counts as moving above this speed (default {defaults.moving_speed_mps:g} m/s)")
    p.add_argument("--climb-threshold", type=float, default=defaults.climb_threshold_m, metavar="METRES",
                   help="climb threshold: rises and falls smaller than this do not count in "
                        f"ascent and descent (default {defaults.climb_threshold_m:g} m)")
    p.set_defaults(run=cmd_stats)
    return p


def cmd_stats(args: argparse.Namespace) -> int:
    params = StatsParams(moving_speed_mps=args.moving_speed, climb_threshold_m=args.climb_threshold)
    doc = read_document(args.file)
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
          f"   (climb threshold {params.climb_threshold_m:g} m;"
          f" raw {total.raw_ascent_m:.0f} / {total.raw_descent_m:.0f} m)")
    print(f"  duration   {format_duration(total.duration_s)}   moving {format_duration(total.moving_time_s)}"
          f"   max speed {speed}")
    return 0


__all__ = ["add_parser", "cmd_stats"]
