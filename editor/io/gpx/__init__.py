"""Public GPX entry points: lossless reading of GPX 1.1/1.0, GPX 1.1 writing.

>>> doc = read_gpx("ride.gpx")          # doctest: +SKIP
>>> write_gpx(doc, "ride-cleaned.gpx")  # doctest: +SKIP

Reading keeps everything the model does not interpret in opaque payloads (see
:mod:`editor.model.payload`), so writing an unedited document gives back the same
content: every element, attribute, namespace declaration and extension, with
children in GPX 1.1 schema order. What is an error and what a warning is listed
in :mod:`editor.io.gpx.values` (values), :mod:`editor.io.gpx.parse` (the file as
a whole: size, safety, broken XML with its ``partial`` document) and
:mod:`editor.io.gpx.tree` (content GPX 1.1 has no place for). Warnings go to
``Document.warnings``, one line each.

Reading takes the fast path of :mod:`editor.io.gpx.scan` for the usual file and
reads through the tree (:mod:`editor.io.gpx.tree`) otherwise; both give the same
document. Memory: about 2.5 times the file's size while reading by the fast path.

Cleaned tracks are estimates, not surveyed data, and are not for navigation;
the original file is never overwritten without a backup by :func:`write_gpx`.
"""
from __future__ import annotations

import gc
import os
from collections.abc import Callable

from ...model import Document
from ..errors import TrackFileError
from . import scan as gpx_scan
from .parse import MAX_FILE_BYTES, parse_root, size_problem, validate
from .tree import TreeReader
from .write import gpx_bytes, gpx_chunks, gpx_text
from ..save import atomic_write, same_file
from ..source import read_limited

__all__ = ["read_gpx", "read_gpx_bytes", "write_gpx", "gpx_bytes", "gpx_text", "MAX_FILE_BYTES"]


def read_gpx(path, progress: Callable[[float], None] | None = None) -> Document:
    """Read a GPX 1.1 or 1.0 file.

    Only regular files are read (see :func:`editor.io.source.read_limited`):
    a named pipe, a device, a folder or a symbolic-link loop is refused at once.
    ``progress``, if given, is called from the reading thread with the fraction done (0..1) at a
    few steps; it may raise to abandon the read (the window's Cancel).

    Raises
    ------
    TrackFileError
        naming the file, the line and the problem. For a file that is cut off
        or broken part way, its ``partial`` attribute holds the points read
        before the break (a :class:`Document` for viewing) or ``None``.
    """
    if progress is not None:
        progress(0.0)
    return _read(read_limited(path, MAX_FILE_BYTES, size_problem), str(path), progress)


def read_gpx_bytes(data: bytes, path=None) -> Document:
    """Read GPX 1.1 or 1.0 from bytes; ``path`` names the source in messages and ``source_path``."""
    problem = size_problem(len(data))
    if problem:
        raise TrackFileError(path, problem)
    return _read(data, None if path is None else str(path))


def _read(data: bytes, path: str | None, progress: Callable[[float], None] | None = None) -> Document:
    # Reading builds many small objects and no reference cycles; Python's cycle collector, run
    # again and again as they pile up, doubled the time of reading 100,000 tracks. Paused meanwhile.
    paused = gc.isenabled()
    gc.disable()
    try:
        return _read_unpaused(data, path, progress)
    finally:
        if paused:
            gc.enable()


def _read_unpaused(data: bytes, path: str | None, progress: Callable[[float], None] | None) -> Document:
    step = progress or (lambda _fraction: None)
    step(0.1)
    if gpx_scan.worth_trying(data):
        validate(data, path)
        step(0.4)
        doc = _read_scanned(data, path)
        if doc is not None:
            step(1.0)
            return doc
    reader = TreeReader(parse_root(data, path), path)
    step(0.6)
    doc = reader.document(reader.shape())
    step(1.0)
    return doc


def _read_scanned(data: bytes, path: str | None) -> Document | None:
    """Read through :mod:`editor.io.gpx.scan`; ``None`` if the file needs the tree."""
    scan = gpx_scan.scan_points(data)
    if scan is None:
        return None
    try:
        root = parse_root(scan.skeleton, path)
        reader = TreeReader(root, path, scan)
        shape = reader.shape()
    except TrackFileError:
        return None  # reading through the tree names the line of the problem
    segments = [segment for track in shape.tracks for segment in track.segments]
    if sum(sum(t.counts) for t in shape.tracks) != scan.count \
            or not gpx_scan.skeleton_matches(scan, root, segments):
        return None
    if scan.waypoints is not None and reader.root_waypoint_count() != len(scan.waypoints):
        return None  # a waypoint somewhere other than on the root (inside <extensions>, say)
    try:
        return reader.document(shape)
    except TrackFileError:
        return None


def write_gpx(doc: Document, path, *, backup: bool | None = None,
              progress: Callable[[float], None] | None = None) -> None:
    """Write ``doc`` as GPX 1.1, atomically (see :func:`editor.io.save.atomic_write`).

    ``backup=None`` keeps a backup exactly when ``path`` is the file the
    document was read from, so the original recording is never lost.
    ``progress``, if given, is called with the estimated fraction written; if it raises, the save
    is abandoned and nothing is written (the window's Cancel).
    """
    if backup is None:
        backup = same_file(path, doc.source_path)
    chunks = gpx_chunks(doc, path)
    if progress is not None:
        chunks = _reporting(chunks, progress, _expected_bytes(doc))
    atomic_write(path, chunks, backup=backup)


def _expected_bytes(doc: Document) -> int:
    """About how long the written file will be: the original's size, else ~150 bytes a point."""
    points = doc.point_count + len(doc.waypoints) + sum(len(r.points) for r in doc.routes)
    try:
        if doc.source_path:
            return max(os.path.getsize(doc.source_path), 1)
    except OSError:
        pass
    return 150 * max(points, 1)


def _reporting(chunks, progress: Callable[[float], None], total: int):
    written = 0
    progress(0.0)
    for chunk in chunks:
        written += len(chunk)
        progress(min(written / total, 0.99))
        yield chunk
    progress(1.0)
