"""Where the program's own files are: ``resources`` (palette, style sheet, icons) and ``demo_tracks``.

The top-level ``resources/`` and ``demo_tracks/`` folders of the checkout are
the source. A built wheel carries them inside this package
(``editor/bundled/resources``, ``editor/bundled/demo_tracks``, by the
``package-dir`` mapping in pyproject.toml), found with :mod:`importlib.resources`;
run from a checkout (or an editable install), the checkout's folders are used.
Qt-free.
"""
from __future__ import annotations

from importlib import resources
from pathlib import Path

#: The folders that ship with the program.
FOLDERS = ("resources", "demo_tracks")
CHECKOUT = Path(__file__).resolve().parents[2]


def folder(name: str) -> Path:
    """The folder ``name`` (one of :data:`FOLDERS`), installed or in the checkout."""
    if name not in FOLDERS:
        raise ValueError(f"no bundled folder called {name!r}")
    installed = Path(str(resources.files(__name__) / name))
    return installed if installed.is_dir() else CHECKOUT / name


def demo_ride() -> Path:
    """The demo recording the editor opens when no file is given."""
    return folder("demo_tracks") / "demo_ride.gpx"


__all__ = ["folder", "demo_ride", "FOLDERS"]
