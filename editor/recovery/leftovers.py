"""Removing the hidden temporary files of saves that were killed before they finished.

:func:`editor.io.save.atomic_write` writes ``.NAME.XXXXXXXX.tmp`` (eight hex digits)
beside the target and renames it over the target at the end; a killed save leaves
it behind, as large as the file. At start the editor removes those beside the
files it knows (recent files, originals of journals). A file changed in the last
:data:`MIN_AGE_S` seconds is left alone: another editor may be saving right now.
"""
from __future__ import annotations

import os
import re
import time
from pathlib import Path
from typing import Iterable

#: A temporary file younger than this may belong to a save in progress (seconds).
MIN_AGE_S = 120.0


def leftover_saves(files: Iterable[str | os.PathLike], now: float | None = None) -> list[Path]:
    """Temporary files of interrupted saves of ``files`` (only our exact naming, only old enough)."""
    now = time.time() if now is None else now
    found: set[Path] = set()
    for name in files:
        target = Path(os.path.realpath(name))
        pattern = re.compile(rf"\.{re.escape(target.name)}\.[0-9a-f]{{8}}\.tmp")
        try:
            candidates = list(target.parent.iterdir())
        except OSError:
            continue
        for path in candidates:
            if not pattern.fullmatch(path.name):
                continue
            try:
                info = path.lstat()
            except OSError:
                continue
            if path.is_file() and not path.is_symlink() and now - info.st_mtime >= MIN_AGE_S:
                found.add(path)
    return sorted(found)


def remove_leftover_saves(files: Iterable[str | os.PathLike]) -> tuple[list[Path], int]:
    """Remove the leftovers of ``files``; returns the removed paths and the bytes freed."""
    removed, freed = [], 0
    for path in leftover_saves(files):
        try:
            size = path.lstat().st_size
            path.unlink()
        except OSError:
            continue
        removed.append(path)
        freed += size
    return removed, freed


def describe_freed(count: int, freed: int) -> str:
    """One sentence for the user about what was removed."""
    size = f"{freed / 1e6:.1f} MB" if freed >= 100_000 else f"{freed / 1e3:.1f} kB"
    return (f"Removed {count} unfinished save file{'s' if count != 1 else ''} left by an interrupted save "
            f"({size} freed).")
