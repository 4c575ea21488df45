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
waypoints, routes, metadata and extensions. A GPX output records what was done in its
metadata (:mod:`editor.io.provenance`).

An input is never overwritten, and an existing output only with ``--overwrite``
(the replaced file is then kept as ``OUT.bak``).
Output files are written atomically. Exit status: 0 when every file was cleaned,
2 when an input could not be read or an output not written (the other files
are still done) or the command line is wrong.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any, Callable, TextIO

from ..io.errors import TrackFileError
from ..io.provenance import CLEANED_SUFFIX
from ..io.save import check_target, same_file

if TYPE_CHECKING:
    from ..processing.descriptor import CliOption, ToolDescriptor
    from ..processing.pipeline import CleanParams
from .. import CAUTION

#: Suffix added to an input's name for its cleaned copy in ``-d`` mode: the window's too.
OUTPUT_SUFFIX = CLEANED_SUFFIX
#: Output formats, by extension (GPX 1.1, GeoJSON, CSV; see editor.io.export).
OUTPUT_TYPES = (".gpx", ".geojson", ".json", ".csv")
BAR_WIDTH = 24


def _argument_type(parse: Callable[[str], Any]) -> Callable[[str], Any]:
    """An argparse ``type`` from a descriptor option's ``parse`` (its ValueError becomes the message)."""
    def convert(text: str) -> Any:
        try:
            return parse(text)
        except ValueError as err:
            raise argparse.ArgumentTypeError(str(err)) from None

    convert.__name__ = getattr(parse, "__name__", "value")
    return convert


def _option_dest(tool: ToolDescriptor, option: CliOption) -> str:
    return f"tool_{tool.key}_{option.flag.lstrip('-').replace('-', '_')}"


def add_tool_options(p: argparse.ArgumentParser) -> None:
    """One switch and the options of every batch tool, from its descriptor; defaults come from the dataclasses."""
    from ..processing.tools import batch_tools

    for tool in batch_tools():
        if tool.cli_switch:
            state = "on" if tool.batch_default else "off"
            p.add_argument(tool.flag, *tool.cli_aliases, dest=f"tool_{tool.key}", default=None,
                           action=argparse.BooleanOptionalAction,
                           help=f"{tool.label.lower()} (default {state})")
        defaults = tool.params()
        for option in tool.cli_options:
            default = getattr(defaults, option.default_field) if option.default_field else None
            text = option.help.format(default=default)
            if option.parse is None:
                p.add_argument(option.flag, dest=_option_dest(tool, option), action="store_const",
                               const=dict(option.const or {}), default=None, help=text)
            else:
                p.add_argument(option.flag, dest=_option_dest(tool, option), type=_argument_type(option.parse),
                               default=None, metavar=option.metavar, help=text)


def add_parser(subparsers: Any) -> argparse.ArgumentParser:
    """Register the ``clean`` subcommand."""
    from ..processing.activity import ACTIVITIES, AUTO
    from ..processing.tools import batch_tools

    order = ", ".join(tool.label.lower() for tool in batch_tools())
    p = subparsers.add_parser(
        "clean", help="clean track files: " + order,
        description=f"Clean recorded tracks and write cleaned copies. Steps run in the order: {order} "
                    f"(each on request or by default, see below). {CAUTION}")
    p.add_argument("inputs", nargs="+", type=Path, metavar="FILE", help="GPX files to clean")
    where = p.add_mutually_exclusive_group(required=True)
    where.add_argument("-o", "--output", type=Path, metavar="OUT",
                       help="output file for a single input (.gpx, .geojson or .csv)")
    where.add_argument("-d", "--output-dir", type=Path, metavar="DIR",
                       help=f"folder for the cleaned copies, named NAME{OUTPUT_SUFFIX}.gpx")
    add_tool_options(p)
    p.add_argument("--dem", type=Path, action="append", default=[], metavar="PATH",
                   help="terrain raster (GeoTIFF etc.) or folder of them; repeatable. Adds the elevation "
                        "step. Terrain heights are the ground, not a bridge or a tunnel")
    p.add_argument("--activity", choices=(AUTO, *ACTIVITIES), default=AUTO,
                   help="how you travelled: sets the limits of spikes, gaps and stops (default auto: guessed "
                        "from each track's speeds)")
    p.add_argument("--overwrite", action="store_true", help="replace output files that already exist "
                                                            "(an input is never replaced)")
    p.set_defaults(run=cmd_clean)
    return p


def clean_params(args: argparse.Namespace) -> CleanParams:
    """The :class:`CleanParams` the command line asks for."""
    from dataclasses import replace

    from ..processing.descriptor import OFF
    from ..processing.pipeline import CleanParams
    from ..processing.tools import batch_tools

    steps: dict[str, Any] = {}
    for tool in batch_tools():
        switch = getattr(args, f"tool_{tool.key}", None) if tool.cli_switch else None
        on = tool.batch_default if switch is None else switch
        changes: dict = {}
        for option in tool.cli_options:
            value = getattr(args, _option_dest(tool, option), None)
            if value is None:
                continue
            if value is OFF:
                on = False
                continue
            changes.update(value)
            on = on or option.turns_on
        steps[tool.key] = replace(tool.params(), **changes) if on else None
    return CleanParams(activity=args.activity, **steps)


def open_terrain(args: argparse.Namespace) -> Any:
    """The ``--dem`` files as one terrain (headers only), or None; a bad file is a clear error."""
    dem = list(getattr(args, "dem", []) or [])
    if not dem:
        if getattr(args, "tool_elevation_elevation", None) is not None:
            raise TrackFileError(Path("--elevation"), "needs terrain files: add --dem FILE_OR_FOLDER")
        return None
    from ..terrain import Terrain, TerrainFileError

    try:
        terrain = Terrain.open(dem)
    except TerrainFileError as err:
        raise TrackFileError(err.path, err.problem) from None
    if not terrain.tiles:
        raise TrackFileError(dem[0], "holds no terrain raster (.tif, .hgt, ...)")
    return terrain


def terrain_lines(report: Any) -> list[str]:
    """What the elevation step says per track: coverage, vertical reference, trusted stretches."""
    lines = []
    for step in report.steps:
        if step.tool != "elevation":
            continue
        info = step.info
        text = f"track {step.track + 1} elevation ({info.get('mode')}): {info.get('terrain_report')}"
        count = info.get("disagreement_count")
        if count:
            text += (f"; {count} stretch{'es' if count != 1 else ''} where the terrain is off the recording "
                     "(bridge, tunnel?) keep the recorded shape")
        lines.append(text)
        lines.append(f"track {step.track + 1} {info.get('vertical_reference')}")
    return lines


def plan_outputs(inputs: list[Path], output: Path | None, output_dir: Path | None, overwrite: bool) -> list[Path]:
    """The output path of every input; raises :class:`TrackFileError` before any work is done."""
    if output is not None:
        if len(inputs) != 1:
            raise TrackFileError(output, f"-o takes exactly one input ({len(inputs)} given); use -d DIR for several")
        outputs = [output]
    else:
        folder = output_dir if output_dir is not None else Path.cwd()
        outputs = [folder / f"{p.stem}{OUTPUT_SUFFIX}.gpx" for p in inputs]
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
            if same_file(src, dst):
                raise TrackFileError(dst, "refusing to overwrite an input file; choose another output name")
        check_target(dst, overwrite)
    return outputs


class ProgressBar:
    """A one-line text bar on a terminal's stderr; silent elsewhere."""

    def __init__(self, stream: TextIO, name: str) -> None:
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


def cleaning_record(extra: Any, report: Any) -> Any:
    """The document's file-level payload with this clean's steps added to its cleaning record."""
    from .. import __version__
    from ..io.provenance import StepRecord, params_record, with_cleaning_record

    steps = [StepRecord(s.tool, s.label, s.track, params_record(s.params, s.info)) for s in report.steps]
    return with_cleaning_record(extra, steps, __version__)


def cmd_clean(args: argparse.Namespace) -> int:
    from ..io import read_document
    from ..io.export import write_document
    from ..model.payload import GAP_FILL_MARKER
    from ..processing.pipeline import clean_document, summary_line

    inputs = list(args.inputs)
    outputs = plan_outputs(inputs, args.output, args.output_dir, args.overwrite)
    params = clean_params(args)
    terrain = open_terrain(args)
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
            doc = read_document(src)

            def step(fraction: float, what: str) -> None:
                bar(0.05 + 0.85 * fraction, what)

            cleaned, report = clean_document(doc, params, progress=step, inserted_marker=GAP_FILL_MARKER,
                                             terrain=terrain)
            cleaned.extra = cleaning_record(cleaned.extra, report)
            bar(0.92, "writing")
            write_document(cleaned, dst, backup=args.overwrite)
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
        for done in report.steps:
            for note in done.notes:
                print(f"  {done.label}, track {done.track + 1}: {note}")
        for line in terrain_lines(report):
            print(f"  {line}")
    if failures < len(inputs):
        print(f"Note: {CAUTION}")
    return 2 if failures else 0


__all__ = ["OUTPUT_SUFFIX", "add_parser", "clean_params", "cmd_clean", "plan_outputs"]
