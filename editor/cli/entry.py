"""The ``trackwright`` command: batch work on track files with the Qt-free core.

``trackwright`` with no subcommand (or with only file names) opens the editor;
the subcommands live in :mod:`.stats`, :mod:`.export` and :mod:`.clean`.
Exit codes: 0 success, 2 bad input or usage (one line on stderr, no traceback),
1 an unexpected internal error.
"""
from __future__ import annotations

import argparse
import sys

from .. import CAUTION, __version__
from ..io.errors import TrackFileError
from . import clean, export, stats

SUBCOMMANDS = ("stats", "export", "clean")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="trackwright",
        description="Clean recorded GPS tracks. Without a subcommand, opens the editor on FILE(s) "
                    f"(or on the bundled demo ride). {CAUTION}")
    parser.add_argument("--version", action="version", version=f"trackwright {__version__}")
    sub = parser.add_subparsers(dest="command")
    for command in (stats, export, clean):
        command.add_parser(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    if not argv or (argv[0] not in SUBCOMMANDS and not argv[0].startswith("-")):
        from ..app import run_editor  # Qt only when the window is asked for

        return run_editor(argv)
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
