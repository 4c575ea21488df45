"""``trackwright clean``: clean track files in batch with the same tools and code path as the editor.

::

    trackwright clean IN.gpx -o OUT.gpx
    trackwright clean A.gpx B.gpx -d OUTDIR        # writes OUTDIR/A-cleaned.gpx, OUTDIR/B-cleaned.gpx
    trackwright clean IN.gpx -o OUT.gpx --dem TILES/ --elevation combine   # elevation from terrain

Steps, in this order (see :mod:`editor.processing.pipeline` for why): remove
spikes and the catch-up after signal loss, fill gaps (up to ``--max-gap`` seconds
as recorded, 120 by default), collapse stops,
smooth (strength chosen by maximum likelihood unless given), elevation from the terrain rasters
given with ``--dem`` (files or folders, repeatable; ``--elevation`` fill, replace or combine,
default: combine when a track has recorded elevation), simplify (off
unless ``--simplify METRES``; elevation is kept to the same number of metres
unless ``--simplify-vertical`` says otherwise, so climb totals survive). Everything the steps do not touch is kept:
waypoints, routes, metadata and extensions.

An input is never overwritten, and an existing output only with ``--overwrite``.
Output files are written atomically. Exit status: 0 when every file was cleaned,
2 when an input could not be read or an output not written (the other files
are still done) or the command line is wrong.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from .io.errors import TrackFileError

#: Suffix added to an input's name for its cleaned copy in ``-d`` mode.
OUTPUT_SUFFIX = "-cleaned"
#: Output formats, by extension (GPX 1.1, GeoJSON, CSV; see editor.io.export).
OUTPUT_TYPES = (".gpx", ".geojson", ".json", ".csv")
ACTIVITY_CHOICES = ("auto", "walk", "run", "ride", "drive")
ELEVATION_CHOICES = ("auto", "fill", "replace", "combine")
BAR_WIDTH = 24


def _smooth_arg(text: str):
    """``auto``, ``off`` or a strength 0..100 (returned as float)."""
    value = text.strip().lower()
    if value in ("auto", "off"):
        return value
    try:
        strength = float(value)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected auto, off or a strength 0..100, got {text!r}") from None
    if not 0.0 <= strength <= 100.0:
        raise argparse.ArgumentTypeError(f"strength must be between 0 and 100, got {text!r}")
    return strength


def _positive(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number, got {text!r}") from None
    if not value > 0:
        raise argparse.ArgumentTypeError(f"expected a positive number, got {text!r}")
    return value


def _vertical_arg(text: str):
    return "off" if text.strip().lower() == "off" else _positive(text)


def add_parser(subparsers) -> argparse.ArgumentParser:
    """Register the ``clean`` subcommand."""
    p = subparsers.add_parser(
        "clean", help="clean track files: spikes, gaps, stops, smoothing (and simplification on request)",
        description="Clean recorded tracks and write cleaned copies. Steps run in the order: remove spikes, "
                    "fill gaps, collapse stops, smooth, simplify. Cleaned tracks are estimates, not surveyed "
                    "data, and are not for navigation.")
    p.add_argument("inputs", nargs="+", type=Path, metavar="FILE", help="GPX files to clean")
    where = p.add_mutually_exclusive_group(required=True)
    where.add_argument("-o", "--output", type=Path, metavar="OUT",
                       help="output file for a single input (.gpx, .geojson or .csv)")
    where.add_argument("-d", "--output-dir", type=Path, metavar="DIR",
                       help=f"folder for the cleaned copies, named NAME{OUTPUT_SUFFIX}.gpx")
    p.add_argument("--smooth", type=_smooth_arg, default="auto", metavar="auto|off|STRENGTH",
                   help="smoothing: auto (maximum likelihood, default), off, or a strength 0..100")
    p.add_argument("--despike", action=argparse.BooleanOptionalAction, default=True,
                   help="remove spikes and the catch-up after signal loss (default on)")
    p.add_argument("--fill-gaps", action=argparse.BooleanOptionalAction, default=True,
                   help="fill signal-loss gaps with estimated points (default on)")
    p.add_argument("--max-gap", type=_positive, default=120.0, metavar="SECONDS",
                   help="longest gap to fill, seconds, as recorded: the catch-up removed after a gap "
                        "does not count (default 120)")
    p.add_argument("--split-long-gaps", action="store_true",
                   help="start a new segment at gaps longer than --max-gap instead of leaving them")
    p.add_argument("--stops", action=argparse.BooleanOptionalAction, default=True,
                   help="collapse stationary periods to one position (default on)")
    p.add_argument("--simplify", type=_positive, default=None, metavar="METRES",
                   help="thin the cleaned track to this horizontal tolerance in metres (default off)")
    p.add_argument("--simplify-vertical", type=_vertical_arg, default=None, metavar="METRES|off",
                   help="vertical tolerance of --simplify, so climbs survive (default: the same "
                        "number of metres as --simplify; off: horizontal only)")
    p.add_argument("--dem", type=Path, action="append", default=[], metavar="PATH",
                   help="terrain raster (GeoTIFF etc.) or folder of them; repeatable. Adds the elevation "
                        "step. Terrain heights are the ground, not a bridge or a tunnel")
    p.add_argument("--elevation", choices=ELEVATION_CHOICES, default="auto",
                   help="with --dem: fill (only points without elevation), replace (terrain only) or "
                        "combine (recording and terrain together; default when the track has elevation)")
    p.add_argument("--activity", choices=ACTIVITY_CHOICES, default="auto",
                   help="limits for spikes and stops (default auto: inferred from each track's speeds)")
    p.add_argument("--overwrite", action="store_true", help="replace output files that already exist "
                                                            "(an input is never replaced)")
    p.set_defaults(run=cmd_clean)
    return p


def clean_params(args, terrain=None):
    """The :class:`CleanParams` the command line asks for (``terrain``: the opened ``--dem`` files)."""
    # each tool's module directly, not the registry: that would import simplification (and shapely)
    # on every run, while it is off unless --simplify is given
    from .processing.elevation import ElevationParams
    from .processing.gaps import GapParams
    from .processing.pipeline import CleanParams
    from .processing.smoothing import SmoothParams
    from .processing.spikes import SpikeParams
    from .processing.stops import StopParams

    vertical = args.simplify if args.simplify_vertical is None else args.simplify_vertical
    vertical = None if vertical == "off" else vertical
    if args.smooth == "off":
        smooth = None
    elif args.smooth == "auto":
        smooth = SmoothParams()
    else:
        smooth = SmoothParams(horizontal_strength=args.smooth, vertical_strength=args.smooth)
    return CleanParams(
        activity=args.activity,
        despike=SpikeParams() if args.despike else None,
        fill_gaps=GapParams(max_gap_s=args.max_gap, long_gap="split" if args.split_long_gaps else "leave")
        if args.fill_gaps else None,
        collapse_stops=StopParams() if args.stops else None,
        smooth=smooth,
        elevation=ElevationParams(mode=getattr(args, "elevation", "auto")),
        terrain=terrain,
        simplify=_simplify_params(args.simplify, vertical) if args.simplify else None)


def _open_terrain(args):
    """The ``--dem`` files as one terrain (headers only), or None; a bad file is a clear error."""
    dem = list(getattr(args, "dem", []) or [])
    if not dem:
        if getattr(args, "elevation", "auto") != "auto":
            raise TrackFileError(Path("--elevation"), "needs terrain files: add --dem FILE_OR_FOLDER")
        return None
    from .terrain import Terrain, TerrainFileError

    try:
        terrain = Terrain.open(dem)
    except TerrainFileError as err:
        raise TrackFileError(err.path, err.problem) from None
    if not terrain.tiles:
        raise TrackFileError(dem[0], "holds no terrain raster (.tif, .hgt, ...)")
    return terrain


def _terrain_lines(report) -> list[str]:
    """What the elevation step says per track: coverage, vertical reference, trusted stretches."""
    lines = []
    for step in report.steps:
        if step.tool != "elevation":
            continue
        info = step.info
        text = f"track {step.track + 1} elevation ({info.get('mode')}): {info.get('terrain_report')}"
        if info.get("disagreement_count"):
            text += (f"; {info['disagreement_count']} stretch(es) where the terrain is off the recording "
                     "(bridge, tunnel?) keep the recorded shape")
        lines.append(text)
        lines.append(f"track {step.track + 1} {info.get('vertical_reference')}")
    return lines


def _simplify_params(tolerance_m: float, vertical_tolerance_m: float | None):
    from .processing.simplify import SimplifyParams

    return SimplifyParams(tolerance_m=tolerance_m, vertical_tolerance_m=vertical_tolerance_m)


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve() or (a.exists() and b.exists() and a.samefile(b))
    except OSError:
        return False


def plan_outputs(inputs: list[Path], output: Path | None, output_dir: Path | None, overwrite: bool) -> list[Path]:
    """The output path of every input; raises :class:`TrackFileError` before any work is done."""
    if output is not None:
        if len(inputs) != 1:
            raise TrackFileError(output, f"-o takes exactly one input ({len(inputs)} given); use -d DIR for several")
        outputs = [output]
    else:
        outputs = [output_dir / f"{p.stem}{OUTPUT_SUFFIX}.gpx" for p in inputs]
        seen: dict[Path, Path] = {}
        for src, dst in zip(inputs, outputs):
            if dst in seen:
                raise TrackFileError(src, f"has the same name as {seen[dst]}; both would be written to {dst}")
            seen[dst] = src
    for dst in outputs:
        if dst.suffix.lower() not in OUTPUT_TYPES:
            raise TrackFileError(dst, f"unknown output type {dst.suffix or '(no extension)'!r}; "
                                      "use .gpx, .geojson or .csv")
        for src in inputs:
            if _same_file(src, dst):
                raise TrackFileError(dst, "refusing to overwrite an input file; choose another output name")
        if dst.exists() and not overwrite:
            raise TrackFileError(dst, "already exists; pass --overwrite to replace it")
    return outputs


class ProgressBar:
    """A one-line text bar on a terminal's stderr; silent elsewhere."""

    def __init__(self, stream, name: str):
        self.stream = stream
        self.enabled = bool(getattr(stream, "isatty", lambda: False)())
        self.name = name if len(name) <= 28 else "..." + name[-25:]

    def __call__(self, fraction: float, what: str) -> None:
        if not self.enabled:
            return
        filled = int(round(max(0.0, min(1.0, fraction)) * BAR_WIDTH))
        bar = "=" * filled + " " * (BAR_WIDTH - filled)
        self.stream.write(f"\r{self.name:<28} |{bar}| {fraction * 100:3.0f}%  {what:<28.28}")
        self.stream.flush()

    def close(self) -> None:
        if self.enabled:
            self.stream.write("\r" + " " * (28 + BAR_WIDTH + 42) + "\r")
            self.stream.flush()


def cmd_clean(args) -> int:
    from .io.export import write_document
    from .io.gpx import read_gpx
    from .processing.pipeline import CAUTION, clean_document, summary_line

    inputs = list(args.inputs)
    outputs = plan_outputs(inputs, args.output, args.output_dir, args.overwrite)
    terrain = _open_terrain(args)
    params = clean_params(args, terrain)
    if args.output_dir is not None:
        try:
            args.output_dir.mkdir(parents=True, exist_ok=True)
        except OSError as err:
            raise TrackFileError(args.output_dir, f"cannot create the output folder ({err.strerror or err})") from None
    failures = 0
    for src, dst in zip(inputs, outputs):
        bar = ProgressBar(sys.stderr, src.name)
        try:
            bar(0.0, "reading")
            doc = read_gpx(src)

            def step(fraction: float, what: str) -> None:
                bar(0.05 + 0.85 * fraction, what)

            cleaned, report = clean_document(doc, params, progress=step)
            bar(0.92, "writing")
            write_document(cleaned, dst)
            bar(1.0, "done")
        except TrackFileError as err:
            bar.close()
            print(f"trackwright: {err}", file=sys.stderr)
            failures += 1
            continue
        except OSError as err:
            bar.close()
            print(f"trackwright: {err.filename or dst}: {err.strerror or err}", file=sys.stderr)
            failures += 1
            continue
        bar.close()
        print(f"{src} -> {dst}: {summary_line(report)}")
        for line in _terrain_lines(report):
            print(f"  {line}")
    if failures < len(inputs):
        print(f"Note: {CAUTION}")
    return 2 if failures else 0


__all__ = ["OUTPUT_SUFFIX", "add_parser", "clean_params", "cmd_clean", "plan_outputs"]
