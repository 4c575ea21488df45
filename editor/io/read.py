"""One entry point for reading any supported input: :func:`read_document`.

Readers are chosen by the file's extension; a file with another extension is
tried as GPX (whose reader says clearly when it is not GPX). To support a new
input format, write ``reader(path) -> Document`` (raising
:class:`~editor.io.errors.TrackFileError` with file, line and problem) and add
it to :data:`READERS`.
"""
from __future__ import annotations

import os
from pathlib import Path
from typing import Callable

from ..model.document import Document
from .gpx import read_gpx

#: Reader per lower-case file extension.
#: A reader takes the path and, as a keyword, ``progress`` (called with the fraction done; it may
#: raise to abandon the read).
READERS: dict[str, Callable[..., Document]] = {".gpx": read_gpx}
#: The reader for an extension not in :data:`READERS`.
DEFAULT_READER = read_gpx


def read_document(path: str | os.PathLike, progress: Callable[[float], None] | None = None) -> Document:
    """Read any supported track file into a :class:`Document`.

    Raises :class:`~editor.io.errors.TrackFileError` naming the file and the place of the
    problem (with ``partial`` set for a file cut off part way), or ``OSError``.
    """
    return READERS.get(Path(path).suffix.lower(), DEFAULT_READER)(path, progress=progress)


__all__ = ["read_document", "READERS"]
