"""``trackwright export IN -o OUT``: write a track file as GPX 1.1, GeoJSON or CSV (by OUT's extension)."""
from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from ..io import read_document
from ..io.errors import TrackFileError
from ..io.export import write_document
from ..io.save import check_target, same_file


def add_parser(subparsers: Any) -> argparse.ArgumentParser:
    """Register the ``export`` subcommand."""
    p = subparsers.add_parser("export", help="write a GPX file as GPX 1.1, GeoJSON or CSV (by OUT's extension)")
    p.add_argument("input", type=Path)
    p.add_argument("-o", "--output", type=Path, required=True, help="output file: .gpx, .geojson or .csv")
    p.add_argument("--overwrite", action="store_true",
                   help="replace OUT if it exists, keeping the replaced file as OUT.bak")
    p.set_defaults(run=cmd_export)
    return p


def cmd_export(args: argparse.Namespace) -> int:
    src, dst = Path(args.input), Path(args.output)
    if same_file(src, dst):
        raise TrackFileError(dst, "refusing to overwrite the input file; choose another output name")
    check_target(dst, args.overwrite)
    doc = read_document(src)
    backup = write_document(doc, dst, backup=args.overwrite)
    print(f"wrote {dst}" + (f" (the file it replaced is kept as {backup})" if backup else ""))
    return 0


__all__ = ["add_parser", "cmd_export"]
